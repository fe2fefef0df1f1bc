/*
 * internal.h — private to the fit stage: what fit.c, tests.c and predict.c
 * share (weighted design rows, the row-streaming triangle of a design,
 * least squares on column subsets of a triangle). Not part of fitproof's
 * interface.
 */
#ifndef FITPROOF_FIT_INTERNAL_H
#define FITPROOF_FIT_INTERNAL_H

#include "fit.h"
#include "qr.h"

/* Relative size of a pivot, after scaling the columns to unit order of
   norm, below which a column counts as aliased with those before it. */
#define FIT_RANK_TOLERANCE 1e-13L

/* A leverage this close to 1 makes HC2 and HC3 undefined (0/0). */
#define FIT_LEVERAGE_ONE 1e-12

/* Sums over the rows in the whitened coordinates u = R₁₁⁻ᵀ S x̃ of a
   factor (qr.h): the robust meats Σ ω u uᵀ with ω = ẽ², ẽ²/(1−h),
   ẽ²/(1−h)², the weighted RSS, and on the streaming path the Gram matrix
   Σ u uᵀ and the gradient X̃ᵀ(ỹ − X̃b). rank × rank, row-major. */
typedef struct {
    long double *gram;     /* NULL: the identity (the factor is of the whole design) */
    long double *meat[3];
    long double *gradient; /* n_coefs entries; NULL on the dense path */
    long double rss;
    double max_position;   /* largest h_i / w_i */
    bool leverage_one;     /* some row has leverage 1 */
} fit_row_sums;

void fit_row_sums_free(fit_row_sums *sums);

/* Row i of d multiplied by √w_i (x, n_coefs entries); returns √w_i y_i. */
long double fit_weighted_row(const design *d, size_t i, long double *x);

/* The triangle of [√W X₁ | … | √W X_m | √W y] over the rows of designs[0]
   (all designs must use the same rows and weights). Caller frees. */
lsq_tri *fit_triangle(const design *const *designs, size_t n_designs);

/* The same triangle folded in double precision, block by block (stream.c):
   the fast first pass over a large design. */
lsq_tri *fit_triangle_fast(const design *const *designs, size_t n_designs);

/* Rows per block of the double-precision kernels (stream.c). */
enum { FIT_BLOCK = 128 };

/* From this many rows on, the Newey–West pass runs as two stretches on two
   cores (robust.c; a fixed split, so that the sums are the same on every
   machine); below it, as one. */
enum { FIT_HAC_SPLIT_ROWS = 262144 };

/* Adds the lower triangle of BᵀB into gram (k × k, row-major): B is a
   column-major block of FIT_BLOCK rows and k columns, zero-padded past its
   last row; each entry is summed in double over the block, then added in
   long double (stream.c). */
void fit_block_gram_add(const double *b, size_t k, long double *gram);

/* What the pass over the rows (stream.c) starts from. */
typedef struct {
    const long double *b;         /* coefficients, n_coefs entries */
    const long double *residuals; /* weighted residuals √w e if already known (the
                                     dense algorithm), else NULL: computed from b,
                                     and the gradient summed */
    bool extended;                /* rows and whitening in long double */
    bool gram;                    /* sum the Gram matrix in whitened coordinates */
} fit_row_input;

/* The pass over the rows: residuals, fitted values and leverages into f,
   and the sums in the whitened coordinates of q (a factor whose R₁₁
   whitens the rows: the full design's, or the triangle's). */
void fit_rows(fit_result *f, const design *d, const lsq_qr *q, const fit_row_input *in,
              fit_row_sums *sums);

/* Least squares of triangle column `target` on the columns listed in cols
   (with rank detection): returns the residual sum of squares and sets
   *rank. With no columns, the sum of squares of the target. */
long double fit_subset_rss(const lsq_tri *t, const size_t *cols, size_t n_cols, size_t target,
                           size_t *rank);

/* Column subsets of a triangle solved without pivoting when the full
   model has full rank: always above this many columns (as the pivoted
   sub-model covariance already is, robust.c), below it only when the
   subset's scaled condition number is at most FIT_UNPIVOTED_CONDITION (a
   triangle folded in long double) or FIT_UNPIVOTED_CONDITION_FAST (one
   folded in double, whose entries carry double rounding). */
enum { FIT_UNPIVOTED_MIN = 256 };
#define FIT_UNPIVOTED_CONDITION 1e4L
#define FIT_UNPIVOTED_CONDITION_FAST 1e3L

/* The triangle r (n_cols², column-major) and transformed target z (t->k
   entries) of columns cols of t (increasing, independent), lsq_tri_select,
   with the inverse cross-product in g (n_cols², row-major) unless g is
   NULL. False when the rule above asks for the pivoted solve instead. */
bool fit_subset_triangle(const lsq_tri *t, const size_t *cols, size_t n_cols, size_t target,
                         long double *r, long double *z, long double *g);

/* The factor kept in fit_result (factor.c): R₁₁ of q, corrected by the
   Cholesky factor of gram (rank × rank in q's whitened coordinates) when
   not NULL. */
fit_factor *fit_factor_new(const lsq_qr *q, const long double *gram);
void fit_factor_free(fit_factor *f);

/* (X̃ᵀX̃)⁻¹ = S₁R⁻¹R⁻ᵀS₁ᵀ from the kept factor, p × p row-major in original
   coordinates, zeros for aliased columns (m³/3 operations). */
void fit_factor_inverse_gram(const fit_factor *f, long double *out);

/* Stores v · factor (p × p, row-major) into m with the column exponents
   of f taken out (fit.h); NaN everywhere when not defined. */
void fit_store_matrix(const fit_result *f, gsl_matrix *m, const long double *v,
                      long double factor, double after, bool defined);

/* √variance as a double: through double when the variance is a normal
   double (the digits fitproof has always given), in long double when it is
   beyond double's range (a standard error near 1e-200 or 1e200). */
double fit_root(long double variance);

/* Fills f->term_tests and f->sequential_tests from the triangle of d. */
void fit_term_tests(fit_result *f, const design *d, const lsq_tri *t);

#endif

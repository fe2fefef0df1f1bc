/*
 * qr.h — private to the fit stage: an extended-precision least-squares
 * solver (Householder QR with column pivoting in long double, refined with
 * residuals accumulated in binary128). Not part of fitproof's interface.
 */
#ifndef FITPROOF_FIT_QR_H
#define FITPROOF_FIT_QR_H

#include <stdbool.h>
#include <stddef.h>

typedef struct {
    size_t n, p;
    size_t rank;
    long double *a;     /* column-major n×p design, scaled; kept for refinement */
    long double *qr;    /* column-major: R on and above the diagonal,
                           Householder vectors below it */
    long double *beta;  /* reflector coefficients, one per factored column */
    size_t *perm;       /* perm[k]: original column in pivot position k */
    long double *scale; /* per original column, a power of two */
} lsq_qr;

/* Factors the n×p column-major matrix x, taking it over (it becomes q->a;
   the caller must not use or free it). Columns are scaled by powers of two
   (exactly) to unit order of norm before pivoting. A column whose
   remaining norm falls below tolerance × the largest is aliased. Caller
   frees with lsq_qr_free. */
lsq_qr *lsq_qr_new(long double *x, size_t n, size_t p, long double tolerance);
void lsq_qr_free(lsq_qr *q);

/* Least-squares solution b (p entries, original coordinates, 0 for aliased
   columns) of x b ≈ y, and the residual r = y − x b (n entries), both
   refined until they stop improving. */
void lsq_qr_solve(const lsq_qr *q, const long double *y, long double *b, long double *r);

/* (XᵀX)⁻¹ restricted to the estimable columns, p×p row-major in original
   coordinates with zero rows and columns for aliased ones. */
void lsq_qr_inverse_gram(const lsq_qr *q, long double *out);

/* Is original column j estimable? */
bool lsq_qr_estimable(const lsq_qr *q, size_t j);

/* With R₁₁ the leading rank × rank block of R and S = P D (pivoting and
   scaling), so that A S = Q R:
   lsq_qr_whiten: u = R₁₁⁻ᵀ (Sᵀ x)₁ for a row x of A (p entries, original
   coordinates); u has rank entries and ‖u‖² = x (AᵀA)⁺ x over the
   estimable columns (the leverage of x).
   lsq_qr_sandwich: out = S₁ R₁₁⁻¹ M R₁₁⁻ᵀ S₁ᵀ, p×p row-major in original
   coordinates (zeros for aliased columns), for a symmetric rank × rank M
   given in the whitened coordinates of lsq_qr_whiten.
   lsq_qr_normal_solve: d = S₁ R₁₁⁻¹ G⁻¹ R₁₁⁻ᵀ S₁ᵀ g with ginv = G⁻¹
   (rank × rank; NULL for the identity): the solution of the normal
   equations AᵀA d = g over the estimable columns when AᵀA = S₁⁻ᵀR₁₁ᵀ G
   R₁₁S₁⁻¹ (p entries each).
   lsq_qr_alias: for an aliased original column j, the coefficients c (p
   entries, zero off the estimable columns) with column j = Σ c_k column k
   in the rows factored. */
void lsq_qr_whiten(const lsq_qr *q, const long double *x, long double *u);
void lsq_qr_sandwich(const lsq_qr *q, const long double *m, long double *out);
void lsq_qr_normal_solve(const lsq_qr *q, const long double *ginv, const long double *g,
                         long double *d);

/* m ← R₁₁⁻¹ m for a rank × rank row-major m. */
void lsq_qr_solve_upper(const lsq_qr *q, long double *m);

/* out = S₁ T M Tᵀ S₁ᵀ, p×p row-major in original coordinates (zeros for
   aliased columns), for rank × rank row-major T and symmetric M: with
   T = R₁₁⁻¹ G⁻¹ formed once, every sandwich R₁₁⁻¹ G⁻¹ M G⁻¹ R₁₁⁻ᵀ of a
   corrected factor costs two products. */
void lsq_qr_outer_sandwich(const lsq_qr *q, const long double *t, const long double *m,
                           long double *out);

/* ‖R₁₁‖₁ ‖R₁₁⁻¹‖₁: the condition number of the scaled, estimable columns
   (1 when nothing is estimable). */
long double lsq_qr_condition(const lsq_qr *q);

/* Inverts the symmetric positive definite n×n row-major m in place
   (Cholesky); returns false, m unchanged, when it is not positive definite. */
bool lsq_spd_inverse(long double *m, size_t n);
/* y[j] += Σ_c coef[c] · x[c · stride + j] for j < n, c < count: each y[j]
   sums its products in the order c = 0, 1, … in long double, exactly as a
   loop over c of y[j] += coef[c] · x[…] would, but is stored once per four
   products (storing an 80-bit number is the slow part of an x87
   multiply-add). */
void lsq_combine_rows(long double *y, const long double *coef, size_t count,
                      const long double *x, size_t stride, size_t n);

/* The Cholesky factor l (lower, row-major, n×n, zero above the diagonal
   as given) of the symmetric positive definite row-major m; false when m
   is not positive definite. */
bool lsq_cholesky(const long double *m, size_t n, long double *l);

/* Solves the symmetric positive definite n×n row-major m x = b (Cholesky,
   O(n³/6)); returns false, x untouched, when m is not positive definite. */
bool lsq_spd_solve(const long double *m, size_t n, const long double *b, long double *x);

/* For the m×m column-major upper triangular r with a nonzero diagonal:
   g = (rᵀr)⁻¹ = U Uᵀ with U = r⁻¹, row-major, every sum a dot product of
   contiguous columns of r or rows of U (m³/3 operations in all). Returns ‖r D‖₁ ‖D⁻¹U‖₁, D
   the column lengths of r: the condition number of the columns scaled to
   unit length, as lsq_qr_condition measures it. */
long double lsq_upper_inverse_gram(const long double *r, size_t m, long double *g);
void lsq_qr_alias(const lsq_qr *q, size_t j, long double *c);

/*
 * A triangle accumulated over rows: the k×k upper-triangular R of a tall
 * matrix whose rows arrive one at a time (Householder QR of [R; block] for
 * each block of rows), so that R ᵀR equals the matrix's cross-product and
 * no more than one block of rows is ever stored.
 */
typedef struct lsq_tri {
    size_t k;
    long double *r;      /* column-major k×k, upper triangle; rows beyond the
                            rows seen stay zero */
    long double *block;  /* column-major rows waiting to be folded in */
    size_t filled;
    size_t rows_seen;
    bool folded_in_double; /* entries carry double rounding (a fast fold) */
} lsq_tri;

lsq_tri *lsq_tri_new(size_t k);
void lsq_tri_free(lsq_tri *t);
/* Adds one row of k entries. */
void lsq_tri_add(lsq_tri *t, const long double *row);
/* Folds in the rows still waiting; call before reading t->r. */
void lsq_tri_finish(lsq_tri *t);

/* The triangle of columns cols[0] < … < cols[m−1] of a finished t, taken
   as independent (no pivoting): r (m×m column-major, upper) with rᵀr their
   cross-product, and z (t->k entries), column `target` carried through the
   same reflectors: z's first m entries are rᵀ times the least-squares
   coefficients of the target on those columns, and the squares of the
   rest sum to its residual sum of squares. Column j has nonzeros in rows
   0 … cols[j] only, so its reflector spans rows j … cols[j]: a leading
   run of columns costs nothing, and dropping q columns costs about q
   operations per entry after them. */
void lsq_tri_select(const lsq_tri *t, const size_t *cols, size_t m, size_t target,
                    long double *r, long double *z);

#endif

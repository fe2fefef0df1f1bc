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

/* ‖R₁₁‖₁ ‖R₁₁⁻¹‖₁: the condition number of the scaled, estimable columns
   (1 when nothing is estimable). */
long double lsq_qr_condition(const lsq_qr *q);

/* Inverts the symmetric positive definite n×n row-major m in place
   (Cholesky); returns false, m unchanged, when it is not positive definite. */
bool lsq_spd_inverse(long double *m, size_t n);
void lsq_qr_alias(const lsq_qr *q, size_t j, long double *c);

/*
 * A triangle accumulated over rows: the k×k upper-triangular R of a tall
 * matrix whose rows arrive one at a time (Householder QR of [R; block] for
 * each block of rows), so that R ᵀR equals the matrix's cross-product and
 * no more than one block of rows is ever stored.
 */
typedef struct {
    size_t k;
    long double *r;      /* column-major k×k, upper triangle; rows beyond the
                            rows seen stay zero */
    long double *block;  /* column-major rows waiting to be folded in */
    size_t filled;
    size_t rows_seen;
} lsq_tri;

lsq_tri *lsq_tri_new(size_t k);
void lsq_tri_free(lsq_tri *t);
/* Adds one row of k entries. */
void lsq_tri_add(lsq_tri *t, const long double *row);
/* Folds in the rows still waiting; call before reading t->r. */
void lsq_tri_finish(lsq_tri *t);

#endif

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

/* Factors the n×p column-major matrix x (copied). Columns are scaled by
   powers of two (exactly) to unit order of norm before pivoting. A column
   whose remaining norm falls below tolerance × the largest is aliased.
   Caller frees with lsq_qr_free. */
lsq_qr *lsq_qr_new(const long double *x, size_t n, size_t p, long double tolerance);
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

#endif

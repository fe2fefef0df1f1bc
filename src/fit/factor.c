/*
 * factor.c — the fit's triangular factor, kept after the fit so that every
 * diagnostic reads it instead of factoring the design again.
 *
 * With S₁ the estimable columns in pivot order, each multiplied by its
 * power-of-two scale, the weighted design satisfies X̃ S₁ = Q R, Q with
 * orthonormal columns (n × rank) and R upper triangular (rank × rank). On
 * the dense path R is the Householder factor of the whole design; on the
 * streaming path it is the factor R₀ of the triangle, corrected by the
 * Cholesky factor L of the Gram matrix G = Σ uᵢuᵢᵀ of the rows whitened by
 * R₀ (R = LᵀR₀, so that Σ R⁻ᵀxᵢ xᵢᵀR⁻¹ = I; Björck 1996, Numerical Methods
 * for Least Squares Problems, §2.8, for the corrected semi-normal view).
 * Row i of Q is then R⁻ᵀS₁ᵀx̃ᵢ: its squared length is the leverage, and
 * sums over rows of products of those rows are the projections every
 * diagnostic needs (Golub & Van Loan 2013, §5.3).
 */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

struct fit_factor {
    size_t p, rank;
    size_t *perm;       /* rank entries: design column of pivot k */
    long double *scale; /* rank entries: the power of two of pivot k */
    long double *r;     /* rank × rank row-major, upper */
    double *r_double;   /* the same rounded, for the fast row passes */
    double *scale_double;
};

fit_factor *fit_factor_new(const lsq_qr *q, const long double *gram)
{
    fit_factor *f = xcalloc(1, sizeof *f);
    size_t rank = q->rank;
    f->p = q->p;
    f->rank = rank;
    f->perm = xmalloc((rank + 1) * sizeof(size_t));
    f->scale = xmalloc((rank + 1) * sizeof(long double));
    f->scale_double = xmalloc((rank + 1) * sizeof(double));
    f->r = xcalloc(rank * rank + 1, sizeof(long double));
    f->r_double = xmalloc((rank * rank + 1) * sizeof(double));
    for (size_t k = 0; k < rank; k++) {
        f->perm[k] = q->perm[k];
        f->scale[k] = q->scale[q->perm[k]];
        f->scale_double[k] = (double)f->scale[k];
        for (size_t c = k; c < rank; c++)
            f->r[k * rank + c] = q->qr[c * q->n + k];
    }
    if (gram && rank) {
        /* G = L Lᵀ, then R ← Lᵀ R₀ (upper times upper), each sum running
           along rows of transposed copies of L and R₀. */
        long double *l = xcalloc(rank * rank + 1, sizeof(long double));
        if (lsq_cholesky(gram, rank, l)) {
            long double *lt = xmalloc((rank * rank + 1) * sizeof(long double));
            long double *r0t = xmalloc((rank * rank + 1) * sizeof(long double));
            for (size_t a = 0; a < rank; a++)
                for (size_t c = 0; c < rank; c++) {
                    lt[a * rank + c] = l[c * rank + a];
                    r0t[a * rank + c] = f->r[c * rank + a];
                }
            long double *r = xcalloc(rank * rank + 1, sizeof(long double));
            for (size_t a = 0; a < rank; a++)
                for (size_t c = a; c < rank; c++) {
                    long double s = 0.0L;
                    const long double *la = lt + a * rank, *rc = r0t + c * rank;
                    for (size_t k = a; k <= c; k++)
                        s += la[k] * rc[k];
                    r[a * rank + c] = s;
                }
            free(f->r);
            f->r = r;
            free(lt);
            free(r0t);
        }
        free(l);
    }
    for (size_t i = 0; i < rank * rank; i++)
        f->r_double[i] = (double)f->r[i];
    return f;
}

void fit_factor_free(fit_factor *f)
{
    if (!f)
        return;
    free(f->perm);
    free(f->scale);
    free(f->scale_double);
    free(f->r);
    free(f->r_double);
    free(f);
}

size_t fit_factor_rank(const fit_factor *f)
{
    return f ? f->rank : 0;
}

size_t fit_factor_column(const fit_factor *f, size_t k)
{
    return f->perm[k];
}

void fit_factor_whiten(const fit_factor *f, const double *x, double *u)
{
    size_t rank = f->rank;
    const double *r = f->r_double;
    for (size_t k = 0; k < rank; k++) {
        double s = x[f->perm[k]] * f->scale_double[k];
        for (size_t j = 0; j < k; j++)
            s -= r[j * rank + k] * u[j];
        u[k] = s / r[k * rank + k];
    }
}

struct fit_whitened_rows {
    const fit_factor *factor;
    const design *design;
    const size_t *rows;
    size_t n, first, count; /* the block holds steps first … first+count−1 */
    double *x;              /* n_coefs × FIT_BLOCK, column-major */
    double *u;              /* rank × FIT_BLOCK, column-major */
};

fit_whitened_rows *fit_whitened_rows_new(const fit_factor *f, const design *d,
                                         const size_t *rows, size_t n)
{
    fit_whitened_rows *w = xcalloc(1, sizeof *w);
    w->factor = f;
    w->design = d;
    w->rows = rows;
    w->n = n;
    w->x = xmalloc((d->n_coefs * FIT_BLOCK + 1) * sizeof(double));
    w->u = xmalloc((f->rank * FIT_BLOCK + 1) * sizeof(double));
    return w;
}

void fit_whitened_rows_free(fit_whitened_rows *w)
{
    if (!w)
        return;
    free(w->x);
    free(w->u);
    free(w);
}

/* The design rows of the block, one call for a run of consecutive rows
   (data sorted by order_by read in one piece), then √w. */
static void whitened_gather(fit_whitened_rows *w)
{
    const design *d = w->design;
    const size_t *rows = w->rows + w->first;
    bool run = true;
    for (size_t j = 1; j < w->count && run; j++)
        run = rows[j] == rows[0] + j;
    if (run)
        design_block_double(d, rows[0], w->count, w->x, FIT_BLOCK);
    else
        for (size_t j = 0; j < w->count; j++)
            design_block_double(d, rows[j], 1, w->x + j, FIT_BLOCK);
    if (!d->weights)
        return;
    for (size_t j = 0; j < w->count; j++) {
        double root = sqrt(gsl_vector_get(d->weights, rows[j]));
        for (size_t c = 0; c < d->n_coefs; c++)
            w->x[c * FIT_BLOCK + j] *= root;
    }
}

/* fit_factor_whiten on every row of the block at once: the operations of
   each row in the same order, so the same digits, across rows in the
   inner loop. */
static void whitened_block(fit_whitened_rows *w)
{
    const fit_factor *f = w->factor;
    size_t rank = f->rank, count = w->count;
    const double *r = f->r_double;
    for (size_t k = 0; k < rank; k++) {
        double *uk = w->u + k * FIT_BLOCK;
        const double *xk = w->x + f->perm[k] * FIT_BLOCK;
        double scale = f->scale_double[k];
        for (size_t i = 0; i < count; i++)
            uk[i] = xk[i] * scale;
        for (size_t j = 0; j < k; j++) {
            double c = r[j * rank + k];
            const double *uj = w->u + j * FIT_BLOCK;
            for (size_t i = 0; i < count; i++)
                uk[i] -= c * uj[i];
        }
        double pivot = r[k * rank + k];
        for (size_t i = 0; i < count; i++)
            uk[i] /= pivot;
    }
}

void fit_whitened_row(fit_whitened_rows *w, size_t t, double *u)
{
    if (t < w->first || t >= w->first + w->count) {
        w->first = t;
        w->count = w->n - t < FIT_BLOCK ? w->n - t : FIT_BLOCK;
        whitened_gather(w);
        whitened_block(w);
    }
    size_t i = t - w->first;
    for (size_t k = 0; k < w->factor->rank; k++)
        u[k] = w->u[k * FIT_BLOCK + i];
}

void fit_factor_whiten_long(const fit_factor *f, const long double *x, long double *u)
{
    size_t rank = f->rank;
    const long double *r = f->r;
    for (size_t k = 0; k < rank; k++) {
        long double s = x[f->perm[k]] * f->scale[k];
        for (size_t j = 0; j < k; j++)
            s -= r[j * rank + k] * u[j];
        u[k] = s / r[k * rank + k];
    }
}

void fit_factor_solve(const fit_factor *f, const long double *c, long double *b)
{
    size_t rank = f->rank;
    long double *u = xmalloc((rank + 1) * sizeof(long double));
    fit_factor_whiten_long(f, c, u);
    for (size_t k = rank; k-- > 0;) {
        long double s = u[k];
        for (size_t j = k + 1; j < rank; j++)
            s -= f->r[k * rank + j] * u[j];
        u[k] = s / f->r[k * rank + k];
    }
    for (size_t j = 0; j < f->p; j++)
        b[j] = 0.0L;
    for (size_t k = 0; k < rank; k++)
        b[f->perm[k]] = u[k] * f->scale[k];
    free(u);
}

void fit_factor_unit_triangle(const fit_factor *f, double *out)
{
    size_t rank = f->rank;
    for (size_t c = 0; c < rank; c++) {
        long double norm = 0.0L;
        for (size_t k = 0; k <= c; k++)
            norm += f->r[k * rank + c] * f->r[k * rank + c];
        norm = sqrtl(norm);
        for (size_t k = 0; k < rank; k++)
            out[k * rank + c] =
                k <= c && norm > 0 ? (double)(f->r[k * rank + c] / norm) : 0.0;
    }
}

void fit_factor_sandwich(const fit_factor *f, const long double *m, long double *out)
{
    size_t rank = f->rank, p = f->p;
    memset(out, 0, p * p * sizeof(long double));
    /* Z = R⁻¹ M R⁻ᵀ: solve R Z₁ = M column by column, then R Zᵀ = Z₁ᵀ. */
    long double *z = xmalloc((rank * rank + 1) * sizeof(long double));
    memcpy(z, m, rank * rank * sizeof(long double));
    long double *minus_row = xmalloc((rank + 1) * sizeof(long double));
    for (int side = 0; side < 2; side++) {
        /* Every column at once, row k of z from the rows below it: the
           same operations per column in the same order (z − r·z is
           z + (−r)·z exactly), each row of z read contiguously. */
        for (size_t k = rank; k-- > 0;) {
            long double *zk = z + k * rank;
            for (size_t j = k + 1; j < rank; j++)
                minus_row[j] = -f->r[k * rank + j];
            lsq_combine_rows(zk, minus_row + k + 1, rank - k - 1, z + (k + 1) * rank, rank,
                             rank);
            for (size_t c = 0; c < rank; c++)
                zk[c] /= f->r[k * rank + k];
        }
        for (size_t a = 0; a < rank; a++)
            for (size_t b = a + 1; b < rank; b++) {
                long double t = z[a * rank + b];
                z[a * rank + b] = z[b * rank + a];
                z[b * rank + a] = t;
            }
    }
    for (size_t a = 0; a < rank; a++)
        for (size_t b = 0; b < rank; b++)
            out[f->perm[a] * p + f->perm[b]] = z[a * rank + b] * f->scale[a] * f->scale[b];
    free(z);
    free(minus_row);
}

void fit_factor_inverse_gram(const fit_factor *f, long double *out)
{
    size_t rank = f->rank, p = f->p;
    memset(out, 0, p * p * sizeof(long double));
    /* lsq_upper_inverse_gram reads R by columns: a column-major copy. */
    long double *columns = xmalloc((rank * rank + 1) * sizeof(long double));
    long double *g = xmalloc((rank * rank + 1) * sizeof(long double));
    for (size_t a = 0; a < rank; a++)
        for (size_t c = 0; c < rank; c++)
            columns[c * rank + a] = f->r[a * rank + c];
    lsq_upper_inverse_gram(columns, rank, g);
    for (size_t a = 0; a < rank; a++)
        for (size_t b = 0; b < rank; b++)
            out[f->perm[a] * p + f->perm[b]] = g[a * rank + b] * f->scale[a] * f->scale[b];
    free(g);
    free(columns);
}

/*
 * qr.c — least squares in extended precision.
 *
 * Why by hand: GSL factors in double only, and a double factorisation of a
 * raw polynomial design loses the digits that the data carry (the NIST
 * Filip set keeps about 7 of 15). Here every step runs in long double
 * (64-bit significand) and the solution is refined in binary128.
 *
 * Factorisation (Businger & Golub 1965; Golub & Van Loan, "Matrix
 * Computations", 4th ed., Alg. 5.4.1): A D P = Q R with D a diagonal of
 * powers of two (exact scaling) and P the column permutation that brings
 * the column of largest remaining norm forward at each step. The numerical
 * rank r is the number of pivots with |R_kk| > tolerance · |R_00|.
 *
 * Refinement (Björck 1967, "Iterative refinement of linear least squares
 * solutions I", BIT 7): the augmented system
 *     [ I   A₁ ] [ r ]   [ y ]
 *     [ A₁ᵀ 0  ] [ z ] = [ 0 ]
 * has the least-squares solution z and residual r. Its residuals
 * f = y − r − A₁z and g = −A₁ᵀr are accumulated in binary128 and the
 * correction is solved with the factors: h = R⁻ᵀg, d = Qᵀf,
 * δz = R⁻¹(d₁ − h), δr = Q [h; d₂]. Unlike refining z alone, this removes
 * the error term that grows with cond(A)² · ‖r‖.
 */
#include "qr.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "../util/util.h"

__extension__ typedef __float128 quad;

static long double *column(long double *m, size_t n, size_t j)
{
    return m + j * n;
}

static long double sum_squares_from(const long double *v, size_t from, size_t n)
{
    long double s = 0.0L;
    for (size_t i = from; i < n; i++)
        s += v[i] * v[i];
    return s;
}

static void swap_columns(lsq_qr *q, size_t a, size_t b)
{
    if (a == b)
        return;
    long double *ca = column(q->qr, q->n, a), *cb = column(q->qr, q->n, b);
    long double *xa = column(q->a, q->n, a), *xb = column(q->a, q->n, b);
    for (size_t i = 0; i < q->n; i++) {
        long double t = ca[i];
        ca[i] = cb[i];
        cb[i] = t;
        t = xa[i];
        xa[i] = xb[i];
        xb[i] = t;
    }
    size_t t = q->perm[a];
    q->perm[a] = q->perm[b];
    q->perm[b] = t;
}

/* Householder reflector for column k from row k down: v (stored below the
   diagonal with v_k = 1 implied), beta = 2 / vᵀv; R_kk written in place. */
static void make_reflector(lsq_qr *q, size_t k)
{
    long double *x = column(q->qr, q->n, k);
    long double norm = sqrtl(sum_squares_from(x, k, q->n));
    if (norm == 0.0L) {
        q->beta[k] = 0.0L;
        return;
    }
    long double alpha = x[k] > 0 ? -norm : norm;
    long double v0 = x[k] - alpha;
    for (size_t i = k + 1; i < q->n; i++)
        x[i] /= v0;
    /* vᵀv with v0 = 1: 1 + Σ (x_i/v0)² = −2 alpha / v0 ... computed directly. */
    long double vtv = 1.0L + sum_squares_from(x, k + 1, q->n);
    q->beta[k] = 2.0L / vtv;
    x[k] = alpha;
}

static void apply_reflector(const lsq_qr *q, size_t k, long double *v)
{
    if (q->beta[k] == 0.0L)
        return;
    const long double *h = column(q->qr, q->n, k);
    long double s = v[k];
    for (size_t i = k + 1; i < q->n; i++)
        s += h[i] * v[i];
    s *= q->beta[k];
    v[k] -= s;
    for (size_t i = k + 1; i < q->n; i++)
        v[i] -= s * h[i];
}

static void factor(lsq_qr *q, long double tolerance)
{
    size_t steps = q->n < q->p ? q->n : q->p;
    long double first = 0.0L;
    q->rank = 0;
    for (size_t k = 0; k < steps; k++) {
        size_t best = k;
        long double best_norm = -1.0L;
        for (size_t j = k; j < q->p; j++) {
            long double s = sum_squares_from(column(q->qr, q->n, j), k, q->n);
            if (s > best_norm) {
                best_norm = s;
                best = j;
            }
        }
        if (k == 0)
            first = sqrtl(best_norm);
        if (sqrtl(best_norm) <= tolerance * first || best_norm == 0.0L)
            break;
        swap_columns(q, k, best);
        make_reflector(q, k);
        for (size_t j = k + 1; j < q->p; j++)
            apply_reflector(q, k, column(q->qr, q->n, j));
        q->rank = k + 1;
    }
}

lsq_qr *lsq_qr_new(const long double *x, size_t n, size_t p, long double tolerance)
{
    lsq_qr *q = xcalloc(1, sizeof *q);
    q->n = n;
    q->p = p;
    q->a = xmalloc(n * p * sizeof(long double));
    q->qr = xmalloc(n * p * sizeof(long double));
    q->beta = xcalloc(p, sizeof(long double));
    q->perm = xmalloc(p * sizeof(size_t));
    q->scale = xmalloc(p * sizeof(long double));
    for (size_t j = 0; j < p; j++) {
        const long double *source = x + j * n;
        long double norm = sqrtl(sum_squares_from(source, 0, n));
        int exponent = 0;
        if (norm > 0.0L)
            frexpl(norm, &exponent);
        q->scale[j] = ldexpl(1.0L, -exponent);
        for (size_t i = 0; i < n; i++)
            q->a[j * n + i] = source[i] * q->scale[j];
        q->perm[j] = j;
    }
    memcpy(q->qr, q->a, n * p * sizeof(long double));
    factor(q, tolerance);
    return q;
}

void lsq_qr_free(lsq_qr *q)
{
    if (!q)
        return;
    free(q->a);
    free(q->qr);
    free(q->beta);
    free(q->perm);
    free(q->scale);
    free(q);
}

static void apply_qt(const lsq_qr *q, long double *v)
{
    for (size_t k = 0; k < q->rank; k++)
        apply_reflector(q, k, v);
}

static void apply_q(const lsq_qr *q, long double *v)
{
    for (size_t k = q->rank; k-- > 0;)
        apply_reflector(q, k, v);
}

/* Solves R₁₁ z = d in place (back substitution). */
static void solve_upper(const lsq_qr *q, long double *d)
{
    for (size_t k = q->rank; k-- > 0;) {
        long double s = d[k];
        for (size_t j = k + 1; j < q->rank; j++)
            s -= column(q->qr, q->n, j)[k] * d[j];
        d[k] = s / column(q->qr, q->n, k)[k];
    }
}

/* Solves R₁₁ᵀ h = g in place (forward substitution). */
static void solve_upper_transposed(const lsq_qr *q, long double *g)
{
    for (size_t k = 0; k < q->rank; k++) {
        long double s = g[k];
        const long double *rk = column(q->qr, q->n, k);
        for (size_t j = 0; j < k; j++)
            s -= rk[j] * g[j];
        g[k] = s / rk[k];
    }
}

/* One correction of the augmented system: given targets (y, c) and current
   (r, z), adds the correction to r and z; returns max |δz| / max |z|. */
static long double correct(const lsq_qr *q, const long double *y, const long double *c,
                           long double *r, long double *z, long double *work_n,
                           long double *work_p)
{
    size_t n = q->n, rank = q->rank;
    for (size_t i = 0; i < n; i++) {
        quad f = (quad)y[i] - (quad)r[i];
        for (size_t k = 0; k < rank; k++)
            f -= (quad)column(q->a, n, k)[i] * (quad)z[k];
        work_n[i] = (long double)f;
    }
    for (size_t k = 0; k < rank; k++) {
        const long double *ak = column(q->a, n, k);
        quad g = c ? (quad)c[k] : 0;
        for (size_t i = 0; i < n; i++)
            g -= (quad)ak[i] * (quad)r[i];
        work_p[k] = (long double)g;
    }
    solve_upper_transposed(q, work_p); /* h */
    apply_qt(q, work_n);               /* d */
    for (size_t k = 0; k < rank; k++) {
        long double d1 = work_n[k];
        work_n[k] = work_p[k]; /* [h; d₂] for δr */
        work_p[k] = d1 - work_p[k];
    }
    solve_upper(q, work_p);            /* δz */
    apply_q(q, work_n);                /* δr */
    long double change = 0.0L, magnitude = 0.0L;
    for (size_t k = 0; k < rank; k++) {
        z[k] += work_p[k];
        change = fmaxl(change, fabsl(work_p[k]));
        magnitude = fmaxl(magnitude, fabsl(z[k]));
    }
    for (size_t i = 0; i < n; i++)
        r[i] += work_n[i];
    return magnitude > 0.0L ? change / magnitude : 0.0L;
}

/* Refines (r, z) for targets y (n) and c (rank, NULL = zeros). */
static void refine(const lsq_qr *q, const long double *y, const long double *c,
                   long double *r, long double *z)
{
    long double *work_n = xmalloc((q->n ? q->n : 1) * sizeof(long double));
    long double *work_p = xmalloc((q->p ? q->p : 1) * sizeof(long double));
    long double previous = INFINITY;
    for (int iteration = 0; iteration < 10; iteration++) {
        long double size = correct(q, y, c, r, z, work_n, work_p);
        if (size < 1e-21L || size >= previous * 0.5L)
            break;
        previous = size;
    }
    free(work_n);
    free(work_p);
}

void lsq_qr_solve(const lsq_qr *q, const long double *y, long double *b, long double *r)
{
    size_t n = q->n;
    long double *z = xcalloc(q->p ? q->p : 1, sizeof(long double));
    for (size_t i = 0; i < n; i++)
        r[i] = 0.0L;
    /* Starting from r = 0, z = 0, the first correction is the plain QR
       solution; later ones refine it. */
    refine(q, y, NULL, r, z);
    for (size_t j = 0; j < q->p; j++)
        b[j] = 0.0L;
    for (size_t k = 0; k < q->rank; k++)
        b[q->perm[k]] = z[k] * q->scale[q->perm[k]];
    free(z);
}

void lsq_qr_inverse_gram(const lsq_qr *q, long double *out)
{
    size_t p = q->p, rank = q->rank;
    memset(out, 0, p * p * sizeof(long double));
    long double *zero_y = xcalloc(q->n ? q->n : 1, sizeof(long double));
    long double *r = xmalloc((q->n ? q->n : 1) * sizeof(long double));
    long double *z = xmalloc((rank ? rank : 1) * sizeof(long double));
    long double *target = xmalloc((rank ? rank : 1) * sizeof(long double));
    /* Column l of (A₁ᵀA₁)⁻¹ is z in the augmented system with y = 0 and
       right-hand side −e_l below: A₁ᵀA₁ z = e_l. */
    for (size_t l = 0; l < rank; l++) {
        for (size_t k = 0; k < rank; k++) {
            target[k] = k == l ? -1.0L : 0.0L;
            z[k] = 0.0L;
        }
        for (size_t i = 0; i < q->n; i++)
            r[i] = 0.0L;
        refine(q, zero_y, target, r, z);
        size_t jl = q->perm[l];
        for (size_t k = 0; k < rank; k++) {
            size_t jk = q->perm[k];
            out[jk * p + jl] = z[k] * q->scale[jk] * q->scale[jl];
        }
    }
    free(zero_y);
    free(r);
    free(z);
    free(target);
}

bool lsq_qr_estimable(const lsq_qr *q, size_t j)
{
    for (size_t k = 0; k < q->rank; k++)
        if (q->perm[k] == j)
            return true;
    return false;
}

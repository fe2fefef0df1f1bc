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

lsq_qr *lsq_qr_new(long double *x, size_t n, size_t p, long double tolerance)
{
    lsq_qr *q = xcalloc(1, sizeof *q);
    q->n = n;
    q->p = p;
    q->a = x;
    q->qr = xmalloc((n * p + 1) * sizeof(long double));
    q->beta = xcalloc(p ? p : 1, sizeof(long double));
    q->perm = xmalloc((p ? p : 1) * sizeof(size_t));
    q->scale = xmalloc((p ? p : 1) * sizeof(long double));
    for (size_t j = 0; j < p; j++) {
        long double *source = x + j * n;
        long double norm = sqrtl(sum_squares_from(source, 0, n));
        int exponent = 0;
        if (norm > 0.0L)
            frexpl(norm, &exponent);
        q->scale[j] = ldexpl(1.0L, -exponent);
        for (size_t i = 0; i < n; i++)
            source[i] *= q->scale[j];
        q->perm[j] = j;
    }
    if (n > 0 && p > 0)
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

/* ---- whitened coordinates ------------------------------------------------- */

static long double r_entry(const lsq_qr *q, size_t row, size_t col)
{
    return q->qr[col * q->n + row];
}

void lsq_qr_whiten(const lsq_qr *q, const long double *x, long double *u)
{
    for (size_t k = 0; k < q->rank; k++)
        u[k] = x[q->perm[k]] * q->scale[q->perm[k]];
    solve_upper_transposed(q, u);
}

/* Solves R₁₁ z = v for each column v of the rank × rank row-major m, in
   place. */
void lsq_combine_rows(long double *y, const long double *coef, size_t count,
                      const long double *x, size_t stride, size_t n)
{
    size_t c = 0;
    for (; c + 4 <= count; c += 4) {
        long double c0 = coef[c], c1 = coef[c + 1], c2 = coef[c + 2], c3 = coef[c + 3];
        const long double *x0 = x + c * stride, *x1 = x0 + stride, *x2 = x1 + stride,
                          *x3 = x2 + stride;
        for (size_t j = 0; j < n; j++)
            y[j] = y[j] + c0 * x0[j] + c1 * x1[j] + c2 * x2[j] + c3 * x3[j];
    }
    for (; c < count; c++) {
        long double c0 = coef[c];
        const long double *x0 = x + c * stride;
        for (size_t j = 0; j < n; j++)
            y[j] += c0 * x0[j];
    }
}

/* m ← R₁₁⁻¹ m for a rank × rank row-major m: the back substitution of
   solve_upper run on every column at once, row k of m updated from the
   rows below it, so each entry of R₁₁ is read once and m row by row (the
   same operations in the same order per column as solve_upper). */
static void solve_upper_columns(const lsq_qr *q, long double *m)
{
    size_t rank = q->rank;
    long double *minus_row = xmalloc((rank + 1) * sizeof(long double));
    for (size_t k = rank; k-- > 0;) {
        long double *mk = m + k * rank;
        /* mk − r·m is mk + (−r)·m exactly. */
        for (size_t j = k + 1; j < rank; j++)
            minus_row[j] = -column(q->qr, q->n, j)[k];
        lsq_combine_rows(mk, minus_row + k + 1, rank - k - 1, m + (k + 1) * rank, rank, rank);
        long double rkk = column(q->qr, q->n, k)[k];
        for (size_t c = 0; c < rank; c++)
            mk[c] /= rkk;
    }
    free(minus_row);
}

static void transpose_square(long double *m, size_t size)
{
    for (size_t a = 0; a < size; a++)
        for (size_t b = a + 1; b < size; b++) {
            long double t = m[a * size + b];
            m[a * size + b] = m[b * size + a];
            m[b * size + a] = t;
        }
}

void lsq_qr_sandwich(const lsq_qr *q, const long double *m, long double *out)
{
    size_t p = q->p, rank = q->rank;
    memset(out, 0, p * p * sizeof(long double));
    if (rank == 0)
        return;
    long double *z = xmalloc(rank * rank * sizeof(long double));
    memcpy(z, m, rank * rank * sizeof(long double));
    solve_upper_columns(q, z); /* R⁻¹ M */
    transpose_square(z, rank); /* M R⁻ᵀ, M symmetric */
    solve_upper_columns(q, z); /* R⁻¹ M R⁻ᵀ */
    for (size_t a = 0; a < rank; a++) {
        size_t ja = q->perm[a];
        for (size_t b = 0; b < rank; b++) {
            size_t jb = q->perm[b];
            out[ja * p + jb] = z[a * rank + b] * q->scale[ja] * q->scale[jb];
        }
    }
    free(z);
}

void lsq_qr_solve_upper(const lsq_qr *q, long double *m)
{
    solve_upper_columns(q, m);
}

void lsq_qr_outer_sandwich(const lsq_qr *q, const long double *t, const long double *m,
                           long double *out)
{
    size_t p = q->p, rank = q->rank;
    memset(out, 0, p * p * sizeof(long double));
    long double *tm = xcalloc(rank * rank + 1, sizeof(long double));
    for (size_t a = 0; a < rank; a++)
        lsq_combine_rows(tm + a * rank, t + a * rank, rank, m, rank, rank);
    for (size_t a = 0; a < rank; a++) {
        size_t ja = q->perm[a];
        const long double *tma = tm + a * rank;
        for (size_t b = 0; b <= a; b++) {
            const long double *tb = t + b * rank;
            long double v = 0.0L;
            for (size_t c = 0; c < rank; c++)
                v += tma[c] * tb[c];
            size_t jb = q->perm[b];
            out[ja * p + jb] = out[jb * p + ja] = v * q->scale[ja] * q->scale[jb];
        }
    }
    free(tm);
}

void lsq_qr_normal_solve(const lsq_qr *q, const long double *ginv, const long double *g,
                         long double *d)
{
    size_t rank = q->rank;
    long double *work = xmalloc((rank + 1) * sizeof(long double));
    long double *mixed = xmalloc((rank + 1) * sizeof(long double));
    for (size_t k = 0; k < rank; k++)
        work[k] = g[q->perm[k]] * q->scale[q->perm[k]];
    solve_upper_transposed(q, work);
    if (ginv) {
        for (size_t a = 0; a < rank; a++) {
            long double s = 0.0L;
            for (size_t b = 0; b < rank; b++)
                s += ginv[a * rank + b] * work[b];
            mixed[a] = s;
        }
        memcpy(work, mixed, rank * sizeof(long double));
    }
    solve_upper(q, work);
    for (size_t j = 0; j < q->p; j++)
        d[j] = 0.0L;
    for (size_t k = 0; k < rank; k++)
        d[q->perm[k]] = work[k] * q->scale[q->perm[k]];
    free(work);
    free(mixed);
}

long double lsq_qr_condition(const lsq_qr *q)
{
    size_t rank = q->rank;
    /* R₁₁⁻¹, all its columns solved together (solve_upper_columns). */
    long double *inverse = xcalloc(rank * rank + 1, sizeof(long double));
    for (size_t k = 0; k < rank; k++)
        inverse[k * rank + k] = 1.0L;
    solve_upper_columns(q, inverse);
    long double norm = 0.0L, inverse_norm = 0.0L;
    for (size_t c = 0; c < rank; c++) {
        long double sum = 0.0L;
        for (size_t k = 0; k <= c; k++)
            sum += fabsl(r_entry(q, k, c));
        norm = fmaxl(norm, sum);
        sum = 0.0L;
        for (size_t k = 0; k < rank; k++)
            sum += fabsl(inverse[k * rank + c]);
        inverse_norm = fmaxl(inverse_norm, sum);
    }
    free(inverse);
    return rank ? norm * inverse_norm : 1.0L;
}

/* The transpose of the n×n row-major m, newly allocated. */
static long double *transposed(const long double *m, size_t n)
{
    long double *t = xmalloc((n * n + 1) * sizeof(long double));
    for (size_t a = 0; a < n; a++)
        for (size_t b = 0; b < n; b++)
            t[b * n + a] = m[a * n + b];
    return t;
}

bool lsq_cholesky(const long double *m, size_t n, long double *l)
{
    for (size_t j = 0; j < n; j++) {
        long double d = m[j * n + j];
        for (size_t k = 0; k < j; k++)
            d -= l[j * n + k] * l[j * n + k];
        if (!(d > 0.0L))
            return false;
        l[j * n + j] = sqrtl(d);
        for (size_t i = j + 1; i < n; i++) {
            long double s = m[i * n + j];
            for (size_t k = 0; k < j; k++)
                s -= l[i * n + k] * l[j * n + k];
            l[i * n + j] = s / l[j * n + j];
        }
    }
    return true;
}

bool lsq_spd_solve(const long double *m, size_t n, const long double *b, long double *x)
{
    long double *l = xcalloc(n * n + 1, sizeof(long double));
    if (!lsq_cholesky(m, n, l)) {
        free(l);
        return false;
    }
    for (size_t i = 0; i < n; i++) {
        long double s = b[i];
        for (size_t k = 0; k < i; k++)
            s -= l[i * n + k] * x[k];
        x[i] = s / l[i * n + i];
    }
    long double *lt = transposed(l, n);
    for (size_t i = n; i-- > 0;) {
        long double s = x[i];
        for (size_t k = i + 1; k < n; k++)
            s -= lt[i * n + k] * x[k];
        x[i] = s / l[i * n + i];
    }
    free(lt);
    free(l);
    return true;
}

long double lsq_upper_inverse_gram(const long double *r, size_t m, long double *g)
{
    /* Row a of U = r⁻¹ by forward substitution along rows of rᵀ (rows of
       the column-major r): u_al = (δ_al − Σ_{a≤i<l} u_ai r_il) / r_ll. The
       sums run along contiguous rows, so nothing is stored per product. */
    long double *u = xcalloc(m * m + 1, sizeof(long double)); /* row-major */
    for (size_t a = 0; a < m; a++) {
        long double *ua = u + a * m;
        for (size_t l = a; l < m; l++) {
            const long double *rl = r + l * m;
            long double s = l == a ? 1.0L : 0.0L;
            for (size_t i = a; i < l; i++)
                s -= ua[i] * rl[i];
            ua[l] = s / rl[l];
        }
    }
    /* g = U Uᵀ: g_ab = Σ_{l ≥ max(a, b)} u_al u_bl, a dot product of rows. */
    for (size_t a = 0; a < m; a++)
        for (size_t b = 0; b <= a; b++) {
            const long double *ua = u + a * m, *ub = u + b * m;
            long double s = 0.0L;
            for (size_t l = a; l < m; l++)
                s += ua[l] * ub[l];
            g[a * m + b] = g[b * m + a] = s;
        }
    long double *length = xmalloc((m + 1) * sizeof(long double));
    long double norm = 0.0L, inverse_norm = 0.0L;
    for (size_t j = 0; j < m; j++) {
        long double sum = 0.0L, squares = 0.0L;
        for (size_t i = 0; i <= j; i++) {
            sum += fabsl(r[j * m + i]);
            squares += r[j * m + i] * r[j * m + i];
        }
        length[j] = sqrtl(squares);
        norm = fmaxl(norm, sum / length[j]);
    }
    for (size_t j = 0; j < m; j++) {
        long double sum = 0.0L;
        for (size_t i = 0; i <= j; i++)
            sum += length[i] * fabsl(u[i * m + j]);
        inverse_norm = fmaxl(inverse_norm, sum);
    }
    free(length);
    free(u);
    return m ? norm * inverse_norm : 1.0L;
}

bool lsq_spd_inverse(long double *m, size_t n)
{
    long double *l = xcalloc(n * n + 1, sizeof(long double));
    if (!lsq_cholesky(m, n, l)) {
        free(l);
        return false;
    }
    /* m⁻¹ = L⁻ᵀ L⁻¹, column by column: solve L z = e_c, then Lᵀ x = z
       (reading Lᵀ by rows from a transposed copy). */
    long double *lt = transposed(l, n);
    long double *z = xmalloc((n + 1) * sizeof(long double));
    for (size_t c = 0; c < n; c++) {
        /* z_k = 0 for k < c, and subtracting l · 0 changes nothing. */
        for (size_t i = 0; i < c; i++)
            z[i] = 0.0L;
        for (size_t i = c; i < n; i++) {
            long double s = i == c ? 1.0L : 0.0L;
            for (size_t k = c; k < i; k++)
                s -= l[i * n + k] * z[k];
            z[i] = s / l[i * n + i];
        }
        for (size_t i = n; i-- > 0;) {
            long double s = z[i];
            for (size_t k = i + 1; k < n; k++)
                s -= lt[i * n + k] * z[k];
            z[i] = s / l[i * n + i];
        }
        for (size_t i = 0; i < n; i++)
            m[i * n + c] = z[i];
    }
    free(z);
    free(lt);
    free(l);
    return true;
}

void lsq_qr_alias(const lsq_qr *q, size_t j, long double *c)
{
    for (size_t i = 0; i < q->p; i++)
        c[i] = 0.0L;
    size_t position = 0;
    while (position < q->p && q->perm[position] != j)
        position++;
    if (position < q->rank || position == q->p)
        return;
    long double *z = xmalloc((q->rank ? q->rank : 1) * sizeof(long double));
    for (size_t k = 0; k < q->rank; k++)
        z[k] = r_entry(q, k, position);
    solve_upper(q, z);
    for (size_t k = 0; k < q->rank; k++)
        c[q->perm[k]] = z[k] * q->scale[q->perm[k]] / q->scale[j];
    free(z);
}

/* ---- the row-streaming triangle ------------------------------------------ */

/* Rows per block: a block of 128 rows of a dozen columns stays in cache. */
enum { TRI_BLOCK = 128 };

lsq_tri *lsq_tri_new(size_t k)
{
    lsq_tri *t = xcalloc(1, sizeof *t);
    t->k = k;
    t->r = xcalloc(k * k + 1, sizeof(long double));
    t->block = xmalloc((k ? k : 1) * TRI_BLOCK * sizeof(long double));
    return t;
}

void lsq_tri_free(lsq_tri *t)
{
    if (!t)
        return;
    free(t->r);
    free(t->block);
    free(t);
}

/*
 * Householder QR of the stacked [R; B] (Golub & Van Loan, 4th ed., §5.2.2
 * with the structure of §5.2.4's row updates): for column j the reflector
 * involves only R_jj and column j of B, because R is already triangular.
 */
static void tri_fold(lsq_tri *t)
{
    size_t k = t->k, m = t->filled;
    long double *r = t->r, *b = t->block;
    for (size_t j = 0; j < k; j++) {
        long double *bj = b + j * TRI_BLOCK;
        long double sigma = 0.0L;
        for (size_t i = 0; i < m; i++)
            sigma += bj[i] * bj[i];
        if (sigma == 0.0L)
            continue;
        long double rjj = r[j * k + j];
        long double norm = sqrtl(rjj * rjj + sigma);
        long double alpha = rjj > 0 ? -norm : norm;
        long double v0 = rjj - alpha;
        long double beta = 2.0L / (v0 * v0 + sigma);
        for (size_t l = j + 1; l < k; l++) {
            long double *bl = b + l * TRI_BLOCK;
            long double s0 = v0 * r[l * k + j], s1 = 0.0L;
            size_t i = 0;
            for (; i + 1 < m; i += 2) {
                s0 += bj[i] * bl[i];
                s1 += bj[i + 1] * bl[i + 1];
            }
            if (i < m)
                s0 += bj[i] * bl[i];
            long double s = (s0 + s1) * beta;
            r[l * k + j] -= s * v0;
            for (i = 0; i < m; i++)
                bl[i] -= s * bj[i];
        }
        r[j * k + j] = alpha;
    }
    t->filled = 0;
}

void lsq_tri_add(lsq_tri *t, const long double *row)
{
    for (size_t j = 0; j < t->k; j++)
        t->block[j * TRI_BLOCK + t->filled] = row[j];
    t->rows_seen++;
    if (++t->filled == TRI_BLOCK)
        tri_fold(t);
}

void lsq_tri_finish(lsq_tri *t)
{
    if (t->filled)
        tri_fold(t);
}

void lsq_tri_select(const lsq_tri *t, const size_t *cols, size_t m, size_t target,
                    long double *r, long double *z)
{
    size_t k = t->k;
    /* The selected columns and the target, k rows each, column-major. */
    long double *w = xmalloc(((m + 1) * k + 1) * sizeof(long double));
    for (size_t j = 0; j < m; j++)
        memcpy(w + j * k, t->r + cols[j] * k, k * sizeof(long double));
    memcpy(w + m * k, t->r + target * k, k * sizeof(long double));
    for (size_t j = 0; j < m; j++) {
        long double *wj = w + j * k;
        size_t last = cols[j];
        long double sigma = 0.0L;
        for (size_t i = j + 1; i <= last; i++)
            sigma += wj[i] * wj[i];
        if (sigma == 0.0L)
            continue;
        long double norm = sqrtl(wj[j] * wj[j] + sigma);
        long double alpha = wj[j] > 0 ? -norm : norm;
        long double v0 = wj[j] - alpha;
        long double beta = 2.0L / (v0 * v0 + sigma);
        for (size_t l = j + 1; l <= m; l++) {
            long double *wl = w + l * k;
            long double s = v0 * wl[j];
            for (size_t i = j + 1; i <= last; i++)
                s += wj[i] * wl[i];
            s *= beta;
            wl[j] -= s * v0;
            for (size_t i = j + 1; i <= last; i++)
                wl[i] -= s * wj[i];
        }
        wj[j] = alpha;
        for (size_t i = j + 1; i <= last; i++)
            wj[i] = 0.0L;
    }
    for (size_t j = 0; j < m; j++)
        memcpy(r + j * m, w + j * k, m * sizeof(long double));
    memcpy(z, w + m * k, k * sizeof(long double));
    free(w);
}

/*
 * stream.c — the streaming algorithm for large designs: no n×p matrix is
 * ever stored; rows are evaluated from the data columns block by block
 * (design_block) and folded into small accumulators.
 *
 * Pass 1 folds the rows of [X̃ | ỹ] (X̃ = W^½X, ỹ = W^½y) into the upper
 * triangle R₀ by Householder QR of [R₀; block] (Golub & Van Loan, 4th ed.,
 * §5.2), in double precision with vector arithmetic; the rows are cut into
 * a fixed number of chunks whose triangles are folded together at the end
 * (tall-skinny QR, Demmel, Grigori, Hoemmen & Langou 2012, SIAM J. Sci.
 * Comput. 34), one thread per chunk.
 * Pass 2 (fit_rows, also the dense algorithm's pass over the rows) takes
 * R₁₁, the pivoted factor of R₀'s estimable columns (qr.c), and for every
 * row the whitened vector q = R₁₁⁻ᵀ S x̃ (S the pivoting and scaling), whose
 * squared norm is the leverage; it accumulates
 * the robust meats Σ ω q qᵀ, and the residuals and the gradient
 * X̃ᵀ(ỹ − X̃b) in long double. The gradient corrects b by the corrected
 * semi-normal equations (Björck 1987): b += (R₁₁ᵀR₁₁)⁻¹ X̃ᵀ(ỹ − X̃b).
 * Householder QR is backward stable, so R₀ᵀR₀ = X̃ᵀX̃ + E with
 * ‖R₀⁻ᵀ E R₀⁻¹‖ ≈ κ u: covariances from R₀ carry a relative error of about
 * κ u (u = 2⁻⁵³, κ the condition number of the scaled columns), which
 * fit.c keeps below 1e-13 by running designs with κ > 1000 through the
 * extended variant of the pass: rows and whitening in long double, and
 * the Gram matrix G = Σ q qᵀ summed so that X̃ᵀX̃ = R₁₁ᵀ G R₁₁ holds
 * without R₀'s rounding (the covariance is R₁₁⁻¹ G⁻¹ R₁₁⁻ᵀ, G ≈ I; this is
 * the second step of CholeskyQR2, Fukaya, Nakatsukasa, Yanagisawa &
 * Yamamoto 2014, ScalA'14, after a Householder first step).
 */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <threads.h>

/* Rows per block; the last block is padded with zero rows, which change
   none of the sums, so that every loop runs a constant 128 times. */
enum { BLOCK = FIT_BLOCK };

/* Four-way double vectors (GNU C vector extension): two SSE2 operations
   each on any x86-64, one AVX2 operation in the kernels cloned for it
   below. The clones perform the same operations in the same order (no
   fused multiply-add), so results do not depend on the processor. */
typedef double v4 __attribute__((vector_size(32), aligned(8), may_alias));

#if defined(__x86_64__) && defined(__GNUC__)
#define KERNEL __attribute__((target_clones("avx2", "default")))
#else
#define KERNEL
#endif

/* Four doubles at p (any alignment) as a vector. */
#define V4(p) (*(v4 *)(p))

static double sum4(const v4 *v)
{
    return ((*v)[0] + (*v)[1]) + ((*v)[2] + (*v)[3]);
}

/* Σ a_i b_i over a block, two independent four-way sums. */
static double block_dot(const double *a, const double *b)
{
    v4 s0 = {0, 0, 0, 0}, s1 = {0, 0, 0, 0};
    for (size_t i = 0; i < BLOCK; i += 8) {
        s0 += V4(a + i) * V4(b + i);
        s1 += V4(a + i + 4) * V4(b + i + 4);
    }
    s0 += s1;
    return sum4(&s0);
}

/* y −= s x over a block. */
static void block_axpy(double s, const double *x, double *y)
{
    v4 factor = {s, s, s, s};
    for (size_t i = 0; i < BLOCK; i += 4)
        V4(y + i) -= factor * V4(x + i);
}

/* Householder QR of [R; B] with R k×k upper triangular (column-major) and
   B a column-major block of BLOCK rows; R is overwritten. */
KERNEL static void fold_block(double *r, double *b, size_t k)
{
    for (size_t j = 0; j < k; j++) {
        double *bj = b + j * BLOCK;
        double sigma = block_dot(bj, bj);
        if (sigma == 0.0)
            continue;
        double rjj = r[j * k + j];
        double norm = sqrt(rjj * rjj + sigma);
        double alpha = rjj > 0 ? -norm : norm;
        double v0 = rjj - alpha;
        double beta = 2.0 / (v0 * v0 + sigma);
        for (size_t l = j + 1; l < k; l++) {
            double *bl = b + l * BLOCK;
            double s = (v0 * r[l * k + j] + block_dot(bj, bl)) * beta;
            r[l * k + j] -= s * v0;
            block_axpy(s, bj, bl);
        }
        r[j * k + j] = alpha;
    }
}

KERNEL void fit_block_gram_add(const double *b, size_t k, long double *gram)
{
    for (size_t a = 0; a < k; a++)
        for (size_t c = 0; c <= a; c++)
            gram[a * k + c] += block_dot(b + a * BLOCK, b + c * BLOCK);
}

/* Rows first … first+count−1 of every design side by side, then y, each
   row times √w, as a zero-padded column-major double block. */
static void weighted_block(const design *const *designs, size_t n_designs, size_t first,
                           size_t count, double *out, size_t k)
{
    const design *d = designs[0];
    size_t offset = 0;
    for (size_t j = 0; j < n_designs; j++) {
        design_block_double(designs[j], first, count, out + offset * BLOCK, BLOCK);
        offset += designs[j]->n_coefs;
    }
    const double *y = d->y->data + first * d->y->stride;
    for (size_t i = 0; i < count; i++)
        out[offset * BLOCK + i] = y[i * d->y->stride];
    if (d->weights) {
        const double *w = d->weights->data + first * d->weights->stride;
        for (size_t i = 0; i < count; i++) {
            double root = sqrt(w[i * d->weights->stride]);
            for (size_t c = 0; c < k; c++)
                out[c * BLOCK + i] *= root;
        }
    }
    for (size_t c = 0; c < k; c++)
        for (size_t i = count; i < BLOCK; i++)
            out[c * BLOCK + i] = 0.0;
}

/* ---- chunks and threads -------------------------------------------------------------- */

/* The rows are cut into at most CHUNKS ranges of whole blocks, each summed
   on its own thread and the sums combined in chunk order: the number of
   chunks depends only on n, so the results do not depend on the machine. */
enum { CHUNKS = 8, CHUNK_MIN_BLOCKS = 64 };

static size_t chunk_count(size_t n)
{
    size_t blocks = (n + BLOCK - 1) / BLOCK;
    size_t count = blocks / CHUNK_MIN_BLOCKS;
    return count < 1 ? 1 : count > CHUNKS ? CHUNKS : count;
}

/* Rows [first, last) of chunk c out of count. */
static void chunk_rows(size_t n, size_t c, size_t count, size_t *first, size_t *last)
{
    size_t blocks = (n + BLOCK - 1) / BLOCK;
    *first = blocks * c / count * BLOCK;
    *last = c + 1 == count ? n : blocks * (c + 1) / count * BLOCK;
}

/* Runs work(jobs + i · size) for i < count, on threads when there are
   several (the last on the calling thread; a thread that cannot start runs
   inline: only the timing changes). */
static void run_chunks(int (*work)(void *), void *jobs, size_t size, size_t count)
{
    thrd_t threads[CHUNKS];
    bool started[CHUNKS] = {false};
    for (size_t i = 0; i + 1 < count; i++)
        started[i] = thrd_create(&threads[i], work, (char *)jobs + i * size) == thrd_success;
    work((char *)jobs + (count - 1) * size);
    for (size_t i = 0; i + 1 < count; i++) {
        if (started[i])
            thrd_join(threads[i], NULL);
        else
            work((char *)jobs + i * size);
    }
}

/* ---- pass 1: the triangle ----------------------------------------------------------- */

typedef struct {
    const design *const *designs;
    size_t n_designs, k, first, last;
    const int *exponent; /* k entries: the power of two taken out of each column */
    double *r;           /* the chunk's k×k triangle */
} fold_job;

/* Columns (and y) of a design in units beyond 2^±FIT_SAFE_EXPONENT would
   square to ∞ or 0 in the double fold: each is divided by a power of two
   chosen from its largest value over all rows (exact), and the triangle's
   columns are multiplied back in long double. 0 for columns of ordinary
   size, so that their triangle is the one it has always been. Every row
   counts: a column ordinary in its first rows and huge later would
   otherwise overflow the fold. */
static int *column_exponents(const design *const *designs, size_t n_designs, size_t k)
{
    int *exponent = xcalloc(k, sizeof(int));
    double *largest = xcalloc(k, sizeof(double));
    size_t n = designs[0]->n_used;
    double *block = xmalloc(k * BLOCK * sizeof(double));
    for (size_t first = 0; first < n; first += BLOCK) {
        size_t count = n - first < BLOCK ? n - first : BLOCK;
        weighted_block(designs, n_designs, first, count, block, k);
        for (size_t c = 0; c < k; c++)
            for (size_t i = 0; i < count; i++) {
                double size = fabs(block[c * BLOCK + i]);
                largest[c] = size > largest[c] && isfinite(size) ? size : largest[c];
            }
    }
    for (size_t c = 0; c < k; c++) {
        int e = 0;
        if (largest[c] > 0)
            frexp(largest[c], &e);
        exponent[c] = abs(e) > FIT_SAFE_EXPONENT ? e : 0;
    }
    free(block);
    free(largest);
    return exponent;
}

static int fold_chunk(void *arg)
{
    fold_job *job = arg;
    size_t k = job->k;
    double *block = xmalloc(k * BLOCK * sizeof(double));
    for (size_t first = job->first; first < job->last; first += BLOCK) {
        size_t count = job->last - first < BLOCK ? job->last - first : BLOCK;
        weighted_block(job->designs, job->n_designs, first, count, block, k);
        for (size_t c = 0; c < k; c++)
            if (job->exponent[c])
                for (size_t i = 0; i < count; i++)
                    block[c * BLOCK + i] = ldexp(block[c * BLOCK + i], -job->exponent[c]);
        fold_block(job->r, block, k);
    }
    free(block);
    return 0;
}

/* Folds the rows of triangle other into r (both k×k), BLOCK rows at a time. */
static void fold_triangle(double *r, const double *other, size_t k)
{
    double *block = xmalloc(k * BLOCK * sizeof(double));
    for (size_t from = 0; from < k; from += BLOCK) {
        for (size_t c = 0; c < k; c++)
            for (size_t i = 0; i < BLOCK; i++)
                block[c * BLOCK + i] = from + i < k ? other[c * k + from + i] : 0.0;
        fold_block(r, block, k);
    }
    free(block);
}

lsq_tri *fit_triangle_fast(const design *const *designs, size_t n_designs)
{
    size_t k = 1;
    for (size_t j = 0; j < n_designs; j++)
        k += designs[j]->n_coefs;
    size_t n = designs[0]->n_used, count = chunk_count(n);
    int *exponent = column_exponents(designs, n_designs, k);
    fold_job jobs[CHUNKS];
    for (size_t c = 0; c < count; c++) {
        jobs[c] = (fold_job){designs, n_designs, k, 0, 0, exponent,
                             xcalloc(k * k, sizeof(double))};
        chunk_rows(n, c, count, &jobs[c].first, &jobs[c].last);
    }
    run_chunks(fold_chunk, jobs, sizeof jobs[0], count);
    for (size_t c = 1; c < count; c++)
        fold_triangle(jobs[0].r, jobs[c].r, k);
    lsq_tri *t = lsq_tri_new(k);
    for (size_t c = 0; c < k; c++)
        for (size_t i = 0; i < k; i++)
            t->r[c * k + i] = ldexpl(jobs[0].r[c * k + i], exponent[c]);
    free(exponent);
    t->rows_seen = n;
    t->folded_in_double = true;
    for (size_t c = 0; c < count; c++)
        free(jobs[c].r);
    return t;
}

/* ---- the pass over the rows ------------------------------------------------------ */

/* R₁₁ and S of a factor, for the whitening of blocks. */
typedef struct {
    size_t rank;
    long double *r;  /* column-major rank×rank, R₁₁ */
    double *rd;      /* the same in double */
    long double *scale; /* per pivot position */
    size_t *column;  /* per pivot position: the design column */
} whitener;

static whitener whitener_of(const lsq_qr *q)
{
    size_t rank = q->rank;
    whitener w = {rank, NULL, NULL, NULL, q->perm};
    w.r = xmalloc((rank * rank + 1) * sizeof(long double));
    w.rd = xmalloc((rank * rank + 1) * sizeof(double));
    w.scale = xmalloc((rank + 1) * sizeof(long double));
    for (size_t k = 0; k < rank; k++) {
        w.scale[k] = q->scale[q->perm[k]];
        for (size_t l = 0; l <= k; l++) {
            w.r[k * rank + l] = q->qr[k * q->n + l];
            w.rd[k * rank + l] = (double)w.r[k * rank + l];
        }
    }
    return w;
}

static void whitener_free(whitener *w)
{
    free(w->r);
    free(w->rd);
    free(w->scale);
}

/* q = R₁₁⁻ᵀ S x̃ for a block in double: forward substitution, vectorized
   over rows. */
KERNEL static void whiten_block(const whitener *w, const double *x, double *q)
{
    size_t rank = w->rank;
    for (size_t k = 0; k < rank; k++) {
        double *qk = q + k * BLOCK;
        const double *xk = x + w->column[k] * BLOCK;
        double scale = (double)w->scale[k];
        for (size_t i = 0; i < BLOCK; i++)
            qk[i] = scale * xk[i];
        for (size_t l = 0; l < k; l++)
            block_axpy(w->rd[k * rank + l], q + l * BLOCK, qk);
        double inverse = 1.0 / w->rd[k * rank + k];
        for (size_t i = 0; i < BLOCK; i++)
            qk[i] *= inverse;
    }
}

/* The same in long double from long double rows, rounded to double at the
   end: q is then accurate to κ · 2⁻⁶⁴ before that rounding. */
static void whiten_block_extended(const whitener *w, const long double *x, long double *work,
                                  double *q)
{
    size_t rank = w->rank;
    long double *minus_column = xmalloc((rank + 1) * sizeof(long double));
    for (size_t k = 0; k < rank; k++) {
        long double *wk = work + k * BLOCK;
        const long double *xk = x + w->column[k] * BLOCK;
        for (size_t i = 0; i < BLOCK; i++)
            wk[i] = w->scale[k] * xk[i];
        /* wk − r·wl is wk + (−r)·wl exactly; lsq_combine_rows keeps the
           order of the products and stores once per four. */
        for (size_t l = 0; l < k; l++)
            minus_column[l] = -w->r[k * rank + l];
        lsq_combine_rows(wk, minus_column, k, work, BLOCK, BLOCK);
        for (size_t i = 0; i < BLOCK; i++) {
            wk[i] /= w->r[k * rank + k];
            q[k * BLOCK + i] = (double)wk[i];
        }
    }
    free(minus_column);
}

/* Adds Σ_i ω_ki q_ai q_bi (k = 0, 1, 2), and Σ_i q_ai q_bi when gram is
   given, for a ≤ b: four rows per step, independent vector sums. */
KERNEL static void accumulate_pairs(const double *q, const double *omega, size_t rank,
                                    long double *meat[3], long double *gram)
{
    const double *w0 = omega, *w1 = omega + BLOCK, *w2 = omega + 2 * BLOCK;
    for (size_t a = 0; a < rank; a++) {
        const double *qa = q + a * BLOCK;
        for (size_t b = a; b < rank; b++) {
            const double *qb = q + b * BLOCK;
            v4 m0 = {0, 0, 0, 0}, m1 = {0, 0, 0, 0}, m2 = {0, 0, 0, 0}, g = {0, 0, 0, 0};
            for (size_t i = 0; i < BLOCK; i += 4) {
                v4 t = V4(qa + i) * V4(qb + i);
                m0 += V4(w0 + i) * t;
                m1 += V4(w1 + i) * t;
                m2 += V4(w2 + i) * t;
                g += t;
            }
            meat[0][a * rank + b] += sum4(&m0);
            meat[1][a * rank + b] += sum4(&m1);
            meat[2][a * rank + b] += sum4(&m2);
            if (gram)
                gram[a * rank + b] += sum4(&g);
        }
    }
}

/* The block's rows as both long double (extended) or double, unweighted,
   zero-padded. */
typedef struct {
    double *x;          /* column-major BLOCK × p */
    long double *xl;    /* extended only */
    long double *work;  /* extended only: BLOCK × rank */
    double *q;          /* BLOCK × rank */
    double *r;          /* weighted residuals √w e */
    long double *e;     /* residuals e = y − xᵀb */
    long double *we;    /* w e, for the gradient */
    double *h;
    double *omega;      /* 3 × BLOCK */
} block_buffers;

/* Σ_c x_ci b_c for four rows from i, in long double (independent sums keep
   the x87 adder busy). TYPE is the block's precision. */
#define FOUR_FITS(TYPE, x, b, p, i, out)                                                   \
    do {                                                                                   \
        long double s0 = 0, s1 = 0, s2 = 0, s3 = 0;                                        \
        for (size_t c = 0; c < (p); c++) {                                                 \
            const TYPE *column = (x) + c * BLOCK + (i);                                    \
            long double bc = (b)[c];                                                       \
            s0 += column[0] * bc;                                                          \
            s1 += column[1] * bc;                                                          \
            s2 += column[2] * bc;                                                          \
            s3 += column[3] * bc;                                                          \
        }                                                                                  \
        (out)[0] = s0, (out)[1] = s1, (out)[2] = s2, (out)[3] = s3;                        \
    } while (0)

/* e_i = y_i − x_iᵀb in long double; rows past n_used are padding. */
static void block_errors(const design *d, const fit_row_input *in, size_t first,
                         const block_buffers *bb, long double *e)
{
    const gsl_vector *y = d->y;
    size_t p = d->n_coefs;
    for (size_t i = 0; i < BLOCK; i += 4) {
        long double fit[4];
        if (bb->xl)
            FOUR_FITS(long double, bb->xl, in->b, p, i, fit);
        else
            FOUR_FITS(double, bb->x, in->b, p, i, fit);
        for (size_t j = 0; j < 4 && first + i + j < d->n_used; j++)
            e[i + j] = y->data[(first + i + j) * y->stride] - fit[j];
    }
}

/* Σ_i x_ci (w e)_i for every column c, four sums per column; the padding
   rows have w e = 0. */
static void block_gradient(const design *d, const block_buffers *bb, long double *gradient)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        long double s0 = 0.0L, s1 = 0.0L, s2 = 0.0L, s3 = 0.0L;
        const long double *we = bb->we;
        if (bb->xl) {
            const long double *x = bb->xl + c * BLOCK;
            for (size_t i = 0; i < BLOCK; i += 4) {
                s0 += x[i] * we[i];
                s1 += x[i + 1] * we[i + 1];
                s2 += x[i + 2] * we[i + 2];
                s3 += x[i + 3] * we[i + 3];
            }
        } else {
            const double *x = bb->x + c * BLOCK;
            for (size_t i = 0; i < BLOCK; i += 4) {
                s0 += x[i] * we[i];
                s1 += x[i + 1] * we[i + 1];
                s2 += x[i + 2] * we[i + 2];
                s3 += x[i + 3] * we[i + 3];
            }
        }
        gradient[c] += (s0 + s1) + (s2 + s3);
    }
}

/* Residuals e (computed from b, or the given weighted residuals √w e over
   √w), fitted values and the gradient Σ w x e; then x̃ = √w x in place. */
static void block_residuals(fit_result *f, const design *d, const fit_row_input *in,
                            size_t first, size_t count, block_buffers *bb,
                            long double *gradient)
{
    size_t p = d->n_coefs;
    const gsl_vector *y = d->y, *weights = d->weights;
    long double *e = bb->e;
    if (!in->residuals)
        block_errors(d, in, first, bb, e);
    double *residual = f->residuals->data, *fitted = f->fitted->data;
    size_t rs = f->residuals->stride, fs = f->fitted->stride;
    for (size_t i = 0; i < count; i++) {
        long double w = weights ? weights->data[(first + i) * weights->stride] : 1.0L;
        long double root = weights ? sqrtl(w) : 1.0L;
        if (in->residuals)
            e[i] = in->residuals[first + i] / root;
        bb->we[i] = w * e[i];
        bb->r[i] = (double)(root * e[i]);
        residual[(first + i) * rs] = (double)e[i];
        fitted[(first + i) * fs] = (double)(y->data[(first + i) * y->stride] - e[i]);
    }
    for (size_t i = count; i < BLOCK; i++) {
        bb->r[i] = 0.0;
        bb->we[i] = 0.0L;
    }
    if (gradient)
        block_gradient(d, bb, gradient);
    for (size_t i = 0; weights && i < count; i++) {
        long double root = sqrtl((long double)weights->data[(first + i) * weights->stride]);
        for (size_t c = 0; c < p; c++) {
            if (bb->xl)
                bb->xl[c * BLOCK + i] *= root;
            else
                bb->x[c * BLOCK + i] *= (double)root;
        }
    }
}

/* Leverages of a block (h_i = ‖q_i‖²) and the robust weights ω. */
static void block_leverages(fit_result *f, const design *d, size_t first, size_t count,
                            size_t rank, block_buffers *bb, fit_row_sums *sums)
{
    double *h = bb->h, *omega = bb->omega;
    for (size_t i = 0; i < BLOCK; i++)
        h[i] = 0.0;
    for (size_t k = 0; k < rank; k++) {
        const double *qk = bb->q + k * BLOCK;
        for (size_t i = 0; i < BLOCK; i += 4)
            V4(h + i) += V4(qk + i) * V4(qk + i);
    }
    for (size_t i = 0; i < BLOCK; i++) {
        double r2 = bb->r[i] * bb->r[i], complement = 1.0 - h[i];
        sums->rss += r2;
        if (i < count) {
            double w = d->weights ? d->weights->data[(first + i) * d->weights->stride] : 1.0;
            f->leverage->data[(first + i) * f->leverage->stride] = h[i];
            if (h[i] > sums->max_position * w)
                sums->max_position = h[i] / w;
            if (complement <= FIT_LEVERAGE_ONE) {
                sums->leverage_one = true;
                complement = 1.0;
            }
        }
        omega[i] = r2;
        omega[BLOCK + i] = r2 / complement;
        omega[2 * BLOCK + i] = r2 / (complement * complement);
    }
}

static void load_block(const design *d, size_t first, size_t count, block_buffers *bb)
{
    size_t p = d->n_coefs;
    if (bb->xl) {
        design_block(d, first, count, bb->xl, BLOCK);
        for (size_t c = 0; c < p; c++)
            for (size_t i = count; i < BLOCK; i++)
                bb->xl[c * BLOCK + i] = 0.0L;
    } else {
        design_block_double(d, first, count, bb->x, BLOCK);
        for (size_t c = 0; c < p; c++)
            for (size_t i = count; i < BLOCK; i++)
                bb->x[c * BLOCK + i] = 0.0;
    }
}

typedef struct {
    fit_result *f;
    const design *d;
    const whitener *w;
    const fit_row_input *in;
    size_t first, last;
    fit_row_sums sums;
} row_job;

static void sums_alloc(fit_row_sums *sums, size_t p, size_t rank, const fit_row_input *in)
{
    *sums = (fit_row_sums){NULL, {NULL, NULL, NULL}, NULL, 0.0L, 0.0, false};
    for (int k = 0; k < 3; k++)
        sums->meat[k] = xcalloc(rank * rank + 1, sizeof(long double));
    if (in->gram)
        sums->gram = xcalloc(rank * rank + 1, sizeof(long double));
    if (!in->residuals)
        sums->gradient = xcalloc(p + 1, sizeof(long double));
}

static int rows_chunk(void *arg)
{
    row_job *job = arg;
    const design *d = job->d;
    size_t p = d->n_coefs, rank = job->w->rank;
    block_buffers bb = {NULL, NULL, NULL, NULL, NULL, NULL, NULL, NULL, NULL};
    bb.x = xmalloc((p * BLOCK + 1) * sizeof(double));
    if (job->in->extended) {
        bb.xl = xmalloc((p * BLOCK + 1) * sizeof(long double));
        bb.work = xmalloc((rank * BLOCK + 1) * sizeof(long double));
    }
    bb.q = xcalloc(rank * BLOCK + 1, sizeof(double));
    bb.r = xmalloc(BLOCK * sizeof(double));
    bb.we = xmalloc(BLOCK * sizeof(long double));
    bb.e = xmalloc(BLOCK * sizeof(long double));
    bb.h = xmalloc(BLOCK * sizeof(double));
    bb.omega = xmalloc(3 * BLOCK * sizeof(double));
    fit_row_sums *sums = &job->sums;
    for (size_t first = job->first; first < job->last; first += BLOCK) {
        size_t count = job->last - first < BLOCK ? job->last - first : BLOCK;
        load_block(d, first, count, &bb);
        block_residuals(job->f, d, job->in, first, count, &bb, sums->gradient);
        if (job->in->extended)
            whiten_block_extended(job->w, bb.xl, bb.work, bb.q);
        else
            whiten_block(job->w, bb.x, bb.q);
        block_leverages(job->f, d, first, count, rank, &bb, sums);
        accumulate_pairs(bb.q, bb.omega, rank, sums->meat, sums->gram);
    }
    free(bb.x);
    free(bb.xl);
    free(bb.work);
    free(bb.q);
    free(bb.r);
    free(bb.we);
    free(bb.e);
    free(bb.h);
    free(bb.omega);
    return 0;
}

/* Adds the sums of a later chunk into the first one's. */
static void add_sums(fit_row_sums *into, const fit_row_sums *from, size_t p, size_t rank)
{
    for (size_t i = 0; i < rank * rank; i++) {
        for (int k = 0; k < 3; k++)
            into->meat[k][i] += from->meat[k][i];
        if (into->gram)
            into->gram[i] += from->gram[i];
    }
    for (size_t c = 0; into->gradient && c < p; c++)
        into->gradient[c] += from->gradient[c];
    into->rss += from->rss;
    into->max_position = fmax(into->max_position, from->max_position);
    into->leverage_one = into->leverage_one || from->leverage_one;
}

void fit_rows(fit_result *f, const design *d, const lsq_qr *q, const fit_row_input *in,
              fit_row_sums *sums)
{
    size_t p = d->n_coefs, n = d->n_used, rank = q->rank, count = chunk_count(n);
    whitener w = whitener_of(q);
    row_job jobs[CHUNKS];
    for (size_t c = 0; c < count; c++) {
        jobs[c] = (row_job){f, d, &w, in, 0, 0, {NULL, {NULL, NULL, NULL}, NULL, 0, 0, false}};
        chunk_rows(n, c, count, &jobs[c].first, &jobs[c].last);
        sums_alloc(&jobs[c].sums, p, rank, in);
    }
    run_chunks(rows_chunk, jobs, sizeof jobs[0], count);
    *sums = jobs[0].sums;
    for (size_t c = 1; c < count; c++) {
        add_sums(sums, &jobs[c].sums, p, rank);
        fit_row_sums_free(&jobs[c].sums);
    }
    for (size_t a = 0; a < rank; a++)
        for (size_t c = 0; c < a; c++) {
            for (int k = 0; k < 3; k++)
                sums->meat[k][a * rank + c] = sums->meat[k][c * rank + a];
            if (sums->gram)
                sums->gram[a * rank + c] = sums->gram[c * rank + a];
        }
    f->max_position = sums->max_position;
    whitener_free(&w);
}

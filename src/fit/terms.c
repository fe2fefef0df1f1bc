/*
 * terms.c — F tests of terms and of nested models, all computed from the
 * triangle R of the weighted [X | y] (one pass over the data): for any set
 * S of design columns, RSS(S) = min_b ‖r_y − R_S b‖² where r_y is the last
 * column of R, because [X | y] = Q R with Q orthonormal. Each sub-model is
 * then a (p+1)-row least-squares problem for the pivoted QR of qr.c.
 *
 * Marginality-respecting test of a term T ("each term after all others not
 * containing it"): with H(T) the terms whose columns strictly include T's
 * columns, M₁ = all terms except H(T), M₀ = M₁ without T,
 *     F = ((RSS(M₀) − RSS(M₁)) / (rank M₁ − rank M₀)) / σ²_full.
 * Sequential test of the k-th term (terms added in spec order after the
 * intercept): M₁ = terms 1..k, M₀ = terms 1..k−1, same F. Both use the
 * full model's σ² = RSS / df_residual (Searle 1971, "Linear Models", §7;
 * the first is known as the type II sums of squares, the second type I).
 *
 * Nested models (compare): a small model is nested in a big one when every
 * column of the small design lies in the column space of the big design
 * (least squares of each small column on the big columns leaves a relative
 * residual below NESTING_TOLERANCE) and both were fitted to the same rows
 * with the same weights; then F = ((RSS_s − RSS_b) / (r_b − r_s)) /
 * (RSS_b / (n − r_b)).
 */
#include "internal.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* Relative residual of a column on another design below which the column
   counts as lying in that design's column space. */
static const long double NESTING_TOLERANCE = 1e-9L;

lsq_tri *fit_triangle(const design *const *designs, size_t n_designs)
{
    const design *first = designs[0];
    size_t k = 1;
    for (size_t j = 0; j < n_designs; j++)
        k += designs[j]->n_coefs;
    lsq_tri *t = lsq_tri_new(k);
    long double *row = xmalloc(k * sizeof(long double));
    for (size_t i = 0; i < first->n_used; i++) {
        size_t offset = 0;
        for (size_t j = 0; j < n_designs; j++) {
            design_row(designs[j], i, row + offset);
            offset += designs[j]->n_coefs;
        }
        row[offset] = gsl_vector_get(first->y, i);
        if (first->weights) {
            long double root = sqrtl((long double)gsl_vector_get(first->weights, i));
            for (size_t c = 0; c < k; c++)
                row[c] *= root;
        }
        lsq_tri_add(t, row);
    }
    lsq_tri_finish(t);
    free(row);
    return t;
}

long double fit_subset_rss(const lsq_tri *t, const size_t *cols, size_t n_cols, size_t target,
                           size_t *rank)
{
    size_t k = t->k;
    const long double *y = t->r + target * k;
    if (n_cols == 0) {
        long double sum = 0.0L;
        for (size_t i = 0; i < k; i++)
            sum += y[i] * y[i];
        *rank = 0;
        return sum;
    }
    long double *a = xmalloc(k * n_cols * sizeof(long double));
    for (size_t j = 0; j < n_cols; j++)
        memcpy(a + j * k, t->r + cols[j] * k, k * sizeof(long double));
    lsq_qr *q = lsq_qr_new(a, k, n_cols, FIT_RANK_TOLERANCE);
    long double *b = xmalloc(n_cols * sizeof(long double));
    long double *r = xmalloc(k * sizeof(long double));
    lsq_qr_solve(q, y, b, r);
    long double sum = 0.0L;
    for (size_t i = 0; i < k; i++)
        sum += r[i] * r[i];
    *rank = q->rank;
    lsq_qr_free(q);
    free(b);
    free(r);
    return sum;
}

bool fit_subset_triangle(const lsq_tri *t, const size_t *cols, size_t n_cols, size_t target,
                         long double *r, long double *z, long double *g)
{
    lsq_tri_select(t, cols, n_cols, target, r, z);
    for (size_t j = 0; j < n_cols; j++)
        if (r[j * n_cols + j] == 0.0L)
            return false;
    if (!g && n_cols > FIT_UNPIVOTED_MIN)
        return true;
    long double *inverse = g ? g : xmalloc((n_cols * n_cols + 1) * sizeof(long double));
    long double condition = lsq_upper_inverse_gram(r, n_cols, inverse);
    if (!g)
        free(inverse);
    long double limit =
        t->folded_in_double ? FIT_UNPIVOTED_CONDITION_FAST : FIT_UNPIVOTED_CONDITION;
    return n_cols > FIT_UNPIVOTED_MIN || condition <= limit;
}

/* The residual sum of squares of an independent column subset from its
   unpivoted triangle (the squares of z past its first n_cols entries);
   false when fit_subset_triangle declines. */
static bool subset_rss_unpivoted(const lsq_tri *t, const size_t *cols, size_t n_cols,
                                 size_t target, long double *rss)
{
    long double *r = xmalloc((n_cols * n_cols + 1) * sizeof(long double));
    long double *z = xmalloc((t->k + 1) * sizeof(long double));
    bool done = fit_subset_triangle(t, cols, n_cols, target, r, z, NULL);
    long double sum = 0.0L;
    for (size_t i = n_cols; i < t->k; i++)
        sum += z[i] * z[i];
    *rss = sum;
    free(r);
    free(z);
    return done;
}

/* ---- term tests ------------------------------------------------------------ */

static bool has_column(const design_term *term, const data_column *column)
{
    for (size_t i = 0; i < term->n_columns; i++)
        if (term->columns[i] == column)
            return true;
    return false;
}

/* Does big strictly contain small (every column of small, and more)? */
static bool term_contains(const design_term *big, const design_term *small)
{
    for (size_t i = 0; i < small->n_columns; i++)
        if (!has_column(big, small->columns[i]))
            return false;
    for (size_t i = 0; i < big->n_columns; i++)
        if (!has_column(small, big->columns[i]))
            return true;
    return false;
}

/* Sub-models already solved: the sequential and the marginality-respecting
   tests share most of theirs (the full model, the model without the last
   term), and each solve is O(p³). */
typedef struct {
    bool independent;   /* the full model has full rank: no sub-model needs pivoting */
    size_t n_terms, n, cap;
    bool *include;      /* n × n_terms */
    long double *rss;   /* n */
    size_t *rank;       /* n */
} submodel_memo;

static bool memo_find(const submodel_memo *m, const bool *include, long double *rss,
                      size_t *rank)
{
    for (size_t i = 0; i < m->n; i++)
        if (!memcmp(m->include + i * m->n_terms, include, m->n_terms * sizeof(bool))) {
            *rss = m->rss[i];
            *rank = m->rank[i];
            return true;
        }
    return false;
}

static void memo_add(submodel_memo *m, const bool *include, long double rss, size_t rank)
{
    if (m->n == m->cap) {
        m->cap = m->cap ? 2 * m->cap : 8;
        m->include = xrealloc(m->include, m->cap * (m->n_terms + 1) * sizeof(bool));
        m->rss = xrealloc(m->rss, m->cap * sizeof(long double));
        m->rank = xrealloc(m->rank, m->cap * sizeof(size_t));
    }
    memcpy(m->include + m->n * m->n_terms, include, m->n_terms * sizeof(bool));
    m->rss[m->n] = rss;
    m->rank[m->n] = rank;
    m->n++;
}

static void memo_free(submodel_memo *m)
{
    free(m->include);
    free(m->rss);
    free(m->rank);
}

/* RSS and rank of the sub-model with the intercept (if any) and the terms
   flagged in include. */
static long double submodel_rss(const design *d, const lsq_tri *t, const bool *include,
                                size_t *cols, size_t *rank, submodel_memo *memo)
{
    long double known;
    if (memo_find(memo, include, &known, rank))
        return known;
    size_t n_cols = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        size_t term = d->coefs[c].term;
        if (term == SIZE_MAX || include[term])
            cols[n_cols++] = c;
    }
    long double rss;
    if (memo->independent && n_cols > 0 &&
        subset_rss_unpivoted(t, cols, n_cols, d->n_coefs, &rss))
        *rank = n_cols;
    else
        rss = fit_subset_rss(t, cols, n_cols, d->n_coefs, rank);
    memo_add(memo, include, rss, *rank);
    return rss;
}

static fit_term_test term_test(const fit_result *f, size_t term, long double rss0,
                               size_t rank0, long double rss1, size_t rank1)
{
    fit_term_test test = {term, (double)rank1 - (double)rank0, 0.0, NAN, NAN};
    if (test.df <= 0) {
        test.df = 0;
        return test;
    }
    test.sum_squares = (double)(rss0 - rss1);
    if (test.sum_squares < 0)
        test.sum_squares = 0;
    if (f->df_residual > 0 && f->rss > 0) {
        test.f = (test.sum_squares / test.df) / (f->rss / f->df_residual);
        test.p = fit_f_p_value(test.f, test.df, f->df_residual);
    }
    return test;
}

static void sequential_tests(fit_result *f, const design *d, const lsq_tri *t, bool *include,
                             size_t *cols, submodel_memo *memo)
{
    memset(include, 0, d->n_terms * sizeof(bool));
    size_t rank0;
    long double rss0 = submodel_rss(d, t, include, cols, &rank0, memo);
    for (size_t k = 0; k < d->n_terms; k++) {
        include[k] = true;
        size_t rank1;
        long double rss1 = submodel_rss(d, t, include, cols, &rank1, memo);
        f->sequential_tests[k] = term_test(f, k, rss0, rank0, rss1, rank1);
        rss0 = rss1;
        rank0 = rank1;
    }
}

static void marginal_tests(fit_result *f, const design *d, const lsq_tri *t, bool *include,
                           size_t *cols, submodel_memo *memo)
{
    for (size_t k = 0; k < d->n_terms; k++) {
        for (size_t j = 0; j < d->n_terms; j++)
            include[j] = !term_contains(&d->terms[j], &d->terms[k]);
        size_t rank1, rank0;
        long double rss1 = submodel_rss(d, t, include, cols, &rank1, memo);
        include[k] = false;
        long double rss0 = submodel_rss(d, t, include, cols, &rank0, memo);
        f->term_tests[k] = term_test(f, k, rss0, rank0, rss1, rank1);
    }
}

void fit_term_tests(fit_result *f, const design *d, const lsq_tri *t)
{
    f->n_terms = d->n_terms;
    f->term_tests = xcalloc(d->n_terms ? d->n_terms : 1, sizeof(fit_term_test));
    f->sequential_tests = xcalloc(d->n_terms ? d->n_terms : 1, sizeof(fit_term_test));
    bool *include = xcalloc(d->n_terms ? d->n_terms : 1, sizeof(bool));
    size_t *cols = xmalloc((d->n_coefs ? d->n_coefs : 1) * sizeof(size_t));
    submodel_memo memo = {f->rank == d->n_coefs, d->n_terms, 0, 0, NULL, NULL, NULL};
    sequential_tests(f, d, t, include, cols, &memo);
    marginal_tests(f, d, t, include, cols, &memo);
    memo_free(&memo);
    free(include);
    free(cols);
}

/* ---- nested models ------------------------------------------------------------ */

/* Counts the rows one design uses and the other does not (both lists are
   increasing). */
static void row_differences(const design *a, const design *b, size_t *only_a, size_t *only_b)
{
    size_t i = 0, j = 0;
    *only_a = *only_b = 0;
    while (i < a->n_used || j < b->n_used) {
        /* a list that has ended reads as past every row */
        size_t row_a = i < a->n_used ? design_table_row(a, i) : SIZE_MAX;
        size_t row_b = j < b->n_used ? design_table_row(b, j) : SIZE_MAX;
        if (row_a < row_b) {
            (*only_a)++;
            i++;
        } else if (row_b < row_a) {
            (*only_b)++;
            j++;
        } else {
            i++;
            j++;
        }
    }
}

/* The first column in [from, from + count) of the triangle that is not in
   the span of columns [span_from, span_from + span_count); SIZE_MAX if none. */
static size_t first_outside(const lsq_tri *t, size_t from, size_t count, size_t span_from,
                            size_t span_count)
{
    size_t *cols = xmalloc((span_count ? span_count : 1) * sizeof(size_t));
    for (size_t j = 0; j < span_count; j++)
        cols[j] = span_from + j;
    size_t outside = SIZE_MAX;
    for (size_t j = 0; j < count && outside == SIZE_MAX; j++) {
        size_t rank;
        long double norm2 = fit_subset_rss(t, NULL, 0, from + j, &rank);
        long double rss = fit_subset_rss(t, cols, span_count, from + j, &rank);
        if (rss > NESTING_TOLERANCE * NESTING_TOLERANCE * norm2)
            outside = j;
    }
    free(cols);
    return outside;
}

static bool same_name(const data_column *a, const data_column *b)
{
    return a == b || (a && b && strcmp(a->name, b->name) == 0);
}

/* The Wald test of the big model's columns that the small one lacks, when
   every column of the small model is a column of the big one (by label);
   a nesting through the column space only has no such restriction. */
fit_wald fit_compare_wald(const design *small, const design *big, const fit_result *fb,
                          spec_errors kind)
{
    fit_wald none = {NAN, NAN, NAN, NAN};
    bool *in_model = xmalloc(big->n_coefs * sizeof(bool));
    bool *tested = xmalloc(big->n_coefs * sizeof(bool));
    size_t found = 0;
    for (size_t c = 0; c < big->n_coefs; c++) {
        in_model[c] = true;
        tested[c] = true;
        for (size_t k = 0; k < small->n_coefs; k++)
            if (strcmp(small->coefs[k].label, big->coefs[c].label) == 0) {
                tested[c] = false;
                found++;
            }
    }
    fit_wald w = found == small->n_coefs ? fit_wald_columns(big, fb, in_model, tested, kind)
                                         : none;
    free(in_model);
    free(tested);
    return w;
}

void fit_compare(const design *small, const fit_result *fs, const design *big,
                 const fit_result *fb, fit_comparison *out)
{
    *out = (fit_comparison){FIT_NESTED, SIZE_MAX, false, 0,          0, NAN, NAN, NAN, NAN,
                            fb->errors, {NAN, NAN, NAN, NAN}};
    out->df_num = (double)fb->rank - (double)fs->rank;
    out->df_den = fb->df_residual;
    if (!same_name(small->response, big->response)) {
        out->nesting = FIT_DIFFERENT_RESPONSE;
        return;
    }
    if (!same_name(small->weight, big->weight)) {
        out->nesting = FIT_DIFFERENT_WEIGHTS;
        return;
    }
    row_differences(small, big, &out->rows_only_small, &out->rows_only_big);
    if (out->rows_only_small || out->rows_only_big) {
        out->nesting = FIT_DIFFERENT_ROWS;
        return;
    }
    const design *both[2] = {big, small};
    size_t pb = big->n_coefs, ps = small->n_coefs;
    bool small_design = big->n_used <= FIT_DENSE_MAX / (pb + ps + 1);
    lsq_tri *t = small_design ? fit_triangle(both, 2) : fit_triangle_fast(both, 2);
    out->outside_coef = first_outside(t, pb, ps, 0, pb);
    if (out->outside_coef != SIZE_MAX) {
        out->nesting = FIT_NOT_NESTED;
        out->reversed = first_outside(t, 0, pb, pb, ps) == SIZE_MAX;
    } else if (out->df_num <= 0) {
        out->nesting = FIT_SAME_SPACE;
    } else if (out->df_den > 0 && fb->rss_scaled > 0) {
        /* In the units the fits ran in: the sums of squares themselves
           may be beyond double's range. */
        double small_rss = ldexp(fs->rss_scaled, 2 * (fs->response_exponent - fb->response_exponent));
        out->f = ((small_rss - fb->rss_scaled) / out->df_num) / (fb->rss_scaled / out->df_den);
        out->p = fit_f_p_value(out->f, out->df_num, out->df_den);
        if (fb->errors != SPEC_ERRORS_CLASSICAL)
            out->wald = fit_compare_wald(small, big, fb, fb->errors);
    }
    lsq_tri_free(t);
}

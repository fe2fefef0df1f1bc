/*
 * collinearity.c — are the terms nearly linear combinations of each other?
 *
 * With C the correlation matrix of the non-intercept columns (centred
 * when the model has an intercept, otherwise only scaled, so that a model
 * through the origin is judged on the columns it fits), the generalized
 * variance inflation factor of a term with columns S is
 *   GVIF = det C_SS · det C_OO / det C   (O: the other columns)
 * (Fox & Monette 1992, JASA 87:178–183); for a one-column term it is the
 * ordinary VIF = 1/(1 − R²ⱼ) = (C⁻¹)ⱼⱼ, and GVIF^(1/(2 df)) makes terms of
 * different df comparable on the scale of √VIF. Determinants come from
 * Cholesky factors, as sums of logarithms.
 *
 * The condition number is σ_max/σ_min of the design's estimable columns
 * scaled to unit length and not centred (Belsley, Kuh & Welsch 1980, 3.3);
 * those singular values are the ones of R in the QR of that matrix.
 */
#include "internal.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_linalg.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* log det of C restricted to the listed rows and columns; NaN when that
   block is not positive definite. The empty block has determinant 1. */
static double log_det(const gsl_matrix *c, const size_t *index, size_t count)
{
    if (count == 0)
        return 0.0;
    gsl_matrix *block = gsl_matrix_alloc(count, count);
    for (size_t a = 0; a < count; a++)
        for (size_t b = 0; b < count; b++)
            gsl_matrix_set(block, a, b, gsl_matrix_get(c, index[a], index[b]));
    double value = NAN;
    if (gsl_linalg_cholesky_decomp1(block) == GSL_SUCCESS) {
        value = 0.0;
        for (size_t a = 0; a < count; a++)
            value += 2.0 * log(gsl_matrix_get(block, a, a));
    }
    gsl_matrix_free(block);
    return value;
}

/* The correlation matrix of the non-intercept columns; *k receives their
   count and which[] their index among the view's columns. */
static gsl_matrix *correlations(const diag_view *v, size_t *which, size_t *k)
{
    size_t n = v->n;
    *k = 0;
    for (size_t j = 0; j < v->p; j++)
        if (!(v->intercept && j == v->intercept_column))
            which[(*k)++] = j;
    gsl_matrix *z = gsl_matrix_alloc(n, *k ? *k : 1);
    for (size_t a = 0; a < *k; a++) {
        gsl_vector_view column = gsl_matrix_column(z, a);
        gsl_vector_const_view x = gsl_matrix_const_column(v->x, which[a]);
        gsl_vector_memcpy(&column.vector, &x.vector);
        if (v->intercept) {
            /* Remove the part along the intercept column (√w, or ones). */
            gsl_vector_const_view c = gsl_matrix_const_column(v->x, v->intercept_column);
            double cx, cc;
            gsl_blas_ddot(&c.vector, &column.vector, &cx);
            gsl_blas_ddot(&c.vector, &c.vector, &cc);
            gsl_blas_daxpy(-cx / cc, &c.vector, &column.vector);
        }
        double norm = gsl_blas_dnrm2(&column.vector);
        if (norm > 0)
            gsl_vector_scale(&column.vector, 1.0 / norm);
    }
    gsl_matrix *c = gsl_matrix_alloc(*k ? *k : 1, *k ? *k : 1);
    if (*k)
        gsl_blas_dgemm(CblasTrans, CblasNoTrans, 1.0, z, z, 0.0, c);
    gsl_matrix_free(z);
    return c;
}

static char *term_label(const spec_term *term)
{
    buf label;
    buf_init(&label);
    for (size_t i = 0; i < term->n_columns; i++)
        buf_printf(&label, "%s%s", i ? " × " : "", term->columns[i]);
    return buf_detach(&label);
}

/* The GVIF of one term: its columns (positions in C) against the rest. */
static void term_vif(const gsl_matrix *c, size_t k, const size_t *term_of, size_t term,
                     double log_det_all, diag_vif *out)
{
    size_t *inside = xmalloc(k * sizeof(size_t));
    size_t *outside = xmalloc(k * sizeof(size_t));
    size_t n_in = 0, n_out = 0;
    for (size_t a = 0; a < k; a++) {
        if (term_of[a] == term)
            inside[n_in++] = a;
        else
            outside[n_out++] = a;
    }
    out->df = n_in;
    out->vif = out->gvif = out->gvif_adjusted = NAN;
    if (n_in > 0) {
        out->gvif =
            exp(log_det(c, inside, n_in) + log_det(c, outside, n_out) - log_det_all);
        if (!isfinite(out->gvif))
            out->gvif = INFINITY;
        out->gvif_adjusted = pow(out->gvif, 1.0 / (2.0 * (double)n_in));
        if (n_in == 1)
            out->vif = out->gvif;
    }
    free(outside);
    free(inside);
}

static double condition_number(const diag_qr *q)
{
    size_t p = q->p;
    gsl_matrix *r = gsl_matrix_calloc(p, p);
    for (size_t i = 0; i < p; i++)
        for (size_t j = i; j < p; j++)
            gsl_matrix_set(r, i, j, gsl_matrix_get(q->qr, i, j));
    gsl_matrix *v = gsl_matrix_alloc(p, p);
    gsl_vector *s = gsl_vector_alloc(p);
    gsl_linalg_SV_decomp_jacobi(r, v, s);
    double largest = gsl_vector_max(s), smallest = gsl_vector_min(s);
    gsl_vector_free(s);
    gsl_matrix_free(v);
    gsl_matrix_free(r);
    return smallest > 0 ? largest / smallest : INFINITY;
}

void diag_collinearity_compute(const diag_view *v, const diag_qr *q, const design *d,
                               diag_collinearity *out)
{
    memset(out, 0, sizeof *out);
    out->max_vif = NAN;
    out->condition_number = condition_number(q);
    const spec_model *model = d->model;
    size_t *which = xmalloc((v->p ? v->p : 1) * sizeof(size_t));
    size_t k;
    gsl_matrix *c = correlations(v, which, &k);
    if (k == 0 || model->n_terms == 0) {
        out->reason = DIAG_REASON_NO_REGRESSORS;
        gsl_matrix_free(c);
        free(which);
        return;
    }
    out->computed = true;
    size_t *term_of = xmalloc(k * sizeof(size_t));
    size_t *all = xmalloc(k * sizeof(size_t));
    for (size_t a = 0; a < k; a++) {
        term_of[a] = d->coefs[v->columns[which[a]]].term;
        all[a] = a;
    }
    double log_det_all = log_det(c, all, k);
    out->n_terms = model->n_terms;
    out->terms = xcalloc(model->n_terms, sizeof(diag_vif));
    for (size_t t = 0; t < model->n_terms; t++) {
        diag_vif *entry = &out->terms[t];
        entry->term = t;
        entry->label = term_label(&model->terms[t]);
        term_vif(c, k, term_of, t, log_det_all, entry);
        double size =
            entry->df == 1 ? entry->vif : entry->gvif_adjusted * entry->gvif_adjusted;
        if (entry->df > 0 && (isnan(out->max_vif) || size > out->max_vif)) {
            out->max_vif = size;
            out->max_term = t;
        }
    }
    free(all);
    free(term_of);
    gsl_matrix_free(c);
    free(which);
}

void diag_collinearity_free(diag_collinearity *c)
{
    for (size_t t = 0; t < c->n_terms; t++)
        free(c->terms[t].label);
    free(c->terms);
}

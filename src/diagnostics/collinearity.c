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
 * different df comparable on the scale of √VIF. C⁻¹ comes from the fit's
 * (X̃ᵀX̃)⁻¹, so only the blocks of C within each term are summed (one pass
 * over the rows); determinants come from Cholesky factors, as sums of
 * logarithms.
 *
 * A model without an intercept whose first category has every level
 * (its columns add up to the constant) is the same model as one with an
 * intercept and a reference level, and is judged as that one: its
 * columns are centred. The GVIF is symmetric in a term's columns S and
 * the others O (det C_SS · det C_OO / det C), so the category's own term,
 * whose centred indicators are dependent, is read from the other side,
 * det C_OO · det (C⁻¹)_OO; the fit's (X̃ᵀX̃)⁻¹ restricted to O is the same
 * in both ways of writing the model, since O's coefficients are.
 *
 * The condition number is σ_max/σ_min of the design's estimable columns
 * scaled to unit length and not centred (Belsley, Kuh & Welsch 1980, 3.3);
 * those singular values are the ones of the fit's R with its columns
 * scaled to unit length.
 */
#include "internal.h"

#include "../util/stage.h"

#include <gsl/gsl_linalg.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* log det of the k × k row-major m restricted to the listed rows and
   columns; NaN when that block is not positive definite. The empty block
   has determinant 1. */
static double log_det(const double *m, size_t k, const size_t *index, size_t count)
{
    if (count == 0)
        return 0.0;
    gsl_matrix *block = gsl_matrix_alloc(count, count);
    for (size_t a = 0; a < count; a++)
        for (size_t b = 0; b < count; b++)
            gsl_matrix_set(block, a, b, m[index[a] * k + index[b]]);
    double value = NAN;
    if (gsl_linalg_cholesky_decomp1(block) == GSL_SUCCESS) {
        value = 0.0;
        for (size_t a = 0; a < count; a++)
            value += 2.0 * log(gsl_matrix_get(block, a, a));
    }
    gsl_matrix_free(block);
    return value;
}

/* The centred (or, without an intercept, plain) cross-products of the k
   non-intercept columns, within each term only (terms' columns are the
   only blocks of C that the GVIF needs whole), and every column's
   squared length: one pass over the rows. Values are shifted by their
   first row (times √wᵢ) before the products, which leaves the centred
   products unchanged and keeps a large mean from cancelling the digits;
   zero shifted entries (most indicator entries) are skipped. */
static void centred_products(const diag_view *v, const size_t *which, const size_t *term_of,
                             size_t k, double *c)
{
    size_t n = v->n, np = v->n_coefs;
    long double *prod = xcalloc(k * k + 1, sizeof(long double));
    long double *sum = xcalloc(k + 1, sizeof(long double));
    long double weight = 0.0L;
    double *shift = xcalloc(k + 1, sizeof(double));
    double *x = xmalloc((DIAG_BLOCK * np + 1) * sizeof(double));
    double *z = xmalloc((k + 1) * sizeof(double));
    size_t *nonzero = xmalloc((k + 1) * sizeof(size_t));
    bool centre = v->intercept || v->fit->constant_spanned;
    /* A column beyond 2^±FIT_SAFE_EXPONENT is multiplied by the power of
       two the fit takes out of it (fit.h), so that its products fit in
       double; 0 for columns of ordinary size. */
    int *exponent = xmalloc((k + 1) * sizeof(int));
    for (size_t a = 0; a < k; a++)
        exponent[a] = v->fit->column_exponent[v->columns[which[a]]];
    for (size_t first = 0; first < n; first += DIAG_BLOCK) {
        size_t count = n - first < DIAG_BLOCK ? n - first : DIAG_BLOCK;
        design_block_double(v->design, first, count, x, count);
        stage_rows(first + count, n);
        if (first == 0 && centre)
            for (size_t a = 0; a < k; a++)
                shift[a] = x[v->columns[which[a]] * count];
        for (size_t i = 0; i < count; i++) {
            double root = diag_root_w(v, first + i);
            size_t nnz = 0;
            for (size_t a = 0; a < k; a++) {
                double centred = root * (x[v->columns[which[a]] * count + i] - shift[a]);
                z[a] = exponent[a] ? ldexp(centred, exponent[a]) : centred;
                if (z[a] != 0.0)
                    nonzero[nnz++] = a;
            }
            weight += (long double)root * root;
            for (size_t s = 0; s < nnz; s++) {
                size_t a = nonzero[s];
                sum[a] += (long double)root * z[a];
                for (size_t t = 0; t <= s; t++) {
                    size_t b = nonzero[t];
                    if (term_of[b] == term_of[a])
                        prod[a * k + b] += (long double)z[a] * z[b];
                }
            }
        }
    }
    for (size_t a = 0; a < k; a++)
        for (size_t b = 0; b <= a; b++) {
            long double value = prod[a * k + b];
            if (centre)
                value -= sum[a] * sum[b] / weight;
            c[a * k + b] = c[b * k + a] = (double)value;
        }
    free(exponent);
    free(nonzero);
    free(z);
    free(x);
    free(shift);
    free(sum);
    free(prod);
}

static char *term_label(const spec_term *term)
{
    buf label;
    buf_init(&label);
    for (size_t i = 0; i < term->n_columns; i++)
        buf_printf(&label, "%s%s", i ? " × " : "", term->columns[i]);
    return buf_detach(&label);
}

static void set_sizes(diag_vif *out);

/* The GVIF of one term, det C_SS · det (C⁻¹)_SS: by the partitioned
   determinant, det C = det C_OO · det (C_SS − C_SO C_OO⁻¹ C_OS), and the
   inverse of that Schur complement is (C⁻¹)_SS (Fox & Monette 1992, eq.
   10). c holds the within-term blocks of C, inverse all of C⁻¹. */
static void term_vif(const double *c, const double *inverse, size_t k, const size_t *term_of,
                     size_t term, diag_vif *out)
{
    size_t *inside = xmalloc((k + 1) * sizeof(size_t));
    size_t n_in = 0;
    for (size_t a = 0; a < k; a++)
        if (term_of[a] == term)
            inside[n_in++] = a;
    out->df = n_in;
    out->vif = out->gvif = out->gvif_adjusted = NAN;
    if (n_in > 0) {
        out->gvif = exp(log_det(c, k, inside, n_in) + log_det(inverse, k, inside, n_in));
        set_sizes(out);
    }
    free(inside);
}

/* The GVIF of the category that stands in for the intercept, from the
   other columns' side (see the top of the file); its df is one less than
   its levels, as with a reference level. c_others holds the centred
   products among all the other columns, whole. */
static void spanning_term_vif(const double *c_others, const double *inverse, size_t k,
                              const size_t *term_of, size_t term, diag_vif *out)
{
    size_t *outside = xmalloc((k + 1) * sizeof(size_t));
    size_t n_out = 0;
    for (size_t a = 0; a < k; a++)
        if (term_of[a] != term)
            outside[n_out++] = a;
    out->df = k - n_out - 1;
    out->vif = out->gvif = out->gvif_adjusted = NAN;
    if (out->df > 0) {
        out->gvif = exp(log_det(c_others, k, outside, n_out) + log_det(inverse, k, outside, n_out));
        set_sizes(out);
    }
    free(outside);
}

/* The adjusted GVIF and, for one column, the VIF, from out->gvif. */
static void set_sizes(diag_vif *out)
{
    size_t n_in = out->df;
    {
        if (!isfinite(out->gvif))
            out->gvif = INFINITY;
        out->gvif_adjusted = pow(out->gvif, 1.0 / (2.0 * (double)n_in));
        if (n_in == 1)
            out->vif = out->gvif;
    }
}

/* The term of the category with every level that stands in for the
   intercept, or SIZE_MAX. */
static size_t spanning_term(const diag_view *v)
{
    if (!v->fit->constant_spanned)
        return SIZE_MAX;
    const design *d = v->design;
    for (size_t c = 0; c < d->n_coefs; c++)
        if (d->coefs[c].n_parts == 1 && d->coefs[c].parts[0].kind == DESIGN_ALL_LEVELS)
            return d->coefs[c].term;
    return SIZE_MAX;
}

/* Columns up to which the condition number uses the Jacobi SVD. */
enum { CONDITION_JACOBI_MAX = 100 };

/* σ_max/σ_min of the unit-length estimable columns: the singular values of
   the fit's triangle with its columns scaled to unit length. */
static double condition_number(const diag_view *v)
{
    size_t p = fit_factor_rank(v->factor);
    double *unit = xmalloc((p * p + 1) * sizeof(double));
    fit_factor_unit_triangle(v->factor, unit);
    gsl_matrix *r = gsl_matrix_alloc(p, p);
    for (size_t i = 0; i < p; i++)
        for (size_t j = 0; j < p; j++)
            gsl_matrix_set(r, i, j, unit[i * p + j]);
    free(unit);
    gsl_matrix *w = gsl_matrix_alloc(p, p);
    gsl_vector *s = gsl_vector_alloc(p);
    if (p <= CONDITION_JACOBI_MAX) {
        /* One-sided Jacobi: small singular values to high relative accuracy
           (Demmel & Veselić 1992). */
        gsl_linalg_SV_decomp_jacobi(r, w, s);
    } else {
        /* Golub–Reinsch (about ten times faster at hundreds of columns);
           σ_min is then accurate relative to σ_max, which is what the
           condition number needs. */
        gsl_vector *work = gsl_vector_alloc(p);
        gsl_linalg_SV_decomp(r, w, s, work);
        gsl_vector_free(work);
    }
    double largest = gsl_vector_max(s), smallest = gsl_vector_min(s);
    gsl_vector_free(s);
    gsl_matrix_free(w);
    gsl_matrix_free(r);
    return smallest > 0 ? largest / smallest : INFINITY;
}

void diag_collinearity_compute(const diag_view *v, diag_collinearity *out)
{
    memset(out, 0, sizeof *out);
    out->max_vif = NAN;
    out->condition_number = condition_number(v);
    const design *d = v->design;
    const spec_model *model = d->model;
    size_t *which = xmalloc((v->p ? v->p : 1) * sizeof(size_t));
    size_t k = 0;
    for (size_t j = 0; j < v->p; j++)
        if (!(v->intercept && j == v->intercept_column))
            which[k++] = j;
    if (k == 0 || model->n_terms == 0) {
        out->reason = DIAG_REASON_NO_REGRESSORS;
        free(which);
        return;
    }
    out->computed = true;
    size_t *term_of = xmalloc(k * sizeof(size_t));
    for (size_t a = 0; a < k; a++)
        term_of[a] = d->coefs[v->columns[which[a]]].term;
    double *c = xcalloc(k * k + 1, sizeof(double));
    centred_products(v, which, term_of, k, c);
    /* C = D⁻¹ P D⁻¹ with D the column lengths; C⁻¹ = D V D with V the
       non-intercept block of the fit's (X̃ᵀX̃)⁻¹, which is the inverse of
       the centred cross-products when the model has an intercept (the
       partitioned inverse). */
    double *length = xmalloc(k * sizeof(double));
    for (size_t a = 0; a < k; a++)
        length[a] = c[a * k + a] > 0 ? sqrt(c[a * k + a]) : 1.0;
    double *inverse = xmalloc((k * k + 1) * sizeof(double));
    for (size_t a = 0; a < k; a++)
        for (size_t b = 0; b < k; b++) {
            c[a * k + b] /= length[a] * length[b];
            /* Both sides carry the columns' powers of two taken out (the
               products in centred_products, the stored inverse): they
               cancel in D V D. */
            inverse[a * k + b] = gsl_matrix_get(v->fit->xtx_inverse, v->columns[which[a]],
                                                v->columns[which[b]]) *
                                 length[a] * length[b];
        }
    size_t spanning = spanning_term(v);
    double *c_others = NULL;
    if (spanning != SIZE_MAX) {
        size_t *side = xmalloc(k * sizeof(size_t));
        for (size_t a = 0; a < k; a++)
            side[a] = term_of[a] == spanning;
        c_others = xcalloc(k * k + 1, sizeof(double));
        centred_products(v, which, side, k, c_others);
        for (size_t a = 0; a < k; a++)
            for (size_t b = 0; b < k; b++)
                c_others[a * k + b] /= length[a] * length[b];
        free(side);
    }
    out->n_terms = model->n_terms;
    out->terms = xcalloc(model->n_terms, sizeof(diag_vif));
    for (size_t t = 0; t < model->n_terms; t++) {
        diag_vif *entry = &out->terms[t];
        entry->term = t;
        entry->label = term_label(&model->terms[t]);
        if (t == spanning)
            spanning_term_vif(c_others, inverse, k, term_of, t, entry);
        else
            term_vif(c, inverse, k, term_of, t, entry);
        double size =
            entry->df == 1 ? entry->vif : entry->gvif_adjusted * entry->gvif_adjusted;
        if (entry->df > 0 && (isnan(out->max_vif) || size > out->max_vif)) {
            out->max_vif = size;
            out->max_term = t;
        }
    }
    free(c_others);
    free(inverse);
    free(length);
    free(c);
    free(term_of);
    free(which);
}
void diag_collinearity_free(diag_collinearity *c)
{
    for (size_t t = 0; t < c->n_terms; t++)
        free(c->terms[t].label);
    free(c->terms);
}

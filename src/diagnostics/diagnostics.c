/*
 * diagnostics.c — the stage's driver: validates the spec's order_by and
 * variance_columns against the data, builds the (weighted) view of the
 * fitted model (residuals and the fit's factor; the design is read in row
 * blocks, never copied), puts the rows in order for Durbin–Watson, and runs every
 * diagnostic. The methods are in the files named after the assumption;
 * the verdict rules are in verdicts.c.
 */
#include "internal.h"

#include "../util/stage.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <threads.h>

/* ---- validation --------------------------------------------------------- */

static const data_column *find_column(const spec *s, const data_table *t, const char *name,
                                      const char *role, src_mark at, error_list *errors)
{
    const data_column *column = data_find(t, name);
    if (column)
        return column;
    const char **names = xmalloc((t->n_columns ? t->n_columns : 1) * sizeof(char *));
    for (size_t j = 0; j < t->n_columns; j++)
        names[j] = t->columns[j].name;
    const char *close = closest_name(name, names, t->n_columns);
    free(names);
    if (close)
        error_at(errors, s->path, at,
                 "%s '%s' is not a column of the data file; did you mean "
                 "'%s'?",
                 role, name, close);
    else
        error_at(errors, s->path, at,
                 "%s '%s' is not a column of the data file; name one of "
                 "its columns",
                 role, name);
    return NULL;
}

/* Every row the model uses needs a value in column. */
static bool complete_on_used_rows(const spec *s, const design *d, const data_table *t,
                                  const data_column *column, const char *role, src_mark at,
                                  error_list *errors)
{
    for (size_t i = 0; i < d->n_used; i++) {
        size_t row = design_table_row(d, i);
        bool missing = column->kind == DATA_NUMERIC ? isnan(column->numbers[row])
                                                    : column->codes[row] < 0;
        if (missing) {
            error_at(errors, s->path, at,
                     "%s '%s' has no value on line %u, a row model '%s' uses; fill it in "
                     "or leave the row out with where:",
                     role, column->name, (unsigned)t->lines[row], d->model->id);
            return false;
        }
    }
    return true;
}

bool diagnostics_validate(const spec *s, const design *d, const data_table *t,
                          error_list *errors)
{
    const spec_model *m = d->model;
    bool ok = true;
    if (m->order_by) {
        const data_column *column =
            find_column(s, t, m->order_by, "order_by", m->order_by_at, errors);
        ok = column && complete_on_used_rows(s, d, t, column, "order_by column",
                                             m->order_by_at, errors);
    }
    for (size_t k = 0; k < m->n_variance_columns; k++) {
        src_mark at = m->variance_columns_at[k];
        const data_column *column =
            find_column(s, t, m->variance_columns[k], "variance column", at, errors);
        if (!column) {
            ok = false;
        } else if (column->kind != DATA_NUMERIC) {
            error_at(errors, s->path, at,
                     "variance column '%s' is a category; the variance test needs numeric "
                     "columns (leave variance_columns out to test against the model's own "
                     "terms)",
                     column->name);
            ok = false;
        } else {
            ok =
                complete_on_used_rows(s, d, t, column, "variance column", at, errors) && ok;
        }
    }
    return ok;
}

/* ---- the view of the fitted model -------------------------------------- */

static bool is_intercept(const design *d, size_t c)
{
    return d->coefs[c].n_parts == 0;
}

static void view_init(diag_view *v, const design *d, const fit_result *f)
{
    size_t n = d->n_used;
    memset(v, 0, sizeof *v);
    v->n = n;
    v->n_coefs = d->n_coefs;
    v->design = d;
    v->fit = f;
    v->factor = f->factor;
    v->columns = xmalloc((d->n_coefs ? d->n_coefs : 1) * sizeof(size_t));
    for (size_t c = 0; c < d->n_coefs; c++)
        if (f->coefs[c].estimable) {
            if (is_intercept(d, c)) {
                v->intercept = true;
                v->intercept_column = v->p;
            }
            v->columns[v->p++] = c;
        }
    long double rss = 0.0L, yy = 0.0L;
    /* The response in the units the fit ran in (y·2^-e, exact): every
       diagnostic squares residuals, and a response near 1e160 or 1e-200
       would square to ∞ or 0. Their statistics do not depend on the
       units; the influence table's residuals are multiplied back. */
    int e = f->response_exponent;
    v->response_exponent = e;
    bool copies = d->weights || e != 0;
    double *root_w = d->weights ? v->owned[0] = xmalloc((n ? n : 1) * sizeof(double)) : NULL;
    double *residual = copies ? v->owned[1] = xmalloc((n ? n : 1) * sizeof(double)) : NULL;
    double *fitted = copies ? v->owned[2] = xmalloc((n ? n : 1) * sizeof(double)) : NULL;
    v->root_w = root_w;
    v->e = copies ? residual : f->residuals->data;
    v->fitted = copies ? fitted : f->fitted->data;
    for (size_t i = 0; i < n; i++) {
        double root = d->weights ? sqrt(gsl_vector_get(d->weights, i)) : 1.0;
        if (root_w)
            root_w[i] = root;
        if (copies) {
            residual[i] = root * ldexp(gsl_vector_get(f->residuals, i), -e);
            fitted[i] = ldexp(gsl_vector_get(f->fitted, i), -e);
        }
        double wy = root * ldexp(gsl_vector_get(d->y, i), -e);
        rss += (long double)v->e[i] * v->e[i];
        yy += (long double)wy * wy;
    }
    v->rss = (double)rss;
    /* Residuals at the level of rounding in y are an exact fit: tests on
       them would only measure rounding. */
    long double tiny = 64.0L * DBL_EPSILON;
    v->exact_fit = n <= v->p || rss <= tiny * tiny * yy;
}

static void view_free(diag_view *v)
{
    for (size_t k = 0; k < 3; k++)
        free(v->owned[k]);
    free(v->columns);
}

/* ---- row order ----------------------------------------------------------- */

/* The design's order_by order, borrowed, or file order, owned. */
static void row_order(diagnostics *g, const design *d)
{
    if (d->order) {
        g->order = d->order;
        return;
    }
    size_t n = d->n_used;
    size_t *order = g->owned_order = xmalloc((n ? n : 1) * sizeof(size_t));
    for (size_t i = 0; i < n; i++)
        order[i] = i;
    g->order = order;
}

/* ---- the diagnostics ----------------------------------------------------- */

static void durbin_watson(diagnostics *g, const diag_view *v)
{
    diag_durbin_watson *dw = &g->durbin_watson;
    size_t p = v->p;
    if (v->exact_fit || p == 0) {
        *dw = (diag_durbin_watson){.reason = p ? DIAG_REASON_EXACT_FIT
                                               : DIAG_REASON_NO_REGRESSORS,
                                   .d = NAN,
                                   .p_positive = NAN,
                                   .p_negative = NAN,
                                   .p_two_sided = NAN,
                                   .mean_d = NAN,
                                   .variance_d = NAN,
                                   .autocorrelation = NAN};
        return;
    }
    diag_durbin_watson_streamed(v, g->order, g->order_by != NULL, dw);
    dw->ordered = g->order_by != NULL;
    if (dw->computed && !dw->ordered)
        dw->reason = DIAG_REASON_NO_ORDER;
}

static void breusch_pagan(diagnostics *g, const diag_view *v, const data_table *t)
{
    diag_breusch_pagan_compute(v, t, &g->breusch_pagan);
}

/* The passes that run beside the others (diagnostics_new). */
typedef struct {
    diagnostics *g;
    const diag_view *v;
    const data_table *t;
} side_work;

static int side_passes(void *arg)
{
    side_work *w = arg;
    stage_quiet_thread(); /* the progress line follows the main thread's passes */
    breusch_pagan(w->g, w->v, w->t);
    if (w->v->p)
        diag_reset_compute(w->v, &w->g->reset);
    return 0;
}

static void normality(diagnostics *g, const diag_view *v)
{
    diagnostics_shapiro_wilk(v->e, v->n, &g->shapiro);
    diagnostics_moments(v->e, v->n, &g->moments);
    if (v->exact_fit && v->n >= 3) {
        /* Rounding noise is not a distribution worth testing. */
        g->shapiro.computed = g->moments.computed = false;
        g->shapiro.reason = g->moments.reason = DIAG_REASON_EXACT_FIT;
        g->shapiro.w = g->shapiro.p = NAN;
        diagnostics_moments(NULL, 0, &g->moments);
        g->moments.n = v->n;
        g->moments.reason = DIAG_REASON_EXACT_FIT;
    }
}

/* The data-file line of each row: the table's own when every row is used,
   else a list owned by *owned. */
static const uint32_t *influence_lines(const design *d, const data_table *t, uint32_t **owned)
{
    *owned = NULL;
    if (!d->used_rows)
        return t->lines;
    uint32_t *lines = *owned = xmalloc((d->n_used ? d->n_used : 1) * sizeof(uint32_t));
    for (size_t i = 0; i < d->n_used; i++)
        lines[i] = t->lines[design_table_row(d, i)];
    return lines;
}

diagnostics *diagnostics_new(const design *d, const fit_result *f, const data_table *t,
                             double alpha)
{
    diagnostics *g = xcalloc(1, sizeof *g);
    g->design = d;
    g->fit = f;
    g->alpha = alpha;
    g->weighted = d->weights != NULL;
    g->order_by = d->model->order_by;
    row_order(g, d);
    diag_view v;
    view_init(&v, d, f);
    uint32_t *owned_lines;
    const uint32_t *lines = influence_lines(d, t, &owned_lines);
    /* Breusch–Pagan and RESET pass over the rows on a second core while
       this one runs the rest: each reads the view and writes its own
       result, so the numbers are those of one thread. */
    side_work side = {g, &v, t};
    thrd_t helper;
    bool parallel = thrd_create(&helper, side_passes, &side) == thrd_success;
    if (!parallel)
        side_passes(&side);
    normality(g, &v);
    durbin_watson(g, &v);
    diag_influence_compute(&v, lines, owned_lines, alpha, &g->influence);
    if (v.p)
        diag_collinearity_compute(&v, &g->collinearity);
    if (parallel)
        thrd_join(helper, NULL);
    if (!v.p) {
        g->reset = (diag_reset){false, DIAG_REASON_NO_REGRESSORS, NAN, NAN, NAN, NAN, NAN};
        g->collinearity.reason = DIAG_REASON_NO_REGRESSORS;
        g->collinearity.condition_number = g->collinearity.max_vif = NAN;
    }
    diag_verdicts(g);
    view_free(&v);
    return g;
}

void diagnostics_free(diagnostics *g)
{
    if (!g)
        return;
    diag_influence_free(&g->influence);
    diag_collinearity_free(&g->collinearity);
    free(g->owned_order);
    free(g);
}

/*
 * checks.c — the spec's checks: what a build requires of a model. Each is
 * decided from numbers already computed (verdicts, VIFs, Cook's
 * distances, estimates, fit metrics); a check that cannot be decided
 * fails and says why, because a requirement that was not shown to hold
 * did not pass.
 */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const design_coef *find_coef(const design *d, const char *label, size_t *index)
{
    for (size_t c = 0; c < d->n_coefs; c++)
        if (strcmp(d->coefs[c].label, label) == 0) {
            *index = c;
            return &d->coefs[c];
        }
    return NULL;
}

static void unknown_coefficient(const spec *s, const spec_check *c, const design *d,
                                error_list *errors)
{
    const char **labels = xmalloc((d->n_coefs ? d->n_coefs : 1) * sizeof(char *));
    for (size_t k = 0; k < d->n_coefs; k++)
        labels[k] = d->coefs[k].label;
    const char *close = closest_name(c->coefficient, labels, d->n_coefs);
    buf hint;
    buf_init(&hint);
    if (close) {
        buf_printf(&hint, "did you mean '%s'?", close);
    } else {
        buf_puts(&hint, "its coefficients are");
        for (size_t k = 0; k < d->n_coefs && k < 12; k++)
            buf_printf(&hint, "%s '%s'", k ? "," : "", labels[k]);
        if (d->n_coefs > 12)
            buf_puts(&hint, ", …");
    }
    error_at(errors, s->path, c->coefficient_at, "model '%s' has no coefficient '%s'; %s",
             d->model->id, c->coefficient, hint.data);
    buf_free(&hint);
    free(labels);
}

bool diagnostics_check_validate(const spec *s, const spec_check *c, const design *d,
                                error_list *errors)
{
    size_t index;
    if (c->kind == SPEC_CHECK_SIGN && c->coefficient &&
        !find_coef(d, c->coefficient, &index)) {
        unknown_coefficient(s, c, d, errors);
        return false;
    }
    if (c->kind == SPEC_CHECK_ERRORS_INDEPENDENT && !d->model->order_by) {
        error_at(errors, s->path, c->at,
                 "an independent_errors check needs the order of the rows; add "
                 "'order_by: COLUMN' (a time or sequence column) to model '%s'",
                 d->model->id);
        return false;
    }
    return true;
}

static void assumption(diag_check_result *r, const diagnostics *g, diag_assumption a)
{
    const diag_verdict *v = &g->verdicts[a];
    r->verdict = v->verdict;
    r->reason = v->reason;
    r->value = v->p;
    r->bound = g->alpha;
    r->passed = v->verdict == DIAG_HOLDS || v->verdict == DIAG_DOUBTFUL;
}

static void largest_vif(diag_check_result *r, const diagnostics *g, double bound)
{
    const diag_collinearity *c = &g->collinearity;
    r->bound = bound;
    if (!c->computed) {
        /* No regressors besides the intercept: no VIF to exceed the bound. */
        r->passed = c->reason == DIAG_REASON_NO_REGRESSORS;
        r->reason = c->reason;
        return;
    }
    if (isnan(c->max_vif)) {
        r->reason = DIAG_REASON_TERM_ALIASED;
        return;
    }
    r->value = c->max_vif;
    r->label = c->terms[c->max_term].label;
    r->passed = c->max_vif < bound;
}

static void largest_cooks(diag_check_result *r, const diagnostics *g, double bound)
{
    const diag_influence *inf = &g->influence;
    r->bound = bound;
    if (isnan(inf->max_cooks)) {
        r->reason = inf->n > inf->p ? DIAG_REASON_EXACT_FIT : DIAG_REASON_NO_RESIDUAL_DF;
        return;
    }
    r->value = inf->max_cooks;
    r->line = inf->max_cooks_line;
    r->passed = inf->max_cooks < bound;
}

static void sign(diag_check_result *r, const spec_check *c, const design *d,
                 const fit_result *f)
{
    size_t index;
    const design_coef *coef = find_coef(d, c->coefficient, &index);
    r->bound = 0.0;
    if (!coef) {
        r->reason = DIAG_REASON_NOT_ESTIMABLE; /* validated earlier; defensive */
        return;
    }
    r->label = coef->label;
    const fit_coef *fc = &f->coefs[index];
    if (!fc->estimable) {
        r->reason = DIAG_REASON_NOT_ESTIMABLE;
        return;
    }
    r->value = fc->estimate;
    fit_inference lead = fit_lead_inference(f, index); /* the errors the report leads with */
    r->ci_low = lead.ci_low;
    r->ci_high = lead.ci_high;
    r->passed = c->sign > 0 ? fc->estimate > 0 : fc->estimate < 0;
}

static double metric_value(const char *name, const design *d, const fit_result *f)
{
    static const char *const names[] = {"r_squared", "adj_r_squared", "sigma", "f_p",
                                        "aic",       "bic",           "n_used"};
    /* f_p follows the model's standard errors: the robust Wald test when
       the model asks for robust errors. */
    double f_p = f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_f_p : f->f_p;
    double values[] = {f->r_squared, f->adj_r_squared, f->sigma,         f_p,
                       f->aic,       f->bic,           (double)d->n_used};
    for (size_t k = 0; k < sizeof names / sizeof names[0]; k++)
        if (strcmp(name, names[k]) == 0)
            return values[k];
    return NAN;
}

static void metric(diag_check_result *r, const spec_check *c, const design *d,
                   const fit_result *f)
{
    r->value = c->metric ? metric_value(c->metric, d, f) : NAN;
    if (!isfinite(r->value)) {
        r->reason = DIAG_REASON_NOT_FINITE;
        return;
    }
    r->passed = (!c->has_at_least || r->value >= c->at_least) &&
                (!c->has_at_most || r->value <= c->at_most);
}

diag_check_result diagnostics_check(const spec_check *c, const design *d,
                                    const fit_result *f, const diagnostics *g)
{
    diag_check_result r;
    memset(&r, 0, sizeof r);
    r.check = c;
    r.verdict = DIAG_NOT_ASSESSED;
    r.value = r.bound = r.ci_low = r.ci_high = NAN;
    switch (c->kind) {
    case SPEC_CHECK_RESIDUALS_NORMAL: assumption(&r, g, DIAG_NORMALITY); break;
    case SPEC_CHECK_VARIANCE_CONSTANT: assumption(&r, g, DIAG_CONSTANT_VARIANCE); break;
    case SPEC_CHECK_ERRORS_INDEPENDENT: assumption(&r, g, DIAG_INDEPENDENCE); break;
    case SPEC_CHECK_LINEAR: assumption(&r, g, DIAG_LINEARITY); break;
    case SPEC_CHECK_VIF_BELOW: largest_vif(&r, g, c->bound); break;
    case SPEC_CHECK_COOKS_BELOW: largest_cooks(&r, g, c->bound); break;
    case SPEC_CHECK_SIGN: sign(&r, c, d, f); break;
    case SPEC_CHECK_METRIC: metric(&r, c, d, f); break;
    }
    return r;
}

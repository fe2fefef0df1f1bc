/*
 * engine.c — the words for what the model engine adds to the fit: the F
 * test of each term, the comparisons of nested models, and the
 * predictions with their intervals. The numbers are the fit stage's; this
 * file only lays them out and says what they mean.
 */
#include "parts.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static void cell_p(doc_node *row, double p)
{
    char text[NARRATE_NUMBER_SIZE];
    narrate_p_value(text, p);
    doc_cell(row, text);
}

static void cell_statistic(doc_node *row, double value)
{
    char text[NARRATE_NUMBER_SIZE];
    narrate_number(text, value, 4);
    doc_cell(row, isnan(value) ? "" : text);
}

void story_add_term_tests(doc_node *parent, const analysis_model *am)
{
    const design *d = am->design;
    const fit_result *f = am->fit;
    if (!f->term_tests || d->n_terms == 0 || !(f->df_residual > 0))
        return; /* saturated: nothing to test against (add_model says why) */
    doc_heading(parent, 3, NULL, "Does each term matter?");
    doc_text(doc_paragraph(parent),
             "Each term (a category or an interaction counts as one term with several "
             "degrees of freedom) is tested two ways. \"Given the others\" asks whether the "
             "term adds anything to a model holding every other term that does not contain "
             "it: a main effect is tested without the interactions built on it, which "
             "keeps the test meaningful. \"In order\" adds the terms one by one in the "
             "spec's order, so each is tested after those listed before it.");
    bool wald = f->wald_term_tests != NULL;
    if (wald) {
        buf words;
        buf_init(&words);
        story_errors_words(&words, am, f->errors);
        doc_textf(doc_paragraph(parent),
                  "The model uses the %s, so each test below is a Wald F test of the term's "
                  "coefficients under it, in the same sub-models (Wald tests have no sums of "
                  "squares).",
                  words.data);
        buf_free(&words);
    }
    const char *titles[] = {"Term", "Degrees of freedom", "F given the others", "p-value",
                            "F in order", "p-value"};
    doc_align align[] = {DOC_ALIGN_LEFT,  DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT};
    doc_node *table = doc_table_titled(parent, 6, align, titles);
    const fit_term_test *given = wald ? f->wald_term_tests : f->term_tests;
    const fit_term_test *order = wald ? f->wald_sequential_tests : f->sequential_tests;
    for (size_t k = 0; k < f->n_terms; k++) {
        const fit_term_test *partial = &given[k];
        const fit_term_test *sequential = &order[k];
        doc_node *row = doc_row(table);
        doc_cell(row, d->terms[f->term_tests[k].term].label);
        doc_cellf(row, "%.0f", f->term_tests[k].df);
        cell_statistic(row, partial->f);
        cell_p(row, partial->p);
        cell_statistic(row, sequential->f);
        cell_p(row, sequential->p);
    }
    if (!am->caveat_term_tests)
        return;
    doc_node *p = doc_paragraph(parent);
    doc_strong(p, "Caveat.");
    doc_textf(p, " These F tests are classical, and the %s check finds a violation; the same "
                 "tests as Wald tests under the %s covariance:",
              am->caveat_assumption == DIAG_INDEPENDENCE ? "independence" : "constant-variance",
              story_errors_short(am->caveat_kind));
    const char *robust_titles[] = {"Term", "Wald F given the others", "p-value",
                                   "Wald F in order", "p-value"};
    doc_align robust_align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                                DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT};
    table = doc_table_titled(parent, 5, robust_align, robust_titles);
    for (size_t k = 0; k < f->n_terms; k++) {
        doc_node *row = doc_row(table);
        doc_cell(row, d->terms[f->term_tests[k].term].label);
        cell_statistic(row, am->caveat_term_tests[k].f);
        cell_p(row, am->caveat_term_tests[k].p);
        cell_statistic(row, am->caveat_sequential_tests[k].f);
        cell_p(row, am->caveat_sequential_tests[k].p);
    }
}

/* ---- comparisons -------------------------------------------------------- */

static void say_not_comparable(buf *out, const analysis_comparison *c)
{
    const fit_comparison *r = &c->result;
    const char *small = c->small->model->id, *big = c->big->model->id;
    switch (r->nesting) {
    case FIT_SAME_SPACE:
        buf_printf(out, "'%s' and '%s' describe the same fitted values (their columns span "
                        "the same space), so there is nothing to test.",
                   small, big);
        break;
    case FIT_NOT_NESTED:
        if (r->reversed)
            buf_printf(out, "'%s' lies inside '%s', not the other way round: list the "
                            "smaller model first.",
                       big, small);
        else
            buf_printf(out, "'%s' is not nested in '%s': its column '%s' cannot be made "
                            "from the columns of '%s', so an F test does not apply; compare "
                            "them by AIC and BIC instead.",
                       small, big, c->small->design->coefs[r->outside_coef].label, big);
        break;
    case FIT_DIFFERENT_ROWS:
        buf_printf(out, "The two models were fitted to different rows (%zu used by '%s' only, "
                        "%zu by '%s' only), because they drop rows for missing values in "
                        "different columns; neither the F test nor AIC and BIC compare them "
                        "fairly. Fit both to the same rows (a where filter on the missing "
                        "column) to compare.",
                   r->rows_only_small, small, r->rows_only_big, big);
        break;
    case FIT_DIFFERENT_RESPONSE:
        buf_printf(out, "'%s' and '%s' explain different responses, so they cannot be "
                        "compared.",
                   small, big);
        break;
    case FIT_DIFFERENT_WEIGHTS:
        buf_printf(out, "'%s' and '%s' use different weights, so they cannot be compared.",
                   small, big);
        break;
    default: break;
    }
}

static void say_comparison(doc_node *parent, const story *st, const analysis_comparison *c)
{
    const fit_comparison *r = &c->result;
    const char *small = c->small->model->id, *big = c->big->model->id;
    buf text;
    buf_init(&text);
    if (r->nesting == FIT_NESTED) {
        char f[NARRATE_NUMBER_SIZE], p[NARRATE_NUMBER_SIZE];
        narrate_number(f, r->f, 4);
        narrate_p_value(p, r->p);
        if (r->p < st->alpha)
            buf_printf(&text, "The terms that '%s' adds to '%s' explain more than chance "
                              "would (F = %s, p %s%s; %.0f degrees of freedom in the "
                              "numerator, %.0f in the denominator).",
                       big, small, f, p[0] == '<' ? "" : "= ", p, r->df_num, r->df_den);
        else
            buf_printf(&text, "The terms that '%s' adds to '%s' cannot be told apart from no "
                              "improvement (F = %s, p = %s; %.0f degrees of freedom in the "
                              "numerator, %.0f in the denominator); the smaller model is "
                              "enough for these data.",
                       big, small, f, p, r->df_num, r->df_den);
        const fit_wald *w = isfinite(r->wald.f) ? &r->wald : &c->caveat;
        spec_errors kind = isfinite(r->wald.f) ? r->wald_kind : c->big->caveat_kind;
        if (isfinite(w->f)) {
            narrate_number(f, w->f, 4);
            narrate_p_value(p, w->p);
            if (isfinite(r->wald.f))
                buf_printf(&text, " That F test assumes independent errors of constant "
                                  "variance; '%s' uses the %s covariance, and the Wald test of "
                                  "the added coefficients under it gives F = %s, p %s%s "
                                  "(%.0f degrees of freedom in the numerator, %.0f in the "
                                  "denominator).",
                           big, story_errors_short(kind), f, p[0] == '<' ? "" : "= ", p,
                           w->df_num, w->df_den);
            else
                buf_printf(&text, " Caveat: that F test is classical, and the %s check of "
                                  "'%s' finds a violation; under the %s covariance the Wald "
                                  "test of the added coefficients gives F = %s, p %s%s "
                                  "(%.0f degrees of freedom in the numerator, %.0f in the "
                                  "denominator).",
                           c->big->caveat_assumption == DIAG_INDEPENDENCE ? "independence"
                                                                          : "constant-variance",
                           big, story_errors_short(kind), f, p[0] == '<' ? "" : "= ", p,
                           w->df_num, w->df_den);
        } else if (r->wald_kind != SPEC_ERRORS_CLASSICAL) {
            buf_printf(&text, " '%s' uses the %s covariance, but the smaller model's columns are "
                              "not a subset of its own, so no Wald test of the difference "
                              "exists; the F test above is the classical one.",
                       big, story_errors_short(r->wald_kind));
        }
    } else {
        say_not_comparable(&text, c);
    }
    if (r->nesting != FIT_DIFFERENT_ROWS && r->nesting != FIT_DIFFERENT_RESPONSE) {
        double aic = c->big->fit->aic - c->small->fit->aic;
        double bic = c->big->fit->bic - c->small->fit->bic;
        char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE];
        narrate_number(a, fabs(aic), 4);
        narrate_number(b, fabs(bic), 4);
        buf_printf(&text, " AIC prefers '%s' (lower by %s) and BIC prefers '%s' (lower by %s); "
                          "a difference of a few units is a weak preference.",
                   aic < 0 ? big : small, a, bic < 0 ? big : small, b);
    }
    doc_text(doc_paragraph(parent), text.data);
    buf_free(&text);
}

void story_add_comparisons(doc_node *root, const story *st)
{
    const analysis *a = st->a;
    if (a->n_comparisons == 0)
        return;
    doc_heading(root, 2, "comparisons", "Model comparisons");
    const char *titles[] = {"Smaller model", "Bigger model", "Extra degrees of freedom",
                            "F", "p-value", "AIC (smaller, bigger)", "BIC (smaller, bigger)"};
    doc_align align[] = {DOC_ALIGN_LEFT,  DOC_ALIGN_LEFT,  DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT};
    doc_node *table = doc_table_titled(root, 7, align, titles);
    for (size_t k = 0; k < a->n_comparisons; k++) {
        const analysis_comparison *c = &a->comparisons[k];
        const fit_comparison *r = &c->result;
        doc_node *row = doc_row(table);
        doc_cell(row, c->small->model->id);
        doc_cell(row, c->big->model->id);
        if (r->nesting == FIT_NESTED) {
            doc_cellf(row, "%.0f", r->df_num);
            cell_statistic(row, r->f);
            cell_p(row, r->p);
        } else {
            doc_cell(row, "");
            doc_cell(row, "not nested");
            doc_cell(row, "");
        }
        char s1[NARRATE_NUMBER_SIZE], s2[NARRATE_NUMBER_SIZE];
        narrate_number(s1, c->small->fit->aic, 6);
        narrate_number(s2, c->big->fit->aic, 6);
        doc_cellf(row, "%s, %s", s1, s2);
        narrate_number(s1, c->small->fit->bic, 6);
        narrate_number(s2, c->big->fit->bic, 6);
        doc_cellf(row, "%s, %s", s1, s2);
    }
    for (size_t k = 0; k < a->n_comparisons; k++)
        say_comparison(root, st, &a->comparisons[k]);
}

/* ---- predictions -------------------------------------------------------- */

static int response_log(const story *st, const analysis_model *am)
{
    const spec_derive *derive = story_derivation(st, am->design->response->name);
    if (!derive)
        return -1;
    return derive->transform == SPEC_DERIVE_LOG || derive->transform == SPEC_DERIVE_LOG10
               ? (int)derive->transform
               : -1;
}

static double unlog(int transform, double value)
{
    return transform == SPEC_DERIVE_LOG10 ? pow(10.0, value) : exp(value);
}

/* Why a prediction row is an extrapolation, for the list under the table. */
static void extrapolation_reasons(buf *out, const story *st, const analysis_prediction *p)
{
    const fit_prediction *r = &p->result;
    const char *separator = "";
    for (size_t k = 0; k < p->point->n_outside; k++) {
        const design_outside *o = &p->point->outside[k];
        char value[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
        story_value(st, value, o->value);
        story_value(st, low, o->range->min);
        story_value(st, high, o->range->max);
        buf_printf(out, "%s%s = %s is outside the data's %s to %s", separator,
                   o->range->column->name, value, low, high);
        separator = "; ";
    }
    if (r->beyond_leverage)
        buf_printf(out, "%sthe combination of values lies farther from the centre of the data "
                        "than any row used (leverage above the largest in the data)",
                   separator);
}

static void add_prediction_table(doc_node *root, const story *st, const analysis_model *am)
{
    const spec_predict_row *first = am->predictions[0].point->row;
    int logged = response_log(st, am);
    size_t n_inputs = first->n_values;
    size_t n_columns = n_inputs + 4;
    const char **titles = xcalloc(n_columns, sizeof(char *));
    doc_align *align = xcalloc(n_columns, sizeof(doc_align));
    char ci_title[96], pi_title[96], fit_title[96];
    const char *row_word = story_rows(st);
    /* A logged response is shown on its original scale: the median with its
       interval, the mean (Duan's smearing), a new row's interval; the log
       scale figures are in results.json. */
    if (logged >= 0) {
        buf source;
        buf_init(&source);
        story_words(st, &source, story_derivation(st, am->design->response->name)->from);
        snprintf(fit_title, sizeof fit_title, "Median %s (%g%% interval)", source.data,
                 st->level * 100);
        snprintf(ci_title, sizeof ci_title, "Mean %s (%g%% interval)", source.data,
                 st->level * 100);
        buf_free(&source);
    } else {
        snprintf(fit_title, sizeof fit_title, "Fitted value");
        snprintf(ci_title, sizeof ci_title, "%g%% interval of the mean", st->level * 100);
    }
    snprintf(pi_title, sizeof pi_title, "%g%% interval of a new %s", st->level * 100,
             logged >= 0 ? "one" : "observation");
    (void)row_word;
    for (size_t j = 0; j < n_inputs; j++) {
        titles[j] = first->columns[j];
        align[j] = DOC_ALIGN_RIGHT;
    }
    size_t j = n_inputs;
    titles[j] = fit_title;
    align[j++] = DOC_ALIGN_RIGHT;
    titles[j] = ci_title;
    align[j++] = DOC_ALIGN_RIGHT;
    titles[j] = pi_title;
    align[j++] = DOC_ALIGN_RIGHT;
    titles[j] = "Note";
    align[j] = DOC_ALIGN_LEFT;
    doc_node *table = doc_table_titled(root, n_columns, align, titles);
    for (size_t k = 0; k < am->n_predictions; k++) {
        const analysis_prediction *p = &am->predictions[k];
        const fit_prediction *r = &p->result;
        doc_node *row = doc_row(table);
        for (size_t c = 0; c < n_inputs; c++)
            doc_cell(row, c < p->point->row->n_values ? p->point->row->values[c] : "");
        char fit[NARRATE_NUMBER_SIZE], a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE];
        if (logged >= 0) {
            story_number(st, fit, unlog(logged, r->fit));
            story_number(st, a, unlog(logged, r->ci_low));
            story_number(st, b, unlog(logged, r->ci_high));
            doc_cellf(row, "%s (%s to %s)", fit, a, b);
            story_number(st, fit, am->smearing * unlog(logged, r->fit));
            story_number(st, a, am->smearing * unlog(logged, r->ci_low));
            story_number(st, b, am->smearing * unlog(logged, r->ci_high));
            doc_cellf(row, "%s (%s to %s)", fit, a, b);
            story_number(st, a, unlog(logged, r->pi_low));
            story_number(st, b, unlog(logged, r->pi_high));
            doc_cellf(row, "%s to %s", a, b);
        } else {
            story_number(st, fit, r->fit);
            doc_cell(row, fit);
            story_number(st, a, r->ci_low);
            story_number(st, b, r->ci_high);
            doc_cellf(row, "%s to %s", a, b);
            story_number(st, a, r->pi_low);
            story_number(st, b, r->pi_high);
            doc_cellf(row, "%s to %s", a, b);
        }
        doc_cell(row, !r->estimable     ? "not estimable"
                      : r->extrapolation ? "extrapolation"
                                         : "");
    }
    free(titles);
    free(align);
    doc_node *list = NULL;
    for (size_t k = 0; k < am->n_predictions; k++) {
        const analysis_prediction *p = &am->predictions[k];
        if (!p->result.estimable || !p->result.extrapolation)
            continue;
        list = list ? list : doc_list(root);
        doc_node *item = doc_item(list);
        buf text;
        buf_init(&text);
        buf_printf(&text, "Row %zu: ", k + 1);
        if (!p->result.estimable)
            buf_puts(&text, "it needs a coefficient that is not estimable, so no value can be "
                            "given.");
        else
            extrapolation_reasons(&text, st, p);
        doc_text(item, text.data);
        buf_free(&text);
    }
}

void story_add_predictions(doc_node *root, const story *st)
{
    const analysis *a = st->a;
    bool any = false;
    for (size_t m = 0; m < a->n_models; m++)
        any = any || a->models[m].n_predictions > 0;
    if (!any)
        return;
    doc_heading(root, 2, "predictions", "Predictions");
    doc_textf(doc_paragraph(root),
              "For each row the spec asks about: the fitted value, the interval that holds "
              "the mean of many such %s with %g%% confidence, and the wider interval that "
              "holds a single new one. A row marked as an extrapolation lies outside the "
              "data the model was fitted to; its numbers assume the fitted relationship "
              "continues there, which the data cannot confirm.",
              story_rows(st), st->level * 100);
    for (size_t m = 0; m < a->n_models; m++) {
        const analysis_model *am = &a->models[m];
        if (am->n_predictions == 0)
            continue;
        buf title;
        buf_init(&title);
        buf_printf(&title, "Model '%s': ", am->model->id);
        story_words(st, &title, am->design->response->name);
        doc_heading(root, 3, NULL, title.data);
        buf_free(&title);
        add_prediction_table(root, st, am);
        if (am->caveat_kind != SPEC_ERRORS_CLASSICAL)
            doc_textf(doc_paragraph(root),
                      "Caveat: these intervals assume %s, which the violated %s check of "
                      "this model puts in doubt; treat their widths as approximate.",
                      am->caveat_assumption == DIAG_INDEPENDENCE
                          ? "independent errors"
                          : "errors of the same variance everywhere",
                      am->caveat_assumption == DIAG_INDEPENDENCE ? "independence"
                                                                 : "constant-variance");
        if (response_log(st, am) >= 0) {
            buf source, logged;
            buf_init(&source);
            buf_init(&logged);
            story_words(st, &source, story_derivation(st, am->design->response->name)->from);
            story_words(st, &logged, am->design->response->name);
            char factor[NARRATE_NUMBER_SIZE];
            narrate_number(factor, am->smearing, 4);
            doc_textf(doc_paragraph(root),
                      "The model explains %s. Taken back to %s, its fitted value is the "
                      "median of such %s when the errors are symmetric on that scale, and the "
                      "median's interval is the back-transformed interval. The mean is the "
                      "median times Duan's (1983) smearing factor, the average of the "
                      "back-transformed residuals of the fitted rows, here %s; the mean's "
                      "interval is the median's times the factor, taken as known. The log-scale figures are in results.json.",
                      logged.data, source.data, story_rows(st), factor);
            buf_free(&source);
            buf_free(&logged);
        }
    }
}

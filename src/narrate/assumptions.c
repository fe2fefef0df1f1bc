/*
 * assumptions.c — the words for a model's assumption checks: one table of
 * tests and verdicts, then per assumption what the verdict means and what
 * to do about it; the collinearity table; the rows that drive the fit; and
 * the spec's declared checks with their outcomes. The verdict rules are the
 * diagnostics stage's (src/diagnostics/verdicts.c); this file only says
 * them in words.
 */
#include "parts.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

const char *const story_rule_words[DIAG_N_RULES] = {
    "leverage above 2p/n", "outlier by the Bonferroni test",
    "externally studentized residual beyond ±3", "Cook's distance above the median of F(p, n − p)",
    "Cook's distance above 4/n", "|DFFITS| above 2√(p/n)"};

static const char *const ASSUMPTION_TITLES[DIAG_N_ASSUMPTIONS] = {
    "Normal residuals", "Constant variance", "Independent errors",
    "Linearity",        "Collinearity",      "Influential rows"};

/* What the assumption is for, said once per report section. */
static const char *const ASSUMPTION_MEANING[DIAG_N_ASSUMPTIONS] = {
    "Confidence intervals, p-values and prediction intervals assume normally distributed "
    "errors; estimates and intervals of coefficients tolerate mild departures in larger "
    "samples, prediction intervals do not.",
    "Standard errors and intervals assume the same error variance everywhere; when the "
    "spread changes with the predictors they can be too narrow or too wide.",
    "Standard errors assume that the error of one row tells nothing about the next; "
    "correlated errors make intervals look more precise than they are.",
    "The model assumes the terms listed capture the shape of the relationship; missed "
    "curvature or interactions bias the coefficients.",
    "Predictors that move together inflate each other's standard errors, and their "
    "coefficients cannot be read one at a time.",
    "A few rows can pull the fitted equation towards themselves; conclusions should not "
    "rest on them alone."};

/* Verdict words never say that an assumption holds: a test that finds
   nothing has found nothing, which is not proof. */
static const char *verdict_word(diag_verdict_kind v)
{
    switch (v) {
    case DIAG_HOLDS: return "no departure detected";
    case DIAG_DOUBTFUL: return "possible departure";
    case DIAG_VIOLATED: return "violated";
    default: return "not assessed";
    }
}

/* Plain words for a remedy; the spec settings that apply it are listed in
   the appendix for the analyst, never here. */
static const char *remedy_words(diag_remedy r)
{
    switch (r) {
    case DIAG_REMEDY_HC3_ERRORS:
        return "use heteroscedasticity-consistent (HC3) standard errors, which stay valid "
               "when the spread changes";
    case DIAG_REMEDY_TRANSFORM_RESPONSE:
        return "model a transformed response, such as its logarithm";
    case DIAG_REMEDY_WEIGHTED_FIT:
        return "fit with weights inversely proportional to the error variance";
    case DIAG_REMEDY_ADD_TERMS:
        return "add the missing shape: a polynomial term or an interaction";
    case DIAG_REMEDY_ORDER_ROWS:
        return "state the order in which the rows were collected (time or sequence) so "
               "that independence can be assessed";
    case DIAG_REMEDY_TIME_SERIES_MODEL:
        return "use autocorrelation-consistent (Newey–West) standard errors, or model the "
               "dependence between consecutive rows, for example with autoregressive "
               "errors (outside what fitproof fits)";
    case DIAG_REMEDY_CENTER_TERMS:
        return "centre numeric columns before taking powers and products";
    case DIAG_REMEDY_COMBINE_TERMS:
        return "drop one of the collinear terms or combine them into one";
    case DIAG_REMEDY_INSPECT_ROWS:
        return "check the flagged rows at their source before deciding anything about them";
    default: return "";
    }
}

static const char *reason_words(diag_reason r)
{
    switch (r) {
    case DIAG_REASON_TOO_FEW_ROWS: return "there are too few rows for the test";
    case DIAG_REASON_EXACT_FIT: return "the model fits the data exactly, so the residuals are zero";
    case DIAG_REASON_NO_RESIDUAL_DF: return "no residual degrees of freedom are left";
    case DIAG_REASON_NO_ORDER:
        return "the rows carry no stated order in which neighbours could be compared, so no "
               "test of dependence between them means anything (a Durbin–Watson statistic "
               "in file order describes only the file's layout, and none is shown)";
    case DIAG_REASON_NO_REGRESSORS: return "the model has nothing but an intercept to test against";
    case DIAG_REASON_FITTED_IN_DESIGN:
        return "the powers of the fitted values add nothing to this design";
    case DIAG_REASON_NOT_ESTIMABLE: return "the coefficient is not estimable";
    case DIAG_REASON_NOT_FINITE: return "the value is not a finite number";
    case DIAG_REASON_TERM_ALIASED: return "every column of the term is aliased";
    default: return "it could not be computed";
    }
}

/* The test row of each assumption: name of the test, statistic, p. */
static void test_row(doc_node *table, const story *st, const diagnostics *g, diag_assumption a)
{
    doc_node *row = doc_row(table);
    doc_cell(row, ASSUMPTION_TITLES[a]);
    char stat[NARRATE_NUMBER_SIZE * 2] = "", p[NARRATE_NUMBER_SIZE] = "";
    const char *test = "";
    char number[NARRATE_NUMBER_SIZE];
    switch (a) {
    case DIAG_NORMALITY:
        test = g->shapiro.subsampled ? "Shapiro–Wilk (5000-row subsample)" : "Shapiro–Wilk";
        if (g->shapiro.computed) {
            narrate_number(number, g->shapiro.w, 4);
            snprintf(stat, sizeof stat, "W = %s", number);
            narrate_p_value(p, g->shapiro.p);
        }
        break;
    case DIAG_CONSTANT_VARIANCE:
        test = "Breusch–Pagan (studentized)";
        if (g->breusch_pagan.computed) {
            narrate_number(number, g->breusch_pagan.studentized.statistic, 4);
            snprintf(stat, sizeof stat, "%s on %.0f df", number,
                     g->breusch_pagan.studentized.df);
            narrate_p_value(p, g->breusch_pagan.studentized.p);
        }
        break;
    case DIAG_INDEPENDENCE:
        test = g->durbin_watson.ordered ? "Durbin–Watson" : "Durbin–Watson (needs a row order)";
        if (g->durbin_watson.computed && g->durbin_watson.ordered) {
            narrate_number(number, g->durbin_watson.d, 4);
            snprintf(stat, sizeof stat, "d = %s", number);
            if (g->durbin_watson.ordered)
                narrate_p_value(p, g->durbin_watson.p_two_sided);
        }
        break;
    case DIAG_LINEARITY:
        test = "RESET (fitted values squared and cubed)";
        if (g->reset.computed) {
            narrate_number(number, g->reset.f, 4);
            snprintf(stat, sizeof stat, "F = %s, numerator %.0f and denominator %.0f df",
                     number, g->reset.df_num, g->reset.df_den);
            narrate_p_value(p, g->reset.p);
        }
        break;
    case DIAG_COLLINEARITY:
        test = "variance inflation";
        if (g->collinearity.computed && g->collinearity.n_terms > 0) {
            narrate_number(number, g->collinearity.max_vif, 3);
            snprintf(stat, sizeof stat, "largest %s", number);
        }
        break;
    case DIAG_INFLUENCE:
        test = "Cook's distance, leverage";
        narrate_number(number, g->influence.max_cooks, 3);
        snprintf(stat, sizeof stat, "largest D = %s (%s %u)", number, story_position(st),
                 g->influence.max_cooks_line);
        break;
    default: break;
    }
    doc_cell(row, test);
    doc_cell(row, stat);
    doc_cell(row, p);
    doc_cell(row, verdict_word(g->verdicts[a].verdict));
}

/* The size of the departure beside its threshold and the threshold's
   source, for every verdict (the rules are verdicts.c's). */
static void size_text(buf *out, const diagnostics *g, diag_assumption a)
{
    char x[NARRATE_NUMBER_SIZE], y[NARRATE_NUMBER_SIZE];
    switch (a) {
    case DIAG_NORMALITY:
        if (!g->moments.computed)
            return;
        narrate_number(x, g->moments.skewness, 2);
        narrate_number(y, g->moments.excess_kurtosis, 2);
        buf_printf(out, " Size: skewness %s and excess kurtosis %s of the residuals, against "
                        "thresholds of ±0.5 and ±1 (common practice, no source).",
                   x, y);
        return;
    case DIAG_CONSTANT_VARIANCE:
        if (!isfinite(g->verdicts[DIAG_CONSTANT_VARIANCE].effect))
            return;
        story_percent(x, g->verdicts[DIAG_CONSTANT_VARIANCE].effect);
        buf_printf(out, " Size: replacing the classical standard errors by "
                        "heteroscedasticity-consistent ones (HC2, which has no bias under constant "
                        "variance) changes the most affected one by %s, against a threshold "
                        "of 10.0%% (fitproof's choice, no published source).",
                   x);
        return;
    case DIAG_INDEPENDENCE:
        if (!g->durbin_watson.computed || !g->durbin_watson.ordered)
            return;
        narrate_number(x, g->durbin_watson.autocorrelation, 2);
        buf_printf(out, " Size: the lag-one correlation of the residuals in the order of %s "
                        "is %s, against a threshold of ±0.1, a \"small\" correlation in "
                        "Cohen (1988).",
                   g->order_by, x);
        return;
    case DIAG_LINEARITY:
        if (!g->reset.computed)
            return;
        narrate_number(x, g->reset.cohen_f2, 2);
        buf_printf(out, " Size: Cohen's f² of the added powers of the fitted values is %s, "
                        "against a threshold of 0.02, a \"small\" effect in Cohen (1988).",
                   x);
        return;
    case DIAG_COLLINEARITY:
        if (!g->collinearity.computed || isnan(g->collinearity.max_vif))
            return;
        narrate_number(x, g->collinearity.max_vif, 3);
        buf_printf(out, " Size: the largest variance inflation is %s (%s), against thresholds "
                        "of 5 and 10 (common practice, no source).",
                   x, g->collinearity.terms[g->collinearity.max_term].label);
        return;
    case DIAG_INFLUENCE: {
        const diag_influence *inf = &g->influence;
        if (isnan(inf->max_cooks) || isnan(inf->threshold[3]))
            return;
        narrate_number(x, inf->max_cooks, 3);
        narrate_number(y, inf->threshold[3], 3);
        buf_printf(out, " Size: the largest Cook's distance is %s (line %u), against the "
                        "threshold of the median of F(%zu, %zu), %s (Cook 1977); ",
                   x, inf->max_cooks_line, inf->p, inf->n - inf->p, y);
        if (inf->count[3] == 0)
            buf_puts(out, "no row is above it");
        else
            buf_printf(out, "%zu %s above it", inf->count[3],
                       inf->count[3] == 1 ? "row is" : "rows are");
        if (inf->count[1] == 0)
            buf_puts(out, ", and no row is an outlier by the Bonferroni test (Cook & Weisberg "
                          "1982).");
        else
            buf_printf(out, ", and %zu %s by the Bonferroni test (Cook & Weisberg 1982).",
                       inf->count[1], inf->count[1] == 1 ? "row is an outlier"
                                                          : "rows are outliers");
        return;
    }
    default: return;
    }
}

/* What the outcome can and cannot say at this sample size. */
static void power_text(buf *out, const diagnostics *g, diag_assumption a)
{
    const diag_verdict *v = &g->verdicts[a];
    if (a == DIAG_COLLINEARITY || a == DIAG_INFLUENCE || v->verdict == DIAG_NOT_ASSESSED)
        return;
    size_t n = g->fit->n;
    bool detected = v->p < g->alpha;
    /* With little power a size beyond its threshold is a warning of its own;
       with more rows the estimate of the size is itself noisy, and the test
       is the better guide. */
    if (!detected && n < DIAG_SMALL_N && v->effect >= v->effect_threshold) /* false for NaN */
        buf_printf(out, " The size is beyond its threshold although the test does not "
                        "confirm a departure (with only %zu rows it has little power), so a "
                        "departure that matters is plausible: treat the conclusions that rest "
                        "on this assumption with care.",
                   n);
    else if (!detected && n < DIAG_SMALL_N)
        buf_printf(out, " With only %zu rows the test has little power: a departure large "
                        "enough to matter can go undetected, so this outcome is weak "
                        "reassurance at best.",
                   n);
    else if (!detected)
        buf_printf(out, " The test cannot rule out a moderate departure with n = %zu.", n);
    else if (n >= DIAG_LARGE_N)
        buf_printf(out, " With %zu rows the test detects departures too small to matter, so "
                        "the verdict rests on the size of the departure, not on the p-value.",
                   n);
}

static void evidence_text(buf *out, const diagnostics *g, diag_assumption a)
{
    const diag_verdict *v = &g->verdicts[a];
    if (v->verdict == DIAG_NOT_ASSESSED || isnan(v->p))
        return;
    char p[NARRATE_NUMBER_SIZE];
    narrate_p_value(p, v->p);
    bool detected = v->p < g->alpha;
    buf_printf(out, " The test %s (p %s%s, level %g).",
               detected ? "finds a departure" : "finds no departure", p[0] == '<' ? "" : "= ",
               p, g->alpha);
}

/* The influence verdict read together with the screening flags, which in
   any sample flag some rows by chance. */
static void influence_text(buf *out, const diagnostics *g)
{
    const diag_influence *inf = &g->influence;
    if (!isfinite(inf->chance_share))
        return;
    char share[NARRATE_NUMBER_SIZE];
    story_percent(share, inf->chance_share);
    double expected = inf->chance_share * (double)inf->n;
    size_t dffits = inf->count[5];
    buf_printf(out, " %zu %s flagged by at least one screening rule (listed below). The "
                    "DFFITS rule flags %zu; in a clean sample of %zu with equal leverage it "
                    "flags about %s of rows (%.0f) by chance, and the Cook's distance 4/n "
                    "rule nearly as many, so ",
               inf->n_flagged, inf->n_flagged == 1 ? "row is" : "rows are", dffits, inf->n,
               share, expected);
    if ((double)dffits > 2.0 * expected + 3.0)
        buf_puts(out, "that is more than chance alone explains: look at those rows first.");
    else
        buf_puts(out, "that many flags are about what chance gives; each calls for a look at "
                      "its row, not for a conclusion.");
}

static void verdict_paragraph(doc_node *list, const story *st, const diagnostics *g,
                              diag_assumption a)
{
    const diag_verdict *v = &g->verdicts[a];
    doc_node *item = doc_item(list);
    buf title;
    buf_init(&title);
    buf_printf(&title, "%s: %s.", ASSUMPTION_TITLES[a], verdict_word(v->verdict));
    doc_strong(item, title.data);
    buf_free(&title);
    buf text;
    buf_init(&text);
    if (v->verdict == DIAG_NOT_ASSESSED)
        buf_printf(&text, " It was not assessed because %s.", reason_words(v->reason));
    evidence_text(&text, g, a);
    size_text(&text, g, a);
    if (a == DIAG_INFLUENCE && v->verdict != DIAG_NOT_ASSESSED)
        influence_text(&text, g);
    power_text(&text, g, a);
    if (v->verdict == DIAG_VIOLATED || v->verdict == DIAG_DOUBTFUL) {
        buf_printf(&text, " %s", ASSUMPTION_MEANING[a]);
        if (v->verdict == DIAG_DOUBTFUL && v->p < g->alpha)
            buf_puts(&text, " The departure is detectable but smaller than its threshold, so "
                            "it may not change any conclusion.");
    }
    if (v->verdict != DIAG_HOLDS && v->n_remedies > 0) {
        buf_puts(&text, v->remedy_in_use ? " The model already does the first of these: "
                                         : " What to do: ");
        /* A response that is already transformed calls for another
           transformation, or more likely for the terms the model lacks. */
        const spec_derive *derive = story_derivation(st, g->design->response->name);
        for (size_t k = 0; k < v->n_remedies; k++) {
            buf_puts(&text, k ? "; or " : "");
            if (v->remedies[k] == DIAG_REMEDY_TRANSFORM_RESPONSE && derive) {
                buf_puts(&text, "reconsider the transformation of the response (it is "
                                "already ");
                story_words(st, &text, g->design->response->name);
                buf_puts(&text, "), or look for a predictor the model lacks");
            } else {
                buf_puts(&text, remedy_words(v->remedies[k]));
            }
        }
        buf_puts(&text, ".");
    }
    doc_text(item, text.data);
    buf_free(&text);
}

static void collinearity_table(doc_node *parent, const diagnostics *g)
{
    const diag_collinearity *c = &g->collinearity;
    if (!c->computed || c->n_terms < 2)
        return;
    const char *titles[] = {"Term", "Coefficients", "VIF", "GVIF",
                            "Standard-error inflation"};
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_RIGHT};
    doc_node *table = doc_table_titled(parent, 5, align, titles);
    for (size_t t = 0; t < c->n_terms; t++) {
        const diag_vif *v = &c->terms[t];
        doc_node *row = doc_row(table);
        char number[NARRATE_NUMBER_SIZE];
        doc_cell(row, v->label);
        snprintf(number, sizeof number, "%zu", v->df);
        doc_cell(row, number);
        narrate_number(number, v->vif, 3);
        doc_cell(row, v->df == 1 ? number : "");
        narrate_number(number, v->gvif, 3);
        doc_cell(row, number);
        narrate_number(number, v->gvif_adjusted, 3);
        doc_cell(row, number);
    }
    char cond[NARRATE_NUMBER_SIZE];
    narrate_number(cond, c->condition_number, 3);
    doc_textf(doc_paragraph(parent),
              "The condition number of the design, with each column scaled to unit length, "
              "is %s. A VIF of 5 or more (common practice, no source) marks a term whose "
              "standard error is inflated by its overlap with the others. The "
              "standard-error inflation is the GVIF to the power 1 / (2 × coefficients), "
              "comparable between terms of any size (Fox and Monette 1992); for a term of "
              "one coefficient it is the square root of its VIF.",
              cond);
}

static void flagged_rows(doc_node *parent, const story *st, const diagnostics *g)
{
    const diag_influence *inf = &g->influence;
    if (inf->n_flagged == 0) {
        doc_textf(doc_paragraph(parent), "No row is flagged by the influence rules.");
        return;
    }
    doc_textf(doc_paragraph(parent),
              "%zu %s flagged. Each rule is listed with its source; the ones marked "
              "\"common practice\" have no published source.",
              inf->n_flagged, inf->n_flagged == 1 ? "row is" : "rows are");
    doc_node *list = doc_list(parent);
    size_t shown = 0;
    for (size_t i = 0; i < inf->n && shown < 25; i++) {
        if (!inf->flags[i])
            continue;
        shown++;
        doc_node *item = doc_item(list);
        char cooks[NARRATE_NUMBER_SIZE], leverage[NARRATE_NUMBER_SIZE],
            studentized[NARRATE_NUMBER_SIZE];
        diag_row_measures m = diag_influence_row(inf, i);
        narrate_number(cooks, m.cooks, 3);
        narrate_number(leverage, inf->leverage[i], 3);
        narrate_number(studentized, m.studentized, 3);
        buf text;
        buf_init(&text);
        const char *word = story_position(st);
        buf_printf(&text, "%c%s %u (leverage %s, studentized residual %s, Cook's distance %s): ",
                   (char)(word[0] - 'a' + 'A'), word + 1, inf->lines[i], leverage, studentized,
                   cooks);
        bool first = true;
        for (size_t k = 0; k < DIAG_N_RULES; k++) {
            if (!(inf->flags[i] & (1u << k)))
                continue;
            buf_printf(&text, "%s%s (%s)", first ? "" : "; ", story_rule_words[k],
                       diag_rules[k].source ? diag_rules[k].source
                                            : "common practice, no source");
            first = false;
        }
        buf_puts(&text, ".");
        doc_text(item, text.data);
        buf_free(&text);
    }
    /* In row order, flags in runs hint at dependence between neighbours. */
    if (g->order_by) {
        buf runs;
        buf_init(&runs);
        size_t n_runs = 0;
        for (size_t i = 0; i < inf->n;) {
            size_t j = i;
            while (j < inf->n && inf->flags[g->order[j]])
                j++;
            if (j - i >= 3) {
                buf_printf(&runs, "%slines %u to %u", n_runs ? ", " : "",
                           inf->lines[g->order[i]], inf->lines[g->order[j - 1]]);
                n_runs++;
            }
            i = j > i ? j : i + 1;
        }
        if (n_runs)
            doc_textf(doc_paragraph(parent),
                      "In the order of %s, flagged rows come in runs of three or more (%s): "
                      "consecutive flags are a sign of dependence between neighbouring rows, "
                      "not of single bad rows.",
                      g->order_by, runs.data);
        buf_free(&runs);
    }
    if (inf->n_flagged > shown)
        doc_textf(doc_paragraph(parent),
                  "%zu more flagged %s are not listed here; the analyst can write every row "
                  "with its flags to a table beside the report (see the appendix).",
                  inf->n_flagged - shown, story_rows(st));
}

void story_add_assumptions(doc_node *parent, const story *st, const analysis_model *am)
{
    const diagnostics *g = am->diagnostics;
    if (!g)
        return;
    doc_heading(parent, 3, NULL, "Assumptions");
    const char *titles[] = {"Assumption", "Test", "Statistic", "p-value", "Verdict"};
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_LEFT};
    doc_node *table = doc_table_titled(parent, 5, align, titles);
    for (int a = 0; a < DIAG_N_ASSUMPTIONS; a++)
        test_row(table, st, g, (diag_assumption)a);
    doc_textf(doc_paragraph(parent),
              "No verdict below claims that an assumption is true: a test that finds nothing "
              "has not shown that nothing is there. \"No departure detected\" means the test finds "
              "no departure at the %g level; \"possible departure\" means one that is "
              "detected but smaller than its threshold; \"violated\" means detected and at "
              "least as large as its threshold. Each verdict below gives the size of the "
              "departure and the threshold with its source.",
              st->alpha);
    doc_node *list = doc_list(parent);
    for (int a = 0; a < DIAG_N_ASSUMPTIONS; a++)
        verdict_paragraph(list, st, g, (diag_assumption)a);
    if (g->shapiro.subsampled)
        doc_textf(doc_paragraph(parent),
                  "The Shapiro–Wilk test is validated for at most 5000 values, so it was run "
                  "on a reproducible random subsample of 5000 of the %zu residuals (seed %lu); "
                  "the skewness and kurtosis tests used every residual.",
                  g->shapiro.n_total, g->shapiro.seed);
    collinearity_table(parent, g);
    flagged_rows(parent, st, g);
}

void story_add_checks(doc_node *root, const story *st)
{
    const analysis *a = st->a;
    if (a->n_checks == 0)
        return;
    doc_heading(root, 2, "checks", "Checks");
    doc_textf(doc_paragraph(root),
              "The spec declares %zu check%s; %zu failed. A failed check makes the build end "
              "with exit status 1 after writing this report, so that a pipeline can stop.",
              a->n_checks, a->n_checks == 1 ? "" : "s", a->n_failed_checks);
    const char *titles[] = {"Check", "Model", "Value", "Outcome"};
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_LEFT};
    doc_node *table = doc_table_titled(root, 4, align, titles);
    for (size_t k = 0; k < a->n_checks; k++) {
        const diag_check_result *r = &a->checks[k];
        doc_node *row = doc_row(table);
        doc_cell(row, r->check->name);
        doc_cell(row, r->check->model);
        char value[NARRATE_NUMBER_SIZE] = "";
        if (isfinite(r->value)) {
            if (r->check->kind <= SPEC_CHECK_LINEAR)
                narrate_p_value(value, r->value);
            else
                story_number(st, value, r->value);
        }
        buf cell;
        buf_init(&cell);
        if (r->check->kind <= SPEC_CHECK_LINEAR && value[0])
            buf_printf(&cell, "p %s%s", value[0] == '<' ? "" : "= ", value);
        else
            buf_puts(&cell, value);
        if (r->line)
            buf_printf(&cell, " (%s %u)", story_position(st), r->line);
        doc_cell(row, cell.data);
        buf_reset(&cell);
        buf_puts(&cell, r->passed ? "passed" : "FAILED");
        if (!r->passed && r->reason != DIAG_REASON_NONE)
            buf_printf(&cell, ": %s", reason_words(r->reason));
        doc_cell(row, cell.data);
        buf_free(&cell);
    }
}

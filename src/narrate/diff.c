/*
 * diff.c — the document `fitproof diff` shows: what changed between two
 * report folders, in the order a reviewer reads it (the verdict first,
 * then the data, each model's moved coefficients and changed verdicts,
 * the checks, the levels, the spec), in the report's plain language.
 * Numbers come formatted from the comparison; nothing is computed here
 * beyond choosing words.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "narrate.h"

#define DIFF_DIGITS 4

static const char *assumption_words(const char *id)
{
    static const char *const names[][2] = {
        {"normality", "normal residuals"},       {"constant_variance", "constant spread"},
        {"independence", "independent errors"},  {"linearity", "the shape of the model"},
        {"collinearity", "collinearity"},        {"influence", "influential rows"}};
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++)
        if (strcmp(names[i][0], id) == 0)
            return names[i][1];
    return id;
}

/* Words for a verdict code; none of them says an assumption holds. */
static const char *verdict_words(const char *id)
{
    static const char *const names[][2] = {{"no_departure_detected", "no departure detected"},
                                           {"possible_departure", "a possible departure"},
                                           {"violated", "a departure that matters"},
                                           {"not_assessed", "not assessed"},
                                           /* the codes of results.json before 0.2 */
                                           {"holds", "no departure detected"},
                                           {"doubtful", "a possible departure"}};
    if (!id)
        return "not in this report";
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++)
        if (strcmp(names[i][0], id) == 0)
            return names[i][1];
    return id;
}

static void number_text(char *out, double value)
{
    if (isnan(value))
        snprintf(out, NARRATE_NUMBER_SIZE, "not available");
    else
        narrate_number(out, value, DIFF_DIGITS);
}

/* "12.5 (95% interval 11.0 to 14.0)" style cell text, without a level:
   the interval is the one each report printed. */
static void estimate_cell(doc_node *row, bool estimable, const compare_estimate *e)
{
    if (!estimable) {
        doc_cell(row, "not estimable");
        return;
    }
    char estimate[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
    number_text(estimate, e->estimate);
    number_text(low, e->ci_low);
    number_text(high, e->ci_high);
    doc_cellf(row, "%s (%s to %s)", estimate, low, high);
}

static void count_change(doc_node *list, const char *what, size_t before, size_t now)
{
    doc_node *item = doc_item(list);
    if (before == now)
        doc_textf(item, "%s: %zu in both.", what, now);
    else
        doc_textf(item, "%s: %zu, then %zu (%s%zu).", what, before, now, now > before ? "+" : "−",
                  now > before ? now - before : before - now);
}

/* ---- the opening verdict --------------------------------------------------- */

typedef struct {
    size_t moved, appeared, vanished, verdicts, checks_flipped, levels, models_changed;
} tally;

static tally count_findings(const compare_result *c)
{
    tally t = {0};
    for (size_t m = 0; m < c->n_models; m++) {
        const compare_model *model = &c->models[m];
        t.models_changed += model->presence != COMPARE_BOTH;
        t.verdicts += model->n_verdicts;
        for (size_t k = 0; k < model->n_coefficients; k++) {
            const compare_coefficient *coefficient = &model->coefficients[k];
            t.moved += coefficient->moved || coefficient->sign_flipped;
            t.appeared += coefficient->presence == COMPARE_ONLY_NEW;
            t.vanished += coefficient->presence == COMPARE_ONLY_OLD;
        }
    }
    for (size_t k = 0; k < c->n_checks; k++)
        t.checks_flipped += c->checks[k].presence != COMPARE_BOTH ||
                            c->checks[k].old_passed != c->checks[k].new_passed;
    t.levels = c->n_levels;
    return t;
}

static void plural(doc_node *item, size_t n, const char *one, const char *many)
{
    doc_textf(item, "%zu %s", n, n == 1 ? one : many);
}

static void add_opening(doc_node *doc, const compare_result *c)
{
    tally t = count_findings(c);
    doc_node *p = doc_paragraph(doc);
    doc_text(p, "Earlier report: ");
    doc_code_span(p, c->old_dir);
    doc_textf(p, " (fitproof %s). Later report: ", c->old_version ? c->old_version : "unknown");
    doc_code_span(p, c->new_dir);
    doc_textf(p, " (fitproof %s).", c->new_version ? c->new_version : "unknown");
    p = doc_paragraph(doc);
    if (!compare_needs_attention(c)) {
        doc_strong(p, "Same conclusions.");
        doc_text(p, " No coefficient moved by more than its combined standard error, no "
                    "assumption's outcome changed, every declared check has the same result, "
                    "and the spec is the same.");
        if (!c->same_data)
            doc_text(p, " The data differ; the section below says how.");
        return;
    }
    doc_strong(p, "Something needs a look.");
    doc_node *list = doc_list(doc);
    if (t.moved)
        plural(doc_item(list), t.moved, "coefficient moved by more than its combined standard error",
               "coefficients moved by more than their combined standard error");
    if (t.appeared + t.vanished)
        plural(doc_item(list), t.appeared + t.vanished, "coefficient appeared or vanished",
               "coefficients appeared or vanished");
    if (t.models_changed)
        plural(doc_item(list), t.models_changed, "model appeared or vanished",
               "models appeared or vanished");
    if (t.verdicts)
        plural(doc_item(list), t.verdicts, "assumption changed its outcome",
               "assumptions changed their outcome");
    if (t.checks_flipped)
        plural(doc_item(list), t.checks_flipped, "declared check changed its result",
               "declared checks changed their result");
    if (t.levels)
        plural(doc_item(list), t.levels, "category level appeared or vanished",
               "category levels appeared or vanished");
    if (!c->same_spec)
        doc_text(doc_item(list), "the spec changed");
}

/* ---- sections --------------------------------------------------------------- */

static void add_data(doc_node *doc, const compare_result *c)
{
    doc_heading(doc, 2, "data", "Data");
    doc_node *list = doc_list(doc);
    doc_node *item = doc_item(list);
    if (c->same_data) {
        doc_text(item, "The same data file contents in both (SHA-256 ");
        doc_code_span(item, c->new_data.sha256);
        doc_text(item, ").");
    } else {
        doc_text(item, "Different data file contents: SHA-256 ");
        doc_code_span(item, c->old_data.sha256);
        doc_text(item, ", then ");
        doc_code_span(item, c->new_data.sha256);
        doc_text(item, ".");
    }
    count_change(list, "Rows read", c->old_data.rows_read, c->new_data.rows_read);
    count_change(list, "Rows kept after the row filter", c->old_data.rows_kept,
                 c->new_data.rows_kept);
    item = doc_item(list);
    if (c->rows_compared && c->same_data)
        doc_textf(item, "Every row is the same (%zu rows).", c->rows_common);
    else if (c->rows_compared)
        doc_textf(item,
                  "Row by row: %zu rows in both, %zu only in the earlier data (removed or "
                  "changed), %zu only in the later data (added or changed).",
                  c->rows_common, c->rows_only_old, c->rows_only_new);
    else if (!c->old_data.readable || !c->new_data.readable)
        doc_text(item, "Rows were not compared one by one: a data file is no longer where its "
                       "manifest says, or has changed since its report was built.");
    else if (!c->same_data)
        doc_text(item, "Rows were not compared one by one: the two files have different "
                       "header lines.");
    else
        doc_textf(item, "Every row is the same (%zu rows).", c->new_data.rows_read);
}

static void add_coefficient_table(doc_node *doc, const compare_model *model, size_t *unmoved)
{
    static const doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                                      DOC_ALIGN_RIGHT};
    static const char *const titles[] = {"Coefficient", "Earlier estimate (interval)",
                                         "Later estimate (interval)", "Change in combined SEs"};
    doc_node *table = NULL;
    *unmoved = 0;
    for (size_t k = 0; k < model->n_coefficients; k++) {
        const compare_coefficient *coefficient = &model->coefficients[k];
        bool shown = coefficient->presence != COMPARE_BOTH || coefficient->moved ||
                     coefficient->sign_flipped ||
                     coefficient->old_estimable != coefficient->new_estimable;
        if (!shown) {
            *unmoved += 1;
            continue;
        }
        if (!table)
            table = doc_table_titled(doc, 4, align, titles);
        doc_node *row = doc_row(table);
        doc_cell(row, coefficient->label);
        if (coefficient->presence == COMPARE_ONLY_NEW)
            doc_cell(row, "not in the model");
        else
            estimate_cell(row, coefficient->old_estimable, &coefficient->old_value);
        if (coefficient->presence == COMPARE_ONLY_OLD)
            doc_cell(row, "not in the model");
        else
            estimate_cell(row, coefficient->new_estimable, &coefficient->new_value);
        char shift[NARRATE_NUMBER_SIZE];
        if (isfinite(coefficient->shift_in_se)) {
            narrate_number(shift, coefficient->shift_in_se, 3);
            doc_cellf(row, "%s%s", coefficient->shift_in_se > 0 ? "+" : "", shift);
        } else {
            doc_cell(row, "—");
        }
    }
}

/* A heading whose text is formatted like printf. */
static void heading_with_name(doc_node *doc, int level, const char *anchor, const char *what,
                              const char *name)
{
    buf text;
    buf_init(&text);
    buf_printf(&text, "%s%s", what, name);
    doc_heading(doc, level, anchor, text.data);
    buf_free(&text);
}

static void add_model(doc_node *doc, const compare_model *model, size_t index)
{
    char anchor[32];
    snprintf(anchor, sizeof anchor, "model-%zu", index + 1);
    heading_with_name(doc, 2, anchor, "Model ", model->id);
    if (model->presence != COMPARE_BOTH) {
        doc_node *p = doc_paragraph(doc);
        doc_textf(p, "This model is only in the %s report.",
                  model->presence == COMPARE_ONLY_OLD ? "earlier" : "later");
        return;
    }
    doc_node *list = doc_list(doc);
    count_change(list, "Rows used", model->old_rows, model->new_rows);
    char before[NARRATE_NUMBER_SIZE], now[NARRATE_NUMBER_SIZE];
    number_text(before, model->old_r_squared);
    number_text(now, model->new_r_squared);
    doc_textf(doc_item(list), "R²: %s, then %s.", before, now);
    size_t unmoved;
    add_coefficient_table(doc, model, &unmoved);
    doc_node *p = doc_paragraph(doc);
    if (unmoved == model->n_coefficients)
        doc_textf(p, "Each of the %zu coefficients moved by less than its combined standard "
                     "error.",
                  unmoved);
    else if (unmoved > 0)
        doc_textf(p, "The other %zu coefficient%s moved by less than %s combined standard "
                     "error.",
                  unmoved, unmoved == 1 ? "" : "s", unmoved == 1 ? "its" : "their");
    if (model->n_verdicts == 0) {
        doc_text(doc_paragraph(doc), "Every assumption has the same outcome as before.");
        return;
    }
    doc_text(doc_paragraph(doc), "Assumptions whose outcome changed:");
    list = doc_list(doc);
    for (size_t k = 0; k < model->n_verdicts; k++) {
        const compare_verdict *v = &model->verdicts[k];
        doc_node *item = doc_item(list);
        doc_textf(item, "%s: %s, now %s.", assumption_words(v->assumption),
                  verdict_words(v->old_verdict), verdict_words(v->new_verdict));
    }
}

static const char *passed_word(bool passed)
{
    return passed ? "passed" : "failed";
}

static void add_checks(doc_node *doc, const compare_result *c)
{
    if (c->n_checks == 0)
        return;
    doc_heading(doc, 2, "checks", "Declared checks");
    static const doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_LEFT};
    static const char *const titles[] = {"Check", "Earlier", "Later"};
    doc_node *table = NULL;
    size_t same = 0;
    for (size_t k = 0; k < c->n_checks; k++) {
        const compare_check *check = &c->checks[k];
        if (check->presence == COMPARE_BOTH && check->old_passed == check->new_passed) {
            same++;
            continue;
        }
        if (!table)
            table = doc_table_titled(doc, 3, align, titles);
        doc_node *row = doc_row(table);
        doc_cell(row, check->name ? check->name : "");
        doc_cell(row, check->presence == COMPARE_ONLY_NEW ? "not declared"
                                                          : passed_word(check->old_passed));
        doc_cell(row, check->presence == COMPARE_ONLY_OLD ? "not declared"
                                                          : passed_word(check->new_passed));
    }
    if (same > 0)
        doc_textf(doc_paragraph(doc), "%s%zu check%s gave the same result as before.",
                  table ? "The other " : "", same, same == 1 ? "" : "s");
}

static void add_levels(doc_node *doc, const compare_result *c)
{
    if (c->n_levels == 0)
        return;
    doc_heading(doc, 2, "levels", "Category levels");
    doc_node *list = doc_list(doc);
    for (size_t k = 0; k < c->n_levels; k++) {
        const compare_level *level = &c->levels[k];
        doc_textf(doc_item(list), "%s = '%s': %s (%zu row%s).", level->column, level->level,
                  level->presence == COMPARE_ONLY_NEW ? "new in the later data"
                                                      : "no longer in the data",
                  level->rows, level->rows == 1 ? "" : "s");
    }
}

static void add_spec(doc_node *doc, const compare_result *c)
{
    doc_heading(doc, 2, "spec", "Spec");
    if (c->same_spec) {
        doc_text(doc_paragraph(doc), "The two reports come from the same spec, byte for byte.");
        return;
    }
    if (c->spec_lines_elided) {
        doc_text(doc_paragraph(doc),
                 "The specs differ in too many lines to list here; compare the two archived "
                 "spec files directly.");
        return;
    }
    doc_text(doc_paragraph(doc), "Lines marked - are only in the earlier spec, lines marked "
                                 "+ only in the later one (with their line numbers):");
    buf lines;
    buf_init(&lines);
    for (size_t k = 0; k < c->n_spec_lines; k++)
        buf_printf(&lines, "%c %4zu  %s\n", c->spec_lines[k].sign == '-' ? '-' : '+',
                   c->spec_lines[k].line, c->spec_lines[k].text);
    doc_code(doc, "text", lines.data ? lines.data : "");
    buf_free(&lines);
}

doc_node *narrate_diff(const compare_result *c)
{
    doc_node *doc = doc_new();
    heading_with_name(doc, 1, NULL, "What changed: ",
                      c->new_title ? c->new_title : "regression report");
    add_opening(doc, c);
    add_data(doc, c);
    for (size_t m = 0; m < c->n_models; m++)
        add_model(doc, &c->models[m], m);
    add_checks(doc, c);
    add_levels(doc, c);
    add_spec(doc, c);
    doc_node *note = doc_callout(doc, "note");
    doc_text(doc_paragraph(note),
             "A coefficient is listed when its change exceeds the combined standard error of "
             "the two estimates, the square root of the sum of their squared standard errors, "
             "or when its sign changed. The two runs usually share most of their rows, so the "
             "estimates are not independent: this is a rule for deciding what to look at "
             "(common practice, no published source), not a test of a difference.");
    return doc;
}

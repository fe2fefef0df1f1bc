/*
 * narrate.c — the report's structure: title block, provenance, caution,
 * then the sections in the order the spec gives (summary, data, models,
 * comparisons, predictions, checks, appendix, and the spec's own narrative
 * blocks between them). Sentences about coefficients are in sentences.c,
 * number formats in words.c, cited values in refs.c.
 */
#include "../util/dates.h"
#include "parts.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static story story_of(const analysis *a, const narrate_sources *sources)
{
    const spec_report *report = &a->spec->report;
    story st = {a,
                a->spec,
                sources,
                report->significant_digits,
                report->decimal_places,
                a->level,
                a->alpha};
    return st;
}

static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

/* ---- title block, provenance, caution ----------------------------------- */

static void add_title_block(doc_node *root, const story *st)
{
    const spec *s = st->s;
    doc_heading(root, 1, "top", s->title ? s->title : "Regression report");
    story_add_title_facts(root, s);
    doc_node *p = doc_paragraph(root);
    doc_textf(p, "%zu model%s fitted by least squares to ", st->a->n_models,
              st->a->n_models == 1 ? "" : "s");
    doc_code_span(p, st->s->data.path);
    doc_textf(p, " as the spec ");
    doc_code_span(p, base_name(s->path));
    doc_textf(p, " describes. Intervals are %g%% confidence intervals; tests use a "
                 "significance level of %g. Standard errors, p-values and intervals are the "
                 "classical ones, which assume independent errors of constant variance, "
                 "unless a model's section names another covariance.",
              st->level * 100, st->alpha);
}

static void add_provenance(doc_node *root, const story *st)
{
    const narrate_sources *src = st->sources;
    if (!src)
        return;
    const char *titles[] = {"Input", "File", "SHA-256"};
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_LEFT};
    doc_node *table = doc_table_titled(root, 3, align, titles);
    doc_node *row = doc_row(table);
    doc_cell(row, "spec");
    doc_cell(row, base_name(st->s->path));
    doc_cell(row, src->spec_sha256);
    row = doc_row(table);
    doc_cell(row, "data");
    doc_cell(row, st->s->data.path);
    doc_cell(row, src->data_sha256);
    row = doc_row(table);
    doc_cell(row, "software");
    doc_cellf(row, "fitproof %s", src->fitproof_version ? src->fitproof_version : "?");
    doc_cellf(row, "GSL %s", src->gsl_version ? src->gsl_version : "?");
}

static void list_join(buf *out, size_t k, size_t n)
{
    buf_puts(out, k == 0 ? "" : (k + 1 == n ? " and " : ", "));
}

/* The limits of this report, from its own results: associations, every
   violated assumption, every extrapolated prediction, the rows left out. */
static void add_caution(doc_node *root, const story *st)
{
    static const char *const names[DIAG_N_ASSUMPTIONS] = {
        "normal residuals", "constant variance", "independent errors",
        "linearity",        "no strong collinearity", "no unduly influential rows"};
    doc_node *callout = doc_callout(root, "caution");
    doc_node *p = doc_paragraph(callout);
    doc_strong(p, "Caution.");
    doc_text(p, " The coefficients describe associations in these data, not causes: each says "
                "how the response differs between rows that differ in a predictor, adjusted "
                "for the other terms, not what would follow from changing it.");
    const analysis *a = st->a;
    for (size_t m = 0; m < a->n_models; m++) {
        const analysis_model *am = &a->models[m];
        const diagnostics *g = am->diagnostics;
        buf list;
        buf_init(&list);
        size_t n = 0, i = 0;
        for (int k = 0; g && k < DIAG_N_ASSUMPTIONS; k++)
            n += g->verdicts[k].verdict == DIAG_VIOLATED;
        for (int k = 0; g && k < DIAG_N_ASSUMPTIONS; k++)
            if (g->verdicts[k].verdict == DIAG_VIOLATED) {
                list_join(&list, i++, n);
                buf_puts(&list, names[k]);
            }
        if (n)
            doc_textf(p, " Model '%s' violates the assumption%s of %s, so %s.",
                      am->model->id, n == 1 ? "" : "s", list.data,
                      am->caveat_kind != SPEC_ERRORS_CLASSICAL
                          ? "its classical p-values and intervals are unreliable (robust "
                            "figures are given beside them)"
                          : "the conclusions that rest on them need care");
        buf_reset(&list);
        size_t extrapolated = 0;
        for (size_t k = 0; k < am->n_predictions; k++)
            if (am->predictions[k].result.extrapolation)
                buf_printf(&list, "%s%zu", extrapolated++ ? ", " : "", k + 1);
        if (extrapolated)
            doc_textf(p, " Prediction%s %s of model '%s' %s outside the data and rest%s on "
                         "the fitted relationship continuing there.",
                      extrapolated == 1 ? "" : "s", list.data, am->model->id,
                      extrapolated == 1 ? "lies" : "lie", extrapolated == 1 ? "s" : "");
        buf_free(&list);
        if (!(am->fit->df_residual > 0))
            doc_textf(p, " Model '%s' has no residual degrees of freedom: its estimates carry "
                         "no measure of uncertainty.",
                      am->model->id);
    }
    size_t rows = a->table->n_rows;
    for (size_t m = 0; m < a->n_models; m++) {
        const design *d = a->models[m].design;
        if (d->n_dropped == 0 || rows == 0)
            continue;
        char share[NARRATE_NUMBER_SIZE];
        story_percent(share, (double)d->n_dropped / (double)rows);
        doc_textf(p, " Model '%s' leaves out %zu of the %zu %s (%s) for missing values; if "
                     "they differ from the others, its results may not hold for them.",
                  a->models[m].model->id, d->n_dropped, rows, story_rows(st), share);
    }
    if (a->table->n_removed > 0)
        doc_textf(p, " A row filter removed %zu %s before any model; the results describe "
                     "the rows kept only.",
                  a->table->n_removed, story_rows(st));
    doc_text(p, " Statistical output supports, and does not replace, review by a qualified "
                "person, especially where decisions affect people's health, safety or "
                "rights. Follow the codes and standards that govern your field.");
}

/* ---- summary ------------------------------------------------------------ */

/* A term in words: its columns' labels joined by " × ". */
static void term_words(const story *st, buf *out, const design_term *term)
{
    for (size_t i = 0; i < term->n_columns; i++) {
        buf_puts(out, i ? " × " : "");
        story_words(st, out, term->columns[i]->name);
    }
}

/* The findings of one model, from its results: fit, terms that matter (by
   the tests the report leads with), each assumption's outcome. */
static void summary_model(doc_node *item, const story *st, const analysis_model *am)
{
    const fit_result *f = am->fit;
    const design *d = am->design;
    buf text;
    buf_init(&text);
    buf_printf(&text, "Model '%s'", am->model->id);
    doc_strong(item, text.data);
    buf_reset(&text);
    story_words(st, &text, d->response->name);
    if (!(f->df_residual > 0)) {
        doc_textf(item, " (%s, %zu %s) passes through every row: no inference is possible.",
                  text.data, d->n_used, story_rows(st));
        buf_free(&text);
        return;
    }
    char r2[NARRATE_NUMBER_SIZE], p[NARRATE_NUMBER_SIZE];
    story_percent(r2, f->r_squared);
    bool wald = f->errors != SPEC_ERRORS_CLASSICAL && isfinite(f->wald_f_p);
    narrate_p_value(p, wald ? f->wald_f_p : f->f_p);
    doc_textf(item, " (%s, %zu %s) accounts for %s of its variation%s", text.data, d->n_used,
              story_rows(st), r2, f->centred ? "" : " (uncentred R²)");
    if (!isnan(wald ? f->wald_f_p : f->f_p))
        doc_textf(item, " (overall test p %s%s%s)", p[0] == '<' ? "" : "= ", p,
                  wald ? ", robust" : "");
    doc_text(item, ".");
    const fit_term_test *tests = f->wald_term_tests ? f->wald_term_tests : f->term_tests;
    if (tests && d->n_terms > 0) {
        buf yes, no;
        buf_init(&yes);
        buf_init(&no);
        size_t n_yes = 0, n_no = 0;
        for (size_t k = 0; k < f->n_terms; k++)
            if (tests[k].p < st->alpha)
                n_yes++;
            else
                n_no++;
        size_t i_yes = 0, i_no = 0;
        for (size_t k = 0; k < f->n_terms; k++) {
            const design_term *term = &d->terms[f->term_tests[k].term];
            if (tests[k].p < st->alpha) {
                list_join(&yes, i_yes++, n_yes);
                term_words(st, &yes, term);
            } else {
                list_join(&no, i_no++, n_no);
                term_words(st, &no, term);
            }
        }
        if (n_yes)
            doc_textf(item, " Terms associated with %s, given the other terms: %s.", text.data,
                      yes.data);
        if (n_no)
            doc_textf(item, " Terms the data cannot tell from no association: %s.", no.data);
        buf_free(&yes);
        buf_free(&no);
    }
    const diagnostics *g = am->diagnostics;
    if (!g)
        goto done;
    static const char *const names[DIAG_N_ASSUMPTIONS] = {
        "normal residuals", "constant variance", "independent errors",
        "linearity",        "collinearity",      "influential rows"};
    static const char *const outcomes[] = {"no departure detected", "possible departure",
                                           "violated", "not assessed"};
    for (int v = DIAG_VIOLATED; v >= DIAG_HOLDS; v--) {
        buf list;
        buf_init(&list);
        size_t n = 0, i = 0;
        for (int a = 0; a < DIAG_N_ASSUMPTIONS; a++)
            n += g->verdicts[a].verdict == (diag_verdict_kind)v;
        for (int a = 0; a < DIAG_N_ASSUMPTIONS; a++)
            if (g->verdicts[a].verdict == (diag_verdict_kind)v) {
                list_join(&list, i++, n);
                buf_puts(&list, names[a]);
            }
        if (n)
            doc_textf(item, " %c%s: %s.", outcomes[v][0] - 32, outcomes[v] + 1, list.data);
        buf_free(&list);
    }
    {
        buf list;
        buf_init(&list);
        size_t n = 0, i = 0;
        for (int a = 0; a < DIAG_N_ASSUMPTIONS; a++)
            n += g->verdicts[a].verdict == DIAG_NOT_ASSESSED;
        for (int a = 0; a < DIAG_N_ASSUMPTIONS; a++)
            if (g->verdicts[a].verdict == DIAG_NOT_ASSESSED) {
                list_join(&list, i++, n);
                buf_puts(&list, names[a]);
            }
        if (n)
            doc_textf(item, " Not assessed: %s.", list.data);
        buf_free(&list);
    }
    if (am->caveat_kind != SPEC_ERRORS_CLASSICAL)
        doc_textf(item, " Its p-values and intervals are classical ones; the %s figures are "
                        "given beside them.",
                  story_errors_short(am->caveat_kind));
done:
    buf_free(&text);
}

static void add_summary(doc_node *root, const story *st)
{
    doc_heading(root, 2, "summary", "At a glance");
    doc_node *list = doc_list(root);
    for (size_t m = 0; m < st->a->n_models; m++)
        summary_model(doc_item(list), st, &st->a->models[m]);
    for (size_t k = 0; k < st->a->n_comparisons; k++) {
        const analysis_comparison *c = &st->a->comparisons[k];
        if (c->result.nesting != FIT_NESTED || isnan(c->result.p))
            continue;
        double p = isfinite(c->result.wald.p) ? c->result.wald.p : c->result.p;
        char pv[NARRATE_NUMBER_SIZE];
        narrate_p_value(pv, p);
        doc_textf(doc_item(list), "Comparison: what '%s' adds to '%s' %s (p %s%s).",
                  c->big->model->id, c->small->model->id,
                  p < st->alpha ? "explains more than chance would"
                                : "cannot be told apart from no improvement",
                  pv[0] == '<' ? "" : "= ", pv);
    }
    size_t failed = st->a->n_failed_checks;
    if (st->a->n_checks > 0) {
        doc_node *item = doc_item(list);
        if (failed)
            doc_textf(item, "%zu of %zu declared checks failed; see Checks.", failed,
                      st->a->n_checks);
        else
            doc_textf(item, "All %zu declared checks passed.", st->a->n_checks);
    }
}

/* ---- data --------------------------------------------------------------- */

static void line_list(buf *out, const uint32_t *lines, size_t count, size_t shown);

static void numeric_summary(const story *st, buf *out, const data_column *column)
{
    if (column->n_values == 0) {
        buf_puts(out, "no values");
        return;
    }
    char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE], m[NARRATE_NUMBER_SIZE];
    story_value(st, a, column->value_min);
    story_value(st, b, column->value_max);
    story_value(st, m, column->value_mean);
    buf_printf(out, "from %s to %s, mean %s", a, b, m);
}

static void category_summary(buf *out, const data_column *column)
{
    for (size_t k = 0; k < column->n_levels && k < 12; k++)
        buf_printf(out, "%s%s (%zu)%s", k ? ", " : "", column->levels[k],
                   column->level_counts[k], k == column->reference ? " reference" : "");
    if (column->n_levels > 12)
        buf_printf(out, ", and %zu more levels", column->n_levels - 12);
}

static void add_data(doc_node *root, const story *st)
{
    const data_table *t = st->a->table;
    doc_heading(root, 2, "data", "The data");
    doc_node *p = doc_paragraph(root);
    doc_textf(p, "%zu %s and %zu columns were read from ", t->rows_read, story_rows(st),
              t->n_file_columns);
    doc_code_span(p, st->s->data.path);
    const spec_data *d = &st->s->data;
    if (t->source_query && d->table)
        doc_textf(p, " (%s), table %s, in the order of %s", t->source_version, d->table,
                  d->key ? d->key : "storage (SQLite's rowid)");
    else if (t->source_query)
        doc_textf(p, " (%s) by the query written in the spec (see the appendix), in the "
                     "order %s%s",
                  t->source_version, d->key ? "of " : "", d->key ? d->key : "the query sets");
    if (t->source_query)
        doc_textf(p, "; rows are numbered %s%s", d->key ? "by their " : "by their position in "
                  "that order", d->key ? d->key : "");
    if (t->source_sheet)
        doc_textf(p, " (sheet %s; rows are numbered as in the sheet)", t->source_sheet);
    doc_text(p, ".");
    if (st->s->where) {
        buf lines;
        buf_init(&lines);
        line_list(&lines, t->removed_lines, t->n_removed, 20);
        if (t->n_removed)
            doc_textf(p, " The spec's row filter removed %zu of them (%s%s %s), leaving %zu.",
                      t->n_removed, story_position(st), t->n_removed == 1 ? "" : "s",
                      lines.data, t->n_rows);
        else
            doc_text(p, " The spec's row filter kept every row.");
        buf_free(&lines);
    }
    for (size_t j = 0; j < t->n_file_columns; j++) {
        const data_column *column = &t->columns[j];
        if (!column->is_date)
            continue;
        char origin[32];
        date_format(column->date_origin, origin, sizeof origin);
        doc_textf(p, " Dates in column %s are counted in %ss from %s%s.", column->name,
                  column->date_unit, origin,
                  column->origin_is_earliest ? ", the earliest date among the rows kept" : "");
    }
    if (t->n_columns > t->n_file_columns)
        doc_textf(p, " %zu column%s derived from the others as the spec asks.",
                  t->n_columns - t->n_file_columns,
                  t->n_columns - t->n_file_columns == 1 ? " is" : "s are");
    doc_text(p, " Each model uses the rows that are complete in the columns it needs; the "
                "counts and means below are of every row in the table; each model's section "
                "gives the counts of the rows it fitted, and its figures hold predictors at "
                "the means of those rows.");
    const char *titles[] = {"Column", "Kind", "Unit", "Missing", "Values"};
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_LEFT};
    doc_node *table = doc_table_titled(root, 5, align, titles);
    for (size_t j = 0; j < t->n_columns; j++) {
        const data_column *column = &t->columns[j];
        doc_node *row = doc_row(table);
        doc_cell(row, column->name);
        if (column->derive)
            doc_cellf(row, "%s of %s", spec_transform_name(column->derive->transform),
                        column->derive->from);
        else
            doc_cell(row, column->is_date                 ? "date"
                          : column->kind == DATA_NUMERIC ? "numeric"
                                                         : "category");
        doc_cell(row, story_unit(st, column->name));
        doc_cellf(row, "%zu", column->n_missing);
        buf text;
        buf_init(&text);
        if (column->kind == DATA_NUMERIC)
            numeric_summary(st, &text, column);
        else
            category_summary(&text, column);
        for (size_t k = 0; k < column->n_absent_levels; k++)
            buf_printf(&text, "%s'%s' has no row", k ? ", " : "; ", column->absent_levels[k]);
        doc_cell(row, text.data);
        buf_free(&text);
    }
}

/* ---- one model ---------------------------------------------------------- */

static void line_list(buf *out, const uint32_t *lines, size_t count, size_t shown)
{
    for (size_t i = 0; i < count && i < shown; i++)
        buf_printf(out, "%s%u", i ? ", " : "", lines[i]);
    if (count > shown)
        buf_printf(out, " and %zu more", count - shown);
}

static void add_rows_used(doc_node *parent, const story *st, const analysis_model *am)
{
    const design *d = am->design;
    doc_node *p = doc_paragraph(parent);
    doc_textf(p, "Fitted on %zu of the %zu %s.", d->n_used, st->a->table->n_rows,
              story_rows(st));
    for (size_t k = 0; k < d->n_counts; k++) {
        const design_counts *c = &d->counts[k];
        buf counts;
        buf_init(&counts);
        for (size_t l = 0; l < c->column->n_levels; l++)
            buf_printf(&counts, "%s%s %zu", l ? ", " : "", c->column->levels[l], c->rows[l]);
        if (k == 0)
            doc_textf(p, " Counts of the fitted %s by %s: %s.", story_rows(st), c->column->name,
                      counts.data);
        else
            doc_textf(p, " By %s: %s.", c->column->name, counts.data);
        buf_free(&counts);
    }
    if (d->n_dropped == 0)
        return;
    buf lines;
    buf_init(&lines);
    line_list(&lines, d->dropped_lines, d->n_dropped, 20);
    doc_textf(p, " %zu %s left out for a missing value in a column this model uses "
                 "(%s%s %s of %s; all are listed in the appendix).",
              d->n_dropped, d->n_dropped == 1 ? "row was" : "rows were", story_position(st),
              d->n_dropped == 1 ? "" : "s", lines.data, story_position_source(st));
    buf_reset(&lines);
    for (size_t k = 0; k < d->n_missing; k++)
        if (d->missing[k].rows > 0)
            buf_printf(&lines, "%s%s in %zu", lines.length ? ", " : "",
                       d->missing[k].column->name, d->missing[k].rows);
    if (lines.length)
        doc_textf(p, " Missing values by column: %s.", lines.data);
    buf_free(&lines);
}

static void add_equation(doc_node *parent, const story *st, const analysis_model *am)
{
    const design *d = am->design;
    const fit_result *f = am->fit;
    doc_heading(parent, 3, NULL, "Fitted equation");
    buf eq;
    buf_init(&eq);
    const char *unit = story_unit(st, d->response->name);
    buf_printf(&eq, "predicted %s%s%s%s =", d->response->name, unit ? " [" : "",
               unit ? unit : "", unit ? "]" : "");
    bool first = true;
    for (size_t c = 0; c < d->n_coefs; c++) {
        if (!f->coefs[c].estimable)
            continue;
        char number[NARRATE_NUMBER_SIZE];
        double e = f->coefs[c].estimate;
        story_number(st, number, fabs(e));
        if (first)
            buf_printf(&eq, " %s%s", e < 0 ? "-" : "", number);
        else
            buf_printf(&eq, "\n    %s %s", e < 0 ? "-" : "+", number);
        for (size_t i = 0; i < d->coefs[c].n_parts; i++) {
            const design_part *part = &d->coefs[c].parts[i];
            if (part->kind == DESIGN_SUM)
                buf_printf(&eq, " × [%s: %s vs average]", part->column->name, part->level);
            else if (part->level)
                buf_printf(&eq, " × [%s is %s]", part->column->name, part->level);
            else if (part->power > 1)
                buf_printf(&eq, " × %s^%d", part->column->name, part->power);
            else
                buf_printf(&eq, " × %s", part->column->name);
        }
        first = false;
    }
    doc_code(parent, "text", eq.data);
    buf_free(&eq);
    bool explained_indicator = false, explained_sum = false;
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t i = 0; i < d->coefs[c].n_parts; i++) {
            const design_part *part = &d->coefs[c].parts[i];
            if (part->kind == DESIGN_SUM && !explained_sum) {
                doc_textf(doc_paragraph(parent),
                          "A bracket such as [%s: %s vs average] stands for 1 when the row "
                          "has level '%s', −1 when it has '%s' (the level without a "
                          "coefficient of its own) and 0 otherwise, so that its coefficient "
                          "compares the level with the average of all levels.",
                          part->column->name, part->level, part->level, part->omitted);
                explained_sum = true;
            } else if (part->level && part->kind != DESIGN_SUM && !explained_indicator) {
                doc_textf(doc_paragraph(parent),
                          "A bracket such as [%s is %s] stands for 1 when the row has that "
                          "level and 0 otherwise.",
                          part->column->name, part->level);
                explained_indicator = true;
            }
        }
}

/* The classical figures under a violated assumption they rest on: say so,
   and give the robust figures beside them. */
static void add_caveat_table(doc_node *parent, const story *st, const analysis_model *am)
{
    if (am->caveat_kind == SPEC_ERRORS_CLASSICAL)
        return;
    const design *d = am->design;
    const fit_result *f = am->fit;
    buf words;
    buf_init(&words);
    story_errors_words(&words, am, am->caveat_kind);
    doc_node *p = doc_paragraph(parent);
    doc_strong(p, "Caveat.");
    doc_textf(p, " The %s check finds a violation, and the figures above are classical ones, "
                 "which assume %s; their p-values and intervals are then too optimistic or "
                 "too pessimistic. Beside them, from the %s:",
              am->caveat_assumption == DIAG_INDEPENDENCE ? "independence" : "constant-variance",
              am->caveat_assumption == DIAG_INDEPENDENCE ? "independent errors"
                                                         : "errors of constant variance",
              words.data);
    buf_free(&words);
    char se_title[64], p_title[64], ci_title[96];
    const char *kind = story_errors_short(am->caveat_kind);
    snprintf(se_title, sizeof se_title, "Standard error (%s)", kind);
    snprintf(p_title, sizeof p_title, "p-value (%s)", kind);
    snprintf(ci_title, sizeof ci_title, "%g%% confidence interval (%s)", st->level * 100, kind);
    const char *titles[] = {"Coefficient", "Standard error (classical)", se_title, p_title,
                            ci_title};
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_RIGHT};
    doc_node *table = doc_table_titled(parent, 5, align, titles);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const fit_coef *fc = &f->coefs[c];
        if (!fc->estimable)
            continue;
        fit_inference alt = am->caveat_kind == SPEC_ERRORS_HAC ? fc->hac : fc->robust[FIT_HC3];
        doc_node *row = doc_row(table);
        char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE], pv[NARRATE_NUMBER_SIZE];
        doc_cell(row, d->coefs[c].label);
        story_number(st, a, fc->std_error);
        doc_cell(row, a);
        story_number(st, a, alt.std_error);
        doc_cell(row, a);
        narrate_p_value(pv, alt.p);
        doc_cell(row, pv);
        story_number(st, a, alt.ci_low);
        story_number(st, b, alt.ci_high);
        doc_cellf(row, "%s to %s", a, b);
    }
}

static void add_coefficient_table(doc_node *parent, const story *st, const analysis_model *am)
{
    const design *d = am->design;
    const fit_result *f = am->fit;
    doc_heading(parent, 3, NULL, "Coefficients");
    char interval_title[64], se_title[64];
    snprintf(interval_title, sizeof interval_title, "%g%% confidence interval", st->level * 100);
    if (f->errors == SPEC_ERRORS_CLASSICAL)
        snprintf(se_title, sizeof se_title, "Standard error");
    else
        snprintf(se_title, sizeof se_title, "Standard error (%s)",
                 story_errors_short(f->errors));
    const char *titles[] = {"Coefficient", "Estimate", se_title, "t", "p-value",
                            interval_title};
    doc_align align[] = {DOC_ALIGN_LEFT,  DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT};
    doc_node *table = doc_table_titled(parent, 6, align, titles);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const fit_coef *fc = &f->coefs[c];
        doc_node *row = doc_row(table);
        doc_cell(row, d->coefs[c].label);
        if (!fc->estimable) {
            doc_cell(row, "not estimable");
            for (int k = 0; k < 4; k++)
                doc_cell(row, "");
            continue;
        }
        if (!(f->df_residual > 0)) {
            char e[NARRATE_NUMBER_SIZE];
            story_number(st, e, fc->estimate);
            doc_cell(row, e);
            for (int k = 0; k < 4; k++)
                doc_cell(row, "");
            continue;
        }
        fit_inference lead = fit_lead_inference(f, c);
        char e[NARRATE_NUMBER_SIZE], se[NARRATE_NUMBER_SIZE], t[NARRATE_NUMBER_SIZE],
            p[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
        story_number(st, e, fc->estimate);
        story_number(st, se, lead.std_error);
        narrate_number(t, lead.t, 3);
        narrate_p_value(p, lead.p);
        story_number(st, low, lead.ci_low);
        story_number(st, high, lead.ci_high);
        doc_cell(row, e);
        doc_cell(row, se);
        doc_cell(row, t);
        doc_cell(row, p);
        doc_cellf(row, "%s to %s", low, high);
    }
    if (f->errors != SPEC_ERRORS_CLASSICAL) {
        buf words;
        buf_init(&words);
        story_errors_words(&words, am, f->errors);
        doc_textf(doc_paragraph(parent),
                  "Standard errors, t, p and intervals come from the %s. Every p-value of this "
                  "model uses that covariance: the tests of terms and of the whole model are "
                  "Wald F tests under it, and so is a comparison in which this model is the "
                  "larger one. results.json also holds the classical figures.",
                  words.data);
        buf_free(&words);
    }
    add_caveat_table(parent, st, am);
}

static void add_readings(doc_node *parent, const story *st, const analysis_model *am)
{
    const design *d = am->design;
    doc_heading(parent, 3, NULL, "What each coefficient says");
    if (am->caveat_kind != SPEC_ERRORS_CLASSICAL)
        doc_textf(doc_paragraph(parent),
                  "Caveat: the intervals and p-values in these sentences are the classical "
                  "ones, which the violated %s check makes unreliable; the %s figures are in "
                  "the table above.",
                  am->caveat_assumption == DIAG_INDEPENDENCE ? "independence"
                                                             : "constant-variance",
                  story_errors_short(am->caveat_kind));
    doc_node *list = doc_list(parent);
    for (size_t c = 0; c < d->n_coefs; c++) {
        doc_node *item = doc_item(list);
        doc_strong(item, d->coefs[c].label);
        doc_text(item, ": ");
        char *sentence = story_coefficient_sentence(st, am, c);
        doc_text(item, sentence);
        free(sentence);
    }
}

static void add_fit_summary(doc_node *parent, const story *st, const analysis_model *am)
{
    const fit_result *f = am->fit;
    doc_heading(parent, 3, NULL, "How well the model fits");
    buf y_words;
    buf_init(&y_words);
    story_words(st, &y_words, am->design->response->name);
    char r2[NARRATE_NUMBER_SIZE], adj[NARRATE_NUMBER_SIZE], fstat[NARRATE_NUMBER_SIZE],
        fp[NARRATE_NUMBER_SIZE], share[NARRATE_NUMBER_SIZE];
    narrate_number(r2, f->r_squared, 3);
    narrate_number(adj, f->adj_r_squared, 3);
    story_number(st, fstat, f->f);
    narrate_p_value(fp, f->f_p);
    story_percent(share, f->r_squared);
    doc_node *p = doc_paragraph(parent);
    if (!(f->df_residual > 0)) {
        doc_text(p, "The model passes through every row, so R² is 1 by construction and says "
                    "nothing about how well it would fit other rows; no residual standard "
                    "deviation or overall test can be computed.");
        buf_free(&y_words);
        return;
    }
    if (f->constant_spanned)
        doc_textf(p, "The model has no intercept, but its level indicators add up to one on "
                     "every row, so it spans the same fits as a model with an intercept; R² "
                     "is therefore the centred one: the model accounts for %s of the "
                     "variation of %s around its mean (R² = %s; adjusted for the number of "
                     "coefficients, %s). ",
                  share, y_words.data, r2, adj);
    else if (f->centred)
        doc_textf(p, "The model accounts for %s of the variation of %s around its mean "
                     "(R² = %s; adjusted for the number of coefficients, %s). ",
                  share, y_words.data, r2, adj);
    else
        doc_textf(p, "The model has no intercept, so R² = %s is the uncentred one: the "
                     "share of the sum of squares of %s itself (not of its variation around "
                     "the mean) that the model accounts for; it is not comparable with the R² "
                     "of a model with an intercept. ",
                  r2, y_words.data);
    buf amount;
    buf_init(&amount);
    story_amount(st, &amount, am->design->response->name, f->sigma);
    doc_textf(p, "The residuals' root mean square, corrected for the coefficients fitted, is "
                 "%s (the residual standard deviation, estimated from the %.0f degrees of "
                 "freedom the fit leaves). ",
              amount.data, f->df_residual);
    if (isnan(f->f))
        doc_text(p, "The overall F test cannot be computed for this model.");
    else if (f->f_p < st->alpha)
        doc_textf(p, "Taken together, the terms explain more than chance would (F = %s, p "
                     "%s%s; %.0f degrees of freedom in the numerator, %.0f in the "
                     "denominator).",
                  fstat, fp[0] == '<' ? "" : "= ", fp, f->df_model, f->df_residual);
    else
        doc_textf(p, "Taken together, the terms cannot be told apart from no effect at all "
                     "(F = %s, p = %s; %.0f degrees of freedom in the numerator, %.0f in "
                     "the denominator).",
                  fstat, fp, f->df_model, f->df_residual);
    spec_errors robust = f->errors != SPEC_ERRORS_CLASSICAL ? f->errors : am->caveat_kind;
    double wf = f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_f : am->caveat_overall.f;
    double wp = f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_f_p : am->caveat_overall.p;
    double w1 = f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_df_num : am->caveat_overall.df_num;
    double w2 = f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_df_den : am->caveat_overall.df_den;
    if (robust != SPEC_ERRORS_CLASSICAL && isfinite(wf)) {
        char wstat[NARRATE_NUMBER_SIZE], wpv[NARRATE_NUMBER_SIZE];
        story_number(st, wstat, wf);
        narrate_p_value(wpv, wp);
        if (f->errors != SPEC_ERRORS_CLASSICAL)
            doc_textf(p, " That F test assumes independent errors of constant variance; the "
                         "conclusion rests instead on the Wald test of every term together "
                         "under the %s covariance: F = %s, p %s%s (%.0f degrees of "
                         "freedom in the numerator, %.0f in the denominator).",
                      story_errors_short(robust), wstat, wpv[0] == '<' ? "" : "= ", wpv, w1,
                      w2);
        else
            doc_textf(p, " That F test assumes independent errors of constant variance, which "
                         "the violated %s check puts in doubt; under the %s covariance the "
                         "Wald test of every term together gives F = %s, p %s%s (%.0f "
                         "degrees of freedom in the numerator, %.0f in the denominator).",
                      am->caveat_assumption == DIAG_INDEPENDENCE ? "independence"
                                                                 : "constant-variance",
                      story_errors_short(robust), wstat, wpv[0] == '<' ? "" : "= ", wpv, w1,
                      w2);
    }
    buf_free(&amount);
    buf_free(&y_words);
    char ll[NARRATE_NUMBER_SIZE], aic[NARRATE_NUMBER_SIZE], bic[NARRATE_NUMBER_SIZE];
    narrate_number(ll, f->log_likelihood, 6);
    narrate_number(aic, f->aic, 6);
    narrate_number(bic, f->bic, 6);
    doc_textf(doc_paragraph(parent),
              "For comparing models fitted to the same rows: log-likelihood %s, AIC %s, "
              "BIC %s (both count the residual variance as a parameter; lower is better).",
              ll, aic, bic);
}

static void add_figures(doc_node *parent, const story *st, size_t model)
{
    const narrate_sources *src = st->sources;
    const figures_set *set = src && src->figures ? src->figures[model] : NULL;
    if (!set || set->count == 0)
        return;
    doc_heading(parent, 3, NULL, "Figures");
    for (size_t k = 0; k < set->count; k++) {
        const figures_figure *f = &set->items[k];
        doc_node *figure = doc_figure(parent, f->file, f->title, f->svg);
        doc_text(figure, f->caption);
    }
}

static void add_model(doc_node *root, const story *st, const analysis_model *am)
{
    const spec_model *m = am->model;
    buf title, anchor;
    buf_init(&title);
    buf_init(&anchor);
    buf_printf(&title, "Model '%s': ", m->id);
    story_words(st, &title, m->response);
    buf_printf(&anchor, "model-%s", m->id);
    doc_heading(root, 2, anchor.data, title.data);
    buf_free(&title);
    buf_free(&anchor);
    add_rows_used(root, st, am);
    if (am->fit->rank < am->design->n_coefs)
        doc_textf(doc_paragraph(root),
                  "%zu of the %zu coefficients cannot be estimated from these rows: their "
                  "columns are combinations of the columns before them. They are marked in "
                  "the table and left out of the equation; every other number is that of "
                  "the model without them.",
                  am->design->n_coefs - am->fit->rank, am->design->n_coefs);
    if (!(am->fit->df_residual > 0))
        doc_textf(doc_paragraph(root),
                  "With %zu %s and %zu estimable coefficients no residual degrees of freedom "
                  "are left: the fitted equation passes through every row, so the error "
                  "variance cannot be estimated and no standard error, test or interval "
                  "exists. The estimates are shown without inference; they describe these "
                  "rows only, and more rows than coefficients are needed before any of them "
                  "can be judged.",
                  am->design->n_used, story_rows(st), am->fit->rank);
    add_equation(root, st, am);
    add_coefficient_table(root, st, am);
    add_readings(root, st, am);
    add_fit_summary(root, st, am);
    story_add_term_tests(root, am);
    story_add_assumptions(root, st, am);
    add_figures(root, st, (size_t)(am - st->a->models));
}

/* ---- appendix ----------------------------------------------------------- */

/* What the analyst can change in the spec, given these results: the only
   place where the report names spec keys. */
static void add_for_the_analyst(doc_node *root, const story *st)
{
    doc_heading(root, 3, NULL, "For the analyst");
    doc_text(doc_paragraph(root), "Settings of the spec that bear on this report's "
                                  "limits; the client text above avoids the spec's syntax.");
    doc_node *list = doc_list(root);
    size_t items = 0;
    for (size_t m = 0; m < st->a->n_models; m++) {
        const analysis_model *am = &st->a->models[m];
        const char *id = am->model->id;
        const diagnostics *g = am->diagnostics;
        if (g && g->verdicts[DIAG_INDEPENDENCE].reason == DIAG_REASON_NO_ORDER) {
            doc_textf(doc_item(list), "Model '%s': order_by: COLUMN names the column that "
                                      "orders the rows (time, sequence), so that independence "
                                      "can be tested and standard_errors: hac becomes "
                                      "available.",
                      id);
            items++;
        }
        if (am->caveat_kind != SPEC_ERRORS_CLASSICAL) {
            doc_textf(doc_item(list), "Model '%s': standard_errors: %s makes every p-value and "
                                      "interval of the model use the %s covariance%s.",
                      id, am->caveat_kind == SPEC_ERRORS_HAC ? "hac" : "hc3",
                      story_errors_short(am->caveat_kind),
                      am->caveat_kind == SPEC_ERRORS_HAC
                          ? " (lags: N overrides the lag rule)"
                          : "");
            items++;
        }
        bool said[DIAG_REMEDY_INSPECT_ROWS + 1] = {false};
        bool transformed = story_derivation(st, am->design->response->name) != NULL;
        for (int a = 0; g && a < DIAG_N_ASSUMPTIONS; a++) {
            const diag_verdict *v = &g->verdicts[a];
            if (v->verdict != DIAG_VIOLATED && v->verdict != DIAG_DOUBTFUL)
                continue;
            for (size_t k = 0; k < v->n_remedies; k++) {
                const char *how = NULL;
                if (said[v->remedies[k]])
                    continue;
                said[v->remedies[k]] = true;
                switch (v->remedies[k]) {
                case DIAG_REMEDY_TRANSFORM_RESPONSE:
                    if (transformed)
                        break; /* already transformed: the verdict text says what to do */
                    how = "a derive entry ({name: log_y, from: y, transform: log}) and the "
                          "derived column as the response";
                    break;
                case DIAG_REMEDY_WEIGHTED_FIT: how = "weights: COLUMN on the model"; break;
                case DIAG_REMEDY_CENTER_TERMS:
                    how = "a derive entry with transform: center for the columns in products "
                          "and powers";
                    break;
                default: break;
                }
                if (how) {
                    doc_textf(doc_item(list), "Model '%s': %s.", id, how);
                    items++;
                }
            }
        }
        if (g && g->influence.n_flagged > 25 && !st->s->report.residuals_table) {
            doc_textf(doc_item(list), "Model '%s': report: {residuals_table: true} writes every "
                                      "row with its influence flags beside the report.",
                      id);
            items++;
        }
        const design *d = am->design;
        for (size_t k = 0; k < d->n_ranges; k++) {
            if (d->ranges[k].at_from_spec)
                continue;
            bool used = false;
            for (size_t c = 0; c < d->n_coefs && !used; c++)
                for (size_t i = 0; i < d->coefs[c].n_parts; i++)
                    used = used || (d->coefs[c].parts[i].column == d->ranges[k].column &&
                                    (d->coefs[c].n_parts > 1 || d->coefs[c].parts[i].power > 1));
            if (!used)
                continue;
            char median[NARRATE_NUMBER_SIZE];
            story_value(st, median, d->ranges[k].median);
            doc_textf(doc_item(list), "Model '%s': at: [v1, v2, …] on column %s chooses where "
                                      "interactions and curves are read (now the median of the "
                                      "fitted rows, %s).",
                      id, d->ranges[k].column->name, median);
            items++;
        }
    }
    if (items == 0)
        doc_text(doc_item(list), "Nothing in these results calls for a change of the spec.");
}

/* The warnings the build printed, as printed (they quote the spec), with
   the spec's file name alone so that the report does not depend on the
   folder it was built from. */
static void add_warnings(doc_node *root, const story *st)
{
    const narrate_sources *src = st->sources;
    if (!src || src->n_warnings == 0)
        return;
    doc_heading(root, 3, NULL, "Warnings");
    doc_textf(doc_paragraph(root),
              "fitproof printed %zu warning%s while building this report: likely mistakes "
              "that did not stop it. Each names the place in the spec it is about.",
              src->n_warnings, src->n_warnings == 1 ? "" : "s");
    const char *path = st->s->path, *name = base_name(path);
    size_t path_length = strlen(path);
    buf text;
    buf_init(&text);
    for (size_t i = 0; i < src->n_warnings; i++) {
        const char *w = src->warnings[i];
        if (strncmp(w, path, path_length) == 0 && w[path_length] == ':')
            buf_printf(&text, "%s%s\n", name, w + path_length);
        else
            buf_printf(&text, "%s\n", w);
    }
    doc_code(root, NULL, text.data);
    buf_free(&text);
}

void narrate_pushdown_reason(buf *out, const pushdown_result *r)
{
    const char *col = r->reason_column ? r->reason_column : "";
    const char *detail = r->reason_detail ? r->reason_detail : "";
    switch (r->reason) {
    case PUSHDOWN_PARTIAL:
        buf_puts(out, "the diagnostics the report shows, the figures and the term tests, from "
                      "the rows read over the connection");
        break;
    case PUSHDOWN_WHERE:
        buf_puts(out, "the spec's where filter is applied by fitproof, not written as SQL yet");
        break;
    case PUSHDOWN_DERIVE:
        buf_puts(out, "derived columns are computed by fitproof, not written as SQL yet");
        break;
    case PUSHDOWN_MISSING_TOKENS:
        buf_puts(out, "missing-value tokens are read by fitproof, not written as SQL yet");
        break;
    case PUSHDOWN_TOO_MANY_COEFS:
        buf_printf(out, "the design has more columns than the exact solve takes (%d)",
                   PUSHDOWN_MAX_COEFS);
        break;
    case PUSHDOWN_ALIASED:
        buf_puts(out, "some coefficients are aliased, which the exact solve does not resolve");
        break;
    case PUSHDOWN_ROBUST:
        buf_puts(out, "robust standard errors are computed from the rows, in fitproof");
        break;
    case PUSHDOWN_LEVELS_NOT_TEXT:
        buf_puts(out, "a column's levels are not plain texts in the database");
        break;
    case PUSHDOWN_DESCRIBE_FAILED:
        buf_printf(out, "the server did not describe the source's columns (%s)", detail);
        break;
    case PUSHDOWN_FLOAT_COLUMN:
        buf_printf(out,
                   "column '%s' is a floating-point type (real or double precision), whose "
                   "sums PostgreSQL does not keep exact; the rows were streamed and fitted in "
                   "process instead",
                   col);
        break;
    case PUSHDOWN_INEXACT_COLUMN:
        buf_printf(out,
                   "column '%s' is not an integer or numeric type; the rows were streamed and "
                   "fitted in process instead",
                   col);
        break;
    case PUSHDOWN_NOT_A_NUMBER:
        buf_puts(out, "a sum of pass one was not a finite number");
        break;
    case PUSHDOWN_SINGULAR:
        buf_puts(out, "XᵀWX is singular in exact arithmetic");
        break;
    case PUSHDOWN_PASS_FAILED:
        buf_printf(out, "the server could not run the pass (%s)", detail);
        break;
    case PUSHDOWN_CONNECT_FAILED:
        buf_printf(out, "the second connection failed (%s)", detail);
        break;
    case PUSHDOWN_ROW_COUNT:
        buf_puts(out, "the server's rows differ in number from the rows streamed; the fit "
                      "kept the streamed rows");
        break;
    case PUSHDOWN_FEW_ROWS:
        buf_printf(out,
                   "the spec leaves it to fitproof, which runs the passes in the server "
                   "from %d rows on; with fewer, the fit from the streamed rows keeps nearly "
                   "every digit the exact sums would",
                   PUSHDOWN_AUTO_ROWS);
        break;
    }
}

/* Pass two's Breusch–Pagan, RESET and influence account, each sentence
   only for what was computed. */
/* One item of the list of values the database computed as checks, the
   list (and the sentence before it) made on the first. */
static doc_node *check_item(doc_node *root, doc_node **list)
{
    if (!*list) {
        doc_textf(doc_paragraph(root), "Computed in the database as well, each a check on the "
                                       "value from the streamed rows:");
        *list = doc_list(root);
    }
    return doc_item(*list);
}

static void add_pushdown_assumptions(doc_node *root, doc_node **list, const pushdown_result *r,
                                     const spec_model *model, bool weighted)
{
    doc_node *p;
    if (r->bp_computed && r->breusch_pagan.computed) {
        char student[32], original[32];
        narrate_number(student, r->breusch_pagan.studentized.statistic, 10);
        narrate_number(original, r->breusch_pagan.original.statistic, 10);
        p = check_item(root, list);
        if (!r->bp_other) {
            doc_textf(p,
                      "Pass 2 summed the squared residuals times each column of the "
                      "design in the database; with the exact inverse of the cross-product "
                      "matrix, fitproof computed from them the Breusch–Pagan statistic on the "
                      "model's columns, %s studentized and %s in the original form.",
                      student, original);
        } else {
            buf columns;
            buf_init(&columns);
            if (r->breusch_pagan.own_columns)
                for (size_t k = 0; k < model->n_variance_columns; k++)
                    buf_printf(&columns, "%s%s", k ? ", " : "", model->variance_columns[k]);
            else
                buf_puts(&columns, weighted ? "the design's columns, without the weights"
                                            : "the design's columns");
            doc_textf(p,
                      "Pass 2 summed, in the database, the columns the constant-variance "
                      "test regresses on (%s), their products with each other and with the "
                      "squared residuals; fitproof centred those sums and solved the "
                      "auxiliary regression in exact rational arithmetic: the Breusch–Pagan "
                      "statistic on those columns, %s studentized and %s in the original "
                      "form.",
                      columns.data, student, original);
            buf_free(&columns);
        }
    }
    if (r->reset_computed && r->reset.computed) {
        char f[32];
        narrate_number(f, r->reset.f, 10);
        p = check_item(root, list);
        doc_textf(p,
                  "Pass 2 summed the products of the squared and cubed fitted values "
                  "with the design's columns, with each other and with the response%s in the "
                  "database; fitproof took the design's part out of the added columns in exact "
                  "rational arithmetic and computed RESET's F from them, %s.",
                  weighted ? " (times the weight)" : "", f);
    }
    if (!r->influence_computed)
        return;
    /* pass two's, or on a partitioned source a pass of its own */
    size_t pass = 2;
    for (size_t i = 0; i < r->n_passes; i++)
        if (strcmp(r->passes[i].name, "influence") == 0)
            pass = i + 1;
    char t[32], cooks[32];
    narrate_number(t, r->max_abs_studentized, 10);
    narrate_number(cooks, r->max_cooks, 10);
    p = check_item(root, list);
    doc_textf(p,
              "Pass %zu found the largest absolute externally studentized residual, %s, "
              "and the largest Cook's distance, %s, and counted the rows each flag rule marks, "
              "with the residual variance and the rules' bounds written into the SQL:",
              pass, t, cooks);
    for (size_t k = 0; k < DIAG_N_RULES; k++)
        doc_textf(p, "%s %s, %zu %s", k ? ";" : "", story_rule_words[k], r->flag_count[k],
                  r->flag_count[k] == 1 ? "row" : "rows");
    doc_textf(p, ".");
}

/* Pass one's ranges of the numeric predictors, in the data's units. */
static void add_pushdown_ranges(doc_node *root, doc_node **list, const pushdown_result *r,
                                const story *st, const design *d)
{
    if (r->n_ranges == 0)
        return;
    doc_node *p = check_item(root, list);
    doc_textf(p, "Pass 1 found each numeric predictor's smallest and largest value: ");
    for (size_t k = 0; k < r->n_ranges; k++) {
        const char *column = d->ranges[k].column->name, *unit = story_unit(st, column);
        char low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
        story_value(st, low, r->range_min[k]);
        story_value(st, high, r->range_max[k]);
        buf words;
        buf_init(&words);
        story_words(st, &words, column);
        doc_textf(p, "%s%s from %s to %s%s%s", k ? "; " : "", words.data, low, high,
                  unit ? " " : "", unit ? unit : "");
        buf_free(&words);
    }
    doc_textf(p, ".");
}

/* The top-rows pass: what the server ranked, and its first row. */
static void add_pushdown_top(doc_node *root, doc_node **list, const pushdown_result *r,
                             const char *key)
{
    size_t pass = 0;
    for (size_t i = 0; i < r->n_passes; i++)
        if (strcmp(r->passes[i].name, "top rows") == 0)
            pass = i + 1;
    if (pass == 0 || r->n_top == 0)
        return;
    doc_node *p = check_item(root, list);
    doc_textf(p,
              "Pass %zu ranked the rows by Cook's distance in the database and returned the "
              "%zu largest with their %s",
              pass, r->n_top, key);
    if (!isnan(r->top_cooks[0])) {
        char cooks[32];
        narrate_number(cooks, r->top_cooks[0], 10);
        doc_textf(p, "; the first is %s %s, with a distance of %s", key, r->top_key[0], cooks);
    }
    doc_textf(p, ".");
}

/* data.pushdown: per model, whether the server's sums were used, how many
   rows each pass scanned and the SQL sent (the text results.json holds). */
static void add_pushdown(doc_node *root, const story *st)
{
    bool heading = false;
    for (size_t m = 0; m < st->a->n_models; m++) {
        const pushdown_result *r = st->a->models[m].pushdown;
        if (!r)
            continue;
        if (!heading)
            doc_heading(root, 3, NULL, "Sums computed in the database");
        heading = true;
        const char *id = st->a->models[m].model->id;
        buf why;
        buf_init(&why);
        narrate_pushdown_reason(&why, r);
        if (!r->used) {
            doc_textf(doc_paragraph(root),
                      "Model '%s': the spec asks for the fit's sums to be computed in "
                      "PostgreSQL, which was not done: %s.",
                      id, why.data);
            buf_free(&why);
            continue;
        }
        doc_node *p = doc_paragraph(root);
        doc_textf(p, "Model '%s': the estimates, standard errors and residual sum of squares "
                     "come from exact numeric sums computed inside PostgreSQL and solved in "
                     "exact rational arithmetic",
                  id);
        for (size_t i = 0; i < r->n_passes; i++)
            doc_textf(p, "; pass %zu (%s) scanned %zu %s", i + 1, r->passes[i].name,
                      r->passes[i].rows_scanned, r->passes[i].rows_scanned == 1 ? "row" : "rows");
        doc_textf(p, ". Computed in fitproof instead: %s.", why.data);
        doc_node *checks = NULL;
        add_pushdown_ranges(root, &checks, r, st, st->a->models[m].design);
        if (r->moments_computed) {
            char skew[32], kurt[32];
            narrate_number(skew, r->moments.skewness, 10);
            narrate_number(kurt, r->moments.excess_kurtosis, 10);
            doc_textf(check_item(root, &checks),
                      "Pass 2 summed the first four powers of the residuals%s in the "
                      "database; from them fitproof computed the residuals' skewness, %s, "
                      "and excess kurtosis, %s.",
                      st->a->models[m].fit->weighted ? " (times the square root of the weight)"
                                                     : "",
                      skew, kurt);
        }
        add_pushdown_assumptions(root, &checks, r, st->a->models[m].model,
                                 st->a->models[m].fit->weighted);
        if (!isnan(r->max_leverage)) {
            char lev[32];
            narrate_number(lev, r->max_leverage, 10);
            doc_textf(check_item(root, &checks),
                      "Pass 2 found the largest leverage in the database, %s, with the "
                      "inverse of the cross-product matrix written into the SQL as rounded "
                      "constants; the influence diagnostics the report shows come from the "
                      "streamed rows.",
                      lev);
        }
        add_pushdown_top(root, &checks, r, st->a->spec->data.key);
        if (!isnan(r->durbin_watson)) {
            char dw[32];
            narrate_number(dw, r->durbin_watson, 10);
            doc_textf(check_item(root, &checks),
                      "Pass 3 summed the squared differences of consecutive residuals, "
                      "the rows ordered by %s, in the database; their ratio to the sum of "
                      "squared residuals, the Durbin–Watson d, is %s.",
                      st->a->models[m].design->model->order_by, dw);
        }
        doc_textf(doc_paragraph(root), "The SQL sent:");
        buf_free(&why);
        for (size_t i = 0; i < r->n_passes; i++)
            doc_code(root, "sql", r->passes[i].sql);
    }
}

static void add_appendix(doc_node *root, const story *st)
{
    doc_heading(root, 2, "appendix", "Appendix");
    doc_heading(root, 3, NULL, "Rows left out");
    bool any = false;
    for (size_t m = 0; m < st->a->n_models; m++) {
        const design *d = st->a->models[m].design;
        if (d->n_dropped == 0)
            continue;
        buf lines;
        buf_init(&lines);
        line_list(&lines, d->dropped_lines, d->n_dropped, d->n_dropped);
        doc_textf(doc_paragraph(root),
                  "Model '%s' left out %zu %s with a missing value in a column it uses; "
                  "their %ss in %s: %s.",
                  st->a->models[m].model->id, d->n_dropped, story_rows(st), story_position(st),
                  story_position_source(st), lines.data);
        buf_free(&lines);
        any = true;
    }
    if (!any)
        doc_text(doc_paragraph(root), "No model left out any row.");
    const data_table *t = st->a->table;
    if (t->n_removed > 0) {
        buf lines;
        buf_init(&lines);
        line_list(&lines, t->removed_lines, t->n_removed, t->n_removed);
        doc_textf(doc_paragraph(root),
                  "The spec's row filter removed %zu %s before any model; their %ss: %s.",
                  t->n_removed, story_rows(st), story_position(st), lines.data);
        buf_free(&lines);
    }
    add_pushdown(root, st);
    add_for_the_analyst(root, st);
    add_warnings(root, st);
    doc_heading(root, 3, NULL, "The spec");
    doc_node *p = doc_paragraph(root);
    doc_text(p, "The spec that produced this report, as written (also archived beside it as ");
    doc_code_span(p, base_name(st->s->path));
    doc_text(p, "):");
    doc_code(root, "yaml", st->s->source);
}

/* ---- the report --------------------------------------------------------- */

static bool add_section(doc_node *root, const story *st, const spec_section *section,
                        error_list *errors)
{
    switch (section->kind) {
    case SPEC_SECTION_SUMMARY: add_summary(root, st); break;
    case SPEC_SECTION_DATA: add_data(root, st); break;
    case SPEC_SECTION_MODELS:
        for (size_t m = 0; m < st->a->n_models; m++)
            add_model(root, st, &st->a->models[m]);
        break;
    case SPEC_SECTION_COMPARISONS: story_add_comparisons(root, st); break;
    case SPEC_SECTION_PREDICTIONS: story_add_predictions(root, st); break;
    case SPEC_SECTION_CHECKS: story_add_checks(root, st); break;
    case SPEC_SECTION_APPENDIX: add_appendix(root, st); break;
    case SPEC_SECTION_NARRATIVE: {
        char *markdown = story_expand_references(st, section, errors);
        if (!markdown)
            return false;
        doc_markdown(root, markdown);
        free(markdown);
        break;
    }
    default: break;
    }
    return true;
}

doc_node *narrate_report(const analysis *a, const narrate_sources *sources,
                         error_list *errors)
{
    story st = story_of(a, sources);
    doc_node *root = doc_new();
    add_title_block(root, &st);
    add_provenance(root, &st);
    story_add_document_control(root, st.s);
    add_caution(root, &st);
    doc_contents(root);
    bool ok = true;
    const spec_report *report = &a->spec->report;
    for (size_t i = 0; i < report->n_sections; i++)
        ok = add_section(root, &st, &report->sections[i], errors) && ok;
    if (!ok) {
        doc_free(root);
        return NULL;
    }
    return root;
}

bool narrate_check_references(const analysis *a, error_list *errors)
{
    story st = story_of(a, NULL);
    bool ok = true;
    const spec_report *report = &a->spec->report;
    for (size_t i = 0; i < report->n_sections; i++) {
        if (report->sections[i].kind != SPEC_SECTION_NARRATIVE)
            continue;
        char *expanded = story_expand_references(&st, &report->sections[i], errors);
        ok = ok && expanded;
        free(expanded);
    }
    return ok;
}

/*
 * narrate.c — the report's structure: title block, provenance, caution,
 * then the sections in the order the spec gives (summary, data, models,
 * comparisons, predictions, checks, appendix, and the spec's own narrative
 * blocks between them). Sentences about coefficients are in sentences.c,
 * number formats in words.c, cited values in refs.c.
 */
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
                 "significance level of %g.",
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

static void add_caution(doc_node *root)
{
    doc_node *callout = doc_callout(root, "caution");
    doc_node *p = doc_paragraph(callout);
    doc_strong(p, "Caution.");
    doc_text(p, " Statistical output supports, and does not replace, review by a qualified "
                "person, especially where decisions affect people's health, safety or "
                "rights. Follow the codes and standards that govern your field.");
}

/* ---- summary ------------------------------------------------------------ */

static void add_summary(doc_node *root, const story *st)
{
    doc_heading(root, 2, "summary", "At a glance");
    doc_node *list = doc_list(root);
    for (size_t m = 0; m < st->a->n_models; m++) {
        const analysis_model *am = &st->a->models[m];
        const fit_result *f = am->fit;
        doc_node *item = doc_item(list);
        buf text;
        buf_init(&text);
        buf_printf(&text, "Model '%s'", am->model->id);
        doc_strong(item, text.data);
        buf_reset(&text);
        story_words(st, &text, am->design->response->name);
        char r2[NARRATE_NUMBER_SIZE], p[NARRATE_NUMBER_SIZE];
        story_percent(r2, f->r_squared);
        narrate_p_value(p, f->f_p);
        doc_textf(item, " explains %s of the variation of %s on %zu %s", r2, text.data,
                  am->design->n_used, story_rows(st));
        if (!isnan(f->f_p))
            doc_textf(item, " (overall F test p %s%s)", p[0] == '<' ? "" : "= ", p);
        doc_text(item, ".");
        buf_free(&text);
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

static void numeric_summary(const story *st, buf *out, const data_column *column,
                            size_t n_rows)
{
    double low = INFINITY, high = -INFINITY;
    long double sum = 0.0L;
    size_t count = 0;
    for (size_t i = 0; i < n_rows; i++) {
        double x = column->numbers[i];
        if (isnan(x))
            continue;
        low = fmin(low, x);
        high = fmax(high, x);
        sum += x;
        count++;
    }
    if (count == 0) {
        buf_puts(out, "no values");
        return;
    }
    char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE], m[NARRATE_NUMBER_SIZE];
    story_value(st, a, low);
    story_value(st, b, high);
    story_value(st, m, (double)(sum / count));
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
    doc_text(p, ".");
    if (st->s->where) {
        buf lines;
        buf_init(&lines);
        line_list(&lines, t->removed_lines, t->n_removed, 20);
        if (t->n_removed)
            doc_textf(p, " The spec's row filter removed %zu of them (line%s %s), leaving %zu.",
                      t->n_removed, t->n_removed == 1 ? "" : "s", lines.data, t->n_rows);
        else
            doc_text(p, " The spec's row filter kept every row.");
        buf_free(&lines);
    }
    if (t->n_columns > t->n_file_columns)
        doc_textf(p, " %zu column%s derived from the others as the spec asks.",
                  t->n_columns - t->n_file_columns,
                  t->n_columns - t->n_file_columns == 1 ? " is" : "s are");
    doc_text(p, " Each model uses the rows that are complete in the columns it needs.");
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
            doc_cell(row, column->kind == DATA_NUMERIC ? "numeric" : "category");
        doc_cell(row, story_unit(st, column->name));
        doc_cellf(row, "%zu", column->n_missing);
        buf text;
        buf_init(&text);
        if (column->kind == DATA_NUMERIC)
            numeric_summary(st, &text, column, t->n_rows);
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
    if (d->n_dropped == 0)
        return;
    buf lines;
    buf_init(&lines);
    line_list(&lines, d->dropped_lines, d->n_dropped, 20);
    doc_textf(p, " %zu %s left out for a missing value in a column this model uses "
                 "(line%s %s of the data file; all are listed in the appendix).",
              d->n_dropped, d->n_dropped == 1 ? "row was" : "rows were",
              d->n_dropped == 1 ? "" : "s", lines.data);
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

static void add_coefficient_table(doc_node *parent, const story *st, const analysis_model *am)
{
    const design *d = am->design;
    const fit_result *f = am->fit;
    doc_heading(parent, 3, NULL, "Coefficients");
    char interval_title[64], se_title[64];
    snprintf(interval_title, sizeof interval_title, "%g%% confidence interval", st->level * 100);
    static const char *const hc_names[] = {"", "HC0", "HC1", "HC2", "HC3"};
    if (f->errors == SPEC_ERRORS_CLASSICAL)
        snprintf(se_title, sizeof se_title, "Standard error");
    else
        snprintf(se_title, sizeof se_title, "Standard error (%s)", hc_names[f->errors]);
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
    if (f->errors != SPEC_ERRORS_CLASSICAL)
        doc_textf(doc_paragraph(parent),
                  "Standard errors, t, p and intervals are the heteroscedasticity-consistent "
                  "%s kind (MacKinnon & White 1985), as the spec asks; they stay valid when "
                  "the error variance is not constant. results.json holds the classical ones "
                  "and all four HC kinds.",
                  hc_names[f->errors]);
}

static void add_readings(doc_node *parent, const story *st, const analysis_model *am)
{
    const design *d = am->design;
    doc_heading(parent, 3, NULL, "What each coefficient says");
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
    if (f->centred)
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
    doc_textf(p, "A typical observation lies about %s from its fitted value (the residual "
                 "standard deviation, estimated from the %.0f degrees of freedom the fit "
                 "leaves). ",
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
                  "columns are combinations of the others. They are marked in the table "
                  "and left out of the equation; the rest of the fit is unaffected.",
                  am->design->n_coefs - am->fit->rank, am->design->n_coefs);
    add_equation(root, st, am);
    add_coefficient_table(root, st, am);
    add_readings(root, st, am);
    add_fit_summary(root, st, am);
    story_add_term_tests(root, am);
    story_add_assumptions(root, st, am);
    add_figures(root, st, (size_t)(am - st->a->models));
}

/* ---- appendix ----------------------------------------------------------- */

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
                  "their lines in the data file: %s.",
                  st->a->models[m].model->id, d->n_dropped, story_rows(st), lines.data);
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
                  "The spec's row filter removed %zu %s before any model; their lines: %s.",
                  t->n_removed, story_rows(st), lines.data);
        buf_free(&lines);
    }
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
    add_caution(root);
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

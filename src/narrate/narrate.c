/*
 * narrate.c — the words of the report. Every sentence is built from the
 * fitted numbers and the spec's labels and units; the wording is ours.
 *
 * Reading of a coefficient depends on its kind:
 *   intercept         the prediction at zero / reference levels;
 *   numeric x         change in the response per unit of x, others fixed
 *                     (at the reference level when x interacts with a
 *                     category);
 *   category level    difference from the reference level;
 *   numeric × level   how much the slope differs from the reference level;
 *   numeric × numeric how the slope of one changes per unit of the other;
 *   level × level     how a gap differs between levels of another category;
 *   power k >= 2      the curvature of a polynomial, read with the figure.
 * When the interval contains zero the sentence says the data cannot tell
 * the effect from zero, never that the effect is zero.
 */
#include "narrate.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- numbers ------------------------------------------------------------ */

void narrate_number(char *out, double value, int digits)
{
    if (isnan(value)) {
        snprintf(out, NARRATE_NUMBER_SIZE, "n/a");
        return;
    }
    if (isinf(value)) {
        snprintf(out, NARRATE_NUMBER_SIZE, value > 0 ? "∞" : "-∞");
        return;
    }
    double magnitude = fabs(value);
    if (value == 0.0) {
        snprintf(out, NARRATE_NUMBER_SIZE, "0");
        return;
    }
    if (magnitude < 1e-4 || magnitude >= 1e9) {
        snprintf(out, NARRATE_NUMBER_SIZE, "%.*e", digits - 1, value);
        return;
    }
    /* Decimals so that the value shows `digits` significant digits. */
    int exponent = (int)floor(log10(magnitude));
    int decimals = digits - 1 - exponent;
    if (decimals < 0)
        decimals = 0;
    snprintf(out, NARRATE_NUMBER_SIZE, "%.*f", decimals, value);
    if (strcmp(out, "-0") == 0)
        snprintf(out, NARRATE_NUMBER_SIZE, "0");
}

/* Like narrate_number, without trailing zeros after the decimal point:
   for data values, where "150" reads better than "150.0". */
static void plain_number(char *out, double value, int digits)
{
    narrate_number(out, value, digits);
    if (!strchr(out, '.') || strchr(out, 'e'))
        return;
    size_t length = strlen(out);
    while (out[length - 1] == '0')
        out[--length] = '\0';
    if (out[length - 1] == '.')
        out[--length] = '\0';
}

void narrate_p_value(char *out, double p)
{
    if (isnan(p))
        snprintf(out, NARRATE_NUMBER_SIZE, "n/a");
    else if (p < 0.001)
        snprintf(out, NARRATE_NUMBER_SIZE, "< 0.001");
    else
        snprintf(out, NARRATE_NUMBER_SIZE, "%.3f", p);
}

/* Significant digits for estimates and intervals in the report. */
static const int DIGITS = 4;
/* Significance level behind "cannot be told from zero". */
static const double ALPHA = 0.05;

/* ---- words for columns -------------------------------------------------- */

static const char *column_words(const spec *s, const char *name)
{
    const spec_column *declared = spec_find_column(s, name);
    return declared && declared->label ? declared->label : name;
}

static const char *column_unit(const spec *s, const char *name)
{
    const spec_column *declared = spec_find_column(s, name);
    return declared ? declared->unit : NULL;
}

/* "3.2 MPa" or "3.2" when the response has no unit. */
static void amount(buf *out, const spec *s, const char *response, double value)
{
    char number[NARRATE_NUMBER_SIZE];
    narrate_number(number, value, DIGITS);
    const char *unit = column_unit(s, response);
    buf_printf(out, "%s%s%s", number, unit ? " " : "", unit ? unit : "");
}

/* "1 day" / "1 unit" of a numeric column. */
static void one_unit(buf *out, const spec *s, const char *name)
{
    const char *unit = column_unit(s, name);
    buf_printf(out, "1 %s", unit ? unit : "unit");
}

/* ---- sentences ---------------------------------------------------------- */

typedef struct {
    const analysis *a;
    const analysis_model *am;
    const design_coef *coef;
    const fit_coef *fc;
    const char *response;   /* column name */
    const char *y_words;    /* label of the response */
} reading;

static bool distinguishable(const fit_coef *fc)
{
    return fc->p < ALPHA;
}

/* The numeric columns of a term other than `except`, and whether the term
   interacts x with a category, are needed for the conditions. */
static const design_part *find_category_part(const design_coef *coef)
{
    for (size_t i = 0; i < coef->n_parts; i++)
        if (coef->parts[i].level)
            return &coef->parts[i];
    return NULL;
}

/* Does any other coefficient of the model contain column `name` together
   with something else (an interaction)? */
static bool column_interacts(const design *d, const char *name)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        if (coef->n_parts < 2)
            continue;
        for (size_t i = 0; i < coef->n_parts; i++)
            if (strcmp(coef->parts[i].column->name, name) == 0)
                return true;
    }
    return false;
}

/* The reference level of a category column. */
static const char *reference_of(const data_column *column)
{
    return column->levels[column->reference];
}

/* ", 95% CI lo to hi" */
static void interval(buf *out, const reading *r)
{
    char low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE], p[NARRATE_NUMBER_SIZE];
    narrate_number(low, r->fc->ci_low, DIGITS);
    narrate_number(high, r->fc->ci_high, DIGITS);
    narrate_p_value(p, r->fc->p);
    buf_printf(out, " (%g%% confidence interval %s to %s; p %s%s)", r->a->level * 100,
               low, high, p[0] == '<' ? "" : "= ", p);
}

/* Closing clause for a coefficient the data cannot tell from zero. */
static void uncertainty(buf *out, const reading *r)
{
    if (!distinguishable(r->fc))
        buf_puts(out, " The interval includes zero, so the data cannot distinguish this "
                      "effect from no effect; that is not evidence that it is zero.");
}

static void say_intercept(buf *out, const reading *r)
{
    const design *d = r->am->design;
    buf_printf(out, "With every numeric predictor at zero");
    bool any_category = false;
    /* Name each category's reference level once. */
    const char *named[16];
    size_t n_named = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_part *part = find_category_part(&d->coefs[c]);
        if (!part)
            continue;
        bool seen = false;
        for (size_t k = 0; k < n_named; k++)
            seen = seen || strcmp(named[k], part->column->name) == 0;
        if (seen || n_named == 16)
            continue;
        named[n_named++] = part->column->name;
        buf_printf(out, "%s %s at its reference level '%s'", any_category ? "," : " and",
                   column_words(r->a->spec, part->column->name),
                   reference_of(part->column));
        any_category = true;
    }
    buf_printf(out, ", the model's expected %s is ", r->y_words);
    amount(out, r->a->spec, r->response, r->fc->estimate);
    interval(out, r);
    buf_puts(out, ". This anchors the equation; it is a prediction only where such "
                  "values occur in the data.");
}

static void say_direction(buf *out, const reading *r, double value)
{
    amount(out, r->a->spec, r->response, fabs(value));
    buf_puts(out, value >= 0 ? " higher" : " lower");
}

static void say_numeric(buf *out, const reading *r, const design_part *x)
{
    const spec *s = r->a->spec;
    const char *name = x->column->name;
    buf_puts(out, "Holding the other terms constant");
    if (column_interacts(r->am->design, name)) {
        /* The main effect is the slope where the interacting columns sit at
           zero or at their reference levels. */
        buf_puts(out, " and with the columns that interact with it at zero or at their "
                      "reference levels");
    }
    buf_puts(out, ", each increase of ");
    one_unit(out, s, name);
    buf_printf(out, " in %s goes with a %s ", column_words(s, name), r->y_words);
    say_direction(out, r, r->fc->estimate);
    buf_puts(out, " on average");
    interval(out, r);
    buf_puts(out, ".");
    uncertainty(out, r);
}

static void say_level(buf *out, const reading *r, const design_part *level)
{
    const spec *s = r->a->spec;
    buf_puts(out, "Holding the other terms constant");
    if (column_interacts(r->am->design, level->column->name))
        buf_puts(out, " and with the columns that interact with it at zero");
    buf_printf(out, ", rows with %s '%s' average a %s ", column_words(s, level->column->name),
               level->level, r->y_words);
    say_direction(out, r, r->fc->estimate);
    buf_printf(out, " than rows with the reference level '%s'", reference_of(level->column));
    interval(out, r);
    buf_puts(out, ".");
    uncertainty(out, r);
}

static void say_power(buf *out, const reading *r, const design_part *x)
{
    const spec *s = r->a->spec;
    char number[NARRATE_NUMBER_SIZE];
    narrate_number(number, r->fc->estimate, DIGITS);
    buf_printf(out, "The power-%d term of %s bends the fitted curve: its coefficient %s ",
               x->power, column_words(s, x->column->name), number);
    buf_puts(out, "has no per-unit reading on its own, because the slope of a polynomial "
                  "changes along the curve; read it together with the lower powers");
    interval(out, r);
    buf_puts(out, ".");
    uncertainty(out, r);
}

static void say_interaction(buf *out, const reading *r)
{
    const spec *s = r->a->spec;
    const design_coef *coef = r->coef;
    const design_part *numeric[3], *levels[3];
    size_t n_numeric = 0, n_levels = 0;
    for (size_t i = 0; i < coef->n_parts; i++) {
        if (coef->parts[i].level)
            levels[n_levels++] = &coef->parts[i];
        else
            numeric[n_numeric++] = &coef->parts[i];
    }
    double e = r->fc->estimate;
    if (coef->n_parts == 2 && n_numeric == 1 && n_levels == 1) {
        buf_printf(out, "The slope of %s on %s is ", r->y_words,
                   column_words(s, numeric[0]->column->name));
        amount(out, s, r->response, fabs(e));
        buf_puts(out, " per ");
        one_unit(out, s, numeric[0]->column->name);
        buf_printf(out, " %s for rows with %s '%s' than for the reference level '%s'",
                   e >= 0 ? "larger" : "smaller",
                   column_words(s, levels[0]->column->name), levels[0]->level,
                   reference_of(levels[0]->column));
    } else if (coef->n_parts == 2 && n_numeric == 2) {
        buf_printf(out, "The slope of %s on %s changes by ", r->y_words,
                   column_words(s, numeric[0]->column->name));
        amount(out, s, r->response, e);
        buf_puts(out, " per ");
        one_unit(out, s, numeric[0]->column->name);
        buf_printf(out, " for each increase of ");
        one_unit(out, s, numeric[1]->column->name);
        buf_printf(out, " in %s", column_words(s, numeric[1]->column->name));
    } else if (coef->n_parts == 2 && n_levels == 2) {
        buf_printf(out, "The gap in %s between %s '%s' and its reference level '%s' is ",
                   r->y_words, column_words(s, levels[0]->column->name), levels[0]->level,
                   reference_of(levels[0]->column));
        amount(out, s, r->response, fabs(e));
        buf_printf(out, " %s for rows with %s '%s' than for rows with its reference "
                        "level '%s'",
                   e >= 0 ? "larger" : "smaller", column_words(s, levels[1]->column->name),
                   levels[1]->level, reference_of(levels[1]->column));
    } else {
        buf_printf(out, "This three-way interaction adds ");
        amount(out, s, r->response, e);
        buf_puts(out, " times the product of");
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            if (part->level)
                buf_printf(out, "%s [%s is '%s']", i ? "," : "",
                           column_words(s, part->column->name), part->level);
            else
                buf_printf(out, "%s %s", i ? "," : "", column_words(s, part->column->name));
        }
        buf_puts(out, " to the fitted value, on top of the two-way terms");
    }
    interval(out, r);
    buf_puts(out, ".");
    uncertainty(out, r);
}

static char *coefficient_sentence(const reading *r)
{
    buf out;
    buf_init(&out);
    const design_coef *coef = r->coef;
    if (!r->fc->estimable) {
        buf_puts(&out, "Not estimable: this column is a combination of the others in the "
                       "rows used, so the data cannot separate its effect.");
    } else if (coef->n_parts == 0) {
        say_intercept(&out, r);
    } else if (coef->n_parts == 1 && coef->parts[0].level) {
        say_level(&out, r, &coef->parts[0]);
    } else if (coef->n_parts == 1 && coef->parts[0].power > 1) {
        say_power(&out, r, &coef->parts[0]);
    } else if (coef->n_parts == 1) {
        say_numeric(&out, r, &coef->parts[0]);
    } else {
        say_interaction(&out, r);
    }
    return buf_detach(&out);
}

/* ---- sections ----------------------------------------------------------- */

static void add_caution(doc_node *root)
{
    doc_node *callout = doc_callout(root, "caution");
    doc_node *p = doc_paragraph(callout);
    doc_strong(p, "Caution.");
    doc_text(p, " Statistical output supports, and does not replace, review by a qualified "
                "person, especially where decisions affect people's health, safety or "
                "rights. Follow the codes and standards that govern your field.");
}

static void numeric_summary(buf *out, const data_column *column, size_t n_rows)
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
    plain_number(a, low, DIGITS);
    plain_number(b, high, DIGITS);
    plain_number(m, (double)(sum / count), DIGITS);
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

static void add_data_section(doc_node *root, const analysis *a)
{
    const data_table *t = a->table;
    doc_heading(root, 2, "data", "The data");
    doc_node *p = doc_paragraph(root);
    doc_textf(p, "%zu rows and %zu columns were read from ", t->n_rows, t->n_columns);
    doc_code_span(p, a->spec->data.path);
    doc_text(p, ". Each model uses the rows complete in the columns it needs.");
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_LEFT};
    doc_node *table = doc_table(root, 5, align);
    doc_node *header = doc_row(table);
    const char *titles[] = {"Column", "Kind", "Unit", "Missing", "Values"};
    for (size_t j = 0; j < 5; j++)
        doc_cell(header, titles[j]);
    for (size_t j = 0; j < t->n_columns; j++) {
        const data_column *column = &t->columns[j];
        doc_node *row = doc_row(table);
        doc_cell(row, column->name);
        doc_cell(row, column->kind == DATA_NUMERIC ? "numeric" : "category");
        const char *unit = column_unit(a->spec, column->name);
        doc_cell(row, unit ? unit : "");
        buf text;
        buf_init(&text);
        buf_printf(&text, "%zu", column->n_missing);
        doc_cell(row, text.data);
        buf_reset(&text);
        if (column->kind == DATA_NUMERIC)
            numeric_summary(&text, column, t->n_rows);
        else
            category_summary(&text, column);
        doc_cell(row, text.data);
        buf_free(&text);
    }
}

static void add_rows_used(doc_node *parent, const analysis_model *am, const data_table *t)
{
    const design *d = am->design;
    doc_node *p = doc_paragraph(parent);
    doc_textf(p, "Fitted on %zu of the %zu rows.", d->n_used, t->n_rows);
    if (d->n_dropped == 0)
        return;
    doc_textf(p, " %zu row%s left out for a missing value in a column this model uses "
                 "(line%s ",
              d->n_dropped, d->n_dropped == 1 ? " was" : "s were", d->n_dropped == 1 ? "" : "s");
    buf lines;
    buf_init(&lines);
    for (size_t i = 0; i < d->n_dropped && i < 20; i++)
        buf_printf(&lines, "%s%u", i ? ", " : "", d->dropped_lines[i]);
    if (d->n_dropped > 20)
        buf_printf(&lines, " and %zu more", d->n_dropped - 20);
    doc_textf(p, "%s of the data file).", lines.data);
    buf_free(&lines);
}

static void add_equation(doc_node *parent, const analysis_model *am, const spec *s)
{
    const design *d = am->design;
    const fit_result *f = am->fit;
    doc_heading(parent, 3, NULL, "Fitted equation");
    buf eq;
    buf_init(&eq);
    const char *unit = column_unit(s, d->response->name);
    buf_printf(&eq, "predicted %s%s%s%s =", d->response->name, unit ? " [" : "",
               unit ? unit : "", unit ? "]" : "");
    bool first = true;
    for (size_t c = 0; c < d->n_coefs; c++) {
        if (!f->coefs[c].estimable)
            continue;
        char number[NARRATE_NUMBER_SIZE];
        double e = f->coefs[c].estimate;
        narrate_number(number, fabs(e), DIGITS);
        if (first)
            buf_printf(&eq, " %s%s", e < 0 ? "-" : "", number);
        else
            buf_printf(&eq, "\n    %s %s", e < 0 ? "-" : "+", number);
        if (d->coefs[c].n_parts > 0) {
            for (size_t i = 0; i < d->coefs[c].n_parts; i++) {
                const design_part *part = &d->coefs[c].parts[i];
                if (part->level)
                    buf_printf(&eq, " × [%s is %s]", part->column->name, part->level);
                else if (part->power > 1)
                    buf_printf(&eq, " × %s^%d", part->column->name, part->power);
                else
                    buf_printf(&eq, " × %s", part->column->name);
            }
        }
        first = false;
    }
    doc_code(parent, "text", eq.data);
    buf_free(&eq);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_part *part = find_category_part(&d->coefs[c]);
        if (part) {
            doc_textf(doc_paragraph(parent),
                      "A bracket such as [%s is %s] stands for 1 when the row has that "
                      "level and 0 otherwise.",
                      part->column->name, part->level);
            return;
        }
    }
}

static void add_coefficient_table(doc_node *parent, const analysis_model *am, double level)
{
    const design *d = am->design;
    const fit_result *f = am->fit;
    doc_heading(parent, 3, NULL, "Coefficients");
    doc_align align[] = {DOC_ALIGN_LEFT,  DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT};
    doc_node *table = doc_table(parent, 6, align);
    doc_node *header = doc_row(table);
    char interval_title[64];
    snprintf(interval_title, sizeof interval_title, "%g%% confidence interval", level * 100);
    const char *titles[] = {"Coefficient", "Estimate", "Standard error", "t", "p-value",
                            interval_title};
    for (size_t j = 0; j < 6; j++)
        doc_cell(header, titles[j]);
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
        char e[NARRATE_NUMBER_SIZE], se[NARRATE_NUMBER_SIZE], t[NARRATE_NUMBER_SIZE],
            p[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
        narrate_number(e, fc->estimate, DIGITS);
        narrate_number(se, fc->std_error, DIGITS);
        narrate_number(t, fc->t, 3);
        narrate_p_value(p, fc->p);
        narrate_number(low, fc->ci_low, DIGITS);
        narrate_number(high, fc->ci_high, DIGITS);
        doc_cell(row, e);
        doc_cell(row, se);
        doc_cell(row, t);
        doc_cell(row, p);
        buf ci;
        buf_init(&ci);
        buf_printf(&ci, "%s to %s", low, high);
        doc_cell(row, ci.data);
        buf_free(&ci);
    }
}

static void add_readings(doc_node *parent, const analysis *a, const analysis_model *am)
{
    const design *d = am->design;
    doc_heading(parent, 3, NULL, "What each coefficient says");
    doc_node *list = doc_list(parent);
    for (size_t c = 0; c < d->n_coefs; c++) {
        reading r = {a,
                     am,
                     &d->coefs[c],
                     &am->fit->coefs[c],
                     d->response->name,
                     column_words(a->spec, d->response->name)};
        doc_node *item = doc_item(list);
        doc_strong(item, d->coefs[c].label);
        doc_text(item, ": ");
        char *sentence = coefficient_sentence(&r);
        doc_text(item, sentence);
        free(sentence);
    }
}

static void add_fit_summary(doc_node *parent, const analysis *a, const analysis_model *am)
{
    const fit_result *f = am->fit;
    const char *y_words = column_words(a->spec, am->design->response->name);
    doc_heading(parent, 3, NULL, "How well the model fits");
    char r2[NARRATE_NUMBER_SIZE], adj[NARRATE_NUMBER_SIZE], fstat[NARRATE_NUMBER_SIZE],
        fp[NARRATE_NUMBER_SIZE];
    narrate_number(r2, f->r_squared, 3);
    narrate_number(adj, f->adj_r_squared, 3);
    narrate_number(fstat, f->f, DIGITS);
    narrate_p_value(fp, f->f_p);
    doc_node *p = doc_paragraph(parent);
    if (f->centred)
        doc_textf(p, "The model accounts for %.1f%% of the variation of %s around its mean "
                     "(R² = %s; adjusted for the number of coefficients, %s). ",
                  f->r_squared * 100, y_words, r2, adj);
    else
        doc_textf(p, "The model has no intercept, so R² = %s is the uncentred one: the "
                     "share of the sum of squares of %s itself (not of its variation "
                     "around the mean) that the model accounts for; it is not comparable "
                     "with the R² of a model with an intercept. ",
                  r2, y_words);
    buf text;
    buf_init(&text);
    amount(&text, a->spec, am->design->response->name, f->sigma);
    doc_textf(p, "A typical observation lies about %s from its fitted value (residual "
                 "standard deviation, %.0f degrees of freedom). ",
              text.data, f->df_residual);
    buf_free(&text);
    if (isnan(f->f))
        doc_text(p, "The overall F test cannot be computed for this model.");
    else if (f->f_p < ALPHA)
        doc_textf(p, "Taken together, the terms explain more than chance would (F = %s on "
                     "%.0f and %.0f degrees of freedom, p %s%s).",
                  fstat, f->df_model, f->df_residual, fp[0] == '<' ? "" : "= ", fp);
    else
        doc_textf(p, "Taken together, the terms cannot be told apart from no effect at all "
                     "(F = %s on %.0f and %.0f degrees of freedom, p = %s).",
                  fstat, f->df_model, f->df_residual, fp);
    char ll[NARRATE_NUMBER_SIZE], aic[NARRATE_NUMBER_SIZE], bic[NARRATE_NUMBER_SIZE];
    narrate_number(ll, f->log_likelihood, 6);
    narrate_number(aic, f->aic, 6);
    narrate_number(bic, f->bic, 6);
    doc_textf(doc_paragraph(parent),
              "For comparing models fitted to the same rows: log-likelihood %s, AIC %s, "
              "BIC %s (both count the residual variance as a parameter; lower is better).",
              ll, aic, bic);
}

static void add_model(doc_node *root, const analysis *a, const analysis_model *am)
{
    const spec_model *m = am->model;
    buf title;
    buf_init(&title);
    buf_printf(&title, "Model '%s': %s", m->id, column_words(a->spec, m->response));
    buf anchor;
    buf_init(&anchor);
    buf_printf(&anchor, "model-%s", m->id);
    doc_heading(root, 2, anchor.data, title.data);
    buf_free(&title);
    buf_free(&anchor);
    add_rows_used(root, am, a->table);
    if (am->fit->rank < am->design->n_coefs)
        doc_textf(doc_paragraph(root),
                  "%zu of the %zu coefficients cannot be estimated from these rows: their "
                  "columns are combinations of the others. They are marked in the table "
                  "and left out of the equation; the rest of the fit is unaffected.",
                  am->design->n_coefs - am->fit->rank, am->design->n_coefs);
    add_equation(root, am, a->spec);
    add_coefficient_table(root, am, a->level);
    add_readings(root, a, am);
    add_fit_summary(root, a, am);
}

doc_node *narrate_report(const analysis *a)
{
    doc_node *root = doc_new();
    const spec *s = a->spec;
    doc_heading(root, 1, "top", s->title ? s->title : "Regression report");
    doc_node *p = doc_paragraph(root);
    const char *slash = strrchr(s->path, '/');
    doc_text(p, "Built by fitproof from the spec ");
    doc_code_span(p, slash ? slash + 1 : s->path);
    doc_textf(p, ". %zu model%s fitted by least squares; intervals are %g%% confidence "
                 "intervals.",
              a->n_models, a->n_models == 1 ? "" : "s", a->level * 100);
    add_caution(root);
    add_data_section(root, a);
    for (size_t m = 0; m < a->n_models; m++)
        add_model(root, a, &a->models[m]);
    return root;
}

/*
 * words.c — numbers and column words as the report prints them. Every
 * place that shows a number goes through here so that text and tables
 * agree digit for digit.
 */
#include "parts.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

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
    /* Rounding may have carried into a new digit (9.9996 → "10.000"). */
    if (fabs(strtod(out, NULL)) >= pow(10.0, exponent + 1) && decimals > 0)
        snprintf(out, NARRATE_NUMBER_SIZE, "%.*f", decimals - 1, value);
    if (strcmp(out, "-0") == 0 || strspn(out, "-0.") == strlen(out))
        snprintf(out, NARRATE_NUMBER_SIZE, "0");
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

void story_number(const story *st, char *out, double value)
{
    /* A value too large for its fixed decimals to fit the field (2.8e160
       with 3 decimals is 165 characters) is written in significant digits
       instead, whole, rather than cut. */
    if (st->decimal_places >= 0 && isfinite(value) &&
        snprintf(out, NARRATE_NUMBER_SIZE, "%.*f", st->decimal_places, value) <
            NARRATE_NUMBER_SIZE) {
        if (strspn(out, "-0.") == strlen(out))
            snprintf(out, NARRATE_NUMBER_SIZE, "%.*f", st->decimal_places, 0.0);
        return;
    }
    narrate_number(out, value, st->significant_digits);
}

void story_value(const story *st, char *out, double value)
{
    story_number(st, out, value);
    if (!strchr(out, '.') || strchr(out, 'e'))
        return;
    size_t length = strlen(out);
    while (out[length - 1] == '0')
        out[--length] = '\0';
    if (out[length - 1] == '.')
        out[--length] = '\0';
}

void story_percent(char *out, double fraction)
{
    if (!isfinite(fraction)) {
        snprintf(out, NARRATE_NUMBER_SIZE, "n/a");
        return;
    }
    snprintf(out, NARRATE_NUMBER_SIZE, "%.1f%%", fraction * 100.0);
    if (strcmp(out, "-0.0%") == 0)
        snprintf(out, NARRATE_NUMBER_SIZE, "0.0%%");
}

const spec_derive *story_derivation(const story *st, const char *column)
{
    return spec_find_derive(st->s, column);
}

const char *story_position(const story *st)
{
    return st->a->table->position_word ? st->a->table->position_word : "line";
}

const char *story_position_source(const story *st)
{
    const data_table *t = st->a->table;
    if (t->source_sheet)
        return "the sheet";
    return t->source_query ? "the query's result" : "the data file";
}

const char *story_unit(const story *st, const char *column)
{
    const spec_column *declared = spec_find_column(st->s, column);
    if (declared && declared->unit)
        return declared->unit;
    const data_column *data = data_find(st->a->table, column);
    if (data && data->is_date)
        return data->date_unit;
    const spec_derive *derive = story_derivation(st, column);
    if (derive && derive->transform == SPEC_DERIVE_CENTER)
        return story_unit(st, derive->from);
    return NULL;
}

void story_amount(const story *st, buf *out, const char *column, double value)
{
    char number[NARRATE_NUMBER_SIZE];
    story_number(st, number, value);
    const char *unit = story_unit(st, column);
    buf_printf(out, "%s%s%s", number, unit ? " " : "", unit ? unit : "");
}

void story_words(const story *st, buf *out, const char *column)
{
    const spec_column *declared = spec_find_column(st->s, column);
    if (declared && declared->label) {
        buf_puts(out, declared->label);
        return;
    }
    const spec_derive *derive = story_derivation(st, column);
    if (!derive) {
        buf_puts(out, column);
        return;
    }
    static const char *const before[] = {
        "the natural logarithm of ", "the base-10 logarithm of ", "the square root of ",
        "the square of ",    "the reciprocal of ",        "",
        "standardized "};
    static const char *const after[] = {"", "", "", "", "", " (centred on its mean)", ""};
    buf_puts(out, before[derive->transform]);
    story_words(st, out, derive->from);
    buf_puts(out, after[derive->transform]);
}

double story_step(const story *st, buf *out, const char *column)
{
    const spec_column *declared = spec_find_column(st->s, column);
    double step = declared && declared->step > 0 ? declared->step : 1.0;
    char number[NARRATE_NUMBER_SIZE];
    story_value(st, number, step);
    const char *unit = story_unit(st, column);
    if (unit && strcmp(unit, "%") == 0)
        buf_printf(out, "%s percentage point%s", number, step == 1.0 ? "" : "s");
    else
        buf_printf(out, "%s %s", number, unit ? unit : (step == 1.0 ? "unit" : "units"));
    return step;
}

const char *story_rows(const story *st)
{
    return st->s->data.rows_are ? st->s->data.rows_are : "rows";
}

const char *story_errors_short(spec_errors kind)
{
    static const char *const names[] = {"classical", "HC0", "HC1", "HC2", "HC3", "Newey–West"};
    return names[kind];
}

void story_errors_words(buf *out, const analysis_model *am, spec_errors kind)
{
    const fit_result *f = am->fit;
    if (kind == SPEC_ERRORS_HAC) {
        buf_printf(out, "autocorrelation-consistent Newey–West covariance (Newey & West 1987) "
                        "with %zu lag%s, ",
                   f->hac_lags, f->hac_lags == 1 ? "" : "s");
        if (am->model->lags >= 0)
            buf_puts(out, "as the analyst set");
        else
            buf_printf(out, "by the rule ⌊4 (n/100)^(2/9)⌋ at n = %zu (Newey & West 1994)",
                       f->n);
        buf_puts(out, ", with the rows in the order of ");
        buf_puts(out, am->model->order_by);
    } else if (kind == SPEC_ERRORS_CLASSICAL) {
        buf_puts(out, "classical covariance, which assumes independent errors of constant "
                      "variance");
    } else {
        buf_printf(out, "heteroscedasticity-consistent %s covariance (MacKinnon & White 1985)",
                   story_errors_short(kind));
    }
}

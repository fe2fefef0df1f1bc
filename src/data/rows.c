/*
 * rows.c — what happens to the table after reading: the where filter
 * (checked against the file's columns, then applied row by row, keeping
 * the removed rows' lines) and the derived columns, computed on the kept
 * rows in spec order.
 *
 * A filter on a missing cell: an ordered comparison, is and in are false,
 * is_not is true. Centring subtracts the mean of the kept non-missing
 * values; standardizing also divides by their sample standard deviation
 * (n − 1 denominator), both computed in two passes in long double.
 */
#include <ctype.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "../util/dates.h"
#include "internal.h"

static const char *op_name(spec_op op)
{
    static const char *const names[] = {"is", "is_not", "below", "at_most", "above",
                                        "at_least", "in"};
    return names[op];
}

static bool is_ordered(spec_op op)
{
    return op == SPEC_OP_LT || op == SPEC_OP_LE || op == SPEC_OP_GT || op == SPEC_OP_GE;
}


void data_suggest_column(buf *out, const data_table *t, const char *name)
{
    const char **names = xmalloc((t->n_columns ? t->n_columns : 1) * sizeof(char *));
    for (size_t j = 0; j < t->n_columns; j++)
        names[j] = t->columns[j].name;
    hint_closest(out, name, names, t->n_columns, "the columns are");
    free(names);
}

/* ---- where: checks ---------------------------------------------------------- */

static src_mark value_mark(const spec_filter *f, size_t i)
{
    return f->values_at ? f->values_at[i] : f->at;
}

static void unknown_filter_column(const data_table *t, const spec *s, const spec_filter *f,
                                  error_list *errors)
{
    if (spec_find_derive(s, f->column)) {
        error_at(errors, s->path, f->column_at,
                 "where filters the file's rows before derived columns are computed, so it "
                 "cannot use derived column '%s'; filter on the column it comes from",
                 f->column);
        return;
    }
    buf hint;
    buf_init(&hint);
    data_suggest_column(&hint, t, f->column);
    error_at(errors, s->path, f->column_at, "where names column '%s', which is not in %s%s",
             f->column, t->path, hint.data);
    buf_free(&hint);
}

static int32_t level_code(const data_column *c, const char *text)
{
    for (size_t i = 0; i < c->n_levels; i++)
        if (strcmp(c->levels[i], text) == 0)
            return (int32_t)i;
    return -1;
}

static bool check_category_filter(const data_column *c, const spec *s, const spec_filter *f,
                                  error_list *errors)
{
    if (is_ordered(f->op)) {
        error_at(errors, s->path, f->at,
                 "'%s' compares numbers, but column '%s' is a category; use is, is_not or in",
                 op_name(f->op), c->name);
        return false;
    }
    bool ok = true;
    for (size_t i = 0; i < f->n_values; i++) {
        if (level_code(c, f->values[i]) >= 0)
            continue;
        const char *close = closest_name(f->values[i], (const char *const *)c->levels,
                                         c->n_levels);
        buf hint;
        buf_init(&hint);
        if (close)
            buf_printf(&hint, "; did you mean '%s'?", close);
        else
            for (size_t k = 0; k < c->n_levels && k < 10; k++)
                buf_printf(&hint, "%s'%s'", k ? ", " : "; its levels are ", c->levels[k]);
        error_at(errors, s->path, value_mark(f, i), "'%s' is not a level of column '%s'%s",
                 f->values[i], c->name, hint.data);
        buf_free(&hint);
        ok = false;
    }
    return ok;
}

/* A where value compared with a date column: days since 1970-01-01 UTC,
   a date-time without an offset read in the spec's time zone. */
static bool filter_date(const spec *s, const char *text, double *days)
{
    date_value date;
    if (!date_parse(text, strlen(text), &date))
        return false;
    if (date.has_time && !date.has_offset) {
        if (!s->data.has_time_zone)
            return false;
        date.days -= s->data.time_zone_minutes / 1440.0;
    }
    *days = date.days;
    return true;
}

static bool check_date_filter(const data_column *c, const spec *s, const spec_filter *f,
                              error_list *errors)
{
    for (size_t i = 0; i < f->n_values; i++) {
        double ignored;
        if (filter_date(s, f->values[i], &ignored))
            continue;
        error_at(errors, s->path, value_mark(f, i),
                 "column '%s' holds dates, so '%s' must compare it with a date written "
                 "YYYY-MM-DD (or a date-time with its offset, 2024-03-01T08:00Z), not '%s'",
                 c->name, op_name(f->op), f->values[i]);
        return false;
    }
    return true;
}

static bool check_filter(const data_table *t, const spec *s, const spec_filter *f,
                         error_list *errors)
{
    if (f->kind != SPEC_FILTER_COMPARE) {
        bool ok = true;
        for (size_t i = 0; i < f->n_children; i++)
            ok = check_filter(t, s, &f->children[i], errors) && ok;
        return ok;
    }
    const data_column *c = data_find(t, f->column);
    if (!c) {
        unknown_filter_column(t, s, f, errors);
        return false;
    }
    if (c->kind == DATA_CATEGORY)
        return check_category_filter(c, s, f, errors);
    if (c->is_date)
        return check_date_filter(c, s, f, errors);
    for (size_t i = 0; i < f->n_values; i++) {
        double ignored;
        if (data_parse_number(f->values[i], strlen(f->values[i]), &ignored))
            continue;
        error_at(errors, s->path, value_mark(f, i),
                 "column '%s' is numeric, so '%s' must compare it with a number, not '%s'",
                 c->name, op_name(f->op), f->values[i]);
        return false;
    }
    return true;
}

bool data_check_where(const data_table *t, const spec *s, error_list *errors)
{
    return !s->where || check_filter(t, s, s->where, errors);
}

/* ---- where: applying ------------------------------------------------------- */

/* A filter tied to the table: the level code of each category value. */
typedef struct compiled compiled;
struct compiled {
    const spec_filter *filter;
    const data_column *column;
    int32_t *codes;
    double *numbers;
    compiled *children;
};

static void compile(compiled *c, const data_table *t, const spec *s, const spec_filter *f)
{
    memset(c, 0, sizeof *c);
    c->filter = f;
    if (f->kind != SPEC_FILTER_COMPARE) {
        c->children = xcalloc(f->n_children ? f->n_children : 1, sizeof *c->children);
        for (size_t i = 0; i < f->n_children; i++)
            compile(&c->children[i], t, s, &f->children[i]);
        return;
    }
    c->column = data_find(t, f->column);
    c->codes = xmalloc((f->n_values ? f->n_values : 1) * sizeof(int32_t));
    c->numbers = xmalloc((f->n_values ? f->n_values : 1) * sizeof(double));
    for (size_t i = 0; i < f->n_values; i++) {
        c->codes[i] = level_code(c->column, f->values[i]);
        c->numbers[i] = NAN;
        if (c->column->is_date)
            filter_date(s, f->values[i], &c->numbers[i]);
        else
            data_parse_number(f->values[i], strlen(f->values[i]), &c->numbers[i]);
    }
}

static void compiled_free(compiled *c)
{
    for (size_t i = 0; c->children && i < c->filter->n_children; i++)
        compiled_free(&c->children[i]);
    free(c->children);
    free(c->codes);
    free(c->numbers);
}

static bool compare_number(const compiled *c, double x)
{
    const spec_filter *f = c->filter;
    if (isnan(x))
        return f->op == SPEC_OP_NE;
    double v = c->numbers[0];
    switch (f->op) {
    case SPEC_OP_EQ: return x == v;
    case SPEC_OP_NE: return x != v;
    case SPEC_OP_LT: return x < v;
    case SPEC_OP_LE: return x <= v;
    case SPEC_OP_GT: return x > v;
    case SPEC_OP_GE: return x >= v;
    case SPEC_OP_IN: break;
    }
    for (size_t i = 0; i < f->n_values; i++)
        if (x == c->numbers[i])
            return true;
    return false;
}

static bool compare_code(const compiled *c, int32_t code)
{
    const spec_filter *f = c->filter;
    if (code < 0)
        return f->op == SPEC_OP_NE;
    if (f->op == SPEC_OP_NE)
        return code != c->codes[0];
    for (size_t i = 0; i < f->n_values; i++)
        if (code == c->codes[i])
            return true;
    return false;
}

static bool keeps(const compiled *c, size_t row)
{
    const spec_filter *f = c->filter;
    if (f->kind == SPEC_FILTER_COMPARE)
        return c->column->kind == DATA_NUMERIC ? compare_number(c, c->column->numbers[row])
                                               : compare_code(c, c->column->codes[row]);
    bool all = f->kind == SPEC_FILTER_ALL;
    for (size_t i = 0; i < f->n_children; i++)
        if (keeps(&c->children[i], row) != all)
            return !all;
    return all;
}

void data_apply_where(data_table *t, const spec *s)
{
    if (!s->where)
        return;
    compiled root;
    compile(&root, t, s, s->where);
    size_t kept = 0;
    t->removed_lines = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(uint32_t));
    for (size_t row = 0; row < t->n_rows; row++) {
        if (!keeps(&root, row)) {
            t->removed_lines[t->n_removed++] = t->lines[row];
            continue;
        }
        for (size_t j = 0; j < t->n_columns; j++) {
            data_column *c = &t->columns[j];
            if (c->numbers)
                c->numbers[kept] = c->numbers[row];
            else
                c->codes[kept] = c->codes[row];
        }
        t->lines[kept++] = t->lines[row];
    }
    t->n_rows = kept;
    compiled_free(&root);
    t->removed_lines =
        xrealloc(t->removed_lines, (t->n_removed ? t->n_removed : 1) * sizeof(uint32_t));
}

/* ---- dates ------------------------------------------------------------------ */

static const char *const unit_words[] = {"day", "hour", "week"};
static const double per_day[] = {1.0, 24.0, 1.0 / 7.0};

bool data_date_value(const data_column *c, const spec *s, const char *text, double *out)
{
    double days;
    if (!c->is_date || !filter_date(s, text, &days))
        return false;
    size_t unit = 0;
    while (unit < 2 && strcmp(unit_words[unit], c->date_unit) != 0)
        unit++;
    *out = (days - c->date_origin) * per_day[unit];
    return true;
}

void data_settle_dates(data_table *t, const spec *s)
{
    for (size_t j = 0; j < t->n_file_columns; j++) {
        data_column *c = &t->columns[j];
        if (!c->is_date)
            continue;
        const spec_column *declared = spec_find_column(s, c->name);
        spec_date_unit unit = declared ? declared->date_unit : SPEC_DATE_DAY;
        /* A date by the database's type: the spec checked no unit. */
        if (declared && declared->unit && strncmp(declared->unit, "hour", 4) == 0)
            unit = SPEC_DATE_HOUR;
        else if (declared && declared->unit && strncmp(declared->unit, "week", 4) == 0)
            unit = SPEC_DATE_WEEK;
        double origin = declared ? declared->origin : NAN;
        c->origin_is_earliest = isnan(origin);
        for (size_t row = 0; c->origin_is_earliest && row < t->n_rows; row++)
            if (!isnan(c->numbers[row]) && !(c->numbers[row] >= origin))
                origin = floor(c->numbers[row]); /* the day it falls on */
        c->date_origin = isnan(origin) ? 0 : origin;
        c->date_unit = unit_words[unit];
        for (size_t row = 0; row < t->n_rows; row++)
            c->numbers[row] = (c->numbers[row] - c->date_origin) * per_day[unit];
    }
}

/* ---- derive ----------------------------------------------------------------- */

bool data_check_derive_names(const data_table *t, const spec *s, error_list *errors)
{
    bool ok = true;
    for (size_t i = 0; i < s->n_derive; i++) {
        const spec_derive *d = &s->derive[i];
        if (data_find(t, d->name)) {
            error_at(errors, s->path, d->at,
                     "derived column '%s' has the name of a column in %s; choose another "
                     "name",
                     d->name, t->path);
            ok = false;
        }
        if (data_find(t, d->from))
            continue;
        bool earlier = false, later = false;
        for (size_t k = 0; k < s->n_derive; k++)
            if (strcmp(s->derive[k].name, d->from) == 0) {
                if (k < i)
                    earlier = true;
                else
                    later = true;
            }
        if (earlier)
            continue;
        ok = false;
        if (later) {
            error_at(errors, s->path, d->from_at,
                     "derived column '%s' uses '%s', which is derived further down; list "
                     "'%s' first",
                     d->name, d->from, d->from);
            continue;
        }
        buf hint;
        buf_init(&hint);
        data_suggest_column(&hint, t, d->from);
        error_at(errors, s->path, d->from_at, "column '%s' is not in %s%s", d->from, t->path,
                 hint.data);
        buf_free(&hint);
    }
    return ok;
}

/* Mean and sample standard deviation of the non-missing values. */
static size_t moments(const double *x, size_t n, double *mean, double *sd)
{
    long double sum = 0;
    size_t count = 0;
    for (size_t i = 0; i < n; i++)
        if (!isnan(x[i]))
            sum += x[i], count++;
    long double m = count ? sum / count : 0;
    long double squares = 0;
    for (size_t i = 0; i < n; i++)
        if (!isnan(x[i]))
            squares += (x[i] - m) * (x[i] - m);
    *mean = (double)m;
    *sd = count > 1 ? (double)sqrtl(squares / (count - 1)) : 0.0;
    return count;
}

static double transform(spec_transform how, double x, double mean, double sd)
{
    switch (how) {
    case SPEC_DERIVE_LOG: return x > 0 ? log(x) : NAN;
    case SPEC_DERIVE_LOG10: return x > 0 ? log10(x) : NAN;
    case SPEC_DERIVE_SQRT: return x >= 0 ? sqrt(x) : NAN;
    case SPEC_DERIVE_SQUARE: return x * x;
    case SPEC_DERIVE_RECIPROCAL: return x != 0 ? 1.0 / x : NAN;
    case SPEC_DERIVE_CENTER: return x - mean;
    case SPEC_DERIVE_STANDARDIZE: return (x - mean) / sd;
    }
    return NAN;
}

static const char *domain_text(spec_transform how)
{
    switch (how) {
    case SPEC_DERIVE_LOG:
    case SPEC_DERIVE_LOG10: return "needs values above zero";
    case SPEC_DERIVE_SQRT: return "needs values of zero or more";
    case SPEC_DERIVE_RECIPROCAL: return "needs values other than zero";
    default: return "gives a value too large for a double";
    }
}

static bool derive_values(const data_table *t, const spec *s, const spec_derive *d,
                          const data_column *from, data_column *out, error_list *errors)
{
    double mean = 0, sd = 1;
    if (d->transform == SPEC_DERIVE_CENTER || d->transform == SPEC_DERIVE_STANDARDIZE) {
        size_t count = moments(from->numbers, t->n_rows, &mean, &sd);
        bool scaled = d->transform == SPEC_DERIVE_STANDARDIZE;
        if (count < (scaled ? 2u : 1u) || (scaled && !(sd > 0))) {
            error_at(errors, s->path, d->at,
                     "%s of '%s' needs %s, and the rows kept have %zu value%s%s",
                     spec_transform_name(d->transform), from->name,
                     scaled ? "at least two different values" : "at least one value", count,
                     count == 1 ? "" : "s", scaled && count > 1 ? ", all equal" : "");
            return false;
        }
        out->derive_mean = mean;
        out->derive_sd = scaled ? sd : NAN;
    }
    for (size_t row = 0; row < t->n_rows; row++) {
        double x = from->numbers[row];
        out->numbers[row] = isnan(x) ? NAN : transform(d->transform, x, mean, sd);
        out->n_missing += isnan(x) != 0;
        if (isnan(x) || isfinite(out->numbers[row]))
            continue;
        char value[32];
        fmt_roundtrip(value, sizeof value, x);
        error_at(errors, s->path, d->at,
                 "%s of '%s' %s, but the row at line %u of %s has %s; remove the row with "
                 "where, or choose another transform",
                 spec_transform_name(d->transform), from->name, domain_text(d->transform),
                 (unsigned)t->lines[row], t->path, value);
        return false;
    }
    return true;
}

static data_column *add_column(data_table *t, const char *name)
{
    t->columns = xrealloc(t->columns, (t->n_columns + 1) * sizeof *t->columns);
    data_column *c = &t->columns[t->n_columns++];
    memset(c, 0, sizeof *c);
    c->name = xstrdup(name);
    c->kind = DATA_NUMERIC;
    c->numbers = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(double));
    return c;
}

bool data_apply_derive(data_table *t, const spec *s, error_list *errors)
{
    for (size_t i = 0; i < s->n_derive; i++) {
        const spec_derive *d = &s->derive[i];
        const data_column *from = data_find(t, d->from);
        if (from->kind != DATA_NUMERIC) {
            error_at(errors, s->path, d->from_at,
                     "%s needs a numeric column, but '%s' is a category",
                     spec_transform_name(d->transform), d->from);
            return false;
        }
        size_t from_index = (size_t)(from - t->columns);
        data_column *out = add_column(t, d->name);
        from = &t->columns[from_index]; /* the array may have moved */
        out->derive = d;
        out->derive_mean = NAN;
        out->derive_sd = NAN;
        if (!derive_values(t, s, d, from, out, errors))
            return false;
    }
    return true;
}

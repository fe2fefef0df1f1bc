/*
 * cells.c — one cell by the general route: blanks and missing tokens,
 * numbers with all their checks (NaN words, overflow, integers beyond
 * 2^53), words that turn an inferred column into a category, and category
 * texts seen for the first time (UTF-8, declared levels). The common cells
 * never come here: read.c stores them directly.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "../util/dates.h"
#include "loader.h"

/* ---- missing cells -------------------------------------------------------- */

static bool is_blank(char c)
{
    return c == ' ' || c == '\t';
}

static void trim(const char **text, size_t *length)
{
    while (*length && is_blank(**text))
        (*text)++, (*length)--;
    while (*length && is_blank((*text)[*length - 1]))
        (*length)--;
}

static bool is_missing_token(const loader *ld, const char *text, size_t length)
{
    for (size_t i = 0; i < ld->s->data.n_missing; i++) {
        const char *token = ld->s->data.missing[i];
        if (strlen(token) == length && memcmp(token, text, length) == 0)
            return true;
    }
    return false;
}

/* Words that commonly mean "no value" in exported tables. */
bool data_missing_word(const char *text, size_t length)
{
    static const char *const words[] = {"NA",   "N/A", "n/a", "na", "#N/A", "n.a.", "N.A.",
                                        "NULL", "null", "-",  "--", ".",    "?",    NULL};
    for (size_t i = 0; words[i]; i++)
        if (strlen(words[i]) == length && memcmp(words[i], text, length) == 0)
            return true;
    return number_is_nonfinite_word(text, length);
}

/* ---- messages ------------------------------------------------------------ */

static void value_error(loader *ld, size_t line, size_t column, const char *text, size_t length,
                        const char *format, const char *name)
{
    buf shown;
    buf_init(&shown);
    csv_quote_value(&shown, text, length);
    error_at(ld->errors, ld->sc->path, csv_mark(line, column), format, shown.data, name);
    buf_free(&shown);
}

static const char *defer_message(defer_kind kind)
{
    switch (kind) {
    case DEFER_NONFINITE:
        return "'%s' in column '%s' is not a number fitproof can use; if it marks a missing "
               "value, list it under data.missing";
    case DEFER_OVERFLOW:
        return "'%s' in column '%s' is too large for a double (the largest is about "
               "1.8e308); correct the value";
    case DEFER_BIG_INTEGER:
        return "'%s' in column '%s' is an integer beyond 2^53, which a double cannot hold "
               "exactly; if it identifies something, declare the column 'kind: category'";
    case DEFER_NONE: break;
    }
    return "";
}

/* A problem with a value of a numeric column: an error at once when the
   spec declares the column numeric, else remembered (the first one) and
   reported only if the column stays numeric. */
static bool numeric_problem(loader *ld, column_state *st, defer_kind kind, const cell *c)
{
    if (!st->inferred) {
        value_error(ld, c->line, c->column, c->text, c->length, defer_message(kind),
                    st->column->name);
        return false;
    }
    if (ld->helper) { /* the first part may yet make it a category */
        ld->gave_up = true;
        return false;
    }
    if (st->deferred == DEFER_NONE) {
        st->deferred = kind;
        st->deferred_line = c->line;
        st->deferred_column = c->column;
        st->deferred_text = xstrndup(c->text, c->length > 80 ? 80 : c->length);
    }
    return true;
}

static bool check_utf8(loader *ld, const cell *c)
{
    const char *bad = data_utf8_invalid(c->raw, c->raw_end);
    if (bad)
        csv_utf8_error(ld->sc, c->raw, c->line, c->column, bad);
    return !bad;
}

/* Room for a column's rows (old grown, or new when old is NULL). */
void *loader_alloc_rows(void *old, size_t bytes)
{
    void *rows = xrealloc(old, bytes);
    data_advise_huge(rows, bytes);
    return rows;
}

/* ---- categories ------------------------------------------------------------ */

static void suggest_level(buf *out, const column_state *st, const char *text)
{
    const char *close = closest_name(text, (const char *const *)st->declared->levels,
                                     st->declared->n_levels);
    if (close) {
        buf_printf(out, "; did you mean '%s'?", close);
        return;
    }
    buf_puts(out, "; the declared levels are");
    for (size_t i = 0; i < st->declared->n_levels && i < 10; i++)
        buf_printf(out, "%s '%s'", i ? "," : "", st->declared->levels[i]);
    if (st->declared->n_levels > 10)
        buf_puts(out, ", …");
}

static bool undeclared_level(loader *ld, const column_state *st, const cell *c, uint32_t entry)
{
    buf shown, hint;
    buf_init(&shown);
    buf_init(&hint);
    csv_quote_value(&shown, c->text, c->length);
    suggest_level(&hint, st, level_set_name(&st->set, entry));
    error_at(ld->errors, ld->sc->path, csv_mark(c->line, c->column),
             "'%s' in column '%s' is not one of the levels the spec declares%s", shown.data,
             st->column->name, hint.data);
    buf_free(&shown);
    buf_free(&hint);
    return false;
}

/* Decides what a text seen for the first time in a category means. */
static bool classify_entry(loader *ld, column_state *st, uint32_t entry, const cell *c)
{
    xgrow((void **)&st->entry_codes, &st->entry_capacity, entry + 1, sizeof(int32_t));
    const char *text = c->text;
    size_t length = c->length;
    trim(&text, &length);
    if (length == 0 || is_missing_token(ld, text, length)) {
        st->entry_codes[entry] = -1;
        return true;
    }
    if (!check_utf8(ld, c))
        return false;
    if (st->declared && st->declared->levels)
        return undeclared_level(ld, st, c, entry);
    st->entry_codes[entry] = (int32_t)st->n_levels++;
    return true;
}

/* Remembers an unquoted text of at most 16 bytes for fast_category. */
static void cache_text(column_state *st, const char *text, size_t length, int32_t code)
{
    if (length == 0 || length > 16)
        return;
    uint64_t words[2] = {0, 0};
    memcpy(words, text, length);
    cache_entry *e = &st->cache[loader_cache_slot(words[0], words[1], (uint32_t)length)];
    *e = (cache_entry){{words[0], words[1]}, (uint32_t)length, code};
}

bool loader_store_category(loader *ld, column_state *st, size_t row, const cell *c)
{
    if (c->length == 0) {
        st->column->codes[row] = -1;
        st->column->n_missing++;
        return true;
    }
    bool added;
    uint32_t entry = level_set_intern(&st->set, c->text, c->length, &added);
    if (added && !classify_entry(ld, st, entry, c))
        return false;
    int32_t code = st->entry_codes[entry];
    st->column->codes[row] = code;
    st->column->n_missing += code < 0;
    if (c->raw == c->text)
        cache_text(st, c->text, c->length, code);
    return true;
}

/* An inferred column met a word at row: it is a category from here on. */
void loader_switch_to_category(loader *ld, column_state *st, size_t row)
{
    free(st->column->numbers);
    st->column->numbers = NULL;
    st->column->codes = loader_alloc_rows(NULL, (ld->capacity ? ld->capacity : 1) * sizeof(int32_t));
    st->numeric = false;
    st->switch_row = row;
    st->column->n_missing = 0;
    st->deferred = DEFER_NONE;
    for (size_t i = 0; i < st->n_pending; i++)
        free(st->pending[i]);
    st->n_pending = 0;
}

/* ---- numbers --------------------------------------------------------------- */

static void remember_pending(column_state *st, const char *text, size_t length)
{
    for (size_t i = 0; i < st->n_pending; i++)
        if (strlen(st->pending[i]) == length && memcmp(st->pending[i], text, length) == 0)
            return;
    if (st->n_pending < MAX_PENDING)
        st->pending[st->n_pending++] = xstrndup(text, length);
}

/* A cell of a numeric column that is not a plain number. */
static bool store_word(loader *ld, column_state *st, size_t row, const cell *c,
                       const char *text, size_t length)
{
    if (!check_utf8(ld, c))
        return false;
    if (st->inferred && (ld->flags & DATA_LOAD_SCAFFOLD) && data_missing_word(text, length)) {
        remember_pending(st, text, length);
        st->column->numbers[row] = NAN;
        st->column->n_missing++;
        return true;
    }
    if (number_is_nonfinite_word(text, length)) {
        st->column->numbers[row] = NAN;
        st->column->n_missing++;
        return numeric_problem(ld, st, DEFER_NONFINITE, c);
    }
    if (!st->inferred) {
        if (data_missing_word(text, length)) {
            buf shown;
            buf_init(&shown);
            csv_quote_value(&shown, text, length);
            error_at(ld->errors, ld->sc->path, csv_mark(c->line, c->column),
                     "'%s' in column '%s' is not a number, but the spec declares the column "
                     "numeric; if it means no value, add missing: [\"%s\"] under data, else "
                     "correct the value",
                     shown.data, st->column->name, shown.data);
            buf_free(&shown);
        } else {
            value_error(ld, c->line, c->column, c->text, c->length,
                        "'%s' in column '%s' is not a number, but the spec declares the "
                        "column numeric; correct the value or declare the column 'kind: "
                        "category'",
                        st->column->name);
        }
        return false;
    }
    if (ld->helper) { /* a switch needs the rows before this part */
        ld->gave_up = true;
        return false;
    }
    loader_switch_to_category(ld, st, row);
    st->column->first_text_line = c->line;
    st->column->first_text_column = c->column;
    st->column->first_text = xstrndup(text, length > 80 ? 80 : length);
    return loader_store_category(ld, st, row, c);
}

/* A cell of a date column: an ISO 8601 date or date-time, stored as days
   since 1970-01-01 UTC; a date-time without an offset is read in the
   spec's time zone, and refused when it names none. */
static bool store_date(loader *ld, column_state *st, size_t row, const cell *c,
                       const char *text, size_t length)
{
    date_value date;
    if (!check_utf8(ld, c))
        return false;
    if (!date_parse(text, length, &date)) {
        value_error(ld, c->line, c->column, text, length,
                    "'%s' in column '%s' is not a date; a date column holds ISO 8601 dates "
                    "(2024-03-01) and date-times (2024-03-01T08:30:00+01:00)",
                    st->column->name);
        return false;
    }
    if (date.has_time && !date.has_offset) {
        if (!ld->s->data.has_time_zone) {
            value_error(ld, c->line, c->column, text, length,
                        "'%s' in column '%s' is a date-time without an offset from UTC, so "
                        "the moment it names is unknown; write the offset (Z, +01:00) or name "
                        "the data's time zone with data.time_zone",
                        st->column->name);
            return false;
        }
        date.days -= ld->s->data.time_zone_minutes / 1440.0;
    }
    st->column->numbers[row] = date.days;
    return true;
}

static bool store_number(loader *ld, column_state *st, size_t row, const cell *c)
{
    const char *text = c->text;
    size_t length = c->length;
    trim(&text, &length);
    if (length == 0 || is_missing_token(ld, text, length)) {
        st->column->numbers[row] = NAN;
        st->column->n_missing++;
        return true;
    }
    if (st->date)
        return store_date(ld, st, row, c, text, length);
    double value;
    unsigned flags;
    const char *end = number_scan(text, text + length, ld->mark, &value, &flags);
    if (end != text + length)
        return store_word(ld, st, row, c, text, length);
    st->column->numbers[row] = value;
    if (flags & NUMBER_OVERFLOW)
        return numeric_problem(ld, st, DEFER_OVERFLOW, c);
    if (flags & NUMBER_BIG_INTEGER)
        return numeric_problem(ld, st, DEFER_BIG_INTEGER, c);
    return true;
}

bool loader_store_cell(loader *ld, size_t j, size_t row, const cell *c)
{
    column_state *st = &ld->states[j];
    return st->numeric ? store_number(ld, st, row, c) : loader_store_category(ld, st, row, c);
}

/* Problems of inferred columns that stayed numeric, remembered while
   reading. */
bool loader_report_deferred(loader *ld)
{
    bool ok = true;
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        if (!st->numeric || st->deferred == DEFER_NONE)
            continue;
        value_error(ld, st->deferred_line, st->deferred_column, st->deferred_text,
                    strlen(st->deferred_text), defer_message(st->deferred), st->column->name);
        ok = false;
    }
    return ok;
}

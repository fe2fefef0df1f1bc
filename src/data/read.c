/*
 * read.c — reads the rows after the header into the table's columns, in
 * one pass over the text with no allocation per cell. A numeric cell is
 * parsed straight from the text (number.h) and, when the delimiter or the
 * line end follows, stored at once; anything else (blanks, quotes, missing
 * tokens, words) takes the general route. A category cell is hashed into
 * its column's set of distinct texts; each text is checked (UTF-8,
 * declared levels) once, when first seen.
 *
 * A column whose kind is inferred starts numeric. At its first cell that
 * is not a number it becomes a category from that row on, and a second,
 * partial pass re-reads only the rows before that point for such columns,
 * so that levels keep their exact text ("007" stays "007").
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "internal.h"
#include "swar.h"

typedef enum { DEFER_NONE, DEFER_NONFINITE, DEFER_OVERFLOW, DEFER_BIG_INTEGER } defer_kind;

/* A numeric cell's text and where it was written. */
typedef struct {
    const char *text;
    size_t length;
    const char *raw; /* as written, quotes included */
    const char *raw_end;
    size_t line;
    size_t column;
} cell;

#define MAX_PENDING 8
#define CACHE_SLOTS 64

/* A short category text (at most 16 bytes, as two words) and its code. */
typedef struct {
    uint64_t words[2];
    uint32_t length; /* 0: empty slot */
    int32_t code;
} cache_entry;

typedef struct {
    data_column *column;
    const spec_column *declared;
    bool numeric;
    bool inferred;
    size_t switch_row; /* SIZE_MAX, or the row where it became a category */
    /* the first problem of an inferred numeric column, reported if it stays numeric */
    defer_kind deferred;
    size_t deferred_line, deferred_column;
    char *deferred_text;
    level_set set;
    int32_t *entry_codes; /* per distinct text: its level code, or -1 when missing */
    size_t entry_capacity;
    size_t n_levels;
    /* DATA_LOAD_SCAFFOLD: missing-value words met while numeric */
    char *pending[MAX_PENDING];
    size_t n_pending;
    cache_entry cache[CACHE_SLOTS]; /* recently seen short texts */
} column_state;

typedef struct {
    csv_scanner *sc;
    data_table *t;
    const spec *s;
    column_state *states;
    size_t n_columns;
    size_t capacity;
    char mark;
    unsigned flags;
    bool numeric_tokens; /* a missing token is itself a number */
    data_file *file;
    error_list *errors;
} loader;

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
static bool is_missing_word(const char *text, size_t length)
{
    static const char *const words[] = {"NA", "N/A", "n/a", "na", "#N/A", "NULL", "null",
                                        "-",  ".",   "?",   NULL};
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
static void *alloc_rows(void *old, size_t bytes)
{
    void *rows = xrealloc(old, bytes);
    data_advise_huge(rows, bytes);
    return rows;
}

/* ---- categories ------------------------------------------------------------ */

static void suggest_level(buf *out, const column_state *st, const char *text)
{
    const char *close = data_closest(text, (const char *const *)st->declared->levels,
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

static size_t cache_slot(uint64_t first, uint64_t second, uint32_t length)
{
    uint64_t h = (first ^ (second * 31) ^ length) * UINT64_C(0x9E3779B97F4A7C15);
    return (size_t)(h >> 58); /* CACHE_SLOTS = 2^6 */
}

/* Remembers an unquoted text of at most 16 bytes for fast_category. */
static void cache_text(column_state *st, const char *text, size_t length, int32_t code)
{
    if (length == 0 || length > 16)
        return;
    uint64_t words[2] = {0, 0};
    memcpy(words, text, length);
    cache_entry *e = &st->cache[cache_slot(words[0], words[1], (uint32_t)length)];
    *e = (cache_entry){{words[0], words[1]}, (uint32_t)length, code};
}

static bool store_category(loader *ld, column_state *st, size_t row, const cell *c)
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
static void switch_to_category(loader *ld, column_state *st, size_t row)
{
    free(st->column->numbers);
    st->column->numbers = NULL;
    st->column->codes = alloc_rows(NULL, (ld->capacity ? ld->capacity : 1) * sizeof(int32_t));
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
    if (st->inferred && (ld->flags & DATA_LOAD_SCAFFOLD) && is_missing_word(text, length)) {
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
        value_error(ld, c->line, c->column, c->text, c->length,
                    "'%s' in column '%s' is not a number, but the spec declares the column "
                    "numeric; correct the value or declare the column 'kind: category'",
                    st->column->name);
        return false;
    }
    switch_to_category(ld, st, row);
    return store_category(ld, st, row, c);
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

static bool store_cell(loader *ld, size_t j, size_t row, const cell *c)
{
    column_state *st = &ld->states[j];
    return st->numeric ? store_number(ld, st, row, c) : store_category(ld, st, row, c);
}

/* ---- the row loop --------------------------------------------------------- */

static void grow_rows(loader *ld, size_t need)
{
    size_t grown = ld->capacity + ld->capacity / 2;
    if (grown < need)
        grown = need;
    data_table *t = ld->t;
    t->lines = alloc_rows(t->lines, grown * sizeof(uint32_t));
    for (size_t j = 0; j < ld->n_columns; j++) {
        data_column *column = ld->states[j].column;
        if (ld->states[j].numeric)
            column->numbers = alloc_rows(column->numbers, grown * sizeof(double));
        else
            column->codes = alloc_rows(column->codes, grown * sizeof(int32_t));
    }
    ld->capacity = grown;
}

static bool quoted_cell(loader *ld, size_t j, size_t row)
{
    csv_scanner *sc = ld->sc;
    buf_reset(&sc->scratch);
    field_span span = {0, 0, sc->line, (size_t)(sc->p - sc->line_start) + 1, NULL, NULL, false};
    if (!csv_scan_quoted(sc, &span))
        return false;
    cell c = {csv_field_text(sc, &span), span.length, span.raw, span.raw_end, span.line,
              span.column};
    return store_cell(ld, j, row, &c);
}

/* The common numeric cell: an optional minus, up to 7 digits, optionally
   a point and up to 7 digits, then stop. w < 10^14 and 10^f are exact
   doubles, so one division rounds correctly (Clinger's fast path). Needs
   32 readable bytes at p. */
static inline bool fast_number(const char *p, char mark, char stop, const char **end,
                               double *out)
{
    static const double powers[] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7};
    static const uint64_t scales[] = {1, 10, 100, 1000, 10000, 100000, 1000000, 10000000};
    bool negative = *p == '-';
    p += negative;
    uint64_t word = swar_load(p);
    uint64_t others = swar_non_digits(word);
    if (!others)
        return false;
    unsigned k = swar_first(others);
    uint64_t w = k ? swar_digits(word, k) : 0;
    p += k;
    unsigned f = 0;
    if (*p == mark) {
        word = swar_load(++p);
        others = swar_non_digits(word);
        if (!others)
            return false;
        f = swar_first(others);
        if (f)
            w = w * scales[f] + swar_digits(word, f);
        p += f;
    }
    if (k + f == 0 || (*p != stop && (stop != '\n' || *p != '\r')))
        return false;
    double x = f ? (double)w / powers[f] : (double)w;
    *out = negative ? -x : x;
    *end = p;
    return true;
}

/* The common category cell: an unquoted text of at most 16 bytes seen
   before. Needs 17 readable bytes at p. */
static inline bool fast_category(column_state *st, const char *p, char delimiter,
                                 const char **end, int32_t *code)
{
    uint64_t first = swar_load(p), second = swar_load(p + 8);
    uint64_t stops = swar_equal(first, (unsigned char)delimiter) | swar_equal(first, '\n') |
                     swar_equal(first, '\r');
    unsigned length;
    if (stops) {
        length = swar_first(stops);
        first = swar_keep(first, length);
        second = 0;
    } else {
        stops = swar_equal(second, (unsigned char)delimiter) | swar_equal(second, '\n') |
                swar_equal(second, '\r');
        if (stops) {
            length = 8 + swar_first(stops);
            second = swar_keep(second, length - 8);
        } else if (p[16] == delimiter || p[16] == '\n' || p[16] == '\r') {
            length = 16;
        } else {
            return false;
        }
    }
    const cache_entry *e = &st->cache[cache_slot(first, second, length)];
    if (length == 0 || e->length != length || e->words[0] != first || e->words[1] != second)
        return false;
    *code = e->code;
    *end = p + length;
    return true;
}

/* Everything fast_number and fast_category do not take. */
static bool slow_cell(loader *ld, size_t j, size_t row)
{
    csv_scanner *sc = ld->sc;
    const char *p = sc->p;
    if (p < sc->end && *p == '"')
        return quoted_cell(ld, j, row);
    const char *q = csv_field_end(p, sc->end, sc->delimiter);
    sc->p = q;
    cell c = {p, (size_t)(q - p), p, q, sc->line, (size_t)(p - sc->line_start) + 1};
    return store_cell(ld, j, row, &c);
}

static inline bool read_cell(loader *ld, size_t j, size_t row, bool last)
{
    csv_scanner *sc = ld->sc;
    column_state *st = &ld->states[j];
    const char *p = sc->p, *q;
#if SWAR_OK
    if (sc->end - p >= 32) {
        if (st->numeric) {
            double value;
            if (!ld->numeric_tokens &&
                fast_number(p, ld->mark, last ? '\n' : sc->delimiter, &q, &value)) {
                st->column->numbers[row] = value;
                sc->p = q;
                return true;
            }
        } else {
            int32_t code;
            if (fast_category(st, p, sc->delimiter, &q, &code)) {
                st->column->codes[row] = code;
                st->column->n_missing += code < 0;
                sc->p = q;
                return true;
            }
        }
    }
#endif
    return slow_cell(ld, j, row);
}

/* The row at record_start has too few or too many fields. */
static bool ragged_row(loader *ld)
{
    csv_scanner *sc = ld->sc;
    sc->p = sc->record_start;
    sc->line = sc->record_line;
    sc->line_start = sc->record_start;
    if (csv_scan_record(sc) < 0)
        return false;
    error_at(ld->errors, sc->path, csv_mark(sc->record_line, 1),
             "this row has %zu field%s but the header names %zu columns; check for a missing "
             "or extra delimiter",
             sc->n_fields, sc->n_fields == 1 ? "" : "s", ld->n_columns);
    return false;
}

/* Moves past the delimiter or line end after a cell; false when the row
   has too few or too many fields. */
static bool end_cell(csv_scanner *sc, bool last)
{
    if (!last) {
        if (sc->p < sc->end && *sc->p == sc->delimiter) {
            sc->p++;
            return true;
        }
        return false;
    }
    return sc->p >= sc->end || csv_take_line_break(sc);
}

static bool read_row(loader *ld, size_t row)
{
    csv_scanner *sc = ld->sc;
    sc->record_line = sc->line;
    sc->record_start = sc->p;
    if (sc->line > UINT32_MAX) {
        error_at(ld->errors, sc->path, csv_mark(sc->line, 1),
                 "the file has more than 4294967295 lines; split it");
        return false;
    }
    ld->t->lines[row] = (uint32_t)sc->line;
    for (size_t j = 0; j < ld->n_columns; j++) {
        bool last = j + 1 == ld->n_columns;
        if (!read_cell(ld, j, row, last))
            return false;
        if (!end_cell(sc, last))
            return ragged_row(ld);
    }
    return true;
}

static bool read_rows(loader *ld)
{
    csv_scanner *sc = ld->sc;
    size_t row = 0;
    bool ok = true;
    while (ok && csv_skip_blank_lines(sc)) {
        if (row == ld->capacity)
            grow_rows(ld, row + 1);
        ok = read_row(ld, row);
        if (ok)
            row++;
        if ((row & 0xFFF) == 0)
            data_file_release(ld->file, sc->p);
    }
    ld->t->n_rows = row;
    ld->t->rows_read = row;
    return ok;
}

/* Second pass: the rows before each switched column's switch point. */
static bool reread_switched(loader *ld, const char *body, size_t body_line)
{
    size_t until = 0;
    for (size_t j = 0; j < ld->n_columns; j++)
        if (ld->states[j].switch_row != SIZE_MAX && ld->states[j].switch_row > until)
            until = ld->states[j].switch_row;
    csv_scanner *sc = ld->sc;
    sc->p = body;
    sc->line = body_line;
    sc->line_start = body;
    for (size_t row = 0; row < until; row++) {
        if (csv_scan_record(sc) != 1)
            return false; /* cannot happen: the first pass read these rows */
        for (size_t j = 0; j < ld->n_columns; j++) {
            column_state *st = &ld->states[j];
            if (st->switch_row == SIZE_MAX || row >= st->switch_row)
                continue;
            field_span *span = &sc->fields[j];
            cell c = {csv_field_text(sc, span), span->length, span->raw, span->raw_end,
                      span->line, span->column};
            if (!store_category(ld, st, row, &c))
                return false;
        }
        if ((row & 0xFFF) == 0)
            data_file_release(ld->file, sc->p);
    }
    return true;
}

/* ---- after the rows -------------------------------------------------------- */

static bool report_deferred(loader *ld)
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

static bool filter_uses(const spec_filter *f, const char *name)
{
    if (f->kind == SPEC_FILTER_COMPARE)
        return strcmp(f->column, name) == 0;
    for (size_t i = 0; i < f->n_children; i++)
        if (filter_uses(&f->children[i], name))
            return true;
    return false;
}

/* The model that names column name (or NULL); *filtered when a where
   filter does. */
static const spec_model *model_using(const spec *s, const char *name, bool *filtered)
{
    *filtered = s->where && filter_uses(s->where, name);
    for (size_t m = 0; m < s->n_models; m++) {
        const spec_model *model = &s->models[m];
        bool uses = strcmp(model->response, name) == 0 ||
                    (model->weights && strcmp(model->weights, name) == 0);
        for (size_t i = 0; i < model->n_terms; i++)
            for (size_t k = 0; k < model->terms[i].n_columns; k++)
                uses = uses || strcmp(model->terms[i].columns[k], name) == 0;
        if (uses)
            return model;
    }
    return NULL;
}

/* A declared category used by a model or a filter may have at most
   DATA_MAX_LEVELS levels; one nothing uses (an identifier kept as text)
   may have any number. */
static bool check_level_bound(loader *ld)
{
    bool ok = true;
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        bool filtered;
        if (st->numeric || st->inferred || st->n_levels <= DATA_MAX_LEVELS)
            continue;
        const spec_model *model = model_using(ld->s, st->column->name, &filtered);
        if (!model && !filtered)
            continue;
        buf user;
        buf_init(&user);
        if (model)
            buf_printf(&user, "model '%s' uses", model->id);
        else
            buf_puts(&user, "where filters on");
        error_at(ld->errors, ld->s->path, st->declared->at,
                 "column '%s' is declared a category and %s it, but it has %zu different "
                 "values, more than the %d a category may have; if it identifies rows, leave "
                 "it out of the models",
                 st->column->name, user.data, st->n_levels, DATA_MAX_LEVELS);
        buf_free(&user);
        ok = false;
    }
    return ok;
}

typedef struct {
    const char *name;
    int32_t code;
} level_entry;

static int compare_level_entries(const void *a, const void *b)
{
    return strcmp(((const level_entry *)a)->name, ((const level_entry *)b)->name);
}

/* Sets the column's levels (declared order, else byte order) and makes
   the row codes index them. */
static void finish_levels(column_state *st, size_t n_rows)
{
    data_column *column = st->column;
    size_t n = st->n_levels;
    column->levels = xmalloc((n ? n : 1) * sizeof(char *));
    column->n_levels = n;
    if (st->declared && st->declared->levels) {
        for (size_t i = 0; i < n; i++)
            column->levels[i] = xstrdup(st->declared->levels[i]);
        return;
    }
    level_entry *entries = xmalloc((n ? n : 1) * sizeof *entries);
    for (uint32_t e = 0; e < st->set.count; e++)
        if (st->entry_codes[e] >= 0)
            entries[st->entry_codes[e]] = (level_entry){level_set_name(&st->set, e),
                                                        st->entry_codes[e]};
    qsort(entries, n, sizeof *entries, compare_level_entries);
    int32_t *rank = xmalloc((n ? n : 1) * sizeof(int32_t));
    for (size_t i = 0; i < n; i++) {
        column->levels[i] = xstrdup(entries[i].name);
        rank[entries[i].code] = (int32_t)i;
    }
    bool identity = true;
    for (size_t i = 0; i < n; i++)
        identity = identity && rank[i] == (int32_t)i;
    for (size_t row = 0; !identity && row < n_rows; row++)
        if (column->codes[row] >= 0)
            column->codes[row] = rank[column->codes[row]];
    free(rank);
    free(entries);
}

/* DATA_LOAD_SCAFFOLD: integers beyond 2^53 make an inferred column a
   category (re-read in full); missing words of numeric columns are
   collected for the table. */
static void scaffold_adjust(loader *ld)
{
    data_table *t = ld->t;
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        if (st->numeric && st->deferred == DEFER_BIG_INTEGER) {
            switch_to_category(ld, st, t->n_rows);
            st->column->big_integers = true;
        }
        if (!st->numeric)
            continue;
        for (size_t i = 0; i < st->n_pending; i++) {
            bool known = false;
            for (size_t k = 0; k < t->n_suggested_missing; k++)
                known = known || strcmp(t->suggested_missing[k], st->pending[i]) == 0;
            if (known)
                continue;
            t->suggested_missing = xrealloc(t->suggested_missing,
                                            (t->n_suggested_missing + 1) * sizeof(char *));
            t->suggested_missing[t->n_suggested_missing++] = xstrdup(st->pending[i]);
        }
    }
}

/* ---- set-up ---------------------------------------------------------------- */

/* Room for the rows, from the length of the first records: pages never
   touched cost no memory, and the arrays grow if the guess is short. */
static size_t estimate_rows(const char *body, const char *end)
{
    size_t length = (size_t)(end - body);
    size_t sample = length < ((size_t)1 << 20) ? length : (size_t)1 << 20;
    size_t breaks = 0;
    for (const char *p = body; (p = memchr(p, '\n', (size_t)(body + sample - p))); p++)
        breaks++;
    if (breaks == 0)
        return 16;
    return (size_t)((double)length / (double)sample * (double)breaks * 1.02) + 16;
}

static void init_states(loader *ld)
{
    const spec *s = ld->s;
    ld->states = xcalloc(ld->n_columns, sizeof *ld->states);
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        st->column = &ld->t->columns[j];
        st->declared = spec_find_column(s, st->column->name);
        spec_kind kind = st->declared ? st->declared->kind : SPEC_KIND_INFER;
        st->numeric = kind != SPEC_KIND_CATEGORY;
        st->inferred = kind == SPEC_KIND_INFER;
        st->switch_row = SIZE_MAX;
        if (st->declared && st->declared->levels) {
            for (size_t i = 0; i < st->declared->n_levels; i++) {
                bool added;
                const char *level = st->declared->levels[i];
                uint32_t e = level_set_intern(&st->set, level, strlen(level), &added);
                xgrow((void **)&st->entry_codes, &st->entry_capacity, e + 1, sizeof(int32_t));
                st->entry_codes[e] = (int32_t)i;
            }
            st->n_levels = st->declared->n_levels;
        }
        size_t size = st->numeric ? sizeof(double) : sizeof(int32_t);
        void *values = alloc_rows(NULL, (ld->capacity ? ld->capacity : 1) * size);
        if (st->numeric)
            st->column->numbers = values;
        else
            st->column->codes = values;
    }
    for (size_t i = 0; i < s->data.n_missing; i++) {
        double value;
        unsigned flags;
        const char *token = s->data.missing[i];
        const char *end = token + strlen(token);
        ld->numeric_tokens |= number_scan(token, end, ld->mark, &value, &flags) == end;
    }
}

static void free_states(loader *ld)
{
    for (size_t j = 0; j < ld->n_columns; j++) {
        column_state *st = &ld->states[j];
        level_set_free(&st->set);
        free(st->entry_codes);
        free(st->deferred_text);
        for (size_t i = 0; i < st->n_pending; i++)
            free(st->pending[i]);
    }
    free(ld->states);
}

/* Gives back the room the guess left unused. */
static void shrink_rows(data_table *t)
{
    size_t n = t->n_rows ? t->n_rows : 1;
    t->lines = xrealloc(t->lines, n * sizeof(uint32_t));
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *column = &t->columns[j];
        if (column->numbers)
            column->numbers = xrealloc(column->numbers, n * sizeof(double));
        if (column->codes)
            column->codes = xrealloc(column->codes, n * sizeof(int32_t));
    }
}

bool data_read_body(csv_scanner *sc, data_table *t, const spec *s, unsigned flags,
                    data_file *file, error_list *errors)
{
    loader ld = {sc, t, s, NULL, t->n_columns, 0, s->data.decimal_comma ? ',' : '.', flags,
                 false, file, errors};
    ld.capacity = estimate_rows(sc->p, sc->end);
    t->lines = alloc_rows(NULL, ld.capacity * sizeof(uint32_t));
    init_states(&ld);
    const char *body = sc->p;
    size_t body_line = sc->line;
    bool ok = read_rows(&ld);
    if (ok && (flags & DATA_LOAD_SCAFFOLD))
        scaffold_adjust(&ld);
    ok = ok && reread_switched(&ld, body, body_line);
    ok = ok && report_deferred(&ld);
    ok = ok && check_level_bound(&ld);
    shrink_rows(t);
    for (size_t j = 0; ok && j < ld.n_columns; j++) {
        column_state *st = &ld.states[j];
        st->column->kind = st->numeric ? DATA_NUMERIC : DATA_CATEGORY;
        if (!st->numeric)
            finish_levels(st, t->n_rows);
    }
    free_states(&ld);
    return ok;
}

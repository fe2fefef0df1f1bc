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

#include "loader.h"
#include "swar.h"

/* ---- the row loop --------------------------------------------------------- */

static void grow_rows(loader *ld, size_t need)
{
    size_t grown = ld->capacity + ld->capacity / 2;
    if (grown < need)
        grown = need;
    data_table *t = ld->t;
    t->lines = loader_alloc_rows(t->lines, grown * sizeof(uint32_t));
    for (size_t j = 0; j < ld->n_columns; j++) {
        data_column *column = ld->states[j].column;
        if (ld->states[j].numeric)
            column->numbers = loader_alloc_rows(column->numbers, grown * sizeof(double));
        else
            column->codes = loader_alloc_rows(column->codes, grown * sizeof(int32_t));
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
    return loader_store_cell(ld, j, row, &c);
}

/* The common numeric cell: an optional minus, digits, optionally a point
   and up to 7 digits, at most 15 digits in all, then stop. w < 10^15 and
   10^f are exact doubles, so one division rounds correctly (Clinger's fast
   path). Needs 32 readable bytes at p. */
static inline bool fast_number(const char *p, char mark, char stop, const char **end,
                               double *out)
{
    static const double powers[] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7};
    static const uint64_t scales[] = {1, 10, 100, 1000, 10000, 100000, 1000000, 10000000};
    bool negative = *p == '-';
    p += negative;
    uint64_t word = swar_load(p);
    uint64_t others = swar_non_digits(word);
    unsigned k;
    uint64_t w;
    if (others) {
        k = swar_first(others);
        w = k ? swar_digits(word, k) : 0;
    } else { /* eight digits and more */
        uint64_t next = swar_load(p + 8);
        others = swar_non_digits(next);
        if (!others)
            return false;
        unsigned more = swar_first(others);
        w = swar_digits(word, 8) * scales[more] + (more ? swar_digits(next, more) : 0);
        k = 8 + more;
    }
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
    if (k + f == 0 || k + f > 15 || (*p != stop && (stop != '\n' || *p != '\r')))
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
    const cache_entry *e = &st->cache[loader_cache_slot(first, second, length)];
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
    return loader_store_cell(ld, j, row, &c);
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
            if (ld->fast_numbers &&
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

bool loader_read_rows(loader *ld)
{
    csv_scanner *sc = ld->sc;
    size_t row = ld->t->n_rows;
    bool ok = true;
    while (ok && !(ld->stop && sc->p >= ld->stop) && csv_skip_blank_lines(sc)) {
        if (row == ld->capacity)
            grow_rows(ld, row + 1);
        ok = read_row(ld, row);
        if (ok)
            row++;
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
            if (!loader_store_category(ld, st, row, &c))
                return false;
        }
    }
    return true;
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
        void *values = loader_alloc_rows(NULL, ld->capacity * size);
        if (st->numeric)
            st->column->numbers = values;
        else
            st->column->codes = values;
    }
    char delimiter = ld->sc->delimiter;
    ld->fast_numbers = delimiter != ld->mark && !strchr("0123456789+-", delimiter);
    for (size_t i = 0; i < s->data.n_missing; i++) {
        double value;
        unsigned flags;
        const char *token = s->data.missing[i];
        const char *end = token + strlen(token);
        if (number_scan(token, end, ld->mark, &value, &flags) == end)
            ld->fast_numbers = false;
    }
}

void loader_init(loader *ld, csv_scanner *sc, data_table *t, const spec *s, unsigned flags,
                 data_file *file, error_list *errors)
{
    memset(ld, 0, sizeof *ld);
    ld->sc = sc;
    ld->t = t;
    ld->s = s;
    ld->n_columns = t->n_columns;
    ld->capacity = estimate_rows(sc->p, sc->end);
    ld->mark = s->data.decimal_comma ? ',' : '.';
    ld->flags = flags;
    ld->file = file;
    ld->errors = errors;
    t->lines = loader_alloc_rows(NULL, ld->capacity * sizeof(uint32_t));
    init_states(ld);
}

void loader_free(loader *ld)
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
    ld->states = NULL;
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
    loader ld;
    loader_init(&ld, sc, t, s, flags, file, errors);
    const char *body = sc->p;
    size_t body_line = sc->line;
    bool ok = flags & DATA_LOAD_SCAFFOLD ? loader_read_rows(&ld) : loader_read_rows_split(&ld);
    if (ok && (flags & DATA_LOAD_SCAFFOLD))
        loader_scaffold_adjust(&ld);
    ok = ok && reread_switched(&ld, body, body_line);
    ok = ok && loader_report_deferred(&ld);
    ok = ok && loader_check_level_bound(&ld);
    shrink_rows(t);
    for (size_t j = 0; ok && j < ld.n_columns; j++) {
        column_state *st = &ld.states[j];
        st->column->kind = st->numeric ? DATA_NUMERIC : DATA_CATEGORY;
        if (!st->numeric)
            loader_finish_levels(st, t->n_rows);
    }
    loader_free(&ld);
    return ok;
}

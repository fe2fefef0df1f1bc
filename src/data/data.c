/*
 * data.c — the CSV reader (RFC 4180: quoted fields, doubled quotes,
 * delimiters and line breaks inside quotes, CRLF or LF, optional UTF-8
 * byte-order mark, header row required).
 *
 * One scan tokenises a record into field spans; quoted fields that need
 * unescaping go to a per-record scratch buffer, so the file text is never
 * modified and no cell is allocated. Columns whose kind is inferred are
 * first read as numbers; if any value in such a column is not a number the
 * column becomes a category and the file is read once more with the kinds
 * fixed, so category levels keep their exact text.
 */
#include "data.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* ---- numbers ------------------------------------------------------------ */

static bool is_blank(char c)
{
    return c == ' ' || c == '\t';
}

bool data_parse_number(const char *text, size_t length, double *out)
{
    const char *p = text, *end = text + length;
    while (p < end && is_blank(*p))
        p++;
    while (end > p && is_blank(end[-1]))
        end--;
    const char *start = p;
    if (p < end && (*p == '+' || *p == '-'))
        p++;
    size_t digits = 0;
    while (p < end && *p >= '0' && *p <= '9')
        p++, digits++;
    if (p < end && *p == '.') {
        p++;
        while (p < end && *p >= '0' && *p <= '9')
            p++, digits++;
    }
    if (digits == 0)
        return false;
    if (p < end && (*p == 'e' || *p == 'E')) {
        p++;
        if (p < end && (*p == '+' || *p == '-'))
            p++;
        size_t exponent_digits = 0;
        while (p < end && *p >= '0' && *p <= '9')
            p++, exponent_digits++;
        if (exponent_digits == 0)
            return false;
    }
    if (p != end)
        return false;
    char small[64];
    size_t n = (size_t)(end - start);
    char *copy = n < sizeof small ? small : xmalloc(n + 1);
    memcpy(copy, start, n);
    copy[n] = '\0';
    /* The syntax was checked above, so strtod (C locale) sees only a plain
       decimal number and rounds it correctly. */
    *out = strtod(copy, NULL);
    if (copy != small)
        free(copy);
    /* "1e999" overflows to infinity, which no fit can use. */
    return isfinite(*out);
}

/* ---- the scanner -------------------------------------------------------- */

typedef struct {
    size_t offset;   /* into the text, or into scratch when in_scratch */
    size_t length;
    unsigned line;   /* where the field starts; below the record's first line
                        when a quoted line break came earlier in the record */
    unsigned column; /* 1-based byte column where the field starts */
    bool in_scratch;
} field_span;

typedef struct {
    const char *path;
    const char *text;
    const char *p;
    const char *end;
    const char *line_start;
    unsigned line;
    unsigned record_line; /* where the record last read starts */
    char delimiter;
    buf scratch;
    field_span *fields;
    size_t n_fields;
    size_t capacity;
    error_list *errors;
} scanner;

static src_mark scanner_mark(const scanner *sc, const char *at)
{
    src_mark mark = {sc->line, (unsigned)(at - sc->line_start) + 1};
    return mark;
}

static void push_field(scanner *sc, field_span span)
{
    xgrow((void **)&sc->fields, &sc->capacity, sc->n_fields + 1, sizeof(field_span));
    sc->fields[sc->n_fields++] = span;
}

/* Consumes a line break at p if there is one; returns whether it did. */
static bool take_line_break(scanner *sc)
{
    if (sc->p < sc->end && *sc->p == '\n') {
        sc->p++;
    } else if (sc->p < sc->end && *sc->p == '\r') {
        sc->p++;
        if (sc->p < sc->end && *sc->p == '\n')
            sc->p++;
    } else {
        return false;
    }
    sc->line++;
    sc->line_start = sc->p;
    return true;
}

static bool scan_quoted(scanner *sc, field_span *span)
{
    src_mark opened = scanner_mark(sc, sc->p);
    sc->p++;
    const char *content = sc->p;
    bool needs_copy = false;
    size_t scratch_start = sc->scratch.length;
    for (;;) {
        if (sc->p >= sc->end) {
            error_at(sc->errors, sc->path, opened,
                       "this quoted field is never closed; add the closing '\"'");
            return false;
        }
        char c = *sc->p;
        if (c == '"') {
            if (sc->p + 1 < sc->end && sc->p[1] == '"') {
                if (!needs_copy) {
                    buf_put(&sc->scratch, content, (size_t)(sc->p - content));
                    needs_copy = true;
                }
                buf_putc(&sc->scratch, '"');
                sc->p += 2;
                continue;
            }
            break;
        }
        if (needs_copy)
            buf_putc(&sc->scratch, c);
        sc->p++;
        if (c == '\n' || (c == '\r' && (sc->p >= sc->end || *sc->p != '\n'))) {
            sc->line++;
            sc->line_start = sc->p;
        }
    }
    if (needs_copy) {
        span->offset = scratch_start;
        span->length = sc->scratch.length - scratch_start;
        span->in_scratch = true;
    } else {
        span->offset = (size_t)(content - sc->text);
        span->length = (size_t)(sc->p - content);
    }
    sc->p++; /* the closing quote */
    if (sc->p < sc->end && *sc->p != sc->delimiter && *sc->p != '\n' && *sc->p != '\r') {
        error_at(sc->errors, sc->path, scanner_mark(sc, sc->p),
                   "unexpected text after a closing quote; quote the whole field and "
                   "double any quote inside it");
        return false;
    }
    return true;
}

/*
 * Reads one record into sc->fields. Returns 1 when a record was read, 0 at
 * the end of the text, -1 after recording an error. Blank lines are skipped.
 */
static int scan_record(scanner *sc)
{
    sc->n_fields = 0;
    buf_reset(&sc->scratch);
    while (sc->p < sc->end && (*sc->p == '\n' || *sc->p == '\r'))
        take_line_break(sc);
    if (sc->p >= sc->end)
        return 0;
    sc->record_line = sc->line;
    for (;;) {
        field_span span = {0, 0, sc->line, (unsigned)(sc->p - sc->line_start) + 1, false};
        if (sc->p < sc->end && *sc->p == '"') {
            if (!scan_quoted(sc, &span))
                return -1;
        } else {
            const char *start = sc->p;
            while (sc->p < sc->end && *sc->p != sc->delimiter && *sc->p != '\n' &&
                   *sc->p != '\r')
                sc->p++;
            span.offset = (size_t)(start - sc->text);
            span.length = (size_t)(sc->p - start);
        }
        push_field(sc, span);
        if (sc->p < sc->end && *sc->p == sc->delimiter) {
            sc->p++;
            continue;
        }
        take_line_break(sc);
        return 1;
    }
}

static const char *field_text(const scanner *sc, const field_span *span)
{
    return span->in_scratch ? sc->scratch.data + span->offset : sc->text + span->offset;
}

/* ---- level interning ---------------------------------------------------- */

typedef struct {
    buf names;          /* NUL-terminated level names, back to back */
    size_t *name_offsets;
    size_t n_levels;
    size_t offsets_capacity;
    uint32_t *slots;    /* open addressing: level index + 1, 0 = empty */
    size_t n_slots;
} level_set;

static uint64_t hash_bytes(const char *text, size_t length)
{
    uint64_t h = 1469598103934665603ULL;
    for (size_t i = 0; i < length; i++) {
        h ^= (unsigned char)text[i];
        h *= 1099511628211ULL;
    }
    return h;
}

static void level_set_free(level_set *set)
{
    buf_free(&set->names);
    free(set->name_offsets);
    free(set->slots);
    memset(set, 0, sizeof *set);
}

static void level_set_rehash(level_set *set)
{
    size_t n_slots = set->n_slots ? set->n_slots * 2 : 64;
    free(set->slots);
    set->slots = xcalloc(n_slots, sizeof(uint32_t));
    set->n_slots = n_slots;
    for (size_t i = 0; i < set->n_levels; i++) {
        const char *name = set->names.data + set->name_offsets[i];
        size_t slot = hash_bytes(name, strlen(name)) & (n_slots - 1);
        while (set->slots[slot])
            slot = (slot + 1) & (n_slots - 1);
        set->slots[slot] = (uint32_t)i + 1;
    }
}

static int32_t level_set_intern(level_set *set, const char *text, size_t length)
{
    if ((set->n_levels + 1) * 2 > set->n_slots)
        level_set_rehash(set);
    size_t slot = hash_bytes(text, length) & (set->n_slots - 1);
    while (set->slots[slot]) {
        size_t index = set->slots[slot] - 1;
        const char *name = set->names.data + set->name_offsets[index];
        if (strncmp(name, text, length) == 0 && name[length] == '\0')
            return (int32_t)index;
        slot = (slot + 1) & (set->n_slots - 1);
    }
    xgrow((void **)&set->name_offsets, &set->offsets_capacity, set->n_levels + 1,
          sizeof(size_t));
    set->name_offsets[set->n_levels] = set->names.length;
    buf_put(&set->names, text, length);
    buf_putc(&set->names, '\0');
    set->slots[slot] = (uint32_t)set->n_levels + 1;
    return (int32_t)set->n_levels++;
}

/* ---- loading ------------------------------------------------------------ */

typedef struct {
    data_kind kind;
    bool inferred;
    bool failed_numeric; /* an inferred column met a non-number */
    level_set levels;
} column_state;

static bool is_missing(const char *text, size_t length)
{
    for (size_t i = 0; i < length; i++)
        if (!is_blank(text[i]))
            return false;
    return true;
}

static void scanner_start(scanner *sc, const char *path, const char *text, size_t length,
                          error_list *errors)
{
    memset(sc, 0, sizeof *sc);
    sc->path = path;
    sc->text = text;
    sc->p = text;
    sc->end = text + length;
    sc->line_start = text;
    sc->line = 1;
    sc->delimiter = ',';
    sc->errors = errors;
    if (length >= 3 && memcmp(text, "\xEF\xBB\xBF", 3) == 0) {
        sc->p += 3;
        sc->line_start = sc->p;
    }
}

static bool read_header(scanner *sc, data_table *t)
{
    int got = scan_record(sc);
    if (got <= 0) {
        if (got == 0) {
            src_mark whole = {0, 0};
            error_at(sc->errors, sc->path, whole,
                       "the file is empty; it needs a header row naming the columns");
        }
        return false;
    }
    t->n_columns = sc->n_fields;
    t->columns = xcalloc(t->n_columns, sizeof *t->columns);
    bool ok = true;
    for (size_t j = 0; j < sc->n_fields; j++) {
        field_span *span = &sc->fields[j];
        src_mark at = {span->line, span->column};
        t->columns[j].name = xstrndup(field_text(sc, span), span->length);
        if (span->length == 0) {
            error_at(sc->errors, sc->path, at,
                       "column %zu has an empty name; give every column a header", j + 1);
            ok = false;
        }
        for (size_t k = 0; k < j && span->length; k++)
            if (strcmp(t->columns[k].name, t->columns[j].name) == 0) {
                error_at(sc->errors, sc->path, at,
                           "column name '%s' appears twice in the header; rename one",
                           t->columns[j].name);
                ok = false;
                break; /* one message per cell, however many earlier copies */
            }
    }
    return ok;
}

/* Doubles the room for rows in every column; returns the new capacity. */
static size_t grow_rows(data_table *t, const column_state *states, size_t capacity)
{
    size_t grown = capacity ? capacity * 2 : 1024;
    t->lines = xrealloc(t->lines, grown * sizeof(uint32_t));
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *column = &t->columns[j];
        if (states[j].kind == DATA_NUMERIC)
            column->numbers = xrealloc(column->numbers, grown * sizeof(double));
        else
            column->codes = xrealloc(column->codes, grown * sizeof(int32_t));
    }
    return grown;
}

/* Reads every record after the header. Returns false after an error. */
static bool read_rows(scanner *sc, data_table *t, column_state *states)
{
    size_t row_capacity = 0;
    for (;;) {
        int got = scan_record(sc);
        if (got < 0)
            return false;
        if (got == 0)
            return true;
        unsigned record_line = sc->record_line;
        if (sc->n_fields != t->n_columns) {
            src_mark at = {record_line, 1};
            error_at(sc->errors, sc->path, at,
                       "this row has %zu field%s but the header names %zu columns; "
                       "check for a missing or extra delimiter",
                       sc->n_fields, sc->n_fields == 1 ? "" : "s", t->n_columns);
            return false;
        }
        size_t row = t->n_rows;
        if (row == row_capacity)
            row_capacity = grow_rows(t, states, row_capacity);
        t->lines[row] = record_line;
        for (size_t j = 0; j < t->n_columns; j++) {
            const field_span *span = &sc->fields[j];
            const char *text = field_text(sc, span);
            data_column *column = &t->columns[j];
            bool missing = is_missing(text, span->length);
            if (missing)
                column->n_missing++;
            if (states[j].kind == DATA_CATEGORY) {
                column->codes[row] =
                    missing ? -1 : level_set_intern(&states[j].levels, text, span->length);
                continue;
            }
            double value = NAN;
            if (!missing && !states[j].failed_numeric &&
                !data_parse_number(text, span->length, &value)) {
                if (states[j].inferred) {
                    states[j].failed_numeric = true;
                } else {
                    src_mark at = {span->line, span->column};
                    int shown = span->length > 40 ? 40 : (int)span->length;
                    error_at(sc->errors, sc->path, at,
                               "'%.*s%s' in column '%s' is not a number, but the spec "
                               "declares the column numeric; correct the value or "
                               "declare the column 'kind: category'",
                               shown, text, span->length > 40 ? "…" : "", column->name);
                    return false;
                }
            }
            column->numbers[row] = value;
        }
        t->n_rows++;
    }
}

typedef struct {
    const char *name;
    size_t interned; /* index in the level set */
} level_entry;

static int compare_level_entries(const void *a, const void *b)
{
    return strcmp(((const level_entry *)a)->name, ((const level_entry *)b)->name);
}

/* Orders a category's levels by byte value and rewrites the row codes. */
static void finish_category(data_column *column, level_set *set, size_t n_rows)
{
    size_t n = set->n_levels;
    level_entry *entries = xmalloc(n * sizeof *entries);
    for (size_t i = 0; i < n; i++) {
        entries[i].name = set->names.data + set->name_offsets[i];
        entries[i].interned = i;
    }
    qsort(entries, n, sizeof *entries, compare_level_entries);
    int32_t *new_code = xmalloc(n * sizeof(int32_t));
    column->levels = xmalloc(n * sizeof(char *));
    column->level_counts = xcalloc(n, sizeof(size_t));
    column->n_levels = n;
    for (size_t rank = 0; rank < n; rank++) {
        column->levels[rank] = xstrdup(entries[rank].name);
        new_code[entries[rank].interned] = (int32_t)rank;
    }
    for (size_t row = 0; row < n_rows; row++)
        if (column->codes[row] >= 0) {
            column->codes[row] = new_code[column->codes[row]];
            column->level_counts[column->codes[row]]++;
        }
    free(new_code);
    free(entries);
}

static void choose_reference(data_column *column, const spec_column *declared,
                             const char *spec_path, error_list *errors)
{
    column->reference = 0;
    if (!declared || !declared->reference)
        return;
    for (size_t i = 0; i < column->n_levels; i++)
        if (strcmp(column->levels[i], declared->reference) == 0) {
            column->reference = i;
            return;
        }
    buf list;
    buf_init(&list);
    for (size_t i = 0; i < column->n_levels && i < 10; i++)
        buf_printf(&list, "%s'%s'", i ? ", " : "", column->levels[i]);
    if (column->n_levels > 10)
        buf_puts(&list, ", …");
    error_at(errors, spec_path, declared->reference_at,
               "reference level '%s' does not occur in column '%s'; its levels are %s",
               declared->reference, column->name, list.length ? list.data : "(none)");
    buf_free(&list);
}

static void reset_rows(data_table *t)
{
    for (size_t j = 0; j < t->n_columns; j++) {
        free(t->columns[j].numbers);
        free(t->columns[j].codes);
        t->columns[j].numbers = NULL;
        t->columns[j].codes = NULL;
        t->columns[j].n_missing = 0;
    }
    free(t->lines);
    t->lines = NULL;
    t->n_rows = 0;
}

static void check_declared_columns(const data_table *t, const spec *s, error_list *errors)
{
    for (size_t i = 0; i < s->data.n_columns; i++)
        if (!data_find(t, s->data.columns[i].name))
            error_at(errors, s->path, s->data.columns[i].at,
                       "column '%s' is declared in the spec but not found in %s; "
                       "check the spelling against the file's header",
                       s->data.columns[i].name, t->path);
}

data_table *data_parse(const char *path, const char *text, size_t length, const spec *s,
                       error_list *errors)
{
    size_t errors_before = errors->count;
    data_table *t = xcalloc(1, sizeof *t);
    t->path = xstrdup(path);
    scanner sc;
    scanner_start(&sc, path, text, length, errors);
    const char *body = NULL;
    unsigned body_line = 0;
    column_state *states = NULL;
    if (!read_header(&sc, t))
        goto done;
    body = sc.p;
    body_line = sc.line;
    states = xcalloc(t->n_columns, sizeof *states);
    bool retry = false;
    for (size_t j = 0; j < t->n_columns; j++) {
        const spec_column *declared = spec_find_column(s, t->columns[j].name);
        spec_kind kind = declared ? declared->kind : SPEC_KIND_INFER;
        if (declared && declared->reference && kind == SPEC_KIND_INFER)
            kind = SPEC_KIND_CATEGORY;
        states[j].kind = kind == SPEC_KIND_CATEGORY ? DATA_CATEGORY : DATA_NUMERIC;
        states[j].inferred = kind == SPEC_KIND_INFER;
    }
    for (int pass = 0; pass < 2; pass++) {
        if (!read_rows(&sc, t, states))
            goto done;
        retry = false;
        for (size_t j = 0; j < t->n_columns; j++)
            if (states[j].failed_numeric) {
                states[j].kind = DATA_CATEGORY;
                states[j].failed_numeric = false;
                retry = true;
            }
        if (!retry)
            break;
        reset_rows(t);
        sc.p = body;
        sc.line = body_line;
        sc.line_start = body;
    }
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *column = &t->columns[j];
        column->kind = states[j].kind;
        if (column->kind == DATA_CATEGORY) {
            finish_category(column, &states[j].levels, t->n_rows);
            choose_reference(column, spec_find_column(s, column->name), s->path, errors);
        }
    }
    check_declared_columns(t, s, errors);
done:
    if (states)
        for (size_t j = 0; j < t->n_columns; j++)
            level_set_free(&states[j].levels);
    free(states);
    buf_free(&sc.scratch);
    free(sc.fields);
    if (errors->count > errors_before) {
        data_table_free(t);
        return NULL;
    }
    return t;
}

data_table *data_load(const spec *s, error_list *errors)
{
    size_t length;
    const char *why;
    char *text = file_read_all(s->data.resolved, &length, &why);
    if (!text) {
        error_at(errors, s->path, s->data.path_at,
                   "cannot read the data file '%s': %s; check data.path, which is "
                   "relative to the spec's folder",
                   s->data.resolved, why);
        return NULL;
    }
    data_table *t = data_parse(s->data.resolved, text, length, s, errors);
    free(text);
    return t;
}

const data_column *data_find(const data_table *t, const char *name)
{
    for (size_t j = 0; j < t->n_columns; j++)
        if (strcmp(t->columns[j].name, name) == 0)
            return &t->columns[j];
    return NULL;
}

void data_table_free(data_table *t)
{
    if (!t)
        return;
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *column = &t->columns[j];
        free(column->name);
        free(column->numbers);
        free(column->codes);
        for (size_t i = 0; i < column->n_levels; i++)
            free(column->levels[i]);
        free(column->levels);
        free(column->level_counts);
    }
    free(t->columns);
    free(t->lines);
    free(t->path);
    free(t);
}

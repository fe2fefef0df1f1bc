/*
 * data.c — loading a table, start to finish: the file's SHA-256 (checked
 * against the spec's pin), the header, the rows (read.c), then the where
 * filter, the levels and references of the kept rows, the derived columns
 * (rows.c) and the missing-cell counts. The spec's column declarations and
 * its where and derive sections are checked against the file on the way,
 * with errors located in the spec.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "sql.h"

bool data_parse_number(const char *text, size_t length, double *out)
{
    while (length && (*text == ' ' || *text == '\t'))
        text++, length--;
    while (length && (text[length - 1] == ' ' || text[length - 1] == '\t'))
        length--;
    double value = 0;
    unsigned flags = 0;
    if (number_scan(text, text + length, '.', &value, &flags) != text + length ||
        (flags & NUMBER_OVERFLOW))
        return false;
    *out = value;
    return true;
}

/* ---- the header ------------------------------------------------------------ */

static bool check_header_name(csv_scanner *sc, data_table *t, level_set *seen, size_t j)
{
    const field_span *span = &sc->fields[j];
    const char *text = csv_field_text(sc, span);
    src_mark at = csv_mark(span->line, span->column);
    const char *bad = data_utf8_invalid(span->raw, span->raw_end);
    if (bad) {
        csv_utf8_error(sc, span->raw, span->line, span->column, bad);
        return false;
    }
    bool blank = true;
    for (size_t i = 0; i < span->length; i++)
        blank = blank && (text[i] == ' ' || text[i] == '\t');
    if (blank) {
        error_at(sc->errors, sc->path, at,
                 "column %zu has an empty name; give every column a header", j + 1);
        return false;
    }
    bool added;
    level_set_intern(seen, text, span->length, &added);
    if (!added)
        error_at(sc->errors, sc->path, at,
                 "column name '%s' appears twice in the header; rename one", t->columns[j].name);
    return added;
}

static bool read_header(csv_scanner *sc, data_table *t)
{
    int got = csv_scan_record(sc);
    if (got == 0)
        error_at(sc->errors, sc->path, csv_mark(0, 0),
                 "the file is empty; it needs a header row naming the columns");
    if (got <= 0)
        return false;
    t->n_columns = sc->n_fields;
    t->columns = xcalloc(t->n_columns, sizeof *t->columns);
    level_set seen;
    memset(&seen, 0, sizeof seen);
    bool ok = true;
    for (size_t j = 0; j < sc->n_fields; j++) {
        const field_span *span = &sc->fields[j];
        t->columns[j].name = xstrndup(csv_field_text(sc, span), span->length);
        ok = check_header_name(sc, t, &seen, j) && ok;
    }
    level_set_free(&seen);
    return ok;
}

/* A header of one column that another delimiter would split: the file
   is read with the wrong delimiter. */
static bool one_column_header(const csv_scanner *sc, const data_table *t)
{
    if (t->n_columns != 1)
        return true;
    buf hint, name;
    buf_init(&hint);
    buf_init(&name);
    bool wrong = data_sniff_hint(&hint, sc->sniffed, sc->data) && sc->sniffed->header_fields > 1;
    if (wrong) {
        csv_quote_value(&name, t->columns[0].name, strlen(t->columns[0].name));
        error_at(sc->errors, sc->path, csv_mark(1, 1), "the header names one column, '%s'; %s",
                 name.data, hint.data);
    }
    buf_free(&hint);
    buf_free(&name);
    return !wrong;
}

static void check_declared_columns(const data_table *t, const spec *s, error_list *errors)
{
    for (size_t i = 0; i < s->data.n_columns; i++) {
        if (data_find(t, s->data.columns[i].name))
            continue;
        buf hint;
        buf_init(&hint);
        data_suggest_column(&hint, t, s->data.columns[i].name);
        error_at(errors, s->path, s->data.columns[i].at,
                 "column '%s' is declared in the spec but not found in %s%s",
                 s->data.columns[i].name, t->path, hint.data);
        buf_free(&hint);
    }
}

/* ---- levels of the kept rows ---------------------------------------------- */

/* Counts each level's rows and keeps only levels that have some; the
   others (declared but never seen, or seen only in removed rows) are
   listed as absent. */
static void settle_levels(data_column *c, size_t n_rows)
{
    size_t *counts = xcalloc(c->n_levels ? c->n_levels : 1, sizeof(size_t));
    for (size_t row = 0; row < n_rows; row++)
        if (c->codes[row] >= 0)
            counts[c->codes[row]]++;
    int32_t *new_code = xmalloc((c->n_levels ? c->n_levels : 1) * sizeof(int32_t));
    size_t kept = 0;
    for (size_t i = 0; i < c->n_levels; i++) {
        if (counts[i] == 0) {
            new_code[i] = -1;
            c->absent_levels =
                xrealloc(c->absent_levels, (c->n_absent_levels + 1) * sizeof(char *));
            c->absent_levels[c->n_absent_levels++] = c->levels[i];
            continue;
        }
        new_code[i] = (int32_t)kept;
        counts[kept] = counts[i];
        c->levels[kept++] = c->levels[i];
    }
    if (kept < c->n_levels)
        for (size_t row = 0; row < n_rows; row++)
            if (c->codes[row] >= 0)
                c->codes[row] = new_code[c->codes[row]];
    c->n_levels = kept;
    c->level_counts = counts;
    free(new_code);
}

static void list_levels(buf *out, const data_column *c)
{
    for (size_t i = 0; i < c->n_levels && i < 10; i++)
        buf_printf(out, "%s'%s'", i ? ", " : "", c->levels[i]);
    if (c->n_levels > 10)
        buf_puts(out, ", …");
    if (c->n_levels == 0)
        buf_puts(out, "(none)");
}

static bool choose_reference(data_column *c, const spec_column *declared, const spec *s,
                             error_list *errors)
{
    c->reference = 0;
    if (!declared || !declared->reference)
        return true;
    for (size_t i = 0; i < c->n_levels; i++)
        if (strcmp(c->levels[i], declared->reference) == 0) {
            c->reference = i;
            return true;
        }
    buf list;
    buf_init(&list);
    list_levels(&list, c);
    bool absent = false;
    for (size_t i = 0; i < c->n_absent_levels; i++)
        absent = absent || strcmp(c->absent_levels[i], declared->reference) == 0;
    if (absent)
        error_at(errors, s->path, declared->reference_at,
                 "reference level '%s' of column '%s' has no rows among the rows kept; "
                 "choose one of %s",
                 declared->reference, c->name, list.data);
    else
        error_at(errors, s->path, declared->reference_at,
                 "reference level '%s' does not occur in column '%s'; its levels are %s",
                 declared->reference, c->name, list.data);
    buf_free(&list);
    return false;
}

static void count_missing(data_table *t)
{
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *c = &t->columns[j];
        c->n_missing = 0;
        for (size_t row = 0; row < t->n_rows; row++)
            c->n_missing += c->kind == DATA_NUMERIC ? isnan(c->numbers[row]) != 0
                                                    : c->codes[row] < 0;
    }
}

/* ---- loading ------------------------------------------------------------------ */

static bool check_digest(data_table *t, const char *text, size_t length, const spec *s,
                         unsigned flags, error_list *errors)
{
    if (!s->data.sha256 && (flags & DATA_LOAD_NO_DIGEST))
        return true;
    data_sha256_hex(text, length, t->sha256);
    if (!s->data.sha256 || strcmp(s->data.sha256, t->sha256) == 0)
        return true;
    error_at(errors, s->path, s->data.sha256_at,
             "the SHA-256 of %s is %s, but data.sha256 pins %s; the file has changed since "
             "the pin was written: check the data, then update the pin",
             t->path, t->sha256, s->data.sha256);
    return false;
}

/* Each numeric column's count, range and mean over the kept rows. */
static void summarize_numbers(data_table *t)
{
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *c = &t->columns[j];
        if (c->kind != DATA_NUMERIC)
            continue;
        double low = INFINITY, high = -INFINITY;
        long double sum = 0.0L;
        size_t count = 0;
        for (size_t row = 0; row < t->n_rows; row++) {
            double x = c->numbers[row];
            if (isnan(x))
                continue;
            low = fmin(low, x);
            high = fmax(high, x);
            sum += x;
            count++;
        }
        c->n_values = count;
        c->value_min = count ? low : NAN;
        c->value_max = count ? high : NAN;
        c->value_mean = count ? (double)(sum / count) : NAN;
    }
}

/* Where, levels, references, derived columns and the numeric columns'
   summaries, once the rows are in. */
static bool finish_table(data_table *t, const spec *s, unsigned flags, error_list *errors)
{
    if (!data_check_where(t, s, errors))
        return false;
    data_apply_where(t, s);
    if (s->where && t->n_rows == 0) {
        error_at(errors, s->path, s->where->at,
                 "where keeps none of the %zu rows of %s, so there is nothing to fit; loosen "
                 "its conditions",
                 t->rows_read, t->path);
        return false;
    }
    data_settle_dates(t, s);
    if (t->n_removed > 0)
        count_missing(t); /* the reader counted them over every row */
    bool ok = true;
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *c = &t->columns[j];
        if (c->kind != DATA_CATEGORY)
            continue;
        const spec_column *declared = spec_find_column(s, c->name);
        settle_levels(c, t->n_rows);
        ok = choose_reference(c, declared, s, errors) && ok;
    }
    ok = ok && data_apply_derive(t, s, errors);
    if (ok && !(flags & DATA_LOAD_NO_SUMMARY))
        summarize_numbers(t);
    return ok;
}

/* Row positions of a database source in place of the text's lines. */
static void apply_positions(data_table *t, const data_positions *positions)
{
    size_t row = 0;
    for (size_t i = 0; i < t->n_rows; i++) {
        while (row + 1 < positions->n_rows && positions->row_lines[row + 1] <= t->lines[i])
            row++;
        t->lines[i] = positions->positions ? positions->positions[row] : (uint32_t)(row + 1);
    }
}

static data_table *load_text(const char *path, const char *text, size_t length,
                             data_file *file, const spec *s, unsigned flags,
                             const data_positions *positions, error_list *errors)
{
    size_t errors_before = errors->count;
    data_table *t = xcalloc(1, sizeof *t);
    t->path = xstrdup(path);
    t->file_bytes = length;
    t->position_word = positions ? positions->word : "line";
    data_sniffed sniffed;
    data_sniff(text, length, &sniffed);
    if (sniffed.encoding)
        error_at(errors, path, csv_mark(1, 1),
                 "this file is %s, which fitproof does not read; save it as UTF-8",
                 sniffed.encoding);
    else if (check_digest(t, text, length, s, flags, errors)) {
        csv_scanner sc;
        csv_start(&sc, path, text, length, s->data.delimiter ? s->data.delimiter : ',',
                  errors);
        sc.sniffed = &sniffed;
        sc.data = &s->data;
        bool ok = read_header(&sc, t) && one_column_header(&sc, t);
        t->n_file_columns = t->n_columns;
        /* The header may span lines (a quoted line break), and the file
           may end without a line break after it. */
        bool header_ended_line = sc.p > sc.text && (sc.p[-1] == '\n' || sc.p[-1] == '\r');
        size_t first_data_line = sc.line + (header_ended_line ? 0 : 1);
        if (ok) {
            check_declared_columns(t, s, errors);
            data_check_derive_names(t, s, errors);
            ok = data_read_body(&sc, t, s, flags, file, errors);
            if (ok && !(flags & DATA_LOAD_SCAFFOLD))
                ok = data_check_type_traps(t, s, errors);
        }
        if (ok && positions)
            apply_positions(t, positions);
        if (ok && t->rows_read == 0) {
            error_at(errors, path, csv_mark(first_data_line, 1),
                     "the file has a header and no data rows; add the rows below the header, "
                     "or point data.path at the file that holds them");
            ok = false;
        }
        csv_finish(&sc);
        if (ok && errors->count == errors_before)
            finish_table(t, s, flags, errors);
    }
    if (errors->count > errors_before) {
        data_table_free(t);
        return NULL;
    }
    return t;
}

data_table *data_parse(const char *path, const char *text, size_t length, const spec *s,
                       error_list *errors)
{
    return load_text(path, text, length, NULL, s, 0, NULL, errors);
}

data_table *data_load_rows_text(const char *path, const char *text, size_t length,
                                const spec *s, unsigned flags, const data_positions *positions,
                                error_list *errors)
{
    return load_text(path, text, length, NULL, s, flags, positions, errors);
}

data_table *data_load_with(const spec *s, unsigned flags, error_list *errors)
{
    if (s->data.stored_rows)
        return data_load_stored(s, flags, errors);
    if (s->data.source == SPEC_SOURCE_SQLITE)
        return data_load_sqlite(s, flags, errors);
    if (s->data.source == SPEC_SOURCE_POSTGRES)
        return data_load_postgres(s, flags, errors);
    if (s->data.source == SPEC_SOURCE_XLSX)
        return data_load_xlsx(s, flags, errors);
    data_file file;
    const char *why;
    if (!data_file_open(s->data.resolved, &file, &why)) {
        /* The path is worth checking only when the file cannot be opened;
           the other reasons say what to do themselves. */
        bool unreachable = access(s->data.resolved, R_OK) != 0;
        error_at(errors, s->path, s->data.path_at, "cannot read the data file '%s': %s%s",
                 s->data.resolved, why,
                 unreachable ? "; check data.path, which is relative to the spec's folder"
                             : "");
        return NULL;
    }
    data_table *t =
        load_text(s->data.resolved, file.bytes, file.length, &file, s, flags, NULL, errors);
    data_file_close(&file);
    return t;
}

data_table *data_load(const spec *s, error_list *errors)
{
    return data_load_with(s, 0, errors);
}

const data_column *data_find(const data_table *t, const char *name)
{
    for (size_t j = 0; j < t->n_columns; j++)
        if (strcmp(t->columns[j].name, name) == 0)
            return &t->columns[j];
    return NULL;
}

static void free_strings(char **items, size_t count)
{
    for (size_t i = 0; i < count; i++)
        free(items[i]);
    free(items);
}

void data_table_free(data_table *t)
{
    if (!t)
        return;
    for (size_t j = 0; j < t->n_columns; j++) {
        data_column *c = &t->columns[j];
        free(c->name);
        free(c->numbers);
        free(c->codes);
        free_strings(c->levels, c->n_levels);
        free_strings(c->absent_levels, c->n_absent_levels);
        free(c->level_counts);
        free(c->first_text);
    }
    free(t->columns);
    free(t->lines);
    free(t->removed_lines);
    free_strings(t->suggested_missing, t->n_suggested_missing);
    free(t->source_query);
    free(t->source_version);
    free(t->source_sheet);
    free(t->stored_text);
    free(t->stored_kinds);
    free(t->path);
    free(t);
}

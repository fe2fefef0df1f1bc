/*
 * spec.c — reads the YAML spec into a spec struct: the top level, metadata,
 * data (format, columns, derived columns, row filters) and models. The
 * output-side sections (checks, compare, predict, report) are in
 * outputs.c. Every problem is recorded with its line and column and the
 * parse goes on, so the user sees all of them at once.
 *
 * YAML aliases and anchors are refused in a first pass over the parser's
 * events: a spec is short and hand-written, and aliases are the route to
 * inputs that expand enormously. So is a second YAML document in the file.
 */
#include "reader.h"

#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../util/dates.h"

/* ---- small helpers ------------------------------------------------------ */

static void free_strings(char **items, size_t count)
{
    for (size_t i = 0; i < count; i++)
        free(items[i]);
    free(items);
}

static bool is_hex_digest(const char *text)
{
    if (strlen(text) != 64)
        return false;
    for (const char *p = text; *p; p++)
        if (!strchr("0123456789abcdefABCDEF", *p))
            return false;
    return true;
}

/* ---- meta --------------------------------------------------------------- */

static void parse_meta(reader *rd, node *map, spec *s)
{
    if (!reader_expect(rd, map, YAML_MAPPING_NODE, "meta"))
        return;
    size_t count = reader_count(map);
    s->meta = xcalloc(count ? count : 1, sizeof *s->meta);
    unsigned document_seen = 0;
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        node *key = reader_node(rd, pair->key);
        node *value = reader_node(rd, pair->value);
        if (!reader_expect(rd, key, YAML_SCALAR_NODE, "a meta key"))
            continue;
        for (size_t i = 0; i < s->n_meta; i++)
            if (strcmp(s->meta[i].key, reader_text(key)) == 0)
                error_at(rd->errors, rd->path, reader_mark(key),
                         "key '%s' appears twice in meta; keep one", reader_text(key));
        int document_key = spec_document_key(reader_text(key));
        if (document_key >= 0) {
            if (document_seen & (1u << document_key))
                error_at(rd->errors, rd->path, reader_mark(key),
                         "key '%s' appears twice in meta; keep one", reader_text(key));
            else
                spec_parse_document_key(rd, key, value, s);
            document_seen |= 1u << document_key;
            continue;
        }
        char *text = reader_string(rd, value, "a meta value");
        if (!text)
            continue;
        s->meta[s->n_meta].key = xstrdup(reader_text(key));
        s->meta[s->n_meta].value = text;
        s->n_meta++;
    }
}

/* ---- data.columns ------------------------------------------------------ */

static const char *const column_keys[] = {"kind", "unit",   "label", "levels", "reference",
                                          "step", "origin", "at",    NULL};
static const char *const kind_names[] = {"numeric", "category", "date", NULL};

static void parse_origin(reader *rd, node *value, spec_column *column)
{
    column->origin_at = reader_mark(value);
    char *text = reader_string(rd, value, "a date column's origin");
    date_value date;
    if (text && (!date_parse(text, strlen(text), &date) || date.has_time))
        error_at(rd->errors, rd->path, column->origin_at,
                 "origin must be a date written YYYY-MM-DD, found '%s'", text);
    else if (text)
        column->origin = date.days;
    free(text);
}

static void column_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_column *column = target;
    (void)key;
    switch (key_index) {
    case 0: {
        int kind = reader_choice(rd, value, "column kind", kind_names);
        if (kind >= 0)
            column->kind = kind == 0   ? SPEC_KIND_NUMERIC
                           : kind == 1 ? SPEC_KIND_CATEGORY
                                       : SPEC_KIND_DATE;
        break;
    }
    case 1:
        column->unit = reader_string(rd, value, "a column's unit");
        column->unit_at = reader_mark(value);
        break;
    case 2: column->label = reader_string(rd, value, "a column's label"); break;
    case 3:
        column->levels_at = reader_mark(value);
        reader_string_list(rd, value, "a column's levels", false, &column->levels,
                           &column->n_levels, NULL);
        break;
    case 4:
        column->reference = reader_string(rd, value, "a reference level");
        column->reference_at = reader_mark(value);
        break;
    case 5: reader_real(rd, value, "a column's step", 0, 1e300, true, &column->step); break;
    case 6: parse_origin(rd, value, column); break;
    case 7: {
        column->at_values_at = reader_mark(value);
        if (!reader_expect(rd, value, YAML_SEQUENCE_NODE, "a column's at (a list of numbers)"))
            break;
        size_t n = reader_count(value);
        if (n == 0 || n > 8) {
            error_at(rd->errors, rd->path, column->at_values_at,
                     "'at' lists the values where interactions and curves are read: give 1 "
                     "to 8 numbers, as in at: [7, 28, 56]");
            break;
        }
        column->at_values = xcalloc(n, sizeof(double));
        for (size_t i = 0; i < n; i++)
            if (reader_real(rd, reader_item(rd, value, i), "a value of 'at'", -1e300, 1e300,
                            false, &column->at_values[i]))
                column->n_at_values++;
        break;
    }
    }
}

/* A date column counts days unless its unit says hours or weeks. */
static void check_date_column(reader *rd, spec_column *column)
{
    static const char *const units[] = {"day", "days", "hour", "hours", "week", "weeks", NULL};
    static const spec_date_unit unit_of[] = {SPEC_DATE_DAY,  SPEC_DATE_DAY,  SPEC_DATE_HOUR,
                                             SPEC_DATE_HOUR, SPEC_DATE_WEEK, SPEC_DATE_WEEK};
    if (column->kind != SPEC_KIND_DATE) {
        if (!isnan(column->origin))
            error_at(rd->errors, rd->path, column->origin_at,
                     "only a date column has an origin; declare '%s' 'kind: date' or remove "
                     "'origin'",
                     column->name);
        return;
    }
    if (column->levels || column->reference)
        error_at(rd->errors, rd->path, column->levels ? column->levels_at : column->reference_at,
                 "column '%s' is a date and cannot have %s; remove the key", column->name,
                 column->levels ? "levels" : "a reference level");
    if (!column->unit) {
        column->unit = xstrdup("day");
        return;
    }
    for (size_t i = 0; units[i]; i++)
        if (strcmp(column->unit, units[i]) == 0) {
            column->date_unit = unit_of[i];
            free(column->unit);
            column->unit = xstrdup(units[i & ~(size_t)1]);
            return;
        }
    error_at(rd->errors, rd->path, column->unit_at,
             "a date column counts days, hours or weeks from its origin; write unit: day, "
             "unit: hour or unit: week, not '%s'",
             column->unit);
}

static void check_column(reader *rd, spec_column *column)
{
    if (column->at_values && column->kind == SPEC_KIND_CATEGORY)
        error_at(rd->errors, rd->path, column->at_values_at,
                 "column '%s' is a category: its readings are at every level, so 'at' does "
                 "not apply; remove 'at'",
                 column->name);
    if (column->step > 0 && column->kind == SPEC_KIND_CATEGORY)
        error_at(rd->errors, rd->path, column->at,
                 "column '%s' is a category and cannot have a step; remove 'step'",
                 column->name);
    if ((column->reference || column->levels) && column->kind == SPEC_KIND_NUMERIC)
        error_at(rd->errors, rd->path, column->levels ? column->levels_at : column->reference_at,
                 "column '%s' is numeric and cannot have %s; declare it 'kind: category' "
                 "or remove the key",
                 column->name, column->levels ? "levels" : "a reference level");
    if (column->levels || column->reference)
        if (column->kind == SPEC_KIND_INFER)
            column->kind = SPEC_KIND_CATEGORY;
    for (size_t i = 0; i < column->n_levels; i++)
        for (size_t j = 0; j < i; j++)
            if (strcmp(column->levels[i], column->levels[j]) == 0)
                error_at(rd->errors, rd->path, column->levels_at,
                         "level '%s' is listed twice in the levels of '%s'; list each once",
                         column->levels[i], column->name);
    if (column->reference && column->levels) {
        bool found = false;
        for (size_t i = 0; i < column->n_levels; i++)
            found = found || strcmp(column->levels[i], column->reference) == 0;
        if (!found)
            error_at(rd->errors, rd->path, column->reference_at,
                     "reference level '%s' is not among the levels listed for '%s'; add it "
                     "to levels or choose one of them",
                     column->reference, column->name);
    }
}

static void parse_columns(reader *rd, node *map, spec *s)
{
    if (!reader_expect(rd, map, YAML_MAPPING_NODE, "data.columns"))
        return;
    s->data.columns = xcalloc(reader_count(map) ? reader_count(map) : 1, sizeof(spec_column));
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        node *key = reader_node(rd, pair->key);
        node *value = reader_node(rd, pair->value);
        if (!reader_expect(rd, key, YAML_SCALAR_NODE, "a column name"))
            continue;
        if (spec_find_column(s, reader_text(key))) {
            error_at(rd->errors, rd->path, reader_mark(key),
                     "column '%s' is declared twice; merge the two declarations",
                     reader_text(key));
            continue;
        }
        spec_column *column = &s->data.columns[s->data.n_columns++];
        column->name = xstrdup(reader_text(key));
        column->at = reader_mark(key);
        column->origin = NAN;
        if (reader_expect(rd, value, YAML_MAPPING_NODE, "a column declaration"))
            reader_walk(rd, value, "a column declaration", column_keys, column_pair, column);
        check_column(rd, column);
        check_date_column(rd, column);
    }
}

/* ---- data --------------------------------------------------------------- */

static const char *const data_keys[] = {
    "path",  "format", "delimiter", "decimal", "missing",   "sha256",            "rows_are",
    "columns", "sqlite", "postgres", "query", "table", "key", "time_zone", "statement_timeout",
    "sheet", "header_row", "range", "pushdown", NULL};
static const char *const format_names[] = {"csv", "tsv", NULL};
static const char *const decimal_names[] = {"point", "comma", NULL};

static void parse_delimiter(reader *rd, node *value, spec_data *data)
{
    if (!reader_expect(rd, value, YAML_SCALAR_NODE, "data.delimiter"))
        return;
    const char *text = reader_text(value);
    if (strcmp(text, "tab") == 0)
        data->delimiter = '\t';
    else if (strlen(text) == 1 && text[0] != '"' && text[0] != '\n' && text[0] != '\r')
        data->delimiter = text[0];
    else
        error_at(rd->errors, rd->path, reader_mark(value),
                 "data.delimiter must be one character (or the word tab), found '%s'; "
                 "quote it in YAML, as in delimiter: \";\"",
                 text);
}

/* A cell reference's column letters and row digits (the row optional):
   A1 is column 1, row 1. */
static const char *parse_cell(const char *p, unsigned *column, unsigned *row)
{
    unsigned long c = 0, r = 0;
    const char *start = p;
    while (*p >= 'A' && *p <= 'Z' && p - start < 3)
        c = c * 26 + (unsigned long)(*p++ - 'A' + 1);
    if (p == start || c > 16384)
        return NULL;
    const char *digits = p;
    while (*p >= '0' && *p <= '9' && p - digits < 7)
        r = r * 10 + (unsigned long)(*p++ - '0');
    if ((p > digits && (r == 0 || r > 1048576)) || (*digits == '0' && p > digits))
        return NULL;
    *column = (unsigned)c;
    *row = (unsigned)r;
    return p;
}

static bool parse_range(const char *text, spec_data *data)
{
    unsigned c1, r1, c2, r2;
    const char *p = parse_cell(text, &c1, &r1);
    if (!p || *p != ':')
        return false;
    p = parse_cell(p + 1, &c2, &r2);
    if (!p || *p || c2 < c1 || (r2 && r2 < r1) || (!r1 != !r2))
        return false;
    data->range_first_column = c1;
    data->range_last_column = c2;
    data->range_first_row = r1;
    data->range_last_row = r2;
    return true;
}

static void read_pushdown(reader *rd, node *value, spec_data *data)
{
    if (!reader_expect(rd, value, YAML_SCALAR_NODE, "data.pushdown"))
        return;
    const char *text = reader_text(value);
    if (strcmp(text, "auto") == 0)
        data->pushdown = SPEC_PUSHDOWN_AUTO;
    else if (strcmp(text, "true") == 0)
        data->pushdown = SPEC_PUSHDOWN_ON;
    else if (strcmp(text, "false") != 0)
        error_at(rd->errors, rd->path, reader_mark(value),
                 "data.pushdown must be true, false or auto, found '%s'", text);
}

static void data_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec *s = target;
    spec_data *data = &s->data;
    (void)key;
    switch (key_index) {
    case 0:
        free(data->path); /* sqlite: came first; the clash is reported later */
        data->path = reader_string(rd, value, "data.path");
        data->path_at = reader_mark(value);
        break;
    case 1: {
        int format = reader_choice(rd, value, "data format", format_names);
        if (format >= 0)
            data->format = format == 0 ? SPEC_FORMAT_CSV : SPEC_FORMAT_TSV;
        break;
    }
    case 2: parse_delimiter(rd, value, data); break;
    case 3: data->decimal_comma = reader_choice(rd, value, "decimal mark", decimal_names) == 1;
        break;
    case 4:
        reader_string_list(rd, value, "data.missing", true, &data->missing, &data->n_missing,
                           NULL);
        break;
    case 5:
        data->sha256 = reader_string(rd, value, "data.sha256");
        data->sha256_at = reader_mark(value);
        if (data->sha256 && !is_hex_digest(data->sha256)) {
            error_at(rd->errors, rd->path, data->sha256_at,
                     "data.sha256 must be 64 hexadecimal digits (the SHA-256 of the data "
                     "file, as sha256sum prints it)");
        } else if (data->sha256) {
            for (char *p = data->sha256; *p; p++)
                if (*p >= 'A' && *p <= 'F')
                    *p = (char)(*p - 'A' + 'a');
        }
        break;
    case 6: data->rows_are = reader_string(rd, value, "data.rows_are"); break;
    case 7: parse_columns(rd, value, s); break;
    case 8:
        data->source = SPEC_SOURCE_SQLITE;
        free(data->path);
        data->path = reader_string(rd, value, "data.sqlite");
        data->path_at = reader_mark(value);
        break;
    case 9:
        data->source = SPEC_SOURCE_POSTGRES;
        data->connection = reader_string(rd, value, "data.postgres");
        data->connection_at = reader_mark(value);
        break;
    case 10:
        data->query = reader_string(rd, value, "data.query");
        data->query_at = reader_mark(value);
        break;
    case 11:
        data->table = reader_string(rd, value, "data.table");
        data->table_at = reader_mark(value);
        break;
    case 12:
        data->key = reader_string(rd, value, "data.key");
        data->key_at = reader_mark(value);
        break;
    case 13:
        data->time_zone = reader_string(rd, value, "data.time_zone");
        data->time_zone_at = reader_mark(value);
        if (data->time_zone && date_parse_zone(data->time_zone, &data->time_zone_minutes))
            data->has_time_zone = true;
        else if (data->time_zone)
            error_at(rd->errors, rd->path, data->time_zone_at,
                     "data.time_zone is a fixed offset from UTC, as in UTC, +01:00 or -05:00, "
                     "found '%s'; a named zone would make the result depend on the machine's "
                     "time-zone rules",
                     data->time_zone);
        break;
    case 14:
        reader_real(rd, value, "data.statement_timeout (seconds)", 0, 86400, true,
                    &data->statement_timeout);
        break;
    case 15:
        data->sheet_at = reader_mark(value);
        if (value->type == YAML_SCALAR_NODE && value->data.scalar.style == YAML_PLAIN_SCALAR_STYLE &&
            strspn(reader_text(value), "0123456789") == strlen(reader_text(value)))
            reader_int(rd, value, "data.sheet (a position from 1)", 1, 65535,
                       &data->sheet_position);
        else
            data->sheet = reader_string(rd, value, "data.sheet");
        break;
    case 16:
        data->header_row_at = reader_mark(value);
        reader_int(rd, value, "data.header_row", 1, 1048576, &data->header_row);
        break;
    case 17:
        data->range_at = reader_mark(value);
        data->range = reader_string(rd, value, "data.range");
        if (data->range && !parse_range(data->range, data))
            error_at(rd->errors, rd->path, data->range_at,
                     "data.range is a block of cells written A1:F200 (or B:F for whole "
                     "columns), found '%s'",
                     data->range);
        break;
    case 18:
        data->pushdown_at = reader_mark(value);
        read_pushdown(rd, value, data);
        break;
    }
}

/* True when a libpq connection string carries a password: the password
   keyword (key=value form), or a user:password@ part or a password
   parameter (URI form). */
static bool connection_has_password(const char *text)
{
    if (strncmp(text, "postgres://", 11) == 0 || strncmp(text, "postgresql://", 13) == 0) {
        const char *rest = strstr(text, "//") + 2;
        const char *at = strchr(rest, '@'), *slash = strchr(rest, '/');
        const char *colon = strchr(rest, ':');
        if (at && colon && colon < at && (!slash || at < slash))
            return true;
        return strstr(text, "password=") != NULL;
    }
    for (const char *p = text; (p = strstr(p, "password")); p += 8) {
        bool starts = p == text || p[-1] == ' ' || p[-1] == '\t';
        const char *q = p + 8;
        while (*q == ' ' || *q == '\t')
            q++;
        if (starts && *q == '=')
            return true;
    }
    return false;
}

/* text starts with word (lower case), in any case. */
static bool starts_with_ci(const char *text, const char *word)
{
    for (; *word; text++, word++)
        if (tolower((unsigned char)*text) != *word)
            return false;
    return true;
}

bool spec_query_is_ordered(const char *query)
{
    int depth = 0;
    for (const char *p = query; *p; p++) {
        if (*p == '\'' || *p == '"') {
            const char *close = strchr(p + 1, *p);
            if (!close)
                return false;
            p = close;
        } else if (p[0] == '-' && p[1] == '-') {
            p += strcspn(p, "\n");
            if (!*p)
                break;
        } else if (*p == '(') {
            depth++;
        } else if (*p == ')') {
            depth--;
        } else if (depth == 0 && starts_with_ci(p, "order") &&
                   (p == query || !(isalnum((unsigned char)p[-1]) || p[-1] == '_'))) {
            const char *q = p + 5;
            size_t blank = strspn(q, " \t\r\n");
            if (blank > 0 && starts_with_ci(q + blank, "by") &&
                !(isalnum((unsigned char)q[blank + 2]) || q[blank + 2] == '_'))
                return true;
        }
    }
    return false;
}

static bool is_xlsx_path(const char *path)
{
    size_t n = strlen(path);
    return n > 5 && (strcmp(path + n - 5, ".xlsx") == 0 || strcmp(path + n - 5, ".XLSX") == 0);
}

/* A spreadsheet: no text-file keys, a header row inside the range. */
static void settle_xlsx_source(reader *rd, spec_data *data, node *data_node)
{
    static const char *const file_keys[] = {"format", "delimiter", "decimal", "query",
                                            "table", "key", "statement_timeout", "pushdown", NULL};
    for (size_t i = 0; file_keys[i]; i++) {
        node *n = reader_value(rd, data_node, file_keys[i]);
        if (n)
            error_at(rd->errors, rd->path, reader_mark(n),
                     "data.%s is not for a spreadsheet, whose cells carry their own types; "
                     "remove it",
                     file_keys[i]);
    }
    if (data->header_row && data->range && data->range_first_row &&
        (unsigned long)data->header_row != data->range_first_row)
        error_at(rd->errors, rd->path, data->header_row_at,
                 "the header is the first row of data.range (%u); remove header_row, or start "
                 "the range at row %ld",
                 data->range_first_row, data->header_row);
    data->delimiter = ',';
}

/* A SQL source: one of query and table, an order for the rows, no
   password, none of the text-file keys. */
static void settle_sql_source(reader *rd, spec_data *data, node *data_node)
{
    const char *what = data->source == SPEC_SOURCE_SQLITE ? "sqlite" : "postgres";
    static const char *const file_keys[] = {"format", "delimiter", "decimal", NULL};
    for (size_t i = 0; file_keys[i]; i++) {
        node *n = reader_value(rd, data_node, file_keys[i]);
        if (n)
            error_at(rd->errors, rd->path, reader_mark(n),
                     "data.%s is for text files; a %s source reads typed values, so remove it",
                     file_keys[i], what);
    }
    if (data->source == SPEC_SOURCE_POSTGRES && data->connection &&
        connection_has_password(data->connection))
        error_at(rd->errors, rd->path, data->connection_at,
                 "the connection string holds a password, which would be archived with the "
                 "report; keep it in ~/.pgpass (or PGPASSFILE) and remove it from the spec");
    if (!data->query == !data->table) {
        error_at(rd->errors, rd->path, reader_mark(data_node),
                 data->query ? "data has both query and table; keep one"
                             : "a %s source needs query: (a SELECT … ORDER BY …) or table: (a "
                               "table read whole)",
                 what);
        return;
    }
    if (data->query && !data->key && !spec_query_is_ordered(data->query))
        error_at(rd->errors, rd->path, data->query_at,
                 "the query has no ORDER BY, so the order of its rows (and so the report) "
                 "could change from one run to the next; add ORDER BY, or name a key column "
                 "with data.key");
    if (data->table && !data->key && data->source == SPEC_SOURCE_POSTGRES)
        error_at(rd->errors, rd->path, data->table_at,
                 "a PostgreSQL table has no row order of its own; name the column that orders "
                 "the rows with data.key, or give a query with ORDER BY");
    if (data->pushdown && data->source != SPEC_SOURCE_POSTGRES)
        error_at(rd->errors, rd->path, data->pushdown_at,
                 "data.pushdown runs the fit's sums inside a PostgreSQL server; a %s source "
                 "is read whole, so remove it",
                 what);
    data->delimiter = ',';
    if (data->source == SPEC_SOURCE_POSTGRES && data->connection && !data->path)
        data->path = xstrdup(data->connection); /* what the report names */
}

/* Delimiter and decimal mark must not collide, or numbers cannot be read. */
static void settle_data_format(reader *rd, spec_data *data, node *data_node)
{
    if (data->format == SPEC_FORMAT_AUTO && data->path) {
        size_t length = strlen(data->path);
        bool tsv = length > 4 && (strcmp(data->path + length - 4, ".tsv") == 0 ||
                                  strcmp(data->path + length - 4, ".tab") == 0);
        data->format = tsv ? SPEC_FORMAT_TSV : SPEC_FORMAT_CSV;
    }
    if (data->delimiter == 0)
        data->delimiter = data->format == SPEC_FORMAT_TSV ? '\t'
                          : data->decimal_comma           ? ';'
                                                          : ',';
    if (data->decimal_comma && data->delimiter == ',')
        error_at(rd->errors, rd->path, reader_mark(data_node),
                 "decimal: comma cannot be read with ',' as the delimiter; set "
                 "delimiter: \";\"");
}

/* ---- derive ------------------------------------------------------------- */

static const char *const derive_keys[] = {"name", "from", "transform", NULL};
static const char *const transform_names[] = {"log",        "log10",  "sqrt",       "square",
                                              "reciprocal", "center", "standardize", NULL};

static void derive_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_derive *derive = target;
    (void)key;
    if (key_index == 0) {
        derive->name = reader_string(rd, value, "a derived column's name");
    } else if (key_index == 1) {
        derive->from = reader_string(rd, value, "a derived column's source");
        derive->from_at = reader_mark(value);
    } else {
        int t = reader_choice(rd, value, "transform", transform_names);
        if (t >= 0)
            derive->transform = (spec_transform)t;
    }
}

static void parse_derive(reader *rd, node *list, spec *s)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "derive"))
        return;
    s->derive = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_derive));
    for (size_t i = 0; i < reader_count(list); i++) {
        node *item = reader_item(rd, list, i);
        if (!reader_expect(rd, item, YAML_MAPPING_NODE, "each derived column"))
            continue;
        spec_derive *derive = &s->derive[s->n_derive];
        derive->at = reader_mark(item);
        derive->transform = (spec_transform)-1;
        size_t before = rd->errors->count;
        reader_walk(rd, item, "a derived column", derive_keys, derive_pair, derive);
        bool complete = derive->name && derive->from && (int)derive->transform >= 0;
        if (!complete && rd->errors->count == before)
            error_at(rd->errors, rd->path, derive->at,
                     "a derived column needs name, from and transform, as in "
                     "{name: log_cost, from: cost, transform: log}");
        if (complete && spec_find_derive(s, derive->name))
            error_at(rd->errors, rd->path, derive->at,
                     "derived column '%s' is defined twice; rename one", derive->name);
        if (complete && strcmp(derive->name, derive->from) == 0)
            error_at(rd->errors, rd->path, derive->from_at,
                     "derived column '%s' cannot be computed from itself", derive->name);
        s->n_derive++;
    }
}

/* ---- where -------------------------------------------------------------- */

/* The comparison keys, in spec_op order. */
static const char *const compare_keys[] = {"column", "is",       "is_not",  "below",
                                           "at_most", "above",   "at_least", "in",
                                           NULL};

static void compare_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_filter *filter = target;
    (void)key;
    if (key_index == 0) {
        filter->column = reader_string(rd, value, "a filter's column");
        filter->column_at = reader_mark(value);
        return;
    }
    if (filter->values) { /* a condition was given, even an empty 'in' */
        error_at(rd->errors, rd->path, reader_mark(key),
                 "a filter compares with one condition; split it into several under all:");
        return;
    }
    static const spec_op ops[] = {SPEC_OP_EQ, SPEC_OP_EQ, SPEC_OP_NE, SPEC_OP_LT,
                                  SPEC_OP_LE, SPEC_OP_GT, SPEC_OP_GE, SPEC_OP_IN};
    filter->op = ops[key_index];
    if (filter->op == SPEC_OP_IN) {
        reader_string_list(rd, value, "the values of 'in'", false, &filter->values,
                           &filter->n_values, &filter->values_at);
    } else if (reader_expect(rd, value, YAML_SCALAR_NODE, "a filter's value")) {
        filter->values = xmalloc(sizeof(char *));
        filter->values[0] = xstrdup(reader_text(value));
        filter->values_at = xmalloc(sizeof(src_mark));
        filter->values_at[0] = reader_mark(value);
        filter->n_values = 1;
    }
    bool ordered = filter->op >= SPEC_OP_LT && filter->op <= SPEC_OP_GE;
    free(filter->numbers); /* an earlier condition that was not a list */
    filter->numbers = xcalloc(filter->n_values ? filter->n_values : 1, sizeof(double));
    filter->numeric_values = filter->n_values > 0;
    for (size_t i = 0; i < filter->n_values; i++)
        if (!reader_decimal(filter->values[i], &filter->numbers[i]))
            filter->numeric_values = false;
    bool dates = filter->n_values > 0;
    for (size_t i = 0; i < filter->n_values; i++) {
        date_value ignored;
        dates = dates && date_parse(filter->values[i], strlen(filter->values[i]), &ignored);
    }
    if (ordered && !filter->numeric_values && !dates)
        error_at(rd->errors, rd->path, reader_mark(value),
                 "'%s' compares numbers or dates, but '%s' is neither; to compare a "
                 "category use is, is_not or in",
                 compare_keys[key_index], filter->n_values ? filter->values[0] : "");
}

static void parse_filter(reader *rd, node *n, spec_filter *filter, int depth);

static void parse_filter_group(reader *rd, node *list, spec_filter *filter, int depth)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "the conditions of all/any"))
        return;
    filter->children = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_filter));
    for (size_t i = 0; i < reader_count(list); i++)
        parse_filter(rd, reader_item(rd, list, i), &filter->children[filter->n_children++],
                     depth + 1);
    if (filter->n_children == 0)
        error_at(rd->errors, rd->path, reader_mark(list),
                 "all/any needs at least one condition");
}

static void parse_filter(reader *rd, node *n, spec_filter *filter, int depth)
{
    filter->at = reader_mark(n);
    if (depth > 8) {
        error_at(rd->errors, rd->path, filter->at,
                 "row filters nest deeper than 8 levels; simplify the where section");
        return;
    }
    if (!reader_expect(rd, n, YAML_MAPPING_NODE, "a row filter"))
        return;
    node *all = reader_value(rd, n, "all"), *any = reader_value(rd, n, "any");
    if ((all || any) && reader_count(n) == 1) {
        filter->kind = all ? SPEC_FILTER_ALL : SPEC_FILTER_ANY;
        parse_filter_group(rd, all ? all : any, filter, depth);
        return;
    }
    filter->kind = SPEC_FILTER_COMPARE;
    size_t before = rd->errors->count;
    reader_walk(rd, n, "a row filter", compare_keys, compare_pair, filter);
    if (rd->errors->count == before && (!filter->column || filter->n_values == 0))
        error_at(rd->errors, rd->path, filter->at,
                 "a row filter names a column and one condition, as in "
                 "{column: age_days, at_least: 7}; or groups filters under all: or any:");
}

static void filter_clear(spec_filter *filter)
{
    for (size_t i = 0; i < filter->n_children; i++)
        filter_clear(&filter->children[i]);
    free(filter->children);
    free(filter->column);
    free_strings(filter->values, filter->n_values);
    free(filter->values_at);
    free(filter->numbers);
}

/* ---- models ------------------------------------------------------------- */

static void term_add_column(spec_term *term, const char *name, src_mark at)
{
    term->columns = xrealloc(term->columns, (term->n_columns + 1) * sizeof(char *));
    term->column_at = xrealloc(term->column_at, (term->n_columns + 1) * sizeof(src_mark));
    term->columns[term->n_columns] = xstrdup(name);
    term->column_at[term->n_columns] = at;
    term->n_columns++;
}

static const char *const polynomial_keys[] = {"polynomial", "degree", NULL};

static void polynomial_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_term *term = target;
    (void)key;
    if (key_index == 0) {
        char *name = reader_string(rd, value, "a polynomial's column");
        if (name)
            term_add_column(term, name, reader_mark(value));
        free(name);
    } else {
        long degree;
        if (reader_int(rd, value, "a polynomial's degree", 1, 10, &degree))
            term->degree = (int)degree;
    }
}

static bool parse_interaction(reader *rd, node *n, spec_term *term)
{
    term->kind = SPEC_TERM_INTERACTION;
    for (size_t i = 0; i < reader_count(n); i++) {
        node *part = reader_item(rd, n, i);
        if (part->type != YAML_SCALAR_NODE || reader_text(part)[0] == '\0') {
            error_at(rd->errors, rd->path, reader_mark(part),
                     "an interaction lists column names, like [age_days, admixture]");
            return false;
        }
        for (size_t k = 0; k < term->n_columns; k++)
            if (strcmp(term->columns[k], reader_text(part)) == 0) {
                error_at(rd->errors, rd->path, reader_mark(part),
                         "column '%s' appears twice in one interaction; for a power of a "
                         "column use {polynomial: %s, degree: 2}",
                         reader_text(part), reader_text(part));
                return false;
            }
        term_add_column(term, reader_text(part), reader_mark(part));
    }
    if (term->n_columns < 2 || term->n_columns > 3) {
        error_at(rd->errors, rd->path, reader_mark(n),
                 "an interaction combines two or three columns, found %zu", term->n_columns);
        return false;
    }
    return true;
}

static bool parse_term(reader *rd, node *n, spec_term *term)
{
    term->at = reader_mark(n);
    if (n->type == YAML_SCALAR_NODE) {
        if (reader_text(n)[0] == '\0') {
            error_at(rd->errors, rd->path, term->at, "a term must name a column");
            return false;
        }
        term->kind = SPEC_TERM_MAIN;
        term_add_column(term, reader_text(n), term->at);
        return true;
    }
    if (n->type == YAML_SEQUENCE_NODE)
        return parse_interaction(rd, n, term);
    term->kind = SPEC_TERM_POLYNOMIAL;
    size_t before = rd->errors->count;
    reader_walk(rd, n, "a polynomial term", polynomial_keys, polynomial_pair, term);
    /* A bad degree or a misspelt key was reported already; saying "needs
       both keys" as well would be wrong when both were written. */
    if (rd->errors->count > before)
        return false;
    if (term->n_columns != 1 || term->degree == 0) {
        error_at(rd->errors, rd->path, term->at,
                 "a polynomial term needs both keys, like {polynomial: age_days, degree: 2}");
        return false;
    }
    return true;
}

static void term_clear(spec_term *term)
{
    free_strings(term->columns, term->n_columns);
    free(term->column_at);
}

static void parse_terms(reader *rd, node *list, spec_model *model)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "a model's terms"))
        return;
    model->terms = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_term));
    for (size_t i = 0; i < reader_count(list); i++) {
        spec_term *term = &model->terms[model->n_terms];
        memset(term, 0, sizeof *term);
        if (parse_term(rd, reader_item(rd, list, i), term))
            model->n_terms++;
        else
            term_clear(term);
    }
}

static const char *const model_keys[] = {"id",       "response", "terms",
                                         "intercept", "weights", "coding",
                                         "standard_errors", "order_by", "variance_columns",
                                         "lags", NULL};
static const char *const coding_names[] = {"treatment", "sum", NULL};
static const char *const errors_names[] = {"classical", "hc0", "hc1", "hc2",
                                           "hc3",       "hac", NULL};

static void model_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_model *model = target;
    (void)key;
    switch (key_index) {
    case 0:
        model->id = reader_string(rd, value, "a model's id");
        model->id_at = reader_mark(value);
        break;
    case 1:
        model->response = reader_string(rd, value, "a model's response");
        model->response_at = reader_mark(value);
        break;
    case 2: parse_terms(rd, value, model); break;
    case 3: reader_bool(rd, value, "intercept", &model->intercept); break;
    case 4:
        model->weights = reader_string(rd, value, "a model's weights column");
        model->weights_at = reader_mark(value);
        break;
    case 5: {
        int coding = reader_choice(rd, value, "coding", coding_names);
        if (coding >= 0)
            model->coding = (spec_coding)coding;
        break;
    }
    case 6: {
        int errors = reader_choice(rd, value, "kind of standard errors", errors_names);
        if (errors >= 0)
            model->errors = (spec_errors)errors;
        model->errors_at = reader_mark(value);
        break;
    }
    case 9:
        reader_int(rd, value, "lags", 0, 100000, &model->lags);
        model->lags_at = reader_mark(value);
        break;
    case 7:
        model->order_by = reader_string(rd, value, "a model's order_by column");
        model->order_by_at = reader_mark(value);
        break;
    case 8:
        reader_string_list(rd, value, "variance_columns", false, &model->variance_columns,
                           &model->n_variance_columns, &model->variance_columns_at);
        break;
    }
}

/* Whether two model ids give the same file names: the figures and
   residual tables write an id with every byte outside [A-Za-z0-9_-] (and
   a leading '.') as '_', and a report folder may be copied to a file
   system that ignores case. */
static bool same_file_part(const char *a, const char *b)
{
    for (size_t i = 0;; i++) {
        unsigned char x = (unsigned char)a[i], y = (unsigned char)b[i];
        if (!x || !y)
            return x == y;
        bool x_plain = isalnum(x) || x == '-' || x == '_' || (x == '.' && i > 0);
        bool y_plain = isalnum(y) || y == '-' || y == '_' || (y == '.' && i > 0);
        int cx = x_plain ? tolower(x) : '_', cy = y_plain ? tolower(y) : '_';
        if (cx != cy)
            return false;
    }
}

/* A term's identity for duplicates: single-column terms (a main effect
   or a polynomial, which includes the column itself) share one key per
   column; an interaction's key is its sorted columns. */
typedef struct {
    char *key;
    size_t index;
} term_key;

static int compare_strings(const void *a, const void *b)
{
    return strcmp(*(const char *const *)a, *(const char *const *)b);
}

static int compare_term_keys(const void *a, const void *b)
{
    const term_key *x = a, *y = b;
    int order = strcmp(x->key, y->key);
    return order ? order : (x->index > y->index) - (x->index < y->index);
}

static char *term_identity(const spec_term *term)
{
    const char **names = xmalloc(term->n_columns * sizeof *names);
    for (size_t k = 0; k < term->n_columns; k++)
        names[k] = term->columns[k];
    qsort(names, term->n_columns, sizeof *names, compare_strings);
    buf key;
    buf_init(&key);
    buf_putc(&key, term->kind == SPEC_TERM_INTERACTION ? 'i' : 'c');
    for (size_t k = 0; k < term->n_columns; k++) {
        buf_puts(&key, names[k]);
        buf_putc(&key, '\x1f');
    }
    free(names);
    return buf_detach(&key);
}

static void duplicate_term_error(reader *rd, const spec_model *model, const spec_term *term,
                                 const spec_term *first)
{
    char where[48];
    snprintf(where, sizeof where, "%u:%u", first->at.line, first->at.column);
    const char *column = term->columns[0];
    if (term->kind == SPEC_TERM_INTERACTION) {
        buf names;
        buf_init(&names);
        for (size_t k = 0; k < term->n_columns; k++)
            buf_printf(&names, "%s'%s'", k == 0 ? "" : k + 1 == term->n_columns ? " and " : ", ",
                       term->columns[k]);
        error_at(rd->errors, rd->path, term->at,
                 "model '%s' lists the interaction of %s twice, here and at %s; remove one",
                 model->id ? model->id : "?", names.data, where);
        buf_free(&names);
    } else if (term->kind == SPEC_TERM_MAIN && first->kind == SPEC_TERM_MAIN) {
        error_at(rd->errors, rd->path, term->at,
                 "model '%s' lists the term '%s' twice, here and at %s; remove one",
                 model->id ? model->id : "?", column, where);
    } else if (term->kind == SPEC_TERM_POLYNOMIAL && first->kind == SPEC_TERM_POLYNOMIAL) {
        error_at(rd->errors, rd->path, term->at,
                 "model '%s' lists two polynomials of '%s', here and at %s; keep the one of "
                 "the degree you mean",
                 model->id ? model->id : "?", column, where);
    } else {
        const spec_term *poly = term->kind == SPEC_TERM_POLYNOMIAL ? term : first;
        error_at(rd->errors, rd->path, term->at,
                 "model '%s' lists '%s' both as a term and as a polynomial of degree %d (here "
                 "and at %s), and the polynomial already includes '%s' itself; remove the "
                 "term '%s'",
                 model->id ? model->id : "?", column, poly->degree, where, column, column);
    }
}

/* Each term at most once: a repeated term gives duplicate coefficients
   and term tests with no degrees of freedom. Sorting keeps this
   O(n log n) for a model that lists thousands of terms. */
static void check_duplicate_terms(reader *rd, const spec_model *model)
{
    size_t n = model->n_terms;
    if (n < 2)
        return;
    term_key *keys = xmalloc(n * sizeof *keys);
    for (size_t i = 0; i < n; i++)
        keys[i] = (term_key){term_identity(&model->terms[i]), i};
    qsort(keys, n, sizeof *keys, compare_term_keys);
    size_t *first = xmalloc(n * sizeof *first);
    for (size_t i = 0; i < n; i++)
        first[keys[i].index] =
            i > 0 && strcmp(keys[i].key, keys[i - 1].key) == 0 ? first[keys[i - 1].index]
                                                                 : keys[i].index;
    for (size_t i = 0; i < n; i++)
        if (first[i] != i)
            duplicate_term_error(rd, model, &model->terms[i], &model->terms[first[i]]);
    for (size_t i = 0; i < n; i++)
        free(keys[i].key);
    free(keys);
    free(first);
}

static void check_model(reader *rd, spec *s, spec_model *model)
{
    check_duplicate_terms(rd, model);
    if (!model->id)
        error_at(rd->errors, rd->path, model->at,
                 "a model needs an 'id' (a short name such as main)");
    if (!model->response)
        error_at(rd->errors, rd->path, model->at,
                 "a model needs a 'response' (the column to explain)");
    if (model->id && strlen(model->id) > SPEC_MAX_ID)
        error_at(rd->errors, rd->path, model->id_at,
                 "model id '%.20s…' is %zu bytes long; the id names the model's files, so it "
                 "may have at most %d",
                 model->id, strlen(model->id), SPEC_MAX_ID);
    for (size_t other = 0; model->id && other + 1 < s->n_models; other++) {
        const spec_model *earlier = &s->models[other];
        if (!earlier->id)
            continue;
        if (strcmp(earlier->id, model->id) == 0)
            error_at(rd->errors, rd->path, model->id_at,
                     "model id '%s' is used twice; give each model its own id", model->id);
        else if (same_file_part(earlier->id, model->id))
            error_at(rd->errors, rd->path, model->id_at,
                     "model ids '%s' (line %u) and '%s' would name the same files, since "
                     "file names keep only letters, digits, '-', '_' and '.' and ignore "
                     "case; choose ids that differ in those",
                     earlier->id, earlier->id_at.line, model->id);
    }
    if (model->errors == SPEC_ERRORS_HAC && !model->order_by)
        error_at(rd->errors, rd->path, model->errors_at,
                 "standard_errors: hac needs the order of the rows; add order_by: COLUMN "
                 "to the model");
    if (model->lags >= 0 && model->errors != SPEC_ERRORS_HAC)
        error_at(rd->errors, rd->path, model->lags_at,
                 "lags sets the Newey–West standard errors; add standard_errors: hac or "
                 "remove lags");
    if (!model->intercept && model->coding == SPEC_CODING_SUM)
        error_at(rd->errors, rd->path, model->at,
                 "sum coding needs an intercept; remove 'intercept: false' or use "
                 "coding: treatment");
}

static void parse_models(reader *rd, node *list, spec *s)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "models"))
        return;
    s->models = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_model));
    for (size_t i = 0; i < reader_count(list); i++) {
        node *item = reader_item(rd, list, i);
        if (!reader_expect(rd, item, YAML_MAPPING_NODE, "each model"))
            continue;
        spec_model *model = &s->models[s->n_models++];
        model->intercept = true;
        model->lags = -1;
        model->at = reader_mark(item);
        size_t before = rd->errors->count + rd->errors->suppressed;
        reader_walk(rd, item, "a model", model_keys, model_pair, model);
        check_model(rd, s, model);
        model->broken = rd->errors->count + rd->errors->suppressed > before || !model->id ||
                        !model->response;
    }
    if (s->n_models == 0)
        error_at(rd->errors, rd->path, reader_mark(list),
                 "models is empty; describe at least one model");
}

/* ---- top level ---------------------------------------------------------- */

static const char *const top_keys[] = {"fitproof", "title",  "meta",    "data",
                                       "derive",   "where",  "models",  "checks",
                                       "compare",  "predict", "report", NULL};

/* Which part of the spec each top-level key belongs to. */
static const unsigned top_parts[] = {SPEC_BROKEN_HEAD,    SPEC_BROKEN_META,    SPEC_BROKEN_META,
                                     SPEC_BROKEN_DATA,    SPEC_BROKEN_DATA,    SPEC_BROKEN_DATA,
                                     SPEC_BROKEN_MODELS,  SPEC_BROKEN_OUTPUTS, SPEC_BROKEN_OUTPUTS,
                                     SPEC_BROKEN_OUTPUTS, SPEC_BROKEN_REPORT};

static void top_pair_parse(reader *rd, size_t key_index, node *value, spec *s);

static void top_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec *s = target;
    (void)key;
    size_t before = rd->errors->count + rd->errors->suppressed;
    top_pair_parse(rd, key_index, value, s);
    if (rd->errors->count + rd->errors->suppressed > before)
        s->broken |= top_parts[key_index];
}

static void top_pair_parse(reader *rd, size_t key_index, node *value, spec *s)
{
    switch (key_index) {
    case 0:
        if (strcmp(reader_text(value), "1") != 0 || value->type != YAML_SCALAR_NODE)
            error_at(rd->errors, rd->path, reader_mark(value),
                     "this fitproof reads spec language version 1, the file says '%s'; "
                     "write fitproof: 1",
                     reader_text(value));
        break;
    case 1: s->title = reader_string(rd, value, "title"); break;
    case 2: parse_meta(rd, value, s); break;
    case 3:
        if (reader_expect(rd, value, YAML_MAPPING_NODE, "data"))
            reader_walk(rd, value, "data", data_keys, data_pair, s);
        break;
    case 4: parse_derive(rd, value, s); break;
    case 5:
        s->where = xcalloc(1, sizeof(spec_filter));
        parse_filter(rd, value, s->where, 0);
        break;
    case 6: parse_models(rd, value, s); break;
    case 7: spec_parse_checks(rd, value, s); break;
    case 8: spec_parse_compare(rd, value, s); break;
    case 9: spec_parse_predict(rd, value, s); break;
    case 10: spec_parse_report(rd, value, s); break;
    }
}

static void check_required(reader *rd, node *root, spec *s)
{
    src_mark top = {1, 1};
    if (!reader_value(rd, root, "fitproof"))
        error_at(rd->errors, rd->path, top,
                 "the spec must start with 'fitproof: 1' (the spec language version)");
    node *data = reader_value(rd, root, "data");
    size_t before = rd->errors->count + rd->errors->suppressed;
    if (!data)
        error_at(rd->errors, rd->path, top,
                 "the spec has no 'data' section; add data: {path: your.csv}");
    /* Only a data mapping without the key: a bad data or data.path value
       has been reported where it was written. */
    else if (data->type == YAML_MAPPING_NODE && !reader_value(rd, data, "path") &&
             !reader_value(rd, data, "sqlite") && !reader_value(rd, data, "postgres"))
        error_at(rd->errors, rd->path, reader_mark(data),
                 "data has no 'path'; name the data file, relative to the spec (or a "
                 "database: sqlite: FILE or postgres: CONNECTION)");
    else if (data->type == YAML_MAPPING_NODE && (reader_value(rd, data, "path") != NULL) +
                                                        (reader_value(rd, data, "sqlite") != NULL) +
                                                        (reader_value(rd, data, "postgres") != NULL) >
                                                    1)
        error_at(rd->errors, rd->path, reader_mark(data),
                 "data names more than one source; keep one of path, sqlite and postgres");
    if (data && data->type == YAML_MAPPING_NODE && s->data.source == SPEC_SOURCE_FILE &&
        s->data.path && is_xlsx_path(s->data.path))
        s->data.source = SPEC_SOURCE_XLSX;
    if (data && data->type == YAML_MAPPING_NODE && s->data.source != SPEC_SOURCE_XLSX) {
        static const char *const sheet_keys[] = {"sheet", "header_row", "range", NULL};
        for (size_t i = 0; sheet_keys[i]; i++) {
            node *n = reader_value(rd, data, sheet_keys[i]);
            if (n)
                error_at(rd->errors, rd->path, reader_mark(n),
                         "data.%s is for a spreadsheet (a path ending .xlsx); remove it",
                         sheet_keys[i]);
        }
    }
    if (data && data->type == YAML_MAPPING_NODE && s->data.source == SPEC_SOURCE_XLSX)
        settle_xlsx_source(rd, &s->data, data);
    else if (data && data->type == YAML_MAPPING_NODE && s->data.source != SPEC_SOURCE_FILE)
        settle_sql_source(rd, &s->data, data);
    else if (data && data->type == YAML_MAPPING_NODE) {
        static const char *const sql_keys[] = {"query", "table", "key", "statement_timeout",
                                               "pushdown", NULL};
        for (size_t i = 0; sql_keys[i]; i++) {
            node *n = reader_value(rd, data, sql_keys[i]);
            if (n)
                error_at(rd->errors, rd->path, reader_mark(n),
                         "data.%s is for a database source (sqlite: or postgres:); a text "
                         "file is read whole, so remove it",
                         sql_keys[i]);
        }
        settle_data_format(rd, &s->data, data);
    }
    if (rd->errors->count + rd->errors->suppressed > before ||
        (!s->data.path && !s->data.connection))
        s->broken |= SPEC_BROKEN_DATA;
    if (!reader_value(rd, root, "models")) {
        error_at(rd->errors, rd->path, top,
                 "the spec has no 'models' section; describe at least one model");
        s->broken |= SPEC_BROKEN_MODELS;
    }
    if (!reader_value(rd, root, "fitproof"))
        s->broken |= SPEC_BROKEN_HEAD;
}

/* First pass over the parser's events: refuses anchors, aliases and more
   than one document, lists and mappings nested deeper than SPEC_MAX_DEPTH
   or with more than SPEC_MAX_ENTRIES entries, located where they are
   written; it stops at the first limit, before the document loader spends
   anything on what lies beyond. Returns false after recording an error (a
   syntax error is left to the document loader). */
static bool refuse_aliases(const char *path, const char *text, size_t length,
                           error_list *errors)
{
    yaml_parser_t parser;
    yaml_parser_initialize(&parser);
    yaml_parser_set_input_string(&parser, (const unsigned char *)text, length);
    bool ok = true;
    int documents = 0;
    /* Per open list or mapping: its entries so far (scalars and nested
       collections; a mapping counts keys and values). */
    size_t entries[SPEC_MAX_DEPTH + 1];
    bool is_mapping[SPEC_MAX_DEPTH + 1];
    int depth = 0;
    for (bool over = false; !over;) {
        yaml_event_t event;
        if (!yaml_parser_parse(&parser, &event))
            break;
        src_mark at = {(unsigned)event.start_mark.line + 1,
                       (unsigned)event.start_mark.column + 1};
        bool opens = event.type == YAML_SEQUENCE_START_EVENT ||
                     event.type == YAML_MAPPING_START_EVENT;
        if (depth > 0 && (opens || event.type == YAML_SCALAR_EVENT ||
                          event.type == YAML_ALIAS_EVENT)) {
            size_t limit = SPEC_MAX_ENTRIES * (is_mapping[depth] ? 2 : 1);
            if (++entries[depth] > limit) {
                error_at(errors, path, at,
                         "this %s has more than %d %s, the most a spec may hold in one "
                         "place; split the work into several specs",
                         is_mapping[depth] ? "mapping" : "list", SPEC_MAX_ENTRIES,
                         is_mapping[depth] ? "keys" : "items");
                ok = false;
                over = true;
            }
        }
        if (opens && !over) {
            if (depth == SPEC_MAX_DEPTH) {
                error_at(errors, path, at,
                         "lists and mappings are nested more than %d deep here; a spec "
                         "needs only a few levels",
                         SPEC_MAX_DEPTH);
                ok = false;
                over = true;
            } else {
                depth++;
                entries[depth] = 0;
                is_mapping[depth] = event.type == YAML_MAPPING_START_EVENT;
            }
        }
        if ((event.type == YAML_SEQUENCE_END_EVENT || event.type == YAML_MAPPING_END_EVENT) &&
            depth > 0)
            depth--;
        bool anchored = (event.type == YAML_SCALAR_EVENT && event.data.scalar.anchor) ||
                        (event.type == YAML_SEQUENCE_START_EVENT &&
                         event.data.sequence_start.anchor) ||
                        (event.type == YAML_MAPPING_START_EVENT &&
                         event.data.mapping_start.anchor);
        if (event.type == YAML_ALIAS_EVENT || anchored) {
            error_at(errors, path, at,
                     "YAML %s are not allowed in a spec; write the value out in full",
                     anchored ? "anchors (&name)" : "aliases (*name)");
            ok = false;
        }
        if (event.type == YAML_DOCUMENT_START_EVENT && ++documents == 2) {
            error_at(errors, path, at,
                     "the file holds more than one YAML document; a spec is one document");
            ok = false;
        }
        over = over || event.type == YAML_STREAM_END_EVENT;
        yaml_event_delete(&event);
    }
    yaml_parser_delete(&parser);
    return ok;
}

/* A NUL inside a scalar (a "\0" escape) would silently cut the text
   short everywhere it is used as a C string. */
static bool refuse_nul(const char *path, yaml_document_t *doc, error_list *errors)
{
    bool ok = true;
    for (yaml_node_t *n = doc->nodes.start; n < doc->nodes.top; n++) {
        if (n->type != YAML_SCALAR_NODE ||
            strlen((const char *)n->data.scalar.value) == n->data.scalar.length)
            continue;
        src_mark at = {(unsigned)n->start_mark.line + 1, (unsigned)n->start_mark.column + 1};
        error_at(errors, path, at, "this value holds a NUL character (\\0), which no name, "
                 "path or text in a spec may contain; remove it");
        ok = false;
    }
    return ok;
}

/* The report's own file names, which the archived spec must not take. */
static bool spec_name_is_taken(const char *base)
{
    static const char *const taken[] = {"report.md",   "report.html", "report.pdf",
                                        "report.docx", "results.json", "manifest.json",
                                        "figures"};
    for (size_t i = 0; i < sizeof taken / sizeof taken[0]; i++)
        if (strcmp(base, taken[i]) == 0)
            return true;
    size_t length = strlen(base);
    return strncmp(base, "residuals_", 10) == 0 && length > 14 &&
           strcmp(base + length - 4, ".csv") == 0;
}

static void resolve_paths(spec *s)
{
    char *dir = path_dirname(s->path);
    if (s->data.path && s->data.source != SPEC_SOURCE_POSTGRES)
        s->data.resolved = path_join(dir, s->data.path);
    if (s->report.template_path) {
        char *resolved = path_join(dir, s->report.template_path);
        s->report.template_written = s->report.template_path;
        s->report.template_path = resolved;
    }
    free(dir);
}

static void set_defaults(spec *s)
{
    s->report.formats = SPEC_FORMAT_MARKDOWN | SPEC_FORMAT_HTML | SPEC_FORMAT_JSON;
    s->report.confidence_level = 0.95;
    s->report.alpha = 0.05;
    s->report.decimal_places = -1;
    s->report.significant_digits = 4;
}

/* The reader's errors (bytes that are not UTF-8, control characters)
   come with a byte offset, not a mark: located here, and said plainly. */
static void reader_error(const char *path, const char *text, size_t length,
                         const yaml_parser_t *parser, error_list *errors)
{
    src_mark at = text_mark_of_offset(text, length, parser->problem_offset);
    const char *problem = parser->problem ? parser->problem : "";
    int value = parser->problem_value;
    if (strstr(problem, "control characters"))
        error_at(errors, path, at,
                 "the character U+%04X is not allowed in a spec; remove it (inside double "
                 "quotes, write it as \\%s%0*X)",
                 (unsigned)value, value > 0xFF ? "u" : "x", value > 0xFF ? 4 : 2,
                 (unsigned)value);
    else if (strstr(problem, "UTF-8") || strstr(problem, "octet"))
        error_at(errors, path, at,
                 "the spec is not valid UTF-8 here (%s, byte 0x%02X); save the file as UTF-8",
                 problem, (unsigned)(value & 0xFF));
    else
        error_at(errors, path, at, "the file cannot be read as YAML: %s", problem);
}

/* A spec written as UTF-16 or UTF-32 (libyaml would read UTF-16 with a
   byte-order mark, but every other file of fitproof is UTF-8). */
static bool refuse_wide_encoding(const char *path, const char *text, size_t length,
                                 error_list *errors)
{
    const unsigned char *p = (const unsigned char *)text;
    const char *encoding = NULL;
    if (length >= 4 && ((p[0] == 0xFF && p[1] == 0xFE && !p[2] && !p[3]) ||
                        (!p[0] && !p[1] && p[2] == 0xFE && p[3] == 0xFF)))
        encoding = "UTF-32";
    else if (length >= 2 && ((p[0] == 0xFF && p[1] == 0xFE) || (p[0] == 0xFE && p[1] == 0xFF)))
        encoding = "UTF-16";
    if (encoding)
        error_at(errors, path, (src_mark){1, 1},
                 "this file is %s, which fitproof does not read; save it as UTF-8", encoding);
    return encoding == NULL;
}

static spec *parse_partial(const char *path, const char *text, size_t length,
                           error_list *errors)
{
    size_t errors_before = errors->count + errors->suppressed;
    if (!refuse_wide_encoding(path, text, length, errors))
        return NULL;
    src_mark whole = {0, 0};
    const char *slash = strrchr(path, '/');
    if (spec_name_is_taken(slash ? slash + 1 : path)) {
        error_at(errors, path, whole, "the report archives the spec under its own name, and "
                 "'%s' is the name of a file of the report; rename the spec, for instance "
                 "to analysis.yaml",
                 slash ? slash + 1 : path);
        return NULL;
    }
    if (length > SPEC_MAX_BYTES) {
        error_at(errors, path, whole, "the spec is %zu bytes, more than the %zu a spec may "
                 "hold; keep long texts in the data or split the spec",
                 length, SPEC_MAX_BYTES);
        return NULL;
    }
    if (!refuse_aliases(path, text, length, errors))
        return NULL;
    yaml_parser_t parser;
    yaml_document_t doc;
    yaml_parser_initialize(&parser);
    yaml_parser_set_input_string(&parser, (const unsigned char *)text, length);
    if (!yaml_parser_load(&parser, &doc)) {
        if (parser.error == YAML_READER_ERROR) {
            reader_error(path, text, length, &parser, errors);
        } else {
            src_mark at = {(unsigned)parser.problem_mark.line + 1,
                           (unsigned)parser.problem_mark.column + 1};
            error_at(errors, path, at, "the file is not valid YAML: %s%s%s",
                     parser.problem ? parser.problem : "unreadable", parser.context ? " " : "",
                     parser.context ? parser.context : "");
        }
        yaml_parser_delete(&parser);
        return NULL;
    }
    yaml_parser_delete(&parser);
    if (!refuse_nul(path, &doc, errors)) {
        yaml_document_delete(&doc);
        return NULL;
    }

    spec *s = xcalloc(1, sizeof *s);
    s->path = xstrdup(path);
    s->source = xstrndup(text, length);
    s->source_length = length;
    set_defaults(s);
    reader rd = {path, &doc, errors};
    node *root = reader_node(&rd, 1);
    src_mark top = {1, 1};
    bool mapping = false;
    if (!root || (root->type == YAML_SCALAR_NODE && reader_text(root)[0] == '\0'))
        error_at(errors, path, top, "the spec is empty; start from 'fitproof scaffold DATA.csv'");
    else if (reader_expect(&rd, root, YAML_MAPPING_NODE, "the spec")) {
        mapping = true;
        /* An unknown top-level key breaks no part: it is reported, and the
           parts that were read are checked on. */
        reader_walk(&rd, root, "the spec", top_keys, top_pair, s);
        check_required(&rd, root, s);
        size_t before_references = errors->count + errors->suppressed;
        spec_resolve_references(&rd, s);
        if (errors->count + errors->suppressed > before_references)
            s->broken |= SPEC_BROKEN_REFERENCES;
        for (size_t m = 0; m < s->n_models; m++)
            if (s->models[m].broken)
                s->broken |= SPEC_BROKEN_MODELS;
    }
    yaml_document_delete(&doc);
    resolve_paths(s);
    if (errors->count + errors->suppressed > errors_before && s->broken == 0)
        s->broken = SPEC_BROKEN_KEYS;
    if (!mapping) {
        spec_free(s);
        return NULL;
    }
    return s;
}

spec *spec_parse(const char *path, const char *text, size_t length, error_list *errors)
{
    size_t errors_before = errors->count;
    spec *s = parse_partial(path, text, length, errors);
    if (s && (errors->count > errors_before || errors->suppressed)) {
        spec_free(s);
        return NULL;
    }
    return s;
}

static spec *load(const char *path, bool partial, error_list *errors)
{
    size_t length;
    const char *why;
    char *text = file_read_limited(path, SPEC_MAX_BYTES, &length, &why);
    if (!text) {
        src_mark whole = {0, 0};
        error_at(errors, path, whole, "cannot read the spec: %s", why);
        return NULL;
    }
    spec *s = partial ? parse_partial(path, text, length, errors)
                      : spec_parse(path, text, length, errors);
    free(text);
    return s;
}

spec *spec_load(const char *path, error_list *errors)
{
    return load(path, false, errors);
}

spec *spec_load_partial(const char *path, error_list *errors)
{
    return load(path, true, errors);
}

/* ---- lookups and names -------------------------------------------------- */

const spec_column *spec_find_column(const spec *s, const char *name)
{
    for (size_t i = 0; i < s->data.n_columns; i++)
        if (s->data.columns[i].name && strcmp(s->data.columns[i].name, name) == 0)
            return &s->data.columns[i];
    return NULL;
}

const spec_model *spec_find_model(const spec *s, const char *id)
{
    for (size_t i = 0; i < s->n_models; i++)
        if (s->models[i].id && strcmp(s->models[i].id, id) == 0)
            return &s->models[i];
    return NULL;
}

const spec_derive *spec_find_derive(const spec *s, const char *name)
{
    for (size_t i = 0; i < s->n_derive; i++)
        if (s->derive[i].name && strcmp(s->derive[i].name, name) == 0)
            return &s->derive[i];
    return NULL;
}

const char *spec_transform_name(spec_transform t)
{
    return (unsigned)t < sizeof transform_names / sizeof transform_names[0] - 1
               ? transform_names[t]
               : "?";
}

/* ---- freeing ------------------------------------------------------------ */

static void free_data(spec_data *data)
{
    for (size_t i = 0; i < data->n_columns; i++) {
        spec_column *column = &data->columns[i];
        free(column->name);
        free(column->unit);
        free(column->label);
        free_strings(column->levels, column->n_levels);
        free(column->reference);
        free(column->at_values);
    }
    free(data->columns);
    free(data->path);
    free(data->resolved);
    free_strings(data->missing, data->n_missing);
    free(data->sha256);
    free(data->rows_are);
    free(data->query);
    free(data->table);
    free(data->key);
    free(data->connection);
    free(data->time_zone);
    free(data->sheet);
    free(data->range);
    free(data->stored_rows);
    free(data->stored_kinds);
    free(data->stored_query);
    free(data->stored_server);
}

static void free_models(spec *s)
{
    for (size_t m = 0; m < s->n_models; m++) {
        spec_model *model = &s->models[m];
        for (size_t t = 0; t < model->n_terms; t++)
            term_clear(&model->terms[t]);
        free(model->terms);
        free(model->id);
        free(model->response);
        free(model->weights);
        free(model->order_by);
        free_strings(model->variance_columns, model->n_variance_columns);
        free(model->variance_columns_at);
    }
    free(s->models);
}

void spec_free(spec *s)
{
    if (!s)
        return;
    free_data(&s->data);
    for (size_t i = 0; i < s->n_meta; i++) {
        free(s->meta[i].key);
        free(s->meta[i].value);
    }
    free(s->meta);
    for (size_t i = 0; i < s->n_derive; i++) {
        free(s->derive[i].name);
        free(s->derive[i].from);
    }
    free(s->derive);
    if (s->where)
        filter_clear(s->where);
    free(s->where);
    free_models(s);
    spec_free_outputs(s);
    spec_free_document(&s->document);
    free(s->path);
    free(s->source);
    free(s->title);
    free(s);
}

/*
 * scaffold.c — fitproof scaffold DATA: reads a data file with every kind
 * inferred and prints a commented starting spec. Each guess is said in a
 * comment (kinds, identifiers, missing cells, the delimiter, the model);
 * nothing is changed without saying so. The printed spec lints cleanly
 * against the file it came from.
 *
 * Common practice, no source: a column of distinct whole numbers named
 * like an identifier, or running 1..n, is a row identifier; a category
 * with more than SCAFFOLD_MAX_TERM_LEVELS levels is left out of a first
 * model; the response is the last numeric column (files are often laid out
 * inputs first, result last).
 */
#define _XOPEN_SOURCE 700 /* fdopen, O_CLOEXEC */
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../data/data.h"
#include "../util/dates.h"
#include "cli.h"

#define SCAFFOLD_MAX_TERM_LEVELS 20
#define SCAFFOLD_LIST_LEVELS 20

typedef struct {
    const data_column *column;
    size_t n_texts;      /* a category of numbers but for a few texts: how many */
    size_t text_cells;
    bool identifier;
    bool usable;         /* may be a term or the response */
    const char *why_not; /* when not usable and not an identifier */
    bool integers;
    bool distinct;
    double min, max;
    size_t n_values;     /* non-missing cells */
    uint32_t first_missing_line;
    const char *position_word; /* what first_missing_line is: "line" or "row" */
} column_facts;

/* ---- YAML text ------------------------------------------------------------- */

/* Length of a UTF-8 sequence YAML does not allow unescaped (C1 controls,
   the byte-order mark, U+FFFE and U+FFFF, which are not printable; the
   line and paragraph separators U+2028 and U+2029, which YAML 1.1 reads as
   line breaks), or 0; *code is the character. */
static size_t unprintable(const unsigned char *p, unsigned *code)
{
    if (p[0] == 0xC2 && p[1] >= 0x80 && p[1] <= 0x9F) {
        *code = p[1];
        return 2;
    }
    if ((p[0] == 0xEF && p[1] == 0xBB && p[2] == 0xBF) ||
        (p[0] == 0xEF && p[1] == 0xBF && (p[2] == 0xBE || p[2] == 0xBF)) ||
        (p[0] == 0xE2 && p[1] == 0x80 && (p[2] == 0xA8 || p[2] == 0xA9))) {
        *code = ((unsigned)(p[0] & 0x0F) << 12) | ((unsigned)(p[1] & 0x3F) << 6) | (p[2] & 0x3F);
        return 3;
    }
    return 0;
}

static bool plain_safe(const char *text)
{
    static const char safe[] = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_./-";
    if (!*text || strchr("./-", *text))
        return false;
    unsigned code;
    for (const unsigned char *p = (const unsigned char *)text; *p; p++)
        if ((*p < 0x80 && !strchr(safe, *p)) || unprintable(p, &code))
            return false;
    return true;
}

/* text as a YAML scalar: plain when safe, else double-quoted. */
static void put_scalar(buf *out, const char *text)
{
    if (plain_safe(text)) {
        buf_puts(out, text);
        return;
    }
    buf_putc(out, '"');
    for (const unsigned char *p = (const unsigned char *)text; *p; p++) {
        unsigned code;
        size_t skip = unprintable(p, &code);
        if (skip)
            buf_printf(out, "\\u%04X", code);
        else if (*p == '"' || *p == '\\')
            buf_printf(out, "\\%c", *p);
        else if (*p == '\n')
            buf_puts(out, "\\n");
        else if (*p == '\t')
            buf_puts(out, "\\t");
        else if (*p < 0x20 || *p == 0x7F)
            buf_printf(out, "\\x%02X", *p);
        else
            buf_putc(out, (char)*p);
        p += skip ? skip - 1 : 0;
    }
    buf_putc(out, '"');
}

/* Appends words to a comment, wrapping at 76 columns with "    # ". */
static void put_comment(buf *out, const char *indent, const char *words)
{
    size_t width = 0;
    const char *p = words;
    while (*p) {
        const char *space = strchr(p, ' ');
        size_t length = space ? (size_t)(space - p) : strlen(p);
        if (width == 0) {
            buf_printf(out, "%s#", indent);
            width = strlen(indent) + 1;
        } else if (width + 1 + length > 76) {
            buf_printf(out, "\n%s#", indent);
            width = strlen(indent) + 1;
        }
        buf_putc(out, ' ');
        buf_put(out, p, length);
        width += 1 + length;
        p += length;
        while (*p == ' ')
            p++;
    }
    if (width)
        buf_putc(out, '\n');
}

/* ---- facts about the columns ---------------------------------------------- */

static int compare_doubles(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static bool named_like_identifier(const char *name)
{
    size_t n = strlen(name);
    if (n >= 2 && (strcmp(name + n - 2, "id") == 0 || strcmp(name + n - 2, "ID") == 0 ||
                   strcmp(name + n - 2, "Id") == 0))
        return n == 2 || !strchr("abcdefghijklmnopqrstuvwxyz", name[n - 3]) ||
               name[n - 2] == 'I';
    return false;
}

static void numeric_facts(column_facts *f, const data_table *t)
{
    const data_column *c = f->column;
    double *values = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(double));
    f->integers = true;
    for (size_t row = 0; row < t->n_rows; row++)
        if (!isnan(c->numbers[row])) {
            values[f->n_values++] = c->numbers[row];
            f->integers = f->integers && c->numbers[row] == floor(c->numbers[row]);
        }
    qsort(values, f->n_values, sizeof(double), compare_doubles);
    f->distinct = true;
    for (size_t i = 1; i < f->n_values; i++)
        f->distinct = f->distinct && values[i] != values[i - 1];
    f->min = f->n_values ? values[0] : NAN;
    f->max = f->n_values ? values[f->n_values - 1] : NAN;
    free(values);
    bool run = f->n_values > 1 && f->max - f->min + 1 == (double)f->n_values;
    f->identifier = f->integers && f->distinct && f->n_values > 1 &&
                    (run || named_like_identifier(c->name));
    if (f->n_values == 0)
        f->why_not = "it has no values";
    else if (f->min == f->max)
        f->why_not = "it has one value only";
    f->usable = !f->identifier && !f->why_not;
}

/* A category whose levels are numbers but for at most five texts in fewer
   cells (the data stage's type trap, which scaffold reads past): said in
   the comment and left out of the model, not used as a category. */
static void numbers_but_texts(column_facts *f)
{
    const data_column *c = f->column;
    size_t number_cells = 0;
    for (size_t i = 0; i < c->n_levels; i++) {
        double value;
        if (data_parse_number(c->levels[i], strlen(c->levels[i]), &value)) {
            number_cells += c->level_counts[i];
        } else {
            f->n_texts++;
            f->text_cells += c->level_counts[i];
        }
    }
    if (f->n_texts == 0 || f->n_texts > 5 || number_cells <= f->text_cells)
        f->n_texts = 0;
}

static void category_facts(column_facts *f)
{
    const data_column *c = f->column;
    numbers_but_texts(f);
    for (size_t i = 0; i < c->n_levels; i++)
        f->n_values += c->level_counts[i];
    f->distinct = c->n_levels == f->n_values;
    f->identifier = c->big_integers ||
                    (f->distinct && (f->n_values > SCAFFOLD_MAX_TERM_LEVELS ||
                                     (f->n_values > 1 && named_like_identifier(c->name))));
    if (c->n_levels == 0)
        f->why_not = "it has no values";
    else if (c->n_levels == 1)
        f->why_not = "it has one level only";
    else if (c->n_levels > SCAFFOLD_MAX_TERM_LEVELS)
        f->why_not = "it has too many levels for a first model";
    if (f->n_texts)
        f->why_not = "its few texts need a look first";
    f->usable = !f->identifier && !f->why_not;
}

static column_facts *gather_facts(const data_table *t)
{
    column_facts *facts = xcalloc(t->n_columns ? t->n_columns : 1, sizeof *facts);
    for (size_t j = 0; j < t->n_columns; j++) {
        column_facts *f = &facts[j];
        f->column = &t->columns[j];
        if (f->column->kind == DATA_NUMERIC)
            numeric_facts(f, t);
        else
            category_facts(f);
        for (size_t row = 0; row < t->n_rows && !f->first_missing_line; row++)
            if (f->column->kind == DATA_NUMERIC ? isnan(f->column->numbers[row])
                                                : f->column->codes[row] < 0)
                f->first_missing_line = t->lines[row];
        f->position_word = t->position_word ? t->position_word : "line";
    }
    return facts;
}

/* ---- printing ---------------------------------------------------------------- */

static void describe_numbers(buf *words, const column_facts *f)
{
    char low[32], high[32];
    fmt_roundtrip(low, sizeof low, f->min);
    fmt_roundtrip(high, sizeof high, f->max);
    if (f->n_values == 0)
        buf_puts(words, "numeric, every cell missing.");
    else if (f->min == f->max)
        buf_printf(words, "numeric, always %s.", low);
    else
        buf_printf(words, "%s from %s to %s%s.", f->integers ? "whole numbers" : "numbers", low,
                   high, f->integers && f->distinct && f->n_values > 2 ? ", each different" : "");
}

static void describe_levels(buf *words, const column_facts *f)
{
    const data_column *c = f->column;
    if (c->big_integers)
        buf_puts(words, "integers beyond 2^53, which a double cannot hold exactly, so read as "
                        "text (kind: category); ");
    if (f->n_texts) {
        buf_printf(words, "numbers, but for %zu text%s in %zu cell%s:", f->n_texts,
                   f->n_texts == 1 ? "" : "s", f->text_cells, f->text_cells == 1 ? "" : "s");
        size_t shown = 0;
        for (size_t i = 0; i < c->n_levels; i++) {
            double value;
            if (data_parse_number(c->levels[i], strlen(c->levels[i]), &value))
                continue;
            buf_printf(words, "%s ", shown++ ? "," : "");
            put_scalar(words, c->levels[i]);
        }
        buf_puts(words, ". Read as text (kind: category) for now; correct those cells, or list "
                        "them under missing, and declare the column numeric.");
        return;
    }
    bool one_each = f->distinct && c->n_levels > 3;
    size_t shown = one_each ? 3 : SCAFFOLD_LIST_LEVELS;
    if (one_each)
        buf_printf(words, "%zu different texts, one per row:", c->n_levels);
    else
        buf_printf(words, "%zu level%s:", c->n_levels, c->n_levels == 1 ? "" : "s");
    for (size_t i = 0; i < c->n_levels && i < shown; i++) {
        buf_printf(words, "%s ", i ? "," : "");
        put_scalar(words, c->levels[i]);
        if (!one_each)
            buf_printf(words, " (%zu)", c->level_counts[i]);
    }
    if (c->n_levels > shown)
        buf_printf(words, " and %zu more", c->n_levels - shown);
    buf_putc(words, '.');
}

static void describe_column(buf *out, const column_facts *f)
{
    buf words;
    buf_init(&words);
    put_scalar(&words, f->column->name);
    buf_puts(&words, ": ");
    if (f->column->kind == DATA_NUMERIC)
        describe_numbers(&words, f);
    else
        describe_levels(&words, f);
    size_t missing = f->column->n_missing;
    if (missing == 1 && f->n_values)
        buf_printf(&words, " 1 cell missing (%s %u).", f->position_word,
                   (unsigned)f->first_missing_line);
    else if (missing && f->n_values)
        buf_printf(&words, " %zu cells missing (the first at %s %u).", missing,
                   f->position_word, (unsigned)f->first_missing_line);
    if (f->identifier)
        buf_puts(&words, " It looks like a row identifier, so the model leaves it out.");
    else if (f->why_not)
        buf_printf(&words, " The model leaves it out: %s.", f->why_not);
    else if (f->column->kind == DATA_CATEGORY)
        buf_puts(&words, " The reference level, which the others are compared with, is the "
                         "first; change it if another suits better.");
    put_comment(out, "    ", words.data);
    buf_free(&words);
}

/* "    name:" — or, for a name too long for an implicit YAML key (libyaml
   reads at most 1024 characters of one), the explicit "    ? name\n    :". */
static void put_column_key(buf *out, const char *name)
{
    buf key;
    buf_init(&key);
    put_scalar(&key, name);
    if (key.length > 1000)
        buf_printf(out, "    ? %s\n    :", key.data);
    else
        buf_printf(out, "    %s:", key.data);
    buf_free(&key);
}

/* What the texts of a column say as dates: whether every one is an ISO
   8601 date or date-time, and whether some have a time of day, and some a
   time without an offset (which needs data.time_zone). */
typedef struct {
    bool all_dates;
    bool has_time;
    bool needs_zone;
    size_t earliest, latest; /* levels; offsets considered, so by the clock */
} date_facts;

static date_facts column_dates(const data_column *c)
{
    date_facts facts = {c->kind == DATA_CATEGORY && c->n_levels > 0, false, false, 0, 0};
    double earliest = 0, latest = 0;
    for (size_t i = 0; facts.all_dates && i < c->n_levels; i++) {
        date_value date = {0};
        facts.all_dates = date_parse(c->levels[i], strlen(c->levels[i]), &date);
        facts.has_time |= date.has_time;
        facts.needs_zone |= date.has_time && !date.has_offset;
        if (i == 0 || date.days < earliest) {
            earliest = date.days;
            facts.earliest = i;
        }
        if (i == 0 || date.days > latest) {
            latest = date.days;
            facts.latest = i;
        }
    }
    if (!facts.all_dates)
        facts.has_time = facts.needs_zone = false;
    return facts;
}

/* The first column of date-times without an offset, or SIZE_MAX. */
static size_t first_zoneless_column(const data_table *t)
{
    for (size_t j = 0; j < t->n_columns; j++)
        if (column_dates(&t->columns[j]).needs_zone)
            return j;
    return SIZE_MAX;
}

/* Date-times without an offset are refused unless the spec names the zone
   they were written in: UTC is offered, with a comment that says it is a
   guess, so that the drafted spec lints and the choice is in sight. */
static void print_time_zone(buf *out, const data_table *t)
{
    size_t j = first_zoneless_column(t);
    if (j == SIZE_MAX)
        return;
    buf words;
    buf_init(&words);
    buf_puts(&words, "Column ");
    put_scalar(&words, t->columns[j].name);
    buf_puts(&words, " holds date-times without an offset from UTC, so the spec must say in "
                     "which zone they were written. UTC is a guess: write the fixed offset they "
                     "were recorded in, as in +01:00.");
    put_comment(out, "  ", words.data);
    buf_free(&words);
    buf_puts(out, "  time_zone: UTC\n");
}

static void print_column(buf *out, const column_facts *f)
{
    const data_column *c = f->column;
    date_facts dates = column_dates(c);
    if (dates.all_dates) {
        buf words;
        buf_init(&words);
        buf_printf(&words,
                   "%s: %s from %s to %s (%zu different). Read as a %s, counted in days%s "
                   "from the earliest one (origin: sets another), usable as a predictor or "
                   "as order_by.",
                   c->name, dates.has_time ? "date-times" : "calendar dates",
                   c->levels[dates.earliest], c->levels[dates.latest], c->n_levels,
                   dates.has_time ? "date-time" : "date",
                   dates.has_time ? " and fractions of a day" : "");
        put_comment(out, "    ", words.data);
        buf_free(&words);
        put_column_key(out, c->name);
        buf_puts(out, " {kind: date, unit: day}\n");
        return;
    }
    describe_column(out, f);
    put_column_key(out, c->name);
    if (c->kind == DATA_NUMERIC) {
        buf_puts(out, " {kind: numeric}\n");
        return;
    }
    if (c->n_levels == 0 || c->n_levels > SCAFFOLD_LIST_LEVELS) {
        buf_puts(out, " {kind: category}\n");
        return;
    }
    buf_puts(out, "\n      kind: category\n      levels: [");
    for (size_t i = 0; i < c->n_levels; i++) {
        buf_puts(out, i ? ", " : "");
        put_scalar(out, c->levels[i]);
    }
    buf_puts(out, "]\n      reference: ");
    put_scalar(out, c->levels[0]);
    buf_putc(out, '\n');
}

static void print_missing(buf *out, const spec_data *data)
{
    if (!data->n_missing)
        return;
    buf words;
    buf_init(&words);
    buf_puts(&words, "Cells reading");
    for (size_t i = 0; i < data->n_missing; i++) {
        buf_puts(&words, i == 0 ? " " : i + 1 == data->n_missing ? " or " : ", ");
        put_scalar(&words, data->missing[i]);
    }
    buf_puts(&words, " stood among numbers; they are read as missing below. Remove a word "
                     "from this list if it means something else.");
    put_comment(out, "  ", words.data);
    buf_puts(out, "  missing: [");
    for (size_t i = 0; i < data->n_missing; i++) {
        buf_puts(out, i ? ", " : "");
        put_scalar(out, data->missing[i]);
    }
    buf_puts(out, "]\n");
    buf_free(&words);
}

/* The last usable numeric column, or SIZE_MAX. */
static size_t choose_response(const data_table *t, const column_facts *facts)
{
    for (size_t j = t->n_columns; j-- > 0;)
        if (facts[j].usable && t->columns[j].kind == DATA_NUMERIC)
            return j;
    return SIZE_MAX;
}

static void print_model(buf *out, const data_table *t, const column_facts *facts,
                        size_t response)
{
    buf_puts(out, "models:\n");
    put_comment(out, "  ",
                "The response is the last numeric column; the terms are the other columns "
                "the comments above do not leave out. Interactions, curvature and the other "
                "model keys are yours to add.");
    buf_puts(out, "  - id: main\n    response: ");
    put_scalar(out, t->columns[response].name);
    buf_puts(out, "\n    terms: [");
    bool first = true;
    for (size_t j = 0; j < t->n_columns; j++) {
        if (j == response || !facts[j].usable)
            continue;
        buf_puts(out, first ? "" : ", ");
        put_scalar(out, t->columns[j].name);
        first = false;
    }
    buf_puts(out, "]\n");
}

/* The delimiter and decimal mark scaffold detected, said and written, so
   that the spec reads the file as scaffold did. */
static void print_format(buf *out, const spec_data *data)
{
    /* Spreadsheets and databases carry their own cell types. */
    if (data->source != SPEC_SOURCE_FILE || data->delimiter == 0)
        return;
    size_t n = strlen(data->path);
    bool tsv = n > 4 && (strcmp(data->path + n - 4, ".tsv") == 0 ||
                         strcmp(data->path + n - 4, ".tab") == 0);
    if ((data->delimiter == ',' || (tsv && data->delimiter == '\t')) && !data->decimal_comma)
        return;
    const char *name = data->delimiter == '\t' ? "a tab" : data->delimiter == ';' ? "';'"
                       : data->delimiter == '|' ? "'|'" : "','";
    buf words;
    buf_init(&words);
    buf_printf(&words, "The fields are separated by %s%s.", name,
               data->decimal_comma ? " and numbers use a decimal comma" : "");
    put_comment(out, "  ", words.data);
    buf_free(&words);
    if (data->delimiter == '\t')
        buf_puts(out, tsv ? "" : "  delimiter: tab\n");
    else
        buf_printf(out, "  delimiter: \"%c\"\n", data->delimiter);
    if (data->decimal_comma)
        buf_puts(out, "  decimal: comma\n");
}

static void print_spec(buf *out, const spec *s, const data_table *t, const column_facts *facts,
                       size_t response)
{
    buf words;
    buf_init(&words);
    buf_puts(&words, "A starting spec for ");
    put_scalar(&words, s->data.path);
    buf_printf(&words, ", drafted by fitproof scaffold from the data alone: %zu rows, %zu "
                       "columns. Every kind, level and term below is a guess; check each one, "
                       "then run fitproof lint on this file.",
               t->n_rows, t->n_columns);
    put_comment(out, "", words.data);
    buf_puts(out, "fitproof: 1\ntitle: ");
    put_scalar(out, s->data.table ? s->data.table : s->data.path);
    static const char *const source_keys[] = {"path", "sqlite", "postgres", "path"};
    buf_printf(out, "\ndata:\n  %s: ", source_keys[s->data.source]);
    put_scalar(out, s->data.source == SPEC_SOURCE_POSTGRES ? s->data.connection : s->data.path);
    buf_putc(out, '\n');
    const char *const sql_keys[] = {"table", "query", "key", "sheet"};
    const char *const sql_values[] = {s->data.table, s->data.query, s->data.key, s->data.sheet};
    for (size_t k = 0; k < 4; k++)
        if (sql_values[k]) {
            buf_printf(out, "  %s: ", sql_keys[k]);
            put_scalar(out, sql_values[k]);
            buf_putc(out, '\n');
        }
    if (s->data.header_row)
        buf_printf(out, "  header_row: %ld\n", s->data.header_row);
    print_format(out, &s->data);
    print_missing(out, &s->data);
    print_time_zone(out, t);
    buf_puts(out, "  columns:\n");
    for (size_t j = 0; j < t->n_columns; j++)
        print_column(out, &facts[j]);
    print_model(out, t, facts, response);
    buf_free(&words);
}

/* ---- reading ------------------------------------------------------------------- */

/* Guesses the delimiter and the decimal mark from the first lines
   (data_sniff); a .tsv or .tab file is tab-separated. */
static bool sniff_format(const char *path, spec_data *data)
{
    size_t n = strlen(path);
    bool tsv = n > 4 && (strcmp(path + n - 4, ".tsv") == 0 || strcmp(path + n - 4, ".tab") == 0);
    data->delimiter = tsv ? '\t' : ',';
    /* Only a regular file: a FIFO with no writer would block the open and
       a device would never end (O_NONBLOCK only for the open). */
    int fd = open(path, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
    struct stat info;
    const char *why = fd < 0 ? strerror(errno) : fstat(fd, &info) != 0 ? strerror(errno) : NULL;
    if (!why && !S_ISREG(info.st_mode))
        why = "it is not a regular file (a device, a pipe or a socket); copy its content "
              "into a file";
    FILE *f = why ? NULL : fdopen(fd, "rb");
    if (!f) {
        fprintf(stderr, "fitproof: error: cannot read '%s': %s\n", path,
                why ? why : strerror(errno));
        if (fd >= 0)
            close(fd);
        return false;
    }
    static char sample[1 << 16];
    size_t got = fread(sample, 1, sizeof sample, f);
    fclose(f);
    data_sniffed sniffed;
    data_sniff(sample, got, &sniffed);
    data->delimiter = tsv ? '\t' : sniffed.delimiter;
    data->decimal_comma = sniffed.decimal_comma && data->delimiter != ',';
    return true;
}

/* A SQLite database starts with these 16 bytes (sqlite.org/fileformat.html, 1.3). */
static bool is_sqlite_file(const char *path)
{
    char head[16];
    struct stat info;
    /* Only a regular file is opened: a FIFO would block here, and the
       reader refuses anything else with its own message. */
    if (stat(path, &info) != 0 || !S_ISREG(info.st_mode))
        return false;
    FILE *f = fopen(path, "rb");
    if (!f)
        return false;
    bool sqlite = fread(head, 1, sizeof head, f) == sizeof head &&
                  memcmp(head, "SQLite format 3", sizeof head) == 0;
    fclose(f);
    return sqlite;
}

int command_scaffold(const char *data_path, const scaffold_database *database)
{
    error_list errors;
    error_list_init(&errors);
    spec s;
    memset(&s, 0, sizeof s);
    const char *name = data_path ? data_path : database->connection;
    s.path = (char *)name;
    s.data.path = (char *)name;
    s.data.resolved = (char *)data_path;
    src_mark whole = {0, 0};
    s.data.path_at = whole;
    size_t length = data_path ? strlen(data_path) : 0;
    bool workbook = length > 5 && strcmp(data_path + length - 5, ".xlsx") == 0;
    char *end = NULL;
    if (database && database->header_row) {
        s.data.header_row = strtol(database->header_row, &end, 10);
        if (*end || s.data.header_row < 1 || s.data.header_row > 1048576) {
            fprintf(stderr, "fitproof: error: --header-row takes a row number from 1, not "
                            "'%s'\n", database->header_row);
            return EXIT_USER_ERROR;
        }
    }
    if (workbook) {
        s.data.source = SPEC_SOURCE_XLSX;
        s.data.sheet = database ? (char *)database->sheet : NULL;
        s.data.delimiter = ',';
    } else if (database && (database->sheet || database->header_row)) {
        fprintf(stderr, "fitproof: error: --sheet and --header-row are for a spreadsheet (a "
                        ".xlsx file)\n");
        return EXIT_USER_ERROR;
    } else if (database) {
        /* Messages name the command line's values, not a spec. */
        s.data.source = database->connection ? SPEC_SOURCE_POSTGRES : SPEC_SOURCE_SQLITE;
        s.data.connection = (char *)database->connection;
        s.data.table = (char *)database->table;
        s.data.query = (char *)database->query;
        s.data.key = (char *)database->key;
        s.data.delimiter = ',';
        const char *unordered =
            database->query && !database->key && !spec_query_is_ordered(database->query)
                ? "the query has no ORDER BY, so its rows could come in another order on "
                  "the next run; add ORDER BY, or name a key column with --key"
            : database->table && !database->key && database->connection
                ? "a PostgreSQL table has no row order of its own; name the column that "
                  "orders the rows with --key"
                : NULL;
        if (unordered) {
            fprintf(stderr, "fitproof: error: %s\n", unordered);
            return EXIT_USER_ERROR;
        }
    } else if (is_sqlite_file(data_path)) {
        fprintf(stderr, "fitproof: error: %s is a SQLite database; name its rows with --table "
                        "NAME or --query SQL\n", data_path);
        return EXIT_USER_ERROR;
    } else if (!sniff_format(data_path, &s.data)) {
        return EXIT_USER_ERROR;
    }
    unsigned flags = DATA_LOAD_SCAFFOLD | DATA_LOAD_NO_DIGEST | DATA_LOAD_NO_SUMMARY;
    data_table *first = data_load_with(&s, flags, &errors);
    data_table *t = first;
    if (first && first->n_suggested_missing) {
        /* Read again with the words as missing, as the printed spec will. */
        s.data.missing = first->suggested_missing;
        s.data.n_missing = first->n_suggested_missing;
        t = data_load_with(&s, flags, &errors);
    }
    int status = EXIT_USER_ERROR;
    if (t) {
        column_facts *facts = gather_facts(t);
        size_t response = choose_response(t, facts);
        if (response == SIZE_MAX) {
            fprintf(stderr, "fitproof: error: %s has no numeric column a model could use as "
                            "its response\n", data_path);
        } else {
            buf out;
            buf_init(&out);
            print_spec(&out, &s, t, facts, response);
            fputs(out.data, stdout);
            buf_free(&out);
            status = EXIT_OK;
        }
        free(facts);
    }
    error_list_print(&errors);
    if (t != first)
        data_table_free(t);
    data_table_free(first);
    error_list_free(&errors);
    return status;
}

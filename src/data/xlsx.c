/*
 * xlsx.c — data: {path: results.xlsx, sheet: "Batch 12", header_row: 3}:
 * one sheet of an Office Open XML workbook (ECMA-376 Part 1, SpreadsheetML),
 * its cells written down in the canonical text form (sql.h) and read from
 * there, so that kinds, levels, missing values, where and derive behave as
 * for a CSV file. The container is read with libzip, each part with
 * libxml2's streaming xmlTextReader straight from the zip entry: a sheet is
 * never held as a tree, only the row being read (shared strings and the
 * styles are held, as every cell may refer to them).
 *
 * A cell is a shared string (t="s"), an inline string (t="inlineStr"), a
 * formula's text result (t="str"), a boolean (t="b", read as the words
 * true and false), an ISO 8601 date (t="d"), an error (t="e", refused) or
 * a number, whose style may make it a date: a serial day count from
 * 1899-12-30 (or 1904-01-01 with date1904), with 1900 treated as a leap
 * year as the format requires (ECMA-376 Part 1, 18.17.4.1), so serial 60,
 * the 29 February 1900 that never was, is refused. A formula counts by its
 * cached value; without one it is refused. Merged cells in the header row
 * are refused. Each row is named by its sheet row, each message by its
 * cell: results.xlsx:Batch 12!C17.
 */
#include <libxml/xmlreader.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <zip.h>

#include "../util/dates.h"
#include "sql.h"

#define NS_RELATIONSHIPS                                                                   \
    "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
#define NS_RELATIONSHIPS_STRICT "http://purl.oclc.org/ooxml/officeDocument/relationships"
#define MAX_COLUMNS 16384u /* XFD, the last column a sheet has */

typedef struct {
    const spec *s;
    const char *path;
    const char *sheet_name; /* the sheet read */
    error_list *errors;
    zip_t *zip;
    bool date1904;
    /* shared strings: back to back, NUL-terminated */
    buf strings;
    size_t *string_offsets;
    size_t n_strings, strings_capacity;
    /* per cell style (xf): whether its number format shows a date */
    bool *xf_date;
    size_t n_xf, xf_capacity;
    /* sheets in workbook order */
    char **sheet_names;
    char **sheet_targets;
    size_t n_sheets;
} workbook;

/* ---- messages ---------------------------------------------------------- */

static void cell_error(workbook *wb, unsigned column, unsigned row, const char *format,
                       const char *detail)
{
    buf place;
    buf_init(&place);
    buf_printf(&place, "%s:%s!", wb->path, wb->sheet_name);
    sql_cell_name(&place, column, row);
    error_at(wb->errors, place.data, (src_mark){0, 0}, format, detail);
    buf_free(&place);
}

static void file_error(workbook *wb, const char *what, const char *detail)
{
    error_at(
        wb->errors, wb->s->path, wb->s->data.path_at,
        "cannot read the workbook '%s': %s%s; check that it is an .xlsx file (Office Open "
        "XML), not .xls or .ods",
        wb->path, what, detail);
}

/* ---- parts of the container, streamed ----------------------------------- */

static int entry_read(void *context, char *buffer, int length)
{
    zip_int64_t got = zip_fread(context, buffer, (zip_uint64_t)length);
    return got < 0 ? -1 : (int)got;
}

static int entry_close(void *context)
{
    (void)context; /* closed by close_part, after the reader */
    return 0;
}

typedef struct {
    zip_file_t *entry;
    xmlTextReaderPtr reader;
} part;

/* Opens a part for streaming; false when it is absent. */
static bool open_part(workbook *wb, const char *name, part *p)
{
    p->entry = zip_fopen(wb->zip, name, 0);
    p->reader = NULL;
    if (!p->entry)
        return false;
    /* No network, no external entities: a workbook is data. */
    p->reader = xmlReaderForIO(entry_read, entry_close, p->entry, name, NULL,
                               XML_PARSE_NONET | XML_PARSE_NOERROR | XML_PARSE_NOWARNING);
    if (!p->reader) {
        zip_fclose(p->entry);
        p->entry = NULL;
        return false;
    }
    return true;
}

static void close_part(part *p)
{
    if (p->reader)
        xmlFreeTextReader(p->reader);
    if (p->entry)
        zip_fclose(p->entry);
}

/* The next node; 0 at the end, -1 for malformed XML. */
static int next_node(part *p)
{
    return xmlTextReaderRead(p->reader);
}

/* Moves past the element at the reader, its children included. */
static bool skip_element(part *p)
{
    if (xmlTextReaderIsEmptyElement(p->reader))
        return true;
    int depth = xmlTextReaderDepth(p->reader);
    while (next_node(p) == 1)
        if (xmlTextReaderNodeType(p->reader) == XML_READER_TYPE_END_ELEMENT &&
            xmlTextReaderDepth(p->reader) == depth)
            return true;
    return false;
}

static bool is_element(part *p, const char *name)
{
    return xmlTextReaderNodeType(p->reader) == XML_READER_TYPE_ELEMENT &&
           strcmp((const char *)xmlTextReaderConstLocalName(p->reader), name) == 0;
}

static bool is_end(part *p, const char *name)
{
    return xmlTextReaderNodeType(p->reader) == XML_READER_TYPE_END_ELEMENT &&
           strcmp((const char *)xmlTextReaderConstLocalName(p->reader), name) == 0;
}

/* An attribute's value (caller frees with xmlFree), or NULL. */
static char *attribute(part *p, const char *name)
{
    return (char *)xmlTextReaderGetAttribute(p->reader, (const xmlChar *)name);
}

/* The text of the element at the reader (its text and CDATA children),
   appended to out; the reader ends on its end tag. */
static bool element_text(part *p, buf *out)
{
    if (xmlTextReaderIsEmptyElement(p->reader))
        return true;
    int depth = xmlTextReaderDepth(p->reader);
    while (next_node(p) == 1) {
        int type = xmlTextReaderNodeType(p->reader);
        if (type == XML_READER_TYPE_TEXT || type == XML_READER_TYPE_CDATA ||
            type == XML_READER_TYPE_SIGNIFICANT_WHITESPACE ||
            type == XML_READER_TYPE_WHITESPACE) {
            const char *text = (const char *)xmlTextReaderConstValue(p->reader);
            if (text)
                buf_puts(out, text);
        }
        if (type == XML_READER_TYPE_END_ELEMENT && xmlTextReaderDepth(p->reader) == depth)
            return true;
    }
    return false;
}

/* The text of a string item (<si> or <is>): its <t> elements, runs
   included, phonetic readings (<rPh>) left out. */
static bool string_item(part *p, const char *end, buf *out)
{
    if (xmlTextReaderIsEmptyElement(p->reader))
        return true;
    bool phonetic = false;
    while (next_node(p) == 1) {
        if (is_element(p, "rPh"))
            phonetic = !xmlTextReaderIsEmptyElement(p->reader);
        else if (is_end(p, "rPh"))
            phonetic = false;
        else if (is_element(p, "t") && !phonetic) {
            if (!element_text(p, out))
                return false;
        } else if (is_end(p, end))
            return true;
    }
    return false;
}

/* ---- workbook, relationships, shared strings, styles -------------------- */

/* The part a relationship target names, from the xl/ folder. */
static char *resolve_target(const char *target)
{
    buf name;
    buf_init(&name);
    if (target[0] == '/')
        buf_puts(&name, target + 1);
    else
        buf_printf(&name, "xl/%s", target);
    return buf_detach(&name);
}

static bool read_workbook(workbook *wb)
{
    part p;
    if (!open_part(wb, "xl/workbook.xml", &p)) {
        file_error(wb, "it has no xl/workbook.xml", "");
        return false;
    }
    char **ids = NULL;
    size_t capacity = 0, id_capacity = 0;
    int rc;
    while ((rc = next_node(&p)) == 1) {
        if (is_element(&p, "workbookPr")) {
            char *flag = attribute(&p, "date1904");
            wb->date1904 = flag && (strcmp(flag, "1") == 0 || strcmp(flag, "true") == 0);
            xmlFree(flag);
        } else if (is_element(&p, "sheet")) {
            char *name = attribute(&p, "name");
            char *id = (char *)xmlTextReaderGetAttributeNs(
                p.reader, (const xmlChar *)"id", (const xmlChar *)NS_RELATIONSHIPS);
            if (!id)
                id = (char *)xmlTextReaderGetAttributeNs(
                    p.reader, (const xmlChar *)"id",
                    (const xmlChar *)NS_RELATIONSHIPS_STRICT);
            xgrow((void **)&wb->sheet_names, &capacity, wb->n_sheets + 1, sizeof(char *));
            xgrow((void **)&ids, &id_capacity, wb->n_sheets + 1, sizeof(char *));
            wb->sheet_names[wb->n_sheets] = xstrdup(name ? name : "");
            ids[wb->n_sheets++] = xstrdup(id ? id : "");
            xmlFree(name);
            xmlFree(id);
        }
    }
    close_part(&p);
    bool ok = rc == 0 && wb->n_sheets > 0;
    if (rc != 0)
        file_error(wb, "xl/workbook.xml is not well-formed XML", "");
    else if (wb->n_sheets == 0)
        file_error(wb, "the workbook lists no sheets", "");
    wb->sheet_targets = xcalloc(wb->n_sheets ? wb->n_sheets : 1, sizeof(char *));
    if (ok && open_part(wb, "xl/_rels/workbook.xml.rels", &p)) {
        while (next_node(&p) == 1) {
            if (!is_element(&p, "Relationship"))
                continue;
            char *id = attribute(&p, "Id"), *target = attribute(&p, "Target");
            for (size_t i = 0; id && target && i < wb->n_sheets; i++)
                if (strcmp(ids[i], id) == 0 && !wb->sheet_targets[i])
                    wb->sheet_targets[i] = resolve_target(target);
            xmlFree(id);
            xmlFree(target);
        }
        close_part(&p);
    }
    for (size_t i = 0; i < wb->n_sheets; i++)
        free(ids[i]);
    free(ids);
    return ok;
}

static bool read_shared_strings(workbook *wb)
{
    part p;
    if (!open_part(wb, "xl/sharedStrings.xml", &p))
        return true; /* a workbook without text cells has none */
    int rc;
    while ((rc = next_node(&p)) == 1) {
        if (!is_element(&p, "si"))
            continue;
        xgrow((void **)&wb->string_offsets, &wb->strings_capacity, wb->n_strings + 1,
              sizeof(size_t));
        wb->string_offsets[wb->n_strings++] = wb->strings.length;
        if (!string_item(&p, "si", &wb->strings)) {
            rc = -1;
            break;
        }
        buf_putc(&wb->strings, '\0');
    }
    close_part(&p);
    if (rc != 0)
        file_error(wb, "xl/sharedStrings.xml is not well-formed XML", "");
    return rc == 0;
}

/* Built-in number formats that show a date (ECMA-376 Part 1, 18.8.30):
   14–17 and 22, and the East Asian date formats 27–36 and 50–58. Formats
   of a time of day alone (18–21, 45–47) stay numbers (fractions of a day). */
static bool builtin_date(long id)
{
    return (id >= 14 && id <= 17) || id == 22 || (id >= 27 && id <= 36) ||
           (id >= 50 && id <= 58);
}

/* A custom format shows a date when, outside quoted text, escaped
   characters and [brackets], it has a day, month or year code. */
static bool code_is_date(const char *code)
{
    for (const char *p = code; *p; p++) {
        if (*p == '"') {
            const char *close = strchr(p + 1, '"');
            if (!close)
                return false;
            p = close;
        } else if (*p == '\\' || *p == '_' || *p == '*') {
            if (!*++p)
                return false;
        } else if (*p == '[') {
            const char *close = strchr(p, ']');
            if (!close)
                return false;
            p = close;
        } else if (strchr("dDyY", *p) ||
                   ((*p == 'm' || *p == 'M') && !strchr(code, 'h') && !strchr(code, 'H'))) {
            return true;
        }
    }
    return false;
}

static bool read_styles(workbook *wb)
{
    part p;
    if (!open_part(wb, "xl/styles.xml", &p))
        return true;
    long *custom_ids = NULL;
    bool *custom_dates = NULL;
    size_t n_custom = 0, custom_capacity = 0, dates_capacity = 0;
    bool in_cell_xfs = false;
    int rc;
    while ((rc = next_node(&p)) == 1) {
        if (is_element(&p, "numFmt")) {
            char *id = attribute(&p, "numFmtId"), *code = attribute(&p, "formatCode");
            xgrow((void **)&custom_ids, &custom_capacity, n_custom + 1, sizeof(long));
            xgrow((void **)&custom_dates, &dates_capacity, n_custom + 1, sizeof(bool));
            custom_ids[n_custom] = id ? strtol(id, NULL, 10) : -1;
            custom_dates[n_custom++] = code && code_is_date(code);
            xmlFree(id);
            xmlFree(code);
        } else if (is_element(&p, "cellXfs")) {
            in_cell_xfs = !xmlTextReaderIsEmptyElement(p.reader);
        } else if (is_end(&p, "cellXfs")) {
            in_cell_xfs = false;
        } else if (in_cell_xfs && is_element(&p, "xf")) {
            char *id_text = attribute(&p, "numFmtId");
            long id = id_text ? strtol(id_text, NULL, 10) : 0;
            xmlFree(id_text);
            bool date = builtin_date(id);
            for (size_t i = 0; i < n_custom; i++)
                if (custom_ids[i] == id)
                    date = custom_dates[i];
            xgrow((void **)&wb->xf_date, &wb->xf_capacity, wb->n_xf + 1, sizeof(bool));
            wb->xf_date[wb->n_xf++] = date;
        }
    }
    close_part(&p);
    free(custom_ids);
    free(custom_dates);
    if (rc != 0)
        file_error(wb, "xl/styles.xml is not well-formed XML", "");
    return rc == 0;
}

/* ---- the sheet ------------------------------------------------------------ */

enum { SEEN_NUMBER = 1, SEEN_TEXT = 2, SEEN_DATE = 4 };

typedef struct {
    workbook *wb;
    sql_rows *rows;
    unsigned first_column, last_column; /* 0 until the header sets them */
    unsigned header_row;
    bool header_seen;
    unsigned row; /* the sheet row being read */
    buf *cells;   /* the current row's texts, per column */
    bool *filled;
    unsigned *seen; /* per column: SEEN_* */
    size_t n_columns;
    bool ranged; /* data.range limits the cells read */
    /* the first value outside the table's columns, reported at the end
       unless merged header cells explain it */
    unsigned outside_column, outside_row;
    bool merged_header;
} sheet_state;

/* A serial day count as ISO 8601 text (a date, or a date-time without an
   offset, to the millisecond). False for serial 60 and values outside
   years 1900 to 9999. */
static bool serial_date(const workbook *wb, double serial, buf *out)
{
    if (!isfinite(serial) || serial < 0 || serial >= 2958466)
        return false;
    double days;
    if (wb->date1904)
        days = serial - 24107;
    else if (serial >= 61)
        days = serial - 25569;
    else if (serial < 60)
        days = serial - 25568;
    else
        return false; /* 1900-02-29 */
    double whole = floor(days);
    long millis = lround((days - whole) * 86400000.0);
    if (millis >= 86400000)
        whole += 1, millis = 0;
    char text[32];
    date_format(whole, text, sizeof text);
    buf_puts(out, text);
    if (millis) {
        buf_printf(out, "T%02ld:%02ld:%02ld", millis / 3600000, millis / 60000 % 60,
                   millis / 1000 % 60);
        if (millis % 1000)
            buf_printf(out, ".%03ld", millis % 1000);
    }
    return true;
}

/* Column and row of a reference such as C17; false when malformed. */
static bool parse_reference(const char *text, unsigned *column, unsigned *row)
{
    unsigned long c = 0, r = 0;
    const char *p = text;
    while (*p >= 'A' && *p <= 'Z' && c <= MAX_COLUMNS)
        c = c * 26 + (unsigned long)(*p++ - 'A' + 1);
    while (*p >= '0' && *p <= '9' && r <= 1048576)
        r = r * 10 + (unsigned long)(*p++ - '0');
    if (*p || c == 0 || c > MAX_COLUMNS || r == 0 || r > 1048576)
        return false;
    *column = (unsigned)c;
    *row = (unsigned)r;
    return true;
}

/* Reads one <c> element: its text into value (empty for an empty cell),
   how it was written into *seen. */
static bool read_cell(sheet_state *st, part *p, unsigned column, buf *value, unsigned *seen)
{
    workbook *wb = st->wb;
    char *type = attribute(p, "t"), *style = attribute(p, "s");
    const char *t = type ? type : "n";
    long xf = style ? strtol(style, NULL, 10) : 0;
    xmlFree(style);
    buf v, formula;
    buf_init(&v);
    buf_init(&formula);
    bool has_v = false, has_f = false, ok = true;
    if (!xmlTextReaderIsEmptyElement(p->reader)) {
        int rc;
        while (ok && (rc = next_node(p)) == 1) {
            if (is_element(p, "v")) {
                has_v = true;
                ok = element_text(p, &v);
            } else if (is_element(p, "f")) {
                has_f = true;
                ok = element_text(p, &formula);
            } else if (is_element(p, "is")) {
                has_v = true;
                ok = string_item(p, "is", &v);
            } else if (is_end(p, "c")) {
                break;
            }
        }
        ok = ok && rc == 1;
        if (!ok)
            file_error(wb, "a sheet is not well-formed XML", "");
    }
    *seen = 0;
    if (ok && has_f && !has_v) {
        cell_error(
            wb, column, st->row,
            "the cell holds a formula (%s) without a computed value; open the workbook "
            "in a spreadsheet program, let it compute, and save it",
            formula.data ? formula.data : "");
        ok = false;
    } else if (ok && !has_v) {
        /* an empty cell (a style alone) */
    } else if (ok && strcmp(t, "s") == 0) {
        char *end;
        long index = strtol(v.data ? v.data : "", &end, 10);
        if (!v.data || *end || index < 0 || (size_t)index >= wb->n_strings) {
            cell_error(wb, column, st->row,
                       "the cell refers to shared string %s, which the workbook does not "
                       "have; the file is damaged",
                       v.data ? v.data : "(none)");
            ok = false;
        } else {
            buf_puts(value, wb->strings.data + wb->string_offsets[index]);
            *seen = SEEN_TEXT;
        }
    } else if (ok && (strcmp(t, "inlineStr") == 0 || strcmp(t, "str") == 0)) {
        buf_puts(value, v.data ? v.data : "");
        *seen = SEEN_TEXT;
    } else if (ok && strcmp(t, "b") == 0) {
        buf_puts(value, v.data && strcmp(v.data, "1") == 0 ? "true" : "false");
        *seen = SEEN_TEXT;
    } else if (ok && strcmp(t, "e") == 0) {
        cell_error(
            wb, column, st->row,
            "the cell holds the spreadsheet error %s; correct its formula, or clear the "
            "cell to leave the value missing",
            v.data ? v.data : "");
        ok = false;
    } else if (ok && strcmp(t, "d") == 0) {
        buf_puts(value, v.data ? v.data : "");
        *seen = SEEN_DATE;
    } else if (ok && strcmp(t, "n") == 0) {
        const char *text = v.data ? v.data : "";
        double serial;
        if (xf >= 0 && (size_t)xf < wb->n_xf && wb->xf_date[xf] &&
            data_parse_number(text, strlen(text), &serial)) {
            if (!serial_date(wb, serial, value)) {
                cell_error(
                    wb, column, st->row,
                    "the cell is formatted as a date, but %s is no date of the "
                    "spreadsheet calendar; correct it or format the cell as a number",
                    text);
                ok = false;
            }
            *seen = SEEN_DATE;
        } else {
            buf_puts(value, text);
            *seen = text[0] ? SEEN_NUMBER : 0;
        }
    } else if (ok) {
        cell_error(wb, column, st->row,
                   "the cell has type '%s', which ECMA-376 does not define", t);
        ok = false;
    }
    xmlFree(type);
    buf_free(&v);
    buf_free(&formula);
    return ok;
}

/* The header row's cells become the columns: from the first to the last
   cell with a value (or the range's columns). */
static void start_columns(sheet_state *st, const char *const *texts,
                          const unsigned *columns, size_t n)
{
    const spec_data *d = &st->wb->s->data;
    if (st->ranged) {
        st->first_column = d->range_first_column;
        st->last_column = d->range_last_column;
    } else {
        for (size_t i = 0; i < n; i++) {
            if (!texts[i][0])
                continue;
            if (!st->first_column)
                st->first_column = columns[i];
            st->last_column = columns[i];
        }
    }
    st->n_columns = st->first_column ? st->last_column - st->first_column + 1 : 0;
    st->cells = xcalloc(st->n_columns ? st->n_columns : 1, sizeof(buf));
    st->filled = xcalloc(st->n_columns ? st->n_columns : 1, sizeof(bool));
    st->seen = xcalloc(st->n_columns ? st->n_columns : 1, sizeof(unsigned));
    for (size_t j = 0; j < st->n_columns; j++)
        buf_init(&st->cells[j]);
    for (size_t j = 0; j < st->n_columns; j++) {
        const char *name = "";
        for (size_t i = 0; i < n; i++)
            if (columns[i] == st->first_column + j)
                name = texts[i];
        sql_rows_column(st->rows, name, SPEC_KIND_INFER);
    }
    sql_rows_set_key(st->rows, NULL);
    st->rows->first_column = st->first_column;
    st->rows->header_row = st->header_row;
    st->header_seen = true;
}

/* Writes the row read into the canonical text; a row without a value is
   skipped, as a blank line of a file is. */
static void flush_row(sheet_state *st)
{
    bool any = false;
    for (size_t j = 0; j < st->n_columns; j++)
        any = any || st->filled[j];
    if (any) {
        for (size_t j = 0; j < st->n_columns; j++)
            sql_rows_field(st->rows, st->cells[j].data ? st->cells[j].data : "",
                           st->cells[j].length);
        sql_rows_end_sheet_row(st->rows, st->row);
    }
    for (size_t j = 0; j < st->n_columns; j++) {
        buf_reset(&st->cells[j]);
        st->filled[j] = false;
    }
}

/* One <row>: the header (texts and their columns), or a data row. */
static bool read_row(sheet_state *st, part *p)
{
    workbook *wb = st->wb;
    const spec_data *d = &wb->s->data;
    bool header = st->row == st->header_row;
    char **texts = NULL;
    unsigned *columns = NULL;
    size_t n = 0, capacity = 0, column_capacity = 0;
    unsigned column = 0;
    bool ok = true;
    if (!xmlTextReaderIsEmptyElement(p->reader)) {
        int rc;
        while (ok && (rc = next_node(p)) == 1) {
            if (is_end(p, "row"))
                break;
            if (!is_element(p, "c"))
                continue;
            char *ref = attribute(p, "r");
            unsigned row = st->row;
            if (ref && !parse_reference(ref, &column, &row))
                ok = false;
            else if (!ref)
                column++;
            xmlFree(ref);
            if (!ok || row != st->row) {
                file_error(wb, "a cell reference does not match its row", "");
                ok = false;
                break;
            }
            buf value;
            buf_init(&value);
            unsigned seen;
            bool inside = !st->ranged || (column >= d->range_first_column &&
                                          column <= d->range_last_column);
            ok = inside ? read_cell(st, p, column, &value, &seen) : skip_element(p);
            if (ok && inside && header) {
                xgrow((void **)&texts, &capacity, n + 1, sizeof(char *));
                xgrow((void **)&columns, &column_capacity, n + 1, sizeof(unsigned));
                texts[n] = xstrdup(value.data ? value.data : "");
                columns[n++] = column;
            } else if (ok && inside && st->header_seen && value.length) {
                if (column < st->first_column || column > st->last_column) {
                    if (!st->outside_row) {
                        st->outside_column = column;
                        st->outside_row = st->row;
                    }
                } else {
                    size_t j = column - st->first_column;
                    buf_put(&st->cells[j], value.data, value.length);
                    st->filled[j] = true;
                    st->seen[j] |= seen;
                }
            }
            buf_free(&value);
        }
        ok = ok && rc == 1;
    }
    if (ok && header)
        start_columns(st, (const char *const *)texts, columns, n);
    else if (ok && st->header_seen)
        flush_row(st);
    for (size_t i = 0; i < n; i++)
        free(texts[i]);
    free(texts);
    free(columns);
    return ok;
}

/* <mergeCell ref="A3:B3"/> over the header row is refused. */
static bool check_merge(sheet_state *st, const char *ref)
{
    if (!ref || !st->header_seen)
        return true;
    const char *colon = strchr(ref, ':');
    if (!colon)
        return true;
    unsigned c1, r1, c2, r2;
    char *first = xstrndup(ref, (size_t)(colon - ref));
    bool parsed = parse_reference(first, &c1, &r1) && parse_reference(colon + 1, &c2, &r2);
    free(first);
    if (!parsed || r1 > st->header_row || r2 < st->header_row || c2 < st->first_column ||
        c1 > st->last_column)
        return true;
    cell_error(st->wb, c1, r1,
               "the header cells %s are merged, so the columns under them have no names of "
               "their own; unmerge them and give each column its name",
               ref);
    return false;
}

/* The kinds the cells' types imply, for the columns the spec leaves open. */
static void settle_hints(sheet_state *st)
{
    for (size_t j = 0; j < st->n_columns; j++) {
        unsigned seen = st->seen[j];
        st->rows->hints[j] = seen == SEEN_DATE     ? SPEC_KIND_DATE
                             : seen == SEEN_NUMBER ? SPEC_KIND_NUMERIC
                             : seen == SEEN_TEXT   ? SPEC_KIND_CATEGORY
                                                   : SPEC_KIND_INFER;
    }
}

static bool read_sheet(workbook *wb, const char *target, sql_rows *rows)
{
    const spec_data *d = &wb->s->data;
    sheet_state st;
    memset(&st, 0, sizeof st);
    st.wb = wb;
    st.rows = rows;
    st.ranged = d->range != NULL;
    st.header_row = d->header_row        ? (unsigned)d->header_row
                    : d->range_first_row ? d->range_first_row
                                         : 1;
    part p;
    if (!open_part(wb, target, &p)) {
        file_error(wb, "the sheet's part is missing: ", target);
        return false;
    }
    bool ok = true, merges_ok = true;
    int rc;
    while (ok && (rc = next_node(&p)) == 1) {
        if (is_element(&p, "row")) {
            char *r = attribute(&p, "r");
            unsigned next = r ? (unsigned)strtoul(r, NULL, 10) : st.row + 1;
            xmlFree(r);
            if (next <= st.row || next > 1048576) {
                file_error(wb, "the sheet's rows are out of order", "");
                ok = false;
                break;
            }
            st.row = next;
            if ((d->range_last_row && st.row > d->range_last_row) || st.row < st.header_row)
                ok = skip_element(&p); /* outside the table */
            else
                ok = read_row(&st, &p);
        } else if (is_element(&p, "mergeCell")) {
            char *ref = attribute(&p, "ref");
            merges_ok = check_merge(&st, ref) && merges_ok;
            xmlFree(ref);
        }
    }
    if (ok && rc != 0) {
        file_error(wb, "the sheet is not well-formed XML", "");
        ok = false;
    }
    if (ok && merges_ok && st.outside_row) {
        buf range;
        buf_init(&range);
        sql_cell_name(&range, st.first_column, st.header_row);
        buf_putc(&range, ':');
        sql_cell_name(&range, st.last_column, st.header_row);
        cell_error(
            wb, st.outside_column, st.outside_row,
            "the cell holds a value outside the table's columns (the header %s); clear "
            "it, name the cells to read with data.range, or point data.header_row at "
            "the row of column names",
            range.data);
        buf_free(&range);
        ok = false;
    }
    close_part(&p);
    ok = ok && merges_ok;
    if (ok && (!st.header_seen || st.n_columns == 0)) {
        char row[16];
        snprintf(row, sizeof row, "%u", st.header_row);
        cell_error(wb, st.ranged ? d->range_first_column : 1, st.header_row,
                   "row %s of the sheet is empty, so it names no columns; point "
                   "data.header_row at the row of column names",
                   row);
        ok = false;
    }
    if (ok)
        settle_hints(&st);
    for (size_t j = 0; j < st.n_columns; j++)
        buf_free(&st.cells[j]);
    free(st.cells);
    free(st.filled);
    free(st.seen);
    return ok;
}

/* ---- loading ---------------------------------------------------------------- */

/* The sheet the spec names (by name or position), or the first. */
static const char *choose_sheet(workbook *wb, size_t *index)
{
    const spec_data *d = &wb->s->data;
    if (d->sheet_position) {
        if ((size_t)d->sheet_position <= wb->n_sheets) {
            *index = (size_t)d->sheet_position - 1;
            return wb->sheet_names[*index];
        }
        error_at(
            wb->errors, wb->s->path, d->sheet_at,
            "%s has %zu sheet%s, so there is no sheet %ld; count sheets from 1, or give "
            "the sheet's name",
            wb->path, wb->n_sheets, wb->n_sheets == 1 ? "" : "s", d->sheet_position);
        return NULL;
    }
    if (!d->sheet) {
        *index = 0;
        return wb->sheet_names[0];
    }
    for (size_t i = 0; i < wb->n_sheets; i++)
        if (strcmp(wb->sheet_names[i], d->sheet) == 0) {
            *index = i;
            return wb->sheet_names[i];
        }
    buf hint;
    buf_init(&hint);
    hint_closest(&hint, d->sheet, (const char *const *)wb->sheet_names, wb->n_sheets,
                 "its sheets are");
    error_at(wb->errors, wb->s->path, d->sheet_at, "%s has no sheet '%s'%s", wb->path,
             d->sheet, hint.data);
    buf_free(&hint);
    return NULL;
}

static void workbook_free(workbook *wb)
{
    for (size_t i = 0; i < wb->n_sheets; i++) {
        free(wb->sheet_names[i]);
        free(wb->sheet_targets ? wb->sheet_targets[i] : NULL);
    }
    free(wb->sheet_names);
    free(wb->sheet_targets);
    buf_free(&wb->strings);
    free(wb->string_offsets);
    free(wb->xf_date);
    if (wb->zip)
        zip_discard(wb->zip); /* opened read-only: nothing to write back */
}

/* The pin (data.sha256) is of the file's bytes, as for a text file. */
static bool check_file_digest(const spec *s, const data_file *file, char digest[65],
                              error_list *errors)
{
    data_sha256_hex(file->bytes, file->length, digest);
    if (!s->data.sha256 || strcmp(s->data.sha256, digest) == 0)
        return true;
    error_at(errors, s->path, s->data.sha256_at,
             "the SHA-256 of %s is %s, but data.sha256 pins %s; the file has changed since "
             "the pin was written: check the data, then update the pin",
             s->data.resolved, digest, s->data.sha256);
    return false;
}

data_table *data_load_xlsx(const spec *s, unsigned flags, error_list *errors)
{
    data_file file;
    const char *why;
    if (!data_file_open(s->data.resolved, &file, &why)) {
        error_at(
            errors, s->path, s->data.path_at,
            "cannot read the data file '%s': %s; check data.path, which is relative to "
            "the spec's folder",
            s->data.resolved, why);
        return NULL;
    }
    char digest[65];
    if (!check_file_digest(s, &file, digest, errors)) {
        data_file_close(&file);
        return NULL;
    }
    workbook wb;
    memset(&wb, 0, sizeof wb);
    wb.s = s;
    wb.path = s->data.resolved;
    wb.errors = errors;
    buf_init(&wb.strings);
    zip_error_t zip_error;
    zip_error_init(&zip_error);
    zip_source_t *source = zip_source_buffer_create(file.bytes, file.length, 0, &zip_error);
    wb.zip = source ? zip_open_from_source(source, ZIP_RDONLY, &zip_error) : NULL;
    data_table *t = NULL;
    if (!wb.zip) {
        file_error(&wb, "it is not a zip container: ", zip_error_strerror(&zip_error));
        zip_source_free(source);
    } else if (read_workbook(&wb) && read_shared_strings(&wb) && read_styles(&wb)) {
        size_t index = 0;
        wb.sheet_name = choose_sheet(&wb, &index);
        sql_rows rows;
        sql_rows_init(&rows);
        rows.sheet = wb.sheet_name;
        if (wb.sheet_name && !wb.sheet_targets[index])
            file_error(&wb, "the workbook does not say where its sheet is stored", "");
        else if (wb.sheet_name && read_sheet(&wb, wb.sheet_targets[index], &rows)) {
            /* The digest is the file's: verify checks the file itself. */
            spec copy = *s;
            copy.data.sha256 = NULL;
            t = sql_rows_load(&rows, &copy, flags | DATA_LOAD_NO_DIGEST, wb.path, errors);
            if (t) {
                memcpy(t->sha256, digest, sizeof digest);
                t->source_sheet = xstrdup(wb.sheet_name);
            }
        }
        sql_rows_free(&rows);
    }
    zip_error_fini(&zip_error);
    workbook_free(&wb);
    data_file_close(&file);
    return t;
}

/*
 * csv.c — the CSV scanner (RFC 4180: quoted fields, doubled quotes,
 * delimiters and line breaks inside quotes, CRLF, LF or CR line ends,
 * header row required) and its helpers: the end of an unquoted field found
 * eight bytes at a time, and UTF-8 validation (RFC 3629: no overlong forms,
 * no surrogates, nothing above U+10FFFF).
 *
 * The text is never modified and no field is allocated: a field is a span
 * of the text, or of a per-record scratch buffer when doubled quotes must
 * be undone.
 */
#include <limits.h>
#include <stdlib.h>
#include <string.h>

#include "internal.h"
#include "swar.h"

src_mark csv_mark(size_t line, size_t column)
{
    src_mark mark = {line > UINT_MAX ? UINT_MAX : (unsigned)line,
                     column > UINT_MAX ? UINT_MAX : (unsigned)column};
    return mark;
}

void csv_start(csv_scanner *sc, const char *path, const char *text, size_t length,
               char delimiter, error_list *errors)
{
    memset(sc, 0, sizeof *sc);
    sc->path = path;
    sc->text = text;
    sc->p = text;
    sc->end = text + length;
    sc->line_start = text;
    sc->line = 1;
    sc->delimiter = delimiter;
    sc->errors = errors;
    buf_init(&sc->scratch);
    if (length >= 3 && memcmp(text, "\xEF\xBB\xBF", 3) == 0) {
        sc->p += 3;
        sc->line_start = sc->p;
    }
}

void csv_finish(csv_scanner *sc)
{
    buf_free(&sc->scratch);
    free(sc->fields);
    sc->fields = NULL;
}

bool csv_take_line_break(csv_scanner *sc)
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

bool csv_skip_blank_lines(csv_scanner *sc)
{
    while (sc->p < sc->end && (*sc->p == '\n' || *sc->p == '\r'))
        csv_take_line_break(sc);
    return sc->p < sc->end;
}

/* ---- fields --------------------------------------------------------------- */

const char *csv_field_end(const char *p, const char *end, char delimiter)
{
#if SWAR_OK
    while (end - p >= 8) {
        uint64_t word = swar_load(p);
        uint64_t hits = swar_equal(word, (unsigned char)delimiter) | swar_equal(word, '\n') |
                        swar_equal(word, '\r');
        if (hits)
            return p + swar_first(hits);
        p += 8;
    }
#endif
    while (p < end && *p != delimiter && *p != '\n' && *p != '\r')
        p++;
    return p;
}

bool csv_scan_quoted(csv_scanner *sc, field_span *span)
{
    src_mark opened = csv_mark(sc->line, (size_t)(sc->p - sc->line_start) + 1);
    span->raw = sc->p;
    sc->p++;
    const char *content = sc->p;
    bool needs_copy = false;
    size_t scratch_start = sc->scratch.length;
    for (;;) {
        const char *quote = memchr(sc->p, '"', (size_t)(sc->end - sc->p));
        const char *stop = quote ? quote : sc->end;
        /* Line breaks inside the field count as lines. */
        for (const char *c = sc->p; c < stop; c++)
            if (*c == '\n' || (*c == '\r' && (c + 1 >= sc->end || c[1] != '\n'))) {
                sc->line++;
                sc->line_start = c + 1;
            }
        if (needs_copy)
            buf_put(&sc->scratch, sc->p, (size_t)(stop - sc->p));
        sc->p = stop;
        if (!quote) {
            error_at(sc->errors, sc->path, opened,
                     "this quoted field is never closed; add the closing '\"'");
            return false;
        }
        if (quote + 1 < sc->end && quote[1] == '"') {
            if (!needs_copy) {
                buf_put(&sc->scratch, content, (size_t)(quote - content));
                needs_copy = true;
            }
            buf_putc(&sc->scratch, '"');
            sc->p = quote + 2;
            continue;
        }
        break;
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
    span->raw_end = sc->p;
    if (sc->p < sc->end && *sc->p != sc->delimiter && *sc->p != '\n' && *sc->p != '\r') {
        error_at(sc->errors, sc->path, csv_mark(sc->line, (size_t)(sc->p - sc->line_start) + 1),
                 "unexpected text after a closing quote; quote the whole field and "
                 "double any quote inside it");
        return false;
    }
    return true;
}

static void push_field(csv_scanner *sc, field_span span)
{
    xgrow((void **)&sc->fields, &sc->capacity, sc->n_fields + 1, sizeof(field_span));
    sc->fields[sc->n_fields++] = span;
}

int csv_scan_record(csv_scanner *sc)
{
    sc->n_fields = 0;
    buf_reset(&sc->scratch);
    if (!csv_skip_blank_lines(sc))
        return 0;
    sc->record_line = sc->line;
    sc->record_start = sc->p;
    for (;;) {
        field_span span = {0, 0, sc->line, (size_t)(sc->p - sc->line_start) + 1, sc->p, NULL,
                           false};
        if (sc->p < sc->end && *sc->p == '"') {
            if (!csv_scan_quoted(sc, &span))
                return -1;
        } else {
            const char *start = sc->p;
            sc->p = csv_field_end(sc->p, sc->end, sc->delimiter);
            span.offset = (size_t)(start - sc->text);
            span.length = (size_t)(sc->p - start);
            span.raw_end = sc->p;
        }
        push_field(sc, span);
        if (sc->p < sc->end && *sc->p == sc->delimiter) {
            sc->p++;
            continue;
        }
        csv_take_line_break(sc);
        return 1;
    }
}

const char *csv_field_text(const csv_scanner *sc, const field_span *span)
{
    return span->in_scratch ? sc->scratch.data + span->offset : sc->text + span->offset;
}

/* ---- UTF-8 -------------------------------------------------------------- */

/* Length of the valid sequence at p, or 0. */
static size_t utf8_sequence(const unsigned char *p, const unsigned char *end)
{
    unsigned char c = p[0];
    size_t n;
    unsigned char low = 0x80, high = 0xBF; /* allowed range of the second byte */
    if (c < 0x80)
        return c != 0; /* a NUL byte is no text either */
    if (c >= 0xC2 && c <= 0xDF)
        n = 2;
    else if (c >= 0xE0 && c <= 0xEF) {
        n = 3;
        low = c == 0xE0 ? 0xA0 : 0x80; /* no overlong forms */
        high = c == 0xED ? 0x9F : 0xBF; /* no surrogates */
    } else if (c >= 0xF0 && c <= 0xF4) {
        n = 4;
        low = c == 0xF0 ? 0x90 : 0x80;
        high = c == 0xF4 ? 0x8F : 0xBF; /* nothing above U+10FFFF */
    } else {
        return 0;
    }
    if ((size_t)(end - p) < n || p[1] < low || p[1] > high)
        return 0;
    for (size_t i = 2; i < n; i++)
        if ((p[i] & 0xC0) != 0x80)
            return 0;
    return n;
}

const char *data_utf8_invalid(const char *p, const char *end)
{
    const unsigned char *u = (const unsigned char *)p, *e = (const unsigned char *)end;
    while (u < e) {
        uint64_t word = e - u >= 8 ? swar_load((const char *)u) : 0;
        if (e - u >= 8 && (word & SWAR_HIGHS) == 0 && !swar_equal(word, 0)) {
            u += 8;
            continue;
        }
        size_t n = utf8_sequence(u, e);
        if (n == 0)
            return (const char *)u;
        u += n;
    }
    return NULL;
}

void csv_utf8_error(const csv_scanner *sc, const char *raw, size_t line, size_t column,
                    const char *bad)
{
    /* Count lines and columns from the field's start to the bad byte. */
    for (const char *c = raw; c < bad; c++) {
        if (*c == '\n' || (*c == '\r' && c[1] != '\n')) { /* c + 1 <= bad */
            line++;
            column = 1;
        } else {
            column++;
        }
    }
    if (*bad == '\0')
        error_at(sc->errors, sc->path, csv_mark(line, column),
                 "a NUL byte (0x00) cannot appear in CSV text; is this a text file?");
    else
        error_at(sc->errors, sc->path, csv_mark(line, column),
                 "byte 0x%02X is not valid UTF-8; save the file as UTF-8 (most programs "
                 "offer it under 'Save as')",
                 (unsigned char)*bad);
}

void csv_quote_value(buf *out, const char *text, size_t length)
{
    size_t shown = length;
    if (shown > 40) {
        shown = 40;
        /* Back up to the start of a character. */
        while (shown > 0 && ((unsigned char)text[shown] & 0xC0) == 0x80)
            shown--;
    }
    for (size_t i = 0; i < shown; i++) {
        if (text[i] == '\n')
            buf_puts(out, "\\n");
        else if (text[i] == '\r')
            buf_puts(out, "\\r");
        else if (text[i] == '\t')
            buf_puts(out, "\\t");
        else
            buf_putc(out, text[i]);
    }
    if (shown < length)
        buf_puts(out, "…");
}

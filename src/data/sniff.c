/*
 * sniff.c — what the first lines of a data file suggest about how it is
 * written: the delimiter (the most frequent of comma, semicolon, tab and
 * '|' outside quotes on the header line), whether numbers use a decimal
 * comma (fields of digits, one comma, digits on the following lines), and
 * an encoding other than UTF-8 (a UTF-16 or UTF-32 byte-order mark, or the
 * zero bytes of UTF-16 text without one). fitproof never reads a file by
 * these guesses: they are offered in messages, and scaffold writes them
 * into the spec it prints, where the user sees them.
 */
#include <string.h>

#include "internal.h"

#define SNIFF_BYTES ((size_t)1 << 16)

static const char *sniff_encoding(const unsigned char *p, size_t n)
{
    if (n >= 4 && ((p[0] == 0xFF && p[1] == 0xFE && p[2] == 0 && p[3] == 0) ||
                   (p[0] == 0 && p[1] == 0 && p[2] == 0xFE && p[3] == 0xFF)))
        return "UTF-32";
    if (n >= 2 && ((p[0] == 0xFF && p[1] == 0xFE) || (p[0] == 0xFE && p[1] == 0xFF)))
        return "UTF-16";
    /* UTF-16 without a byte-order mark: ASCII text with a zero byte after
       (little-endian) or before (big-endian) each character. */
    if (n >= 4 && ((p[0] && !p[1] && p[2] && !p[3]) || (!p[0] && p[1] && !p[2] && p[3])))
        return "UTF-16";
    return NULL;
}

/* A field of digits, one comma and digits, with an optional minus. */
static bool comma_number(const char *p, const char *end)
{
    if (p < end && *p == '-')
        p++;
    const char *comma = memchr(p, ',', (size_t)(end - p));
    if (!comma || comma == p || comma + 1 == end)
        return false;
    for (const char *q = p; q < end; q++)
        if (q != comma && !number_is_digit(*q))
            return false;
    return true;
}

/* Fields with a decimal comma on the lines after the header, for a
   delimiter other than the comma. */
static bool sniff_decimal_comma(const char *p, const char *end, char delimiter)
{
    size_t found = 0;
    while (p < end) {
        const char *stop = p;
        while (stop < end && *stop != delimiter && *stop != '\n' && *stop != '\r')
            stop++;
        found += comma_number(p, stop);
        p = stop + 1;
    }
    return found > 0;
}

void data_sniff(const char *bytes, size_t length, data_sniffed *out)
{
    memset(out, 0, sizeof *out);
    size_t n = length < SNIFF_BYTES ? length : SNIFF_BYTES;
    out->encoding = sniff_encoding((const unsigned char *)bytes, n);
    out->delimiter = ',';
    if (out->encoding)
        return;
    const char *p = bytes, *end = bytes + n;
    if (n >= 3 && memcmp(p, "\xEF\xBB\xBF", 3) == 0)
        p += 3;
    static const char candidates[] = {',', ';', '\t', '|'};
    size_t counts[4] = {0, 0, 0, 0};
    bool quoted = false;
    for (; p < end && (quoted || (*p != '\n' && *p != '\r')); p++) {
        quoted ^= *p == '"';
        for (size_t k = 0; k < 4 && !quoted; k++)
            counts[k] += *p == candidates[k];
    }
    size_t best = 0;
    for (size_t k = 1; k < 4; k++)
        if (counts[k] > counts[best])
            best = k;
    out->delimiter = candidates[best];
    out->header_fields = counts[best] + 1;
    if (out->delimiter != ',')
        out->decimal_comma = sniff_decimal_comma(p, end, out->delimiter);
}

static const char *delimiter_word(char delimiter)
{
    switch (delimiter) {
    case ';': return "semicolon";
    case '\t': return "tab";
    case '|': return "'|'";
    default: return "comma";
    }
}

bool data_sniff_hint(buf *out, const data_sniffed *sniffed, const spec_data *data)
{
    bool delimiter = sniffed->delimiter != data->delimiter && sniffed->header_fields > 1;
    bool comma = sniffed->decimal_comma && !data->decimal_comma;
    if (!delimiter && !comma)
        return false;
    buf_printf(out, "the file looks %s-separated%s; add ",
               delimiter_word(sniffed->delimiter),
               sniffed->decimal_comma ? " with decimal commas" : "");
    if (delimiter) {
        if (sniffed->delimiter == '\t')
            buf_puts(out, "delimiter: tab");
        else
            buf_printf(out, "delimiter: \"%c\"", sniffed->delimiter);
    }
    if (comma)
        buf_printf(out, "%sdecimal: comma", delimiter ? " and " : "");
    buf_puts(out, " under data");
    return true;
}

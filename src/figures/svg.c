/*
 * svg.c — the hand-written SVG writer of the figures: the document with its
 * <title> and <desc> for screen readers and a viewBox so it scales, XML
 * escaping of user text, numbers with one decimal so files are small and
 * byte-stable, point marks, the title and the key.
 *
 * Colours: M. Okabe and K. Ito, "Color Universal Design (CUD): how to make
 * figures and presentations that are friendly to colorblind people" (2008),
 * each paired with its own mark shape and line dash for greyscale.
 */
#include "plot.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

const char *const plot_colour[PLOT_STYLES] = {"#0072b2", "#d55e00", "#009e73", "#cc79a7",
                                              "#e69f00", "#56b4e9", "#000000", "#f0e442"};
const char *const plot_dash[PLOT_STYLES] = {"",    "7 3", "2 2",  "8 3 2 3",
                                            "4 2", "1 3", "10 4", "3 3 1 3"};

/* System faces only: nothing is downloaded. */
static const char FONTS[] =
    "system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', "
    "Arial, 'Liberation Sans', 'DejaVu Sans', sans-serif";

void svg_begin(svg_doc *d, const char *id, double width, double height, double mark_size)
{
    memset(d, 0, sizeof *d);
    buf_init(&d->defs);
    buf_init(&d->body);
    snprintf(d->id, sizeof d->id, "%s", id);
    d->width = width;
    d->height = height;
    d->mark_size = mark_size;
}

void svg_free(svg_doc *d)
{
    buf_free(&d->defs);
    buf_free(&d->body);
}

char *svg_end(svg_doc *d, const char *title, const char *desc, size_t *length)
{
    buf out;
    buf_init(&out);
    svg_path(&out,
             "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"@\" height=\"@\" "
             "viewBox=\"0 0 @ @\"",
             d->width, d->height, d->width, d->height);
    buf_printf(&out,
               " role=\"img\" aria-labelledby=\"%st %sd\" font-family=\"%s\" "
               "font-size=\"12\">\n<title id=\"%st\">",
               d->id, d->id, FONTS, d->id);
    svg_escape(&out, title);
    buf_printf(&out, "</title>\n<desc id=\"%sd\">", d->id);
    svg_escape(&out, desc);
    buf_puts(&out, "</desc>\n");
    if (d->defs.length)
        buf_printf(&out, "<defs>\n%s</defs>\n", d->defs.data);
    buf_put(&out, d->body.data ? d->body.data : "", d->body.length);
    buf_puts(&out, "</svg>\n");
    svg_free(d);
    *length = out.length;
    return buf_detach(&out);
}

void svg_escape(buf *b, const char *text)
{
    buf_put_xml(b, text ? text : "");
}

void svg_num(buf *b, double value)
{
    if (!isfinite(value))
        value = 0.0;
    /* Far outside any canvas; clipped anyway. */
    if (value > 1e6)
        value = 1e6;
    if (value < -1e6)
        value = -1e6;
    long long tenths = llround(value * 10.0);
    if (tenths < 0) {
        buf_putc(b, '-');
        tenths = -tenths;
    }
    buf_printf(b, "%lld", tenths / 10);
    if (tenths % 10)
        buf_printf(b, ".%lld", tenths % 10);
}

double svg_text_width(const char *text, double size)
{
    double em = 0.0;
    for (const unsigned char *p = (const unsigned char *)text; *p; p++) {
        if ((*p & 0xc0) == 0x80)
            continue; /* continuation byte: counted with its lead */
        if (*p >= '0' && *p <= '9')
            em += 0.62;
        else if (*p >= 'a' && *p <= 'z')
            em += (*p == 'i' || *p == 'l' || *p == 'j') ? 0.28
                  : (*p == 'm' || *p == 'w')            ? 0.88
                                                        : 0.58;
        else if (*p >= 'A' && *p <= 'Z')
            em += 0.7;
        else if (*p == ' ' || *p == '.' || *p == ',' || *p == ':' || *p == '\'')
            em += 0.32;
        else if (*p < 0x80)
            em += 0.45;
        else
            em += 0.7;
    }
    return em * size;
}

void svg_text(svg_doc *d, double x, double y, double size, const char *anchor,
              const char *extra, const char *text)
{
    buf *b = &d->body;
    svg_path(b, "<text x=\"@\" y=\"@\"", x, y);
    if (size != 12.0)
        svg_path(b, " font-size=\"@\"", size);
    if (anchor && strcmp(anchor, "start") != 0)
        buf_printf(b, " text-anchor=\"%s\"", anchor);
    if (extra)
        buf_printf(b, " %s", extra);
    buf_putc(b, '>');
    svg_escape(b, text);
    buf_puts(b, "</text>\n");
}

void svg_path(buf *b, const char *pattern, ...)
{
    va_list args;
    va_start(args, pattern);
    for (const char *p = pattern; *p; p++) {
        if (*p == '@')
            svg_num(b, va_arg(args, double));
        else
            buf_putc(b, *p);
    }
    va_end(args);
}

/* The outline of mark shape k at radius r, centred on the origin. */
static void mark_shape(buf *b, int k, double r, const char *colour)
{
    bool open = k == 5 || k == 6 || k == 7; /* strokes only */
    buf_printf(
        b, "<path fill=\"%s\" fill-opacity=\"0.35\" stroke=\"%s\" stroke-width=\"%s\" d=\"",
        open ? "none" : colour, colour, open ? "1.4" : "1");
    double s = r * 1.25, t = r * 0.9;
    switch (k) {
    case 0: /* circle, as two arcs */
        svg_path(b, "M@ 0a@ @ 0 1 0 @ 0a@ @ 0 1 0 @ 0z", -r, r, r, 2 * r, r, r, -2 * r);
        break;
    case 1: /* triangle, point up */
        svg_path(b, "M0 @L@ @H@z", -s, 0.95 * s, 0.6 * s, -0.95 * s);
        break;
    case 2: /* square */ svg_path(b, "M@ @H@V@H@z", -t, -t, t, t, -t); break;
    case 3: /* diamond */ svg_path(b, "M0 @L@ 0L0 @L@ 0z", -s, s, s, -s); break;
    case 4: /* triangle, point down */
        svg_path(b, "M0 @L@ @H@z", s, 0.95 * s, -0.6 * s, -0.95 * s);
        break;
    case 5: /* plus */ svg_path(b, "M@ 0H@M0 @V@", -s, s, -s, s); break;
    case 6: /* cross */ svg_path(b, "M@ @L@ @M@ @L@ @", -t, -t, t, t, -t, t, t, -t); break;
    default: /* asterisk: plus and cross */
        svg_path(b, "M@ 0H@M0 @V@M@ @L@ @M@ @L@ @", -s, s, -s, s, -t, -t, t, t, -t, t, t,
                 -t);
    }
    buf_puts(b, "\"/>");
}

const char *svg_mark(svg_doc *d, int style, char *id, size_t size)
{
    style %= PLOT_STYLES;
    snprintf(id, size, "%sm%d", d->id, style);
    if (!(d->marks_defined & (1u << style))) {
        d->marks_defined |= 1u << style;
        buf_printf(&d->defs,
                   "<marker id=\"%s\" markerUnits=\"userSpaceOnUse\" markerWidth=\"1\" "
                   "markerHeight=\"1\" overflow=\"visible\">",
                   id);
        mark_shape(&d->defs, style, d->mark_size, plot_colour[style]);
        buf_puts(&d->defs, "</marker>\n");
    }
    return id;
}

/* ---- key ---------------------------------------------------------------- */

static key_entry *key_add(plot_key *k, key_kind kind, const char *text)
{
    if (k->count == KEY_MAX)
        return NULL;
    key_entry *e = &k->items[k->count++];
    memset(e, 0, sizeof *e);
    e->kind = kind;
    e->colour = PLOT_INK;
    e->width = 1.5;
    e->dash = "";
    snprintf(e->text, sizeof e->text, "%s", text);
    return e;
}

void key_mark(plot_key *k, int style, const char *text)
{
    key_entry *e = key_add(k, KEY_MARK, text);
    if (e)
        e->style = style;
}

void key_line(plot_key *k, const char *colour, double width, const char *dash,
              const char *text)
{
    key_entry *e = key_add(k, KEY_LINE, text);
    if (e) {
        e->colour = colour;
        e->width = width;
        e->dash = dash;
    }
}

void key_mark_line(plot_key *k, int style, const char *text)
{
    key_entry *e = key_add(k, KEY_MARK_LINE, text);
    if (e) {
        e->style = style;
        e->colour = plot_colour[style % PLOT_STYLES];
        e->width = 2.0;
        e->dash = plot_dash[style % PLOT_STYLES];
    }
}

void key_band(plot_key *k, const char *colour, const char *text)
{
    key_entry *e = key_add(k, KEY_BAND, text);
    if (e)
        e->colour = colour;
}

void key_bar(plot_key *k, const char *text)
{
    key_add(k, KEY_BAR, text);
}

void key_ring(plot_key *k, const char *text)
{
    key_add(k, KEY_RING, text);
}

void key_dot(plot_key *k, bool filled, const char *text)
{
    key_entry *e = key_add(k, KEY_DOT, text);
    if (e)
        e->width = filled ? 1.0 : 0.0;
}

void key_circle(plot_key *k, const char *colour, double opacity, double radius,
                const char *text)
{
    key_entry *e = key_add(k, KEY_CIRCLE, text);
    if (e) {
        e->colour = colour;
        e->opacity = opacity;
        e->width = radius;
    }
}

#define KEY_SYMBOL 24.0
#define KEY_GAP 6.0
#define KEY_SPACING 18.0
#define KEY_ROW 18.0
#define KEY_FONT 12.0

static void key_symbol(svg_doc *d, const key_entry *e, double x, double y)
{
    buf *b = &d->body;
    char id[48];
    if (e->kind == KEY_BAND || e->kind == KEY_BAR) {
        svg_path(b, "<rect x=\"@\" y=\"@\"", x + 2, y - 5);
        buf_printf(b, " width=\"20\" height=\"10\" fill=\"%s\"%s/>\n",
                   e->kind == KEY_BAR ? plot_colour[0] : e->colour,
                   e->kind == KEY_BAR ? " fill-opacity=\"0.45\" stroke=\"#0072b2\"" : "");
        return;
    }
    if (e->kind == KEY_CIRCLE) {
        svg_path(b, "<circle cx=\"@\" cy=\"@\" r=\"@\"", x + KEY_SYMBOL / 2, y, e->width);
        svg_path(b, " fill-opacity=\"@\"", e->opacity);
        buf_printf(b, " fill=\"%s\" stroke=\"%s\" stroke-width=\"1.2\"/>\n", e->colour,
                   e->colour);
        return;
    }
    if (e->kind == KEY_RING || e->kind == KEY_DOT) {
        bool ring = e->kind == KEY_RING;
        svg_path(b, "<circle cx=\"@\" cy=\"@\"", x + KEY_SYMBOL / 2, y);
        buf_printf(b, " r=\"%s\" fill=\"%s\" stroke=\"%s\" stroke-width=\"%s\"/>\n",
                   ring ? "5" : "4.2", ring || e->width == 0.0 ? "#ffffff" : plot_colour[0],
                   ring ? "#111111" : plot_colour[0], ring ? "1.2" : "1.5");
        return;
    }
    if (e->kind == KEY_LINE || e->kind == KEY_MARK_LINE) {
        svg_path(b, "<path fill=\"none\" d=\"M@ @h@\"", x, y, KEY_SYMBOL);
        buf_printf(b, " stroke=\"%s\"", e->colour);
        svg_path(b, " stroke-width=\"@\"", e->width);
        if (e->dash && *e->dash)
            buf_printf(b, " stroke-dasharray=\"%s\"", e->dash);
        buf_puts(b, "/>\n");
    }
    if (e->kind == KEY_MARK || e->kind == KEY_MARK_LINE) {
        /* Two equal vertices: renderers draw no marker on a one-point line. */
        buf_printf(b, "<polyline fill=\"none\" marker-start=\"url(#%s)\" points=\"",
                   svg_mark(d, e->style, id, sizeof id));
        double cx = x + KEY_SYMBOL / 2;
        svg_path(b, "@,@ @,@\"/>\n", cx, y, cx, y);
    }
}

#define LINE_BYTES 240

/* Breaks text into at most max_lines lines no wider than width at size,
   at spaces (a longer word is cut at a character boundary); text left
   over ends the last line with an ellipsis. */
static size_t wrap_lines(const char *text, double size, double width,
                         char lines[][LINE_BYTES], size_t max_lines)
{
    size_t count = 0;
    const char *p = text;
    while (*p && count < max_lines) {
        char *line = lines[count++];
        size_t length = 0, fits = 0;
        /* Grow the line word by word while it fits. */
        while (p[length] && length < LINE_BYTES - 4) {
            size_t end = length;
            while (p[end] && p[end] != ' ' && end < LINE_BYTES - 4)
                end++;
            snprintf(line, LINE_BYTES, "%.*s", (int)end, p);
            if (fits && svg_text_width(line, size) > width)
                break;
            fits = end;
            length = p[end] == ' ' ? end + 1 : end;
            if (p[end] != ' ')
                break;
        }
        while (fits > 0 && ((unsigned char)p[fits] & 0xc0) == 0x80)
            fits--; /* never split a character */
        snprintf(line, LINE_BYTES, "%.*s", (int)fits, p);
        p += fits;
        while (*p == ' ')
            p++;
    }
    if (*p && count > 0) {
        char *last = lines[count - 1];
        size_t used = strlen(last);
        while (used > 0 && used + 4 > LINE_BYTES)
            used--;
        while (used > 0 && ((unsigned char)last[used] & 0xc0) == 0x80)
            used--;
        memcpy(last + used, "\xe2\x80\xa6", 4);
    }
    return count;
}

double canvas_header(svg_doc *d, const char *title, const plot_key *key)
{
    buf *b = &d->body;
    buf_puts(b, "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n");
    char lines[3][LINE_BYTES];
    size_t n_lines = wrap_lines(title, 16, d->width - 32, lines, 3);
    double y = 26;
    for (size_t i = 0; i < n_lines; i++, y += 20)
        svg_text(d, 16, y, 16, "start", "font-weight=\"600\" fill=\"#111111\"", lines[i]);
    if (!key || key->count == 0)
        return y;
    y += 4;
    double x = 16;
    buf_puts(b, "<g fill=\"#222222\">\n");
    for (size_t i = 0; i < key->count; i++) {
        const key_entry *e = &key->items[i];
        double w = KEY_SYMBOL + KEY_GAP + svg_text_width(e->text, KEY_FONT);
        if (x > 16 && x + w > d->width - 16) {
            x = 16;
            y += KEY_ROW;
        }
        key_symbol(d, e, x, y - 4);
        svg_text(d, x + KEY_SYMBOL + KEY_GAP, y, KEY_FONT, "start", NULL, e->text);
        x += w + KEY_SPACING;
    }
    buf_puts(b, "</g>\n");
    return y + 10;
}

/*
 * plot.c — plot panels and their data layers: axes with ticks, points as
 * SVG markers on a stroke-less polyline (about 12 bytes a point), lines and
 * bands clipped to the panel, labels placed clear of each other, and
 * hexagonal binning for large data.
 *
 * Hexagonal bins: D. B. Carr, R. J. Littlefield, W. L. Nicholson and
 * J. S. Littlefield, "Scatterplot matrix techniques for large N", Journal
 * of the American Statistical Association 82 (1987) 424–436. A point goes
 * to the nearer centre of two offset rectangular lattices, whose union is
 * the hexagon centres. Binning is done in screen units so the hexagons are
 * regular on the page.
 */
#include "plot.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define TICK_FONT 11.0
#define TITLE_FONT 12.0

/* Position of value on an axis from lo to hi mapped onto [0, 1]; halves
   keep the arithmetic finite for axes near ±DBL_MAX. */
static double axis_fraction(double value, double lo, double hi)
{
    double span = hi / 2 - lo / 2;
    return span > 0 ? (value / 2 - lo / 2) / span : 0.5;
}

double panel_x(const plot_panel *p, double value)
{
    return p->left + axis_fraction(value, p->x.lo, p->x.hi) * p->width;
}

double panel_y(const plot_panel *p, double value)
{
    return p->top + p->height - axis_fraction(value, p->y.lo, p->y.hi) * p->height;
}

double ticks_width(const figures_ticks *t)
{
    double widest = 0.0;
    for (size_t i = 0; i < t->count; i++)
        widest = fmax(widest, svg_text_width(t->labels[i], TICK_FONT));
    return widest;
}

void ticks_pad(figures_ticks *t)
{
    double margin = 0.03 * (t->hi - t->lo);
    if (!isfinite(margin))
        return;
    t->lo -= margin;
    t->hi += margin;
}

bool finite_range(const double *values, size_t n, double *min, double *max)
{
    bool any = false;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(values[i]))
            continue;
        if (!any || values[i] < *min)
            *min = values[i];
        if (!any || values[i] > *max)
            *max = values[i];
        any = true;
    }
    return any;
}

void axis_title(buf *out, const char *prefix, const figures_quantity *q)
{
    const char *words = q->label ? q->label : q->name;
    if (prefix)
        buf_printf(out, "%s %s", prefix, words);
    else
        buf_puts(out, words);
    if (q->unit)
        buf_printf(out, " (%s)", q->unit);
}

static void path_move(buf *b, char command, double x, double y)
{
    buf_putc(b, command);
    svg_path(b, "@ @", x, y);
}

void panel_axes(svg_doc *d, plot_panel *p, const char *x_title, const char *y_title,
                bool y_labels)
{
    buf *b = &d->body;
    snprintf(p->clip, sizeof p->clip, "%sc%d", d->id, d->clip_count++);
    buf_printf(&d->defs, "<clipPath id=\"%s\">", p->clip);
    svg_path(&d->defs, "<rect x=\"@\" y=\"@\" width=\"@\" height=\"@\"/></clipPath>\n",
             p->left, p->top, p->width, p->height);

    double bottom = p->top + p->height, right = p->left + p->width;
    buf_puts(b, "<path fill=\"none\" stroke=\"#e4e4e4\" d=\"");
    for (size_t i = 0; i < p->x.count; i++)
        svg_path(b, "M@ @V@", panel_x(p, p->x.values[i]), p->top, bottom);
    for (size_t i = 0; i < p->y.count; i++)
        svg_path(b, "M@ @H@", p->left, panel_y(p, p->y.values[i]), right);
    buf_puts(b, "\"/>\n<path fill=\"none\" stroke=\"#555555\" d=\"");
    svg_path(b, "M@ @V@H@", p->left, p->top, bottom, right);
    for (size_t i = 0; i < p->x.count; i++)
        svg_path(b, "M@ @v4", panel_x(p, p->x.values[i]), bottom);
    for (size_t i = 0; i < p->y.count; i++)
        svg_path(b, "M@ @h-4", p->left, panel_y(p, p->y.values[i]));
    buf_puts(b, "\"/>\n<g fill=\"#333333\">\n");
    for (size_t i = 0; i < p->x.count; i++)
        svg_text(d, panel_x(p, p->x.values[i]), bottom + 17, TICK_FONT, "middle", NULL,
                 p->x.labels[i]);
    if (y_labels)
        for (size_t i = 0; i < p->y.count; i++)
            svg_text(d, p->left - 7, panel_y(p, p->y.values[i]) + 4, TICK_FONT, "end", NULL,
                     p->y.labels[i]);
    buf_puts(b, "</g>\n");
    if (x_title)
        svg_text(d, p->left + p->width / 2, bottom + 38, TITLE_FONT, "middle", NULL,
                 x_title);
    if (y_title && y_labels) {
        double x = p->left - ticks_width(&p->y) - 18;
        double y = p->top + p->height / 2;
        buf rotate;
        buf_init(&rotate);
        svg_path(&rotate, "transform=\"rotate(-90 @ @)\"", x, y);
        svg_text(d, x, y, TITLE_FONT, "middle", rotate.data, y_title);
        buf_free(&rotate);
    }
}

/* ---- second axes in a logged quantity's original units ------------------- */

/* A tick label for v = m × 10^k written with exactly the decimals it needs. */
static void original_label(char *out, size_t size, double v, int k)
{
    snprintf(out, size, "%.*f", k < 0 ? -k : 0, v);
}

/* The logarithm (base) of v. */
static double log_in(double v, double base)
{
    return log(v) / log(base);
}

void panel_original_axis(svg_doc *d, const plot_panel *p, bool top, double base,
                         bool percent, const char *title)
{
    const figures_ticks *t = top ? &p->x : &p->y;
    double lo = pow(base, t->lo), hi = pow(base, t->hi);
    double values[FIGURES_MAX_TICKS];
    char labels[FIGURES_MAX_TICKS][48];
    size_t count = 0;
    if (percent) {
        /* Changes of the original quantity: round percentages. */
        figures_ticks pct;
        figures_ticks_make(100.0 * (lo - 1.0), 100.0 * (hi - 1.0), 5, &pct);
        for (size_t i = 0; i < pct.count && count < FIGURES_MAX_TICKS; i++) {
            double at = log_in(1.0 + pct.values[i] / 100.0, base);
            if (!isfinite(at) || at < t->lo || at > t->hi)
                continue;
            values[count] = at;
            snprintf(labels[count], sizeof labels[count], "%s%%", pct.labels[i]);
            count++;
        }
    } else {
        /* 1, 2 and 5 × 10^k inside the axis, else every m × 10^k. */
        for (int pass = 0; pass < 2 && count < 3; pass++) {
            count = 0;
            static const double fine[9] = {1, 2, 3, 4, 5, 6, 7, 8, 9},
                                coarse[3] = {1, 2, 5};
            const double *m = pass ? fine : coarse;
            size_t n_m = pass ? 9 : 3;
            for (int k = (int)floor(log10(lo)); k <= (int)ceil(log10(hi)); k++)
                for (size_t j = 0; j < n_m && count < FIGURES_MAX_TICKS; j++) {
                    double v = m[j] * pow(10.0, k);
                    if (v < lo || v > hi)
                        continue;
                    values[count] = log_in(v, base);
                    original_label(labels[count], sizeof labels[count], v, k);
                    count++;
                }
        }
    }
    buf *b = &d->body;
    buf_puts(b, "<path fill=\"none\" stroke=\"#555555\" d=\"");
    if (top) {
        svg_path(b, "M@ @H@", p->left, p->top, p->left + p->width);
        for (size_t i = 0; i < count; i++)
            svg_path(b, "M@ @v-4", panel_x(p, values[i]), p->top);
    } else {
        double right = p->left + p->width;
        svg_path(b, "M@ @V@", right, p->top, p->top + p->height);
        for (size_t i = 0; i < count; i++)
            svg_path(b, "M@ @h4", right, panel_y(p, values[i]));
    }
    buf_puts(b, "\"/>\n<g fill=\"#333333\">\n");
    double widest = 0.0;
    for (size_t i = 0; i < count; i++) {
        if (top)
            svg_text(d, panel_x(p, values[i]), p->top - 7, TICK_FONT, "middle", NULL,
                     labels[i]);
        else
            svg_text(d, p->left + p->width + 7, panel_y(p, values[i]) + 4, TICK_FONT,
                     "start", NULL, labels[i]);
        widest = fmax(widest, svg_text_width(labels[i], TICK_FONT));
    }
    buf_puts(b, "</g>\n");
    if (top) {
        svg_text(d, p->left + p->width / 2, p->top - 24, TITLE_FONT, "middle", NULL, title);
    } else {
        double x = p->left + p->width + 7 + widest + 12, y = p->top + p->height / 2;
        buf rotate;
        buf_init(&rotate);
        svg_path(&rotate, "transform=\"rotate(90 @ @)\"", x, y);
        svg_text(d, x, y, TITLE_FONT, "middle", rotate.data, title);
        buf_free(&rotate);
    }
}

/* ---- points --------------------------------------------------------------- */

#define POINTS_PER_LINE 400

static void put_point(buf *b, const plot_panel *p, double x, double y)
{
    svg_path(b, "@,@", panel_x(p, x), panel_y(p, y));
}

size_t layer_points(svg_doc *d, const plot_panel *p, const double *x, const double *y,
                    const size_t *rows, size_t n, int style)
{
    size_t total = 0;
    for (size_t k = 0; k < n; k++) {
        size_t i = rows ? rows[k] : k;
        total += isfinite(x[i]) && isfinite(y[i]) ? 1 : 0;
    }
    if (total == 0)
        return 0;
    buf *b = &d->body;
    char id[48];
    svg_mark(d, style, id, sizeof id);
    buf_printf(b,
               "<g fill=\"none\" marker-start=\"url(#%s)\" marker-mid=\"url(#%s)\" "
               "marker-end=\"url(#%s)\">\n",
               id, id, id);
    if (total == 1) {
        /* Renderers draw no marker on a one-vertex line: a zero-length
           segment with only its start marked. */
        for (size_t k = 0; k < n; k++) {
            size_t i = rows ? rows[k] : k;
            if (!isfinite(x[i]) || !isfinite(y[i]))
                continue;
            buf_puts(b, "<polyline marker-end=\"none\" points=\"");
            put_point(b, p, x[i], y[i]);
            buf_putc(b, ' ');
            put_point(b, p, x[i], y[i]);
            buf_puts(b, "\"/>\n");
        }
        buf_puts(b, "</g>\n");
        return 1;
    }
    size_t drawn = 0, in_line = 0;
    for (size_t k = 0; k < n; k++) {
        size_t i = rows ? rows[k] : k;
        if (!isfinite(x[i]) || !isfinite(y[i]))
            continue;
        buf_puts(b, in_line == 0 ? "<polyline points=\"" : " ");
        put_point(b, p, x[i], y[i]);
        drawn++;
        in_line++;
        /* Lines of POINTS_PER_LINE, the last one never a lone point. */
        bool full = in_line >= POINTS_PER_LINE && total - drawn != 1;
        if (full || drawn == total) {
            buf_puts(b, "\"/>\n");
            in_line = 0;
        }
    }
    buf_puts(b, "</g>\n");
    return drawn;
}

/* ---- hexagonal bins -------------------------------------------------------- */

#define HEX_RADIUS 5.5

/* The j-th class boundary of series s: 1, 2, 5, 10, 20, …; 1, 3, 10,
   30, …; 1, 10, 100, …; 1, 100, 10⁴, … */
static size_t series_bound(int s, size_t j)
{
    static const size_t steps[4][3] = {{1, 2, 5}, {1, 3, 0}, {1, 0, 0}, {1, 0, 0}};
    static const size_t per_decade[4] = {3, 2, 1, 1}, scale[4] = {10, 10, 10, 100};
    size_t value = steps[s][j % per_decade[s]];
    for (size_t k = 0; k < j / per_decade[s]; k++)
        value *= scale[s];
    return value;
}

/* Shading classes on the finest series that gives at most seven. */
static void hex_classes(size_t max_count, hex_summary *h)
{
    for (int s = 0; s < 4; s++) {
        size_t count = 0;
        while (count < 8 && series_bound(s, count) <= max_count)
            count++;
        if (count <= 7 || s == 3) {
            h->n_classes = count;
            for (size_t c = 0; c < count; c++) {
                h->class_lo[c] = series_bound(s, c);
                h->class_hi[c] = c + 1 < count ? series_bound(s, c + 1) - 1 : max_count;
            }
            return;
        }
    }
}

/* Colour of class c of n: greys from pale to dark, so that the order holds
   in greyscale and the coloured lines drawn over the bins stand out. */
static void class_colour(size_t c, size_t n, char out[8])
{
    static const double pale[3] = {226, 226, 226}, dark[3] = {62, 62, 62};
    double t = n > 1 ? (double)c / (double)(n - 1) : 0.6;
    int rgb[3];
    for (int k = 0; k < 3; k++)
        rgb[k] = (int)lround(pale[k] + (dark[k] - pale[k]) * t);
    snprintf(out, 8, "#%02x%02x%02x", rgb[0], rgb[1], rgb[2]);
}

static size_t class_of(const hex_summary *h, size_t count)
{
    size_t c = 0;
    while (c + 1 < h->n_classes && count >= h->class_lo[c + 1])
        c++;
    return c;
}

struct hex_grid {
    double r, w; /* hexagon radius and width */
    size_t cols, rows;
    size_t *counts; /* rows × cols, row-major */
    size_t points;
};

/* Nearest integer, inline and without branches (the hexagon count calls it
   four times per point, and a library call was most of the count's time):
   adding and subtracting 2^52 rounds to an integer in the default rounding
   mode, halves to even. |t| is capped far beyond any pixel. */
static inline double hex_nearest(double t)
{
    double s = fabs(t);
    s = s < 0x1p51 ? s : 0x1p51;
    return copysign((s + 0x1p52) - 0x1p52, t);
}

static inline double hex_clamp(double t, double hi)
{
    return t < 0 ? 0 : t > hi ? hi : t;
}

/* The panel's axis mapping of one axis divided by a lattice step, as a
   scale and an offset: position / step = (value/2 − lo/2) · scale + offset,
   so that the count needs no division per point. */
static void hex_axis(double lo, double hi, double length, double step, double *scale,
                     double *offset)
{
    double span = hi / 2 - lo / 2;
    *scale = span > 0 ? length / (span * step) : 0.0;
    *offset = span > 0 ? 0.0 : 0.5 * length / step;
}

/* Counts the finite points per hexagon of a grid laid over the panel: the
   nearest centre of the even rows' lattice and of the odd rows', in units
   of the lattice steps (w across, 3r down). */
static void hex_count(const plot_panel *p, const double *x, const double *y, size_t n,
                      hex_grid *g)
{
    g->r = HEX_RADIUS;
    g->w = sqrt(3.0) * g->r;
    g->cols = (size_t)(p->width / g->w) + 2;
    g->rows = (size_t)(p->height / (1.5 * g->r)) + 2;
    g->counts = xcalloc(g->cols * g->rows, sizeof *g->counts);
    g->points = 0;
    double w = g->w, h = 3 * g->r;
    double sx, ox, sy, oy;
    hex_axis(p->x.lo, p->x.hi, p->width, w, &sx, &ox);
    hex_axis(p->y.lo, p->y.hi, p->height, h, &sy, &oy);
    double top = p->height / h, half_x = p->x.lo / 2, half_y = p->y.lo / 2;
    double last_col = (double)g->cols - 1, last_row = (double)g->rows - 1;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i]))
            continue;
        double u = (x[i] / 2 - half_x) * sx + ox;
        double v = top - ((y[i] / 2 - half_y) * sy + oy);
        double ia = hex_nearest(u), ka = hex_nearest(v);
        double ib = hex_nearest(u - 0.5), kb = hex_nearest(v - 0.5);
        double dxa = (u - ia) * w, dya = (v - ka) * h;
        double dxb = (u - ib - 0.5) * w, dyb = (v - kb - 0.5) * h;
        double da = dxa * dxa + dya * dya, db = dxb * dxb + dyb * dyb;
        double col = da <= db ? ia : ib, row = da <= db ? 2 * ka : 2 * kb + 1;
        col = hex_clamp(col, last_col);
        row = hex_clamp(row, last_row);
        g->counts[(size_t)row * g->cols + (size_t)col]++;
        g->points++;
    }
}

hex_grid *hexbin_new(const plot_panel *p, const double *x, const double *y, size_t n)
{
    hex_grid *g = xcalloc(1, sizeof *g);
    hex_count(p, x, y, n, g);
    return g;
}

void hexbin_free(hex_grid *g)
{
    if (!g)
        return;
    free(g->counts);
    free(g);
}

size_t hexbin_peak(const hex_grid *g)
{
    size_t peak = 0;
    for (size_t c = 0; c < g->cols * g->rows; c++)
        peak = g->counts[c] > peak ? g->counts[c] : peak;
    return peak;
}

static void define_hexagon(svg_doc *d, double r)
{
    if (d->hex_defined)
        return;
    d->hex_defined = true;
    double s = r * 0.96, hw = s * sqrt(3.0) / 2;
    buf_printf(&d->defs, "<path id=\"%sh\" d=\"", d->id);
    svg_path(&d->defs, "M0 @L@ @V@L0 @L@ @V@z\"/>\n", -s, hw, -s / 2, s / 2, s, -hw, s / 2,
             -s / 2);
}

void layer_hexbin(svg_doc *d, const plot_panel *p, const hex_grid *g, size_t class_max,
                  hex_summary *out)
{
    memset(out, 0, sizeof *out);
    out->points = g->points;
    size_t peak = class_max ? class_max : hexbin_peak(g);
    if (peak == 0)
        return;
    hex_classes(peak, out);
    for (size_t c = 0; c < out->n_classes; c++)
        class_colour(c, out->n_classes, out->class_colour[c]);
    define_hexagon(d, g->r);
    buf *b = &d->body;
    for (size_t c = 0; c < out->n_classes; c++) {
        buf_printf(b, "<g fill=\"%s\" clip-path=\"url(#%s)\">\n", out->class_colour[c],
                   p->clip);
        for (size_t row = 0; row < g->rows; row++)
            for (size_t col = 0; col < g->cols; col++) {
                size_t count = g->counts[row * g->cols + col];
                if (count == 0 || class_of(out, count) != c)
                    continue;
                double cx = p->left + ((double)col + (row % 2 ? 0.5 : 0.0)) * g->w;
                double cy = p->top + (double)row * 1.5 * g->r;
                buf_printf(b, "<use href=\"#%sh\"", d->id);
                svg_path(b, " x=\"@\" y=\"@\"", cx, cy);
                buf_printf(b, " data-n=\"%zu\"/>\n", count);
                out->cells++;
            }
        buf_puts(b, "</g>\n");
    }
}

void hex_key(svg_doc *d, const hex_summary *h, double x, double y)
{
    buf *b = &d->body;
    svg_text(d, x, y, 11, "start", "fill=\"#222222\"", "rows per");
    svg_text(d, x, y + 13, 11, "start", "fill=\"#222222\"", "hexagon");
    y += 30;
    for (size_t c = 0; c < h->n_classes; c++, y += 17) {
        buf_printf(b, "<use href=\"#%sh\"", d->id);
        svg_path(b, " x=\"@\" y=\"@\"", x + 6, y - 4);
        buf_printf(b, " fill=\"%s\"/>\n", h->class_colour[c]);
        char text[64];
        if (h->class_lo[c] == h->class_hi[c])
            snprintf(text, sizeof text, "%zu", h->class_lo[c]);
        else
            snprintf(text, sizeof text, "%zu\xe2\x80\x93%zu", h->class_lo[c],
                     h->class_hi[c]);
        svg_text(d, x + 18, y, 11, "start", "fill=\"#222222\"", text);
    }
}

/* ---- lines, bands ----------------------------------------------------------- */

void layer_line(svg_doc *d, const plot_panel *p, const double *x, const double *y, size_t n,
                const char *colour, double width, const char *dash, bool halo)
{
    buf path;
    buf_init(&path);
    bool open = false;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i])) {
            open = false;
            continue;
        }
        path_move(&path, open ? 'L' : 'M', panel_x(p, x[i]), panel_y(p, y[i]));
        open = true;
    }
    if (path.length == 0) {
        buf_free(&path);
        return;
    }
    buf *b = &d->body;
    buf_printf(b, "<g fill=\"none\" stroke-linejoin=\"round\" clip-path=\"url(#%s)\">\n",
               p->clip);
    if (halo) {
        svg_path(b, "<path stroke=\"#ffffff\" stroke-opacity=\"0.8\" stroke-width=\"@\"",
                 width + 3);
        buf_printf(b, " d=\"%s\"/>\n", path.data);
    }
    buf_printf(b, "<path stroke=\"%s\"", colour);
    svg_path(b, " stroke-width=\"@\"", width);
    if (dash && *dash)
        buf_printf(b, " stroke-dasharray=\"%s\"", dash);
    buf_printf(b, " d=\"%s\"/>\n</g>\n", path.data);
    buf_free(&path);
}

void layer_band(svg_doc *d, const plot_panel *p, const double *x, const double *lower,
                const double *upper, size_t n, const char *colour)
{
    buf *b = &d->body;
    buf_printf(b, "<path fill=\"%s\" clip-path=\"url(#%s)\" d=\"", colour, p->clip);
    bool first = true;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(upper[i]) || !isfinite(lower[i]))
            continue;
        path_move(b, first ? 'M' : 'L', panel_x(p, x[i]), panel_y(p, upper[i]));
        first = false;
    }
    for (size_t k = n; k-- > 0;) {
        if (!isfinite(x[k]) || !isfinite(upper[k]) || !isfinite(lower[k]))
            continue;
        path_move(b, 'L', panel_x(p, x[k]), panel_y(p, lower[k]));
    }
    buf_puts(b, "z\"/>\n");
}

/* ---- labels ------------------------------------------------------------------- */

typedef struct {
    double x0, y0, x1, y1;
} box;

static double overlap(box a, box b)
{
    double w = fmin(a.x1, b.x1) - fmax(a.x0, b.x0);
    double h = fmin(a.y1, b.y1) - fmax(a.y0, b.y0);
    return w > 0 && h > 0 ? w * h : 0.0;
}

#define LABEL_FONT 10.5

/* Area of candidate covered by the marks of the obstacles. */
static double obstacle_overlap(const plot_panel *p, box candidate, const plot_obstacles *o,
                               double r)
{
    double total = 0.0;
    for (size_t j = 0; o && j < o->n; j++) {
        if (!isfinite(o->x[j]) || !isfinite(o->y[j]))
            continue;
        double px = panel_x(p, o->x[j]), py = panel_y(p, o->y[j]);
        total += overlap(candidate, (box){px - r, py - r, px + r, py + r});
    }
    return total;
}

/* How bad a label at candidate is: leaving the panel is worst (a label on
   the frame or beyond it reads as part of the axis), then covering other
   labels, the ringed points, and least other points. */
static double label_cost(const plot_panel *p, box candidate, const box *placed,
                         size_t n_placed, const box *marks, size_t n_marks,
                         const plot_obstacles *others, double mark_size)
{
    double cost = 0.0;
    for (size_t j = 0; j < n_placed; j++)
        cost += 6.0 * overlap(candidate, placed[j]);
    for (size_t j = 0; j < n_marks; j++)
        cost += 2.0 * overlap(candidate, marks[j]);
    cost += 0.3 * obstacle_overlap(p, candidate, others, mark_size);
    box area = {p->left + 2, p->top + 2, p->left + p->width - 2, p->top + p->height - 2};
    double size = (candidate.x1 - candidate.x0) * (candidate.y1 - candidate.y0);
    return cost + 40.0 * (size - overlap(candidate, area));
}

size_t layer_labels(svg_doc *d, const plot_panel *p, const double *x, const double *y,
                    const char *const *text, size_t n, const plot_obstacles *others)
{
    return layer_labels_sized(d, p, x, y, NULL, text, n, others);
}

size_t layer_labels_sized(svg_doc *d, const plot_panel *p, const double *x, const double *y,
                          const double *radius, const char *const *text, size_t n,
                          const plot_obstacles *others)
{
    if (n == 0)
        return 0;
    /* Directions from the point, by preference: right, left, above, below,
       then the diagonals; each near the point, then farther out with a
       leader line. */
    static const double place[8][3] = {{1, 0, 0},  {-1, 0, 0}, {0, -1, 0},  {0, 1, 0},
                                       {1, -1, 1}, {1, 1, 1},  {-1, -1, 1}, {-1, 1, 1}};
    box *placed = xmalloc(n * sizeof *placed);
    box *marks = xmalloc(n * sizeof *marks);
    double *ring = xmalloc(n * sizeof *ring);
    for (size_t i = 0; i < n; i++) {
        double px = panel_x(p, x[i]), py = panel_y(p, y[i]);
        double r = ring[i] = (radius ? radius[i] : d->mark_size) + 2;
        marks[i] = (box){px - r, py - r, px + r, py + r};
    }
    buf *b = &d->body;
    buf leaders;
    buf_init(&leaders);
    buf_puts(b, "<g fill=\"none\" stroke=\"#111111\" stroke-width=\"1.2\">\n");
    for (size_t i = 0; i < n; i++) {
        svg_path(b, "<circle cx=\"@\" cy=\"@\" r=\"@\"/>\n", panel_x(p, x[i]),
                 panel_y(p, y[i]), ring[i]);
    }
    buf_puts(b, "</g>\n");
    buf texts;
    buf_init(&texts);
    size_t dropped = 0;
    for (size_t i = 0; i < n; i++) {
        double px = panel_x(p, x[i]), py = panel_y(p, y[i]), r = ring[i];
        double tw = svg_text_width(text[i], LABEL_FONT), th = LABEL_FONT;
        double best_cost = INFINITY;
        box best = {0, 0, 0, 0};
        bool best_far = false;
        /* Eight directions at four distances, the nearer preferred. */
        for (int k = 0; k < 32; k++) {
            const double *dir = place[k % 8];
            int level = k / 8;
            bool far = level > 0;
            double gap = (dir[2] ? r * 0.7 : r + 2) + 14.0 * level;
            double left = dir[0] > 0 ? px + gap : dir[0] < 0 ? px - gap - tw : px - tw / 2;
            double top = dir[1] > 0 ? py + gap : dir[1] < 0 ? py - gap - th : py - th / 2;
            box candidate = {left, top, left + tw, top + th};
            double cost =
                label_cost(p, candidate, placed, i, marks, n, others, d->mark_size);
            cost += 8.0 * level; /* near the point when that is as good */
            if (cost < best_cost - 1e-9) {
                best_cost = cost;
                best = candidate;
                best_far = far;
            }
        }
        /* A label that would cover another or leave the panel is left out:
           the ring still marks its row. */
        box area = {p->left + 2, p->top + 2, p->left + p->width - 2,
                    p->top + p->height - 2};
        bool clash = overlap(best, area) < (best.x1 - best.x0) * (best.y1 - best.y0) - 0.5;
        for (size_t j = 0; j < i && !clash; j++)
            clash = overlap(best, placed[j]) > 0.0;
        if (clash) {
            placed[i] = (box){0, 0, 0, 0};
            dropped++;
            continue;
        }
        placed[i] = best;
        if (best_far) {
            /* From the ring towards the label's nearest point. */
            double tx = fmin(fmax(px, best.x0), best.x1),
                   ty = fmin(fmax(py, best.y0), best.y1);
            double dx = tx - px, dy = ty - py, length = sqrt(dx * dx + dy * dy);
            if (length > r + 1) {
                path_move(&leaders, 'M', px + dx / length * r, py + dy / length * r);
                path_move(&leaders, 'L', tx - dx / length, ty - dy / length);
            }
        }
        svg_path(&texts, "<text x=\"@\" y=\"@\">", best.x0, best.y1 - 2);
        svg_escape(&texts, text[i]);
        buf_puts(&texts, "</text>\n");
    }
    if (leaders.length)
        buf_printf(
            b, "<path fill=\"none\" stroke=\"#111111\" stroke-width=\"0.8\" d=\"%s\"/>\n",
            leaders.data);
    buf_puts(b,
             "<g font-size=\"10.5\" fill=\"#111111\" stroke=\"#ffffff\" stroke-width=\"3\" "
             "paint-order=\"stroke\" stroke-linejoin=\"round\">\n");
    buf_put(b, texts.data ? texts.data : "", texts.length);
    buf_puts(b, "</g>\n");
    buf_free(&texts);
    buf_free(&leaders);
    free(placed);
    free(marks);
    free(ring);
    return dropped;
}

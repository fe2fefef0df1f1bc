/*
 * predictors.c — the response against each numeric predictor: one panel
 * per predictor sharing the response axis, points marked by the level of a
 * grouping category (colour and shape), and the model's fitted line for
 * each level with the other numeric predictors held at their means.
 */
#include "plot.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define PANEL_HEIGHT 250.0
#define PANEL_BELOW 58.0 /* x tick labels and title under a panel */
#define PANEL_GAP 30.0

typedef struct {
    size_t n_curves;
    bool styled;    /* one style per level (at most PLOT_STYLES used levels) */
    int style[256]; /* per level when styled; -1: level has no rows */
    size_t used_levels;
    size_t **rows; /* per level: its rows */
    size_t *n_rows;
} grouping;

/* The rows of each level; with lists only when points are drawn one by one
   (binned figures need the counts alone). */
static void grouping_make(const figures_input *in, bool lists, grouping *g)
{
    memset(g, 0, sizeof *g);
    g->n_curves = in->group_name ? in->n_levels : 1;
    g->rows = xcalloc(g->n_curves, sizeof *g->rows);
    g->n_rows = xcalloc(g->n_curves, sizeof *g->n_rows);
    for (size_t L = 0; L < g->n_curves && lists; L++)
        g->rows[L] = xmalloc((in->n ? in->n : 1) * sizeof **g->rows);
    for (size_t i = 0; i < in->n; i++) {
        size_t L = in->group_name ? (size_t)in->group[i] : 0;
        if (L >= g->n_curves)
            continue;
        if (lists)
            g->rows[L][g->n_rows[L]] = i;
        g->n_rows[L]++;
    }
    for (size_t L = 0; L < g->n_curves; L++)
        g->used_levels += g->n_rows[L] ? 1 : 0;
    g->styled = g->used_levels <= PLOT_STYLES && g->n_curves <= 256;
    int next = 0;
    for (size_t L = 0; L < g->n_curves && g->styled; L++)
        g->style[L] = g->n_rows[L] ? next++ : -1;
}

static void grouping_free(grouping *g)
{
    for (size_t L = 0; L < g->n_curves; L++)
        free(g->rows[L]);
    free(g->rows);
    free(g->n_rows);
}

static void make_key(const figures_input *in, const grouping *g, bool binned, plot_key *key,
                     const figure *fig)
{
    if (!in->group_name || !g->styled) {
        if (!binned)
            key_mark(key, 0, "row");
        if (in->group_name) {
            char text[96];
            snprintf(text, sizeof text, "model fit, one line per level (%zu levels)",
                     g->used_levels);
            key_line(key, "#555555", 1.5, "", text);
        } else {
            key_line(key, PLOT_SMOOTH, 2.2, "", "model fit");
        }
    } else {
        for (size_t L = 0; L < g->n_curves; L++) {
            if (g->style[L] < 0)
                continue;
            buf text;
            buf_init(&text);
            buf_printf(&text, "%s = %s", in->group_name, in->group_levels[L]);
            /* Long level names are cut so the key stays on the canvas. */
            char cut[96];
            snprintf(cut, sizeof cut, "%s", text.data);
            if (text.length >= sizeof cut) {
                size_t end = sizeof cut - 4;
                while (end > 0 && (cut[end] & 0xc0) == 0x80)
                    end--;
                memcpy(cut + end, "\xe2\x80\xa6", 4);
            }
            buf_free(&text);
            if (binned)
                key_line(key, plot_colour[g->style[L]], 2.2, plot_dash[g->style[L]], cut);
            else
                key_mark_line(key, g->style[L], cut);
        }
    }
    key_flagged(fig, key);
}

static void curve_range(const figures_input *in, size_t n_curves, double *lo, double *hi)
{
    for (size_t k = 0; k < in->n_predictors; k++) {
        const figures_predictor *pr = &in->predictors[k];
        double a, b;
        if (finite_range(pr->curve_y, pr->n_grid * n_curves, &a, &b)) {
            *lo = fmin(*lo, a);
            *hi = fmax(*hi, b);
        }
    }
}

static void draw_curves(figure *fig, const plot_panel *p, const figures_predictor *pr,
                        const grouping *g)
{
    for (size_t L = 0; L < g->n_curves; L++) {
        if (g->n_rows[L] == 0)
            continue;
        const double *cx = pr->curve_x + L * pr->n_grid, *cy = pr->curve_y + L * pr->n_grid;
        if (!fig->in->group_name)
            layer_line(&fig->doc, p, cx, cy, pr->n_grid, PLOT_SMOOTH, 2.2, "", true);
        else if (g->styled)
            layer_line(&fig->doc, p, cx, cy, pr->n_grid, plot_colour[g->style[L]], 2.2,
                       plot_dash[g->style[L]], true);
        else
            layer_line(&fig->doc, p, cx, cy, pr->n_grid, "#555555", 1.5, "", true);
    }
}

static void write_caption(figure *fig, const grouping *g, bool binned, size_t points)
{
    const figures_input *in = fig->in;
    const char *response = in->response.label ? in->response.label : in->response.name;
    buf *c = &fig->caption;
    buf_printf(c,
               "The observed %s against each numeric predictor of the model, one panel "
               "per predictor",
               response);
    if (in->group_name && !binned)
        buf_printf(c,
                   g->styled ? ", with points marked by the level of %s (colour and shape)"
                             : ", points of all %s levels alike",
                   in->group_name);
    buf_printf(c, ". The lines are the model's fitted values%s%s",
               in->group_name ? " for each level of " : "",
               in->group_name ? in->group_name : "");
    buf_puts(c, ", each over the range of its data");
    if (in->n_predictors > 1) {
        buf_printf(c, ", with the other numeric predictors held at their means over the %zu "
                      "rows the model used (",
                   in->n);
        for (size_t k = 0; k < in->n_predictors; k++) {
            buf_printf(c, "%s%s ", k ? "; " : "", in->predictors[k].column.name);
            put_number(c, in, in->predictors[k].mean);
            if (in->predictors[k].column.unit)
                buf_printf(c, " %s", in->predictors[k].column.unit);
        }
        buf_puts(c, ")");
    }
    for (size_t k = 0; k < in->n_fixed; k++)
        buf_printf(c, "%s%s at its reference level %s", k ? " and " : ", and ",
                   in->fixed_names[k], in->fixed_levels[k]);
    buf_puts(c, ". ");
    if (in->n_predictors > 1)
        buf_puts(c, "Because they hold the other predictors fixed, the lines need not run "
                    "through the middle of the data when the predictors are correlated. ");
    if (in->numeric_interacts && in->n_predictors > 1)
        buf_puts(c, "The model includes products or powers of numeric predictors, so a "
                    "line's slope also depends on the values the others are held at; the "
                    "sentences read slopes at the medians of the fitted rows (or the values "
                    "they name) instead. ");
    buf_puts(c, binned ? "Hexagons that bend away from a line suggest curvature the model "
                         "misses"
                       : "Points that bend away from a line suggest curvature the model "
                         "misses");
    if (in->group_name && in->group_interacts)
        buf_printf(c,
                   "; the lines' slopes differ between levels because the model includes "
                   "an interaction of %s with a numeric predictor, and points whose trend "
                   "differs from their line's slope suggest a difference it misses",
                   in->group_name);
    else if (in->group_name)
        buf_printf(c,
                   "; the lines run parallel because the model includes no interaction of "
                   "%s with a numeric predictor, so points of one level whose trend differs "
                   "from their line's slope suggest one it misses",
                   in->group_name);
    buf_puts(c, ".");
    if (in->log_base > 0)
        buf_printf(c,
                   " The right axis reads the response as %s itself, of which the model "
                   "fits the logarithm.",
                   in->original.label ? in->original.label : in->original.name);
    caption_tail(fig, binned, points);
}

void figure_response_by_predictor(figure *fig)
{
    const figures_input *in = fig->in;
    size_t k_panels = in->n_predictors;
    size_t points = 0;
    for (size_t k = 0; k < k_panels; k++)
        for (size_t i = 0; i < in->n; i++)
            points += isfinite(in->predictors[k].values[i]) && isfinite(in->observed[i]);
    bool binned = points > FIGURES_SCATTER_MAX;
    grouping g;
    grouping_make(in, !binned, &g);
    size_t cols = k_panels < 3 ? k_panels : 3, rows = (k_panels + cols - 1) / cols;
    fig->doc.width = cols == 3 ? 960 : 720;

    const char *response = in->response.label ? in->response.label : in->response.name;
    buf_printf(&fig->title, "How does %s change with each numeric predictor?", response);
    plot_key key = {.count = 0};
    make_key(in, &g, binned, &key, fig);
    double top = canvas_header(&fig->doc, fig->title.data, &key);

    double y0 = 0.0, y1 = 1.0;
    if (!finite_range(in->observed, in->n, &y0, &y1)) {
        y0 = 0.0;
        y1 = 1.0;
    }
    curve_range(in, g.n_curves, &y0, &y1);
    figures_ticks y_ticks;
    figures_ticks_make(y0, y1, 6, &y_ticks);
    ticks_pad(&y_ticks);
    double left = 46 + ticks_width(&y_ticks);
    bool original = in->log_base > 0;
    double avail = fig->doc.width - 24 - (binned ? HEX_KEY_WIDTH : 0.0) - left -
                   (original ? ORIGINAL_RIGHT : 0.0);
    double panel_width = (avail - (double)(cols - 1) * PANEL_GAP) / (double)cols;
    fig->doc.height = top + 10 + (double)rows * (PANEL_HEIGHT + PANEL_BELOW) + 4;

    plot_panel *panels = xcalloc(k_panels, sizeof *panels);
    hex_grid **grids = xcalloc(k_panels, sizeof *grids);
    size_t class_max = 0;
    for (size_t k = 0; k < k_panels; k++) {
        plot_panel *p = &panels[k];
        p->y = y_ticks;
        figures_ticks_make(0, 0, 5, &p->x);
        double x0 = 0.0, x1 = 1.0;
        if (finite_range(in->predictors[k].values, in->n, &x0, &x1))
            figures_ticks_make(x0, x1, 5, &p->x);
        ticks_pad(&p->x);
        p->left = left + (double)(k % cols) * (panel_width + PANEL_GAP);
        p->top = top + 10 + (double)(k / cols) * (PANEL_HEIGHT + PANEL_BELOW);
        p->width = panel_width;
        p->height = PANEL_HEIGHT;
        if (binned) {
            grids[k] = hexbin_new(p, in->predictors[k].values, in->observed, in->n);
            size_t peak = hexbin_peak(grids[k]);
            class_max = peak > class_max ? peak : class_max;
        }
    }
    for (size_t k = 0; k < k_panels; k++) {
        plot_panel *p = &panels[k];
        const figures_predictor *pr = &in->predictors[k];
        buf xt;
        buf_init(&xt);
        axis_title(&xt, NULL, &pr->column);
        buf yt;
        buf_init(&yt);
        axis_title(&yt, NULL, &in->response);
        panel_axes(&fig->doc, p, xt.data, yt.data, k % cols == 0);
        if (original && (k % cols == cols - 1 || k + 1 == k_panels)) {
            /* The last panel of a row reads the response in its own units. */
            buf_reset(&yt);
            axis_title(&yt, NULL, &in->original);
            panel_original_axis(&fig->doc, p, false, in->log_base, false, yt.data);
        }
        buf_free(&xt);
        buf_free(&yt);
        if (binned) {
            hex_summary hex;
            layer_hexbin(&fig->doc, p, grids[k], class_max, &hex);
            if (k == 0)
                hex_key(&fig->doc, &hex, fig->doc.width - 24 - HEX_KEY_WIDTH + 18,
                        p->top + 10);
        } else {
            for (size_t L = 0; L < g.n_curves; L++)
                if (g.n_rows[L])
                    layer_points(&fig->doc, p, pr->values, in->observed, g.rows[L],
                                 g.n_rows[L], g.styled ? g.style[L] : 0);
        }
        draw_curves(fig, p, pr, &g);
        plot_obstacles others = row_obstacles(fig, pr->values, in->observed, binned);
        label_flagged(fig, p, pr->values, in->observed, &others);
    }
    write_caption(fig, &g, binned, points);
    buf_printf(&fig->alt, "%zu scatter plot%s of %s against ", k_panels,
               k_panels == 1 ? "" : "s", response);
    for (size_t k = 0; k < k_panels; k++)
        buf_printf(&fig->alt, "%s%s",
                   k == 0              ? ""
                   : k + 1 == k_panels ? " and "
                                       : ", ",
                   in->predictors[k].column.name);
    buf_printf(&fig->alt, ", %zu rows each, with the model's fitted line%s.", in->n,
               in->group_name ? "s per level" : "");
    for (size_t k = 0; k < k_panels; k++)
        hexbin_free(grids[k]);
    free(grids);
    free(panels);
    grouping_free(&g);
}

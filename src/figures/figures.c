/*
 * figures.c — the figure set of one model: chooses the figures the spec
 * asks for, names their files, and holds what the figures share (the
 * choice of rows to label, scatter or hexagonal bins, caption sentences).
 */
#include "plot.h"

#include "../util/stage.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef void (*figure_drawer)(figure *fig);

/* In the order of spec_figure_names. */
static const figure_drawer DRAWERS[] = {figure_response_by_predictor,
                                        figure_residuals_by_fitted,
                                        figure_quantile_plot,
                                        figure_spread_by_fitted,
                                        figure_influence,
                                        figure_residual_histogram,
                                        figure_coefficient_intervals,
                                        figure_observed_by_predicted,
                                        figure_residuals_in_order};

double mark_radius(size_t n)
{
    return n <= 300 ? 3.4 : n <= 3000 ? 2.8 : 2.1;
}

void single_panel(const svg_doc *d, plot_panel *p, double top, bool count_key)
{
    p->left = 46 + ticks_width(&p->y);
    p->top = top + 10;
    p->width = d->width - 24 - (count_key ? HEX_KEY_WIDTH : 0.0) - p->left;
    p->height = d->height - 56 - p->top;
}

size_t count_finite(const double *v, size_t n)
{
    size_t count = 0;
    for (size_t i = 0; i < n; i++)
        count += isfinite(v[i]) ? 1 : 0;
    return count;
}

size_t scatter(figure *fig, const plot_panel *p, const double *x, const double *y,
               bool binned)
{
    if (!binned)
        return layer_points(&fig->doc, p, x, y, NULL, fig->in->n, 0);
    hex_summary hex;
    hex_grid *grid = hexbin_new(p, x, y, fig->in->n);
    layer_hexbin(&fig->doc, p, grid, 0, &hex);
    hexbin_free(grid);
    hex_key(&fig->doc, &hex, p->left + p->width + 18, p->top + 10);
    return hex.points;
}

plot_obstacles row_obstacles(const figure *fig, const double *x, const double *y,
                             bool binned)
{
    return (plot_obstacles){x, y, binned ? 0 : fig->in->n};
}

void label_flagged_at(figure *fig, const plot_panel *p, const double *x, const double *y,
                      const plot_obstacles *others)
{
    double px[LABELLED_MAX], py[LABELLED_MAX];
    char text[LABELLED_MAX][16];
    const char *labels[LABELLED_MAX];
    size_t count = 0;
    for (size_t k = 0; k < fig->n_labelled; k++) {
        if (!isfinite(x[k]) || !isfinite(y[k]))
            continue;
        px[count] = x[k];
        py[count] = y[k];
        snprintf(text[count], sizeof text[count], "%lu",
                 (unsigned long)fig->in->lines[fig->labelled[k]]);
        labels[count] = text[count];
        count++;
    }
    fig->unlabelled += layer_labels(&fig->doc, p, px, py, labels, count, others);
}

void label_flagged(figure *fig, const plot_panel *p, const double *x, const double *y,
                   const plot_obstacles *others)
{
    double lx[LABELLED_MAX], ly[LABELLED_MAX];
    for (size_t k = 0; k < fig->n_labelled; k++) {
        lx[k] = x[fig->labelled[k]];
        ly[k] = y[fig->labelled[k]];
    }
    label_flagged_at(fig, p, lx, ly, others);
}

void key_flagged(const figure *fig, plot_key *k)
{
    if (fig->n_labelled)
        key_ring(k, "flagged row, labelled with its line in the data file");
}

void percent_text(char *out, size_t size, double level)
{
    snprintf(out, size, "%g", round(level * 1000.0) / 10.0);
}

void put_number(buf *b, const figures_input *in, double value)
{
    char text[64];
    figures_format_number(text, sizeof text, value, in->digits);
    buf_puts(b, text);
}

double *residual_measures(const figures_input *in, bool studentized)
{
    double *values = xmalloc((in->n ? in->n : 1) * sizeof *values);
    for (size_t i = 0; i < in->n; i++) {
        figures_row_measures m = row_measures(in, i);
        values[i] = studentized ? m.studentized : m.standardized;
    }
    return values;
}

size_t count_pairs(const double *x, const double *y, size_t n)
{
    size_t count = 0;
    for (size_t i = 0; i < n; i++)
        count += isfinite(x[i]) && isfinite(y[i]) ? 1 : 0;
    return count;
}

/* Starts a scatter figure of (x, y): its title, and its key with the row
   mark when every row is drawn. Returns the number of points; *binned
   says whether they are drawn as hexagons. */
size_t scatter_start(figure *fig, const double *x, const double *y, const char *title,
                     plot_key *key, bool *binned)
{
    size_t points = count_pairs(x, y, fig->in->n);
    *binned = points > FIGURES_SCATTER_MAX;
    buf_puts(&fig->title, title);
    key->count = 0;
    if (!*binned)
        key_mark(key, 0, "row");
    return points;
}

/* The header with its key, ticks for the ranges, the panel and its axes. */
void begin_panel(figure *fig, plot_panel *p, const plot_key *key, double x0, double x1,
                 double y0, double y1, const char *x_title, const char *y_title,
                 bool binned)
{
    double top = canvas_header(&fig->doc, fig->title.data, key);
    if (fig->original_axes)
        top += ORIGINAL_TOP;
    figures_ticks_make(x0, x1, 7, &p->x);
    figures_ticks_make(y0, y1, 6, &p->y);
    ticks_pad(&p->x);
    if (y0 != 0.0)
        ticks_pad(&p->y);
    else /* bars and spreads stand on the zero baseline: room above only */
        p->y.hi += 0.03 * (p->y.hi - p->y.lo);
    single_panel(&fig->doc, p, top, binned);
    if (fig->original_axes)
        p->width -= ORIGINAL_RIGHT;
    panel_axes(&fig->doc, p, x_title, y_title, true);
}

void range_or_unit(const double *v, size_t n, double *min, double *max)
{
    if (!finite_range(v, n, min, max)) {
        *min = 0.0;
        *max = 1.0;
    }
}

/* A straight reference line from (x0, y0) to (x1, y1), dashed. */
void reference_line(figure *fig, const plot_panel *p, double x0, double y0, double x1,
                    double y1, const char *dash)
{
    double x[2] = {x0, x1}, y[2] = {y0, y1};
    layer_line(&fig->doc, p, x, y, 2, PLOT_INK, 1.3, dash, true);
}

void residual_title(buf *b, const figures_input *in)
{
    figures_quantity q = {"residual", "residual", in->response.unit};
    axis_title(b, NULL, &q);
}

const char *response_words(const figures_input *in)
{
    return in->response.label ? in->response.label : in->response.name;
}

static void caption_binned(figure *fig, size_t points)
{
    buf *c = &fig->caption;
    buf_printf(c,
               " With %zu points, more than %d, each hexagon is shaded by how many rows "
               "fall in it instead of drawing every row.",
               points, FIGURES_SCATTER_MAX);
}

static void caption_flagged(figure *fig)
{
    size_t flagged = 0;
    for (size_t i = 0; i < fig->in->n; i++)
        flagged += fig->in->flagged[i] ? 1 : 0;
    if (flagged == 0)
        return;
    buf *c = &fig->caption;
    if (flagged <= LABELLED_MAX)
        buf_printf(c,
                   " The %zu row%s flagged by the influence diagnostics %s ringed and "
                   "labelled with %s line in the data file",
                   flagged, flagged == 1 ? "" : "s", flagged == 1 ? "is" : "are",
                   flagged == 1 ? "its" : "their");
    else
        buf_printf(c,
                   " Of the %zu rows flagged by the influence diagnostics, the %zu "
                   "with the largest Cook's distance are ringed and labelled with "
                   "their line in the data file",
                   flagged, fig->n_labelled);
    buf_puts(c, fig->unlabelled ? " where a label has room; the report lists every "
                                  "flagged row."
                                : ".");
}

void caption_tail(figure *fig, bool binned, size_t points)
{
    if (binned)
        caption_binned(fig, points);
    caption_flagged(fig);
}

/* The flagged rows to label: the LABELLED_MAX largest Cook's distances,
   ties by row order. */
static void choose_labelled(figure *fig)
{
    const figures_input *in = fig->in;
    fig->n_labelled = 0;
    double distance[LABELLED_MAX]; /* of each labelled row, -1 where undefined */
    for (size_t i = 0; i < in->n; i++) {
        if (!in->flagged[i])
            continue;
        double d = row_measures(in, i).cooks;
        d = isfinite(d) ? d : -1.0;
        size_t k = fig->n_labelled;
        while (k > 0) {
            if (distance[k - 1] >= d)
                break;
            if (k < LABELLED_MAX) {
                fig->labelled[k] = fig->labelled[k - 1];
                distance[k] = distance[k - 1];
            }
            k--;
        }
        if (k < LABELLED_MAX) {
            fig->labelled[k] = i;
            distance[k] = d;
            if (fig->n_labelled < LABELLED_MAX)
                fig->n_labelled++;
        }
    }
}

static bool wanted(const spec_report *report, const char *name)
{
    if (!report || !report->figures_given)
        return true;
    for (size_t i = 0; i < report->n_figures; i++)
        if (strcmp(report->figures[i], name) == 0)
            return true;
    return false;
}

/* The model id as a file-name part: letters, digits, '-', '_' and '.';
   anything else becomes '_'. */
static void file_part(buf *out, const char *id)
{
    for (const unsigned char *p = (const unsigned char *)id; *p; p++) {
        bool plain = (*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') ||
                     (*p >= '0' && *p <= '9') || *p == '-' || *p == '_' ||
                     (*p == '.' && p != (const unsigned char *)id);
        buf_putc(out, plain ? (char)*p : '_');
    }
}

figures_set *figures_draw(const figures_input *in, const spec_report *report)
{
    figures_set *set = xcalloc(1, sizeof *set);
    size_t n_names = sizeof DRAWERS / sizeof DRAWERS[0];
    set->items = xcalloc(n_names, sizeof *set->items);
    for (size_t k = 0; k < n_names; k++) {
        const char *name = spec_figure_names[k];
        if (!wanted(report, name) ||
            (DRAWERS[k] == figure_response_by_predictor && in->n_predictors == 0))
            continue;
        if (DRAWERS[k] == figure_residuals_in_order && !in->order)
            continue;
        stage_begin("figure %s: %s", in->model_id ? in->model_id : "model", name);
        figure fig;
        memset(&fig, 0, sizeof fig);
        fig.in = in;
        buf_init(&fig.title);
        buf_init(&fig.caption);
        buf_init(&fig.alt);
        choose_labelled(&fig);
        char id[32];
        snprintf(id, sizeof id, "fp%zu_%zu", in->model_index, k);
        svg_begin(&fig.doc, id, 720, 480, mark_radius(in->n));
        DRAWERS[k](&fig);
        figures_figure *out = &set->items[set->count++];
        out->name = name;
        buf file;
        buf_init(&file);
        buf_puts(&file, "figures/");
        file_part(&file, in->model_id ? in->model_id : "model");
        buf_printf(&file, "-%s.svg", name);
        out->file = buf_detach(&file);
        out->svg = svg_end(&fig.doc, fig.title.data, fig.alt.data, &out->svg_length);
        out->title = buf_detach(&fig.title);
        out->caption = buf_detach(&fig.caption);
        out->alt = buf_detach(&fig.alt);
    }
    return set;
}

void figures_set_free(figures_set *set)
{
    if (!set)
        return;
    for (size_t k = 0; k < set->count; k++) {
        free(set->items[k].file);
        free(set->items[k].title);
        free(set->items[k].caption);
        free(set->items[k].alt);
        free(set->items[k].svg);
    }
    free(set->items);
    free(set);
}

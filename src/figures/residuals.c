/*
 * residuals.c — the histogram of residuals and observed against predicted
 * values. Titles ask the figure's question; captions say what it shows and
 * what a problem would look like.
 */
#include "plot.h"

#include <gsl/gsl_math.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- histogram of residuals --------------------------------------------------------- */

#define DENSITY_POINTS 160

void figure_residual_histogram(figure *fig)
{
    const figures_input *in = fig->in;
    size_t m;
    double *values = finite_values(in->residuals, in->n, &m);
    histogram_bins bins;
    histogram_bins_make(values, m, &bins);
    size_t *counts = xcalloc(bins.count, sizeof *counts), top = 0;
    for (size_t i = 0; i < m; i++) {
        double position = floor((values[i] - bins.start) / bins.width);
        size_t b = (size_t)fmin(fmax(position, 0.0), (double)(bins.count - 1));
        counts[b]++;
    }
    for (size_t b = 0; b < bins.count; b++)
        top = counts[b] > top ? counts[b] : top;
    double sigma = in->sigma, scale = (double)m * bins.width;
    bool curve = isfinite(sigma) && sigma > 0.0;
    double peak = curve ? scale / (sigma * sqrt(2.0 * M_PI)) : 0.0;

    /* The width is a round number: %g writes it without noise. */
    char width_text[64];
    snprintf(width_text, sizeof width_text, "%g", bins.width);
    buf_puts(&fig->title, "Do the residuals form a symmetric, bell-shaped distribution?");
    plot_key key = {.count = 0};
    buf text;
    buf_init(&text);
    buf_printf(&text, "rows per bin, %s%s%s wide", width_text, in->response.unit ? " " : "",
               in->response.unit ? in->response.unit : "");
    key_bar(&key, text.data);
    buf_reset(&text);
    if (curve) {
        buf_puts(&text, "normal density, mean 0, SD ");
        put_number(&text, in, sigma);
        if (in->response.unit)
            buf_printf(&text, " %s", in->response.unit);
        key_line(&key, PLOT_SMOOTH, 2.5, "", text.data);
    }
    double x_end = bins.start + bins.width * (double)bins.count;
    buf xt;
    buf_init(&xt);
    residual_title(&xt, in);
    plot_panel p;
    begin_panel(fig, &p, &key, bins.start, x_end, 0.0, fmax((double)top, peak) * 1.05,
                xt.data, "rows", false);
    buf *b = &fig->doc.body;
    buf_printf(b,
               "<g fill=\"%s\" fill-opacity=\"0.45\" stroke=\"%s\" stroke-width=\"0.8\">\n",
               plot_colour[0], plot_colour[0]);
    size_t bars = 0;
    for (size_t k = 0; k < bins.count; k++) {
        if (counts[k] == 0)
            continue;
        double left = panel_x(&p, bins.start + bins.width * (double)k);
        double right = panel_x(&p, bins.start + bins.width * (double)(k + 1));
        double y = panel_y(&p, (double)counts[k]);
        svg_path(b, "<rect x=\"@\" y=\"@\" width=\"@\" height=\"@\"", left, y, right - left,
                 p.top + p.height - y);
        buf_printf(b, " data-n=\"%zu\"/>\n", counts[k]);
        bars++;
    }
    buf_puts(b, "</g>\n");
    if (curve) {
        double dx[DENSITY_POINTS], dy[DENSITY_POINTS];
        for (size_t k = 0; k < DENSITY_POINTS; k++) {
            dx[k] = p.x.lo + (p.x.hi - p.x.lo) * (double)k / (DENSITY_POINTS - 1);
            double u = dx[k] / sigma;
            dy[k] = scale * exp(-0.5 * u * u) / (sigma * sqrt(2.0 * M_PI));
        }
        layer_line(&fig->doc, &p, dx, dy, DENSITY_POINTS, PLOT_SMOOTH, 2.5, "", true);
    }

    buf_printf(
        &fig->caption,
        "A histogram of the residuals (observed minus fitted %s) in bins %s%s%s wide",
        response_words(in), width_text, in->response.unit ? " " : "",
        in->response.unit ? in->response.unit : "");
    if (bins.sturges)
        buf_puts(&fig->caption, " (Sturges' rule, as the interquartile range is zero)");
    else if (bins.capped)
        buf_printf(&fig->caption,
                   " (about %d bins: the Freedman–Diaconis rule would give "
                   "more than can be told apart)",
                   HISTOGRAM_MAX_BINS);
    else
        buf_puts(&fig->caption, " (the Freedman–Diaconis rule, 2 × IQR × n^(−1/3), "
                                "rounded to a round width)");
    if (curve) {
        buf_puts(&fig->caption, ", with the normal density of mean zero and standard "
                                "deviation the residual standard deviation, ");
        put_number(&fig->caption, in, sigma);
        if (in->response.unit)
            buf_printf(&fig->caption, " %s", in->response.unit);
        buf_puts(&fig->caption, ", scaled to counts");
    }
    buf_puts(
        &fig->caption,
        ". Bars that follow the curve suggest roughly normal errors. A long tail on one "
        "side means skewness; a tall, narrow centre with long tails means heavier tails "
        "than normal; two humps can mean a missing category or term. The detrended "
        "quantile figure shows the tails more clearly.");
    buf_printf(&fig->alt, "Histogram of %zu residuals in %zu bars", m, bars);
    buf_puts(&fig->alt, curve ? ", with a normal density curve." : ".");
    buf_free(&text);
    buf_free(&xt);
    free(counts);
    free(values);
}

/* ---- observed against predicted -------------------------------------------------------
 */

void figure_observed_by_predicted(figure *fig)
{
    const figures_input *in = fig->in;
    /* Taller than the others: the panel is square. */
    fig->doc.height = 600;
    plot_key key;
    bool binned;
    size_t points = scatter_start(
        fig, in->fitted, in->observed,
        "How closely do the predicted values match the observed ones?", &key, &binned);
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "observed = predicted");
    key_flagged(fig, &key);
    double x0, x1, y0, y1;
    range_or_unit(in->fitted, in->n, &x0, &x1);
    range_or_unit(in->observed, in->n, &y0, &y1);
    double lo = fmin(x0, y0), hi = fmax(x1, y1);
    buf xt, yt;
    buf_init(&xt);
    buf_init(&yt);
    axis_title(&xt, "predicted", &in->response);
    axis_title(&yt, "observed", &in->response);
    bool original = in->log_base > 0;
    double top =
        canvas_header(&fig->doc, fig->title.data, &key) + (original ? ORIGINAL_TOP : 0);
    plot_panel p;
    figures_ticks_make(lo, hi, 6, &p.x);
    ticks_pad(&p.x);
    p.y = p.x;
    single_panel(&fig->doc, &p, top, binned);
    if (original)
        p.width -= ORIGINAL_RIGHT;
    /* Equal scales: a square panel, centred. */
    double side = fmin(p.width, p.height);
    p.left += (p.width - side) / 2;
    p.width = p.height = side;
    panel_axes(&fig->doc, &p, xt.data, yt.data, true);
    if (original) {
        buf ot;
        buf_init(&ot);
        axis_title(&ot, "predicted", &in->original);
        panel_original_axis(&fig->doc, &p, true, in->log_base, false, ot.data);
        buf_reset(&ot);
        axis_title(&ot, "observed", &in->original);
        panel_original_axis(&fig->doc, &p, false, in->log_base, false, ot.data);
        buf_free(&ot);
    }
    scatter(fig, &p, in->fitted, in->observed, binned);
    reference_line(fig, &p, p.x.lo, p.x.lo, p.x.hi, p.x.hi, DASH_REFERENCE);
    plot_obstacles others = row_obstacles(fig, in->fitted, in->observed, binned);
    label_flagged(fig, &p, in->fitted, in->observed, &others);

    buf_printf(
        &fig->caption,
        "Each row's observed %s against the model's predicted (fitted) value, on "
        "equal scales. Points on the dashed line are predicted exactly, and a point's "
        "vertical distance from it is its residual. A narrow band along the line "
        "means precise predictions; a curved cloud means the model misses a "
        "nonlinear pattern; a band that widens at one end means the errors are larger "
        "there.",
        response_words(in));
    if (original)
        buf_printf(&fig->caption,
                   " The top and right axes read both in %s itself, of which the model "
                   "fits the logarithm.",
                   in->original.label ? in->original.label : in->original.name);
    caption_tail(fig, binned, points);
    buf_printf(
        &fig->alt,
        "Scatter plot of %zu observed values against predicted values, with the line "
        "where they are equal.",
        points);
    buf_free(&xt);
    buf_free(&yt);
}

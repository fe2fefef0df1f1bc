/*
 * residuals.c — the figures of the residuals and of influence: residuals
 * against fitted values, the normal Q-Q plot, spread against level,
 * residuals against leverage with Cook's distance contours, the histogram
 * of residuals, and observed against predicted values. Titles ask the
 * figure's question; captions say what it shows and what a problem would
 * look like.
 *
 * Spread-location reference: for Z ~ N(0, 1), E √|Z| = 2^(1/4) Γ(3/4) / √π
 * (the half-normal moment E|Z|^p = 2^(p/2) Γ((p + 1)/2) / √π at p = 1/2).
 */
#include "plot.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define DASH_REFERENCE "5 4"

static size_t count_pairs(const double *x, const double *y, size_t n)
{
    size_t count = 0;
    for (size_t i = 0; i < n; i++)
        count += isfinite(x[i]) && isfinite(y[i]) ? 1 : 0;
    return count;
}

/* Starts a scatter figure of (x, y): its title, and its key with the row
   mark when every row is drawn. Returns the number of points; *binned
   says whether they are drawn as hexagons. */
static size_t scatter_start(figure *fig, const double *x, const double *y,
                            const char *title, plot_key *key, bool *binned)
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
static void begin_panel(figure *fig, plot_panel *p, const plot_key *key, double x0,
                        double x1, double y0, double y1, const char *x_title,
                        const char *y_title, bool binned)
{
    double top = canvas_header(&fig->doc, fig->title.data, key);
    figures_ticks_make(x0, x1, 7, &p->x);
    figures_ticks_make(y0, y1, 6, &p->y);
    single_panel(&fig->doc, p, top, binned);
    panel_axes(&fig->doc, p, x_title, y_title, true);
}

static void range_or_unit(const double *v, size_t n, double *min, double *max)
{
    if (!finite_range(v, n, min, max)) {
        *min = 0.0;
        *max = 1.0;
    }
}

/* A straight reference line from (x0, y0) to (x1, y1), dashed. */
static void reference_line(figure *fig, const plot_panel *p, double x0, double y0,
                           double x1, double y1, const char *dash)
{
    double x[2] = {x0, x1}, y[2] = {y0, y1};
    layer_line(&fig->doc, p, x, y, 2, PLOT_INK, 1.3, dash, true);
}

static void draw_smoother(figure *fig, const plot_panel *p, const double *x,
                          const double *y)
{
    smooth_curve curve;
    smooth_curve_make(x, y, fig->in->n, &curve);
    layer_line(&fig->doc, p, curve.x, curve.y, curve.n, PLOT_SMOOTH, 2.5, "", true);
    smooth_curve_free(&curve);
}

static void residual_title(buf *b, const figures_input *in)
{
    figures_quantity q = {"residual", "residual", in->response.unit};
    axis_title(b, NULL, &q);
}

static const char *response_words(const figures_input *in)
{
    return in->response.label ? in->response.label : in->response.name;
}

/* ---- residuals against fitted values ----------------------------------------- */

void figure_residuals_by_fitted(figure *fig)
{
    const figures_input *in = fig->in;
    plot_key key;
    bool binned;
    size_t points = scatter_start(
        fig, in->fitted, in->residuals,
        "Are the residuals centred on zero at every fitted value?", &key, &binned);
    key_line(&key, PLOT_SMOOTH, 2.5, "", "LOWESS smoother");
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "zero");
    key_flagged(fig, &key);
    double x0, x1, y0, y1;
    range_or_unit(in->fitted, in->n, &x0, &x1);
    range_or_unit(in->residuals, in->n, &y0, &y1);
    buf xt, yt;
    buf_init(&xt);
    buf_init(&yt);
    axis_title(&xt, "fitted", &in->response);
    residual_title(&yt, in);
    plot_panel p;
    begin_panel(fig, &p, &key, x0, x1, fmin(y0, 0.0), fmax(y1, 0.0), xt.data, yt.data,
                binned);
    scatter(fig, &p, in->fitted, in->residuals, binned);
    reference_line(fig, &p, p.x.lo, 0.0, p.x.hi, 0.0, DASH_REFERENCE);
    draw_smoother(fig, &p, in->fitted, in->residuals);
    plot_obstacles others = row_obstacles(fig, in->fitted, in->residuals, binned);
    label_flagged(fig, &p, in->fitted, in->residuals, &others);

    buf_printf(
        &fig->caption,
        "Each point is one row: its residual (observed minus fitted %s) against its "
        "fitted value. The solid curve is a LOWESS smoother (Cleveland 1979; span 2/3, "
        "three robustness passes) that follows the average residual along the fitted "
        "values. If the model's form is right, the points scatter evenly around the "
        "dashed zero line and the smoother stays close to it. A smoother that bends "
        "away from zero, in a U or an arch, points to a missing curved term or "
        "interaction; points that fan out as the fitted value grows point to a "
        "spread that changes with the level.",
        response_words(in));
    caption_tail(fig, binned, points, true);
    buf_printf(
        &fig->alt,
        "Scatter plot of %zu residuals against fitted values, with a LOWESS smoother "
        "and a dashed line at zero.",
        points);
    buf_free(&xt);
    buf_free(&yt);
}

/* ---- normal Q-Q plot ---------------------------------------------------------------- */

#define BAND_POINTS 200

/* Index of the first of the m ascending values not below v. */
static size_t lower_bound(const double *sorted, size_t m, double v)
{
    size_t lo = 0, hi = m;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (sorted[mid] < v)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

/* The pointwise band at up to BAND_POINTS order statistics spread evenly
   along the theoretical quantiles. Returns how many were written. */
static size_t quantile_band(size_t m, double level, const double *z, double *bx, double *lo,
                            double *hi)
{
    size_t count = 0, last = SIZE_MAX;
    for (size_t k = 0; k < BAND_POINTS; k++) {
        size_t i;
        if (m <= BAND_POINTS) {
            if (k >= m)
                break;
            i = k;
        } else {
            double target = z[0] + (z[m - 1] - z[0]) * (double)k / (BAND_POINTS - 1);
            double position = gsl_cdf_ugaussian_P(target) * ((double)m + 0.25) - 0.625;
            i = (size_t)fmin(fmax(round(position), 0.0), (double)(m - 1));
        }
        if (i == last)
            continue;
        last = i;
        bx[count] = z[i];
        order_statistic_band(i, m, level, &lo[count], &hi[count]);
        count++;
    }
    return count;
}

void figure_quantile_plot(figure *fig)
{
    const figures_input *in = fig->in;
    size_t m;
    double *sorted = sorted_finite(in->std_residuals, in->n, &m);
    double *z = xmalloc((m ? m : 1) * sizeof *z);
    for (size_t i = 0; i < m; i++)
        z[i] = gsl_cdf_ugaussian_Pinv(blom_position(i, m));
    double bx[BAND_POINTS], lo[BAND_POINTS], hi[BAND_POINTS];
    size_t n_band = quantile_band(m, in->level, z, bx, lo, hi);
    bool binned = m > FIGURES_SCATTER_MAX;
    char level[32];
    percent_text(level, sizeof level, in->level);

    buf_puts(&fig->title, "Do the standardized residuals follow a normal distribution?");
    plot_key key = {.count = 0};
    if (!binned)
        key_mark(&key, 0, "row");
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "y = x, the normal reference");
    char band_text[96];
    snprintf(band_text, sizeof band_text, "%s%% pointwise band under normality", level);
    key_band(&key, "#d9d9d9", band_text);
    key_flagged(fig, &key);

    double x0 = m ? z[0] : -1.0, x1 = m ? z[m - 1] : 1.0;
    double y0 = m ? sorted[0] : -1.0, y1 = m ? sorted[m - 1] : 1.0;
    for (size_t k = 0; k < n_band; k++) {
        y0 = fmin(y0, lo[k]);
        y1 = fmax(y1, hi[k]);
    }
    plot_panel p;
    begin_panel(fig, &p, &key, x0, x1, y0, y1, "standard normal quantile",
                "standardized residual", binned);
    layer_band(&fig->doc, &p, bx, lo, hi, n_band, "#d9d9d9");
    reference_line(fig, &p, p.x.lo, p.x.lo, p.x.hi, p.x.hi, DASH_REFERENCE);
    if (binned) {
        hex_summary hex;
        layer_hexbin(&fig->doc, &p, z, sorted, m, 0, &hex);
        hex_key(&fig->doc, &hex, p.left + p.width + 18, p.top + 10);
    } else {
        layer_points(&fig->doc, &p, z, sorted, NULL, m, 0);
    }
    /* The flagged rows sit at their rank among the sorted residuals. */
    double *qx = xmalloc((in->n ? in->n : 1) * sizeof *qx);
    for (size_t i = 0; i < in->n; i++)
        qx[i] = NAN;
    for (size_t k = 0; k < fig->n_labelled; k++) {
        size_t i = fig->labelled[k];
        if (isfinite(in->std_residuals[i]) && m)
            qx[i] = z[lower_bound(sorted, m, in->std_residuals[i])];
    }
    plot_obstacles others = {z, sorted, binned ? 0 : m};
    label_flagged(fig, &p, qx, in->std_residuals, &others);
    free(qx);

    buf_printf(
        &fig->caption,
        "The standardized residuals, sorted, against the quantiles a standard normal "
        "sample of the same size would have (Blom's plotting positions). Points along "
        "the dashed line y = x mean the residuals are close to normal. The shaded band "
        "holds each sorted residual with probability %s%% if the errors are normal, "
        "point by point (from the Beta distribution of uniform order statistics); "
        "being pointwise, it is expected that a few points in a large sample fall "
        "just outside it. An S-shaped bend means tails lighter or heavier than "
        "normal, a curve bending one way means skewness, and single points far from "
        "the line at either end are outlying rows.",
        level);
    caption_tail(fig, binned, m, false);
    buf_printf(&fig->alt,
               "Normal Q-Q plot of %zu standardized residuals with the line y = x and a "
               "%s%% pointwise band.",
               m, level);
    free(sorted);
    free(z);
}

/* ---- spread against fitted values -----------------------------------------------------
 */

void figure_spread_by_fitted(figure *fig)
{
    const figures_input *in = fig->in;
    double *root = xmalloc((in->n ? in->n : 1) * sizeof *root);
    for (size_t i = 0; i < in->n; i++)
        root[i] = sqrt(fabs(in->std_residuals[i]));
    /* E √|Z| for a standard normal Z. */
    double expected = pow(2.0, 0.25) * gsl_sf_gamma(0.75) / sqrt(M_PI);
    plot_key key;
    bool binned;
    size_t points = scatter_start(
        fig, in->fitted, root,
        "Does the spread of the residuals change with the fitted value?", &key, &binned);
    key_line(&key, PLOT_SMOOTH, 2.5, "", "LOWESS smoother");
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "mean for normal errors");
    key_flagged(fig, &key);
    double x0, x1, y0, y1;
    range_or_unit(in->fitted, in->n, &x0, &x1);
    range_or_unit(root, in->n, &y0, &y1);
    buf xt;
    buf_init(&xt);
    axis_title(&xt, "fitted", &in->response);
    plot_panel p;
    begin_panel(fig, &p, &key, x0, x1, 0.0, fmax(y1, expected), xt.data,
                "\xe2\x88\x9a|standardized residual|", binned);
    scatter(fig, &p, in->fitted, root, binned);
    reference_line(fig, &p, p.x.lo, expected, p.x.hi, expected, DASH_REFERENCE);
    draw_smoother(fig, &p, in->fitted, root);
    plot_obstacles others = row_obstacles(fig, in->fitted, root, binned);
    label_flagged(fig, &p, in->fitted, root, &others);

    buf_puts(&fig->caption,
             "The square root of each row's absolute standardized residual against its "
             "fitted value, with a LOWESS smoother (Cleveland 1979); the square root evens "
             "out the skew of absolute values. If the residuals have the same spread "
             "everywhere, the smoother runs flat, near the dashed line at ");
    put_number(&fig->caption, in, expected);
    buf_puts(
        &fig->caption,
        " (the mean of \xe2\x88\x9a|Z| for a standard normal Z). A smoother that rises "
        "or falls shows the spread growing or shrinking with the fitted value; the "
        "standard errors then misstate the uncertainty, and a transformation of the "
        "response, weights, or heteroscedasticity-consistent standard errors are worth "
        "considering.");
    caption_tail(fig, binned, points, true);
    buf_printf(&fig->alt,
               "Scatter plot of %zu square-rooted absolute standardized residuals against "
               "fitted values, with a LOWESS smoother.",
               points);
    buf_free(&xt);
    free(root);
}

/* ---- residuals against leverage -------------------------------------------------------
 */

#define CONTOUR_POINTS 120
#define CONTOUR_LABEL                                                                      \
    "fill=\"#222222\" stroke=\"#ffffff\" stroke-width=\"3\" paint-order=\"stroke\""

/* Cook's distance contour D: r = ±√(D p (1 − h) / h) over the panel's h.
   Returns whether any of it lies inside the panel. */
static bool cooks_contour(figure *fig, const plot_panel *p, double level, double params,
                          const char *dash, const char *text)
{
    double h[CONTOUR_POINTS], upper[CONTOUR_POINTS], lower[CONTOUR_POINTS];
    double start = fmax(p->x.lo, 0.0), end = fmin(p->x.hi, 1.0);
    for (size_t k = 0; k < CONTOUR_POINTS; k++) {
        /* Denser near h = 0, where the curve is steep. */
        double t = (double)(k + 1) / CONTOUR_POINTS;
        h[k] = start + (end - start) * t * t;
        double r = h[k] > 0 && h[k] < 1 ? sqrt(level * params * (1 - h[k]) / h[k]) : NAN;
        upper[k] = r;
        lower[k] = -r;
    }
    layer_line(&fig->doc, p, h, upper, CONTOUR_POINTS, PLOT_INK, 1.3, dash, false);
    layer_line(&fig->doc, p, h, lower, CONTOUR_POINTS, PLOT_INK, 1.3, dash, false);
    /* Label the curve where a branch enters the panel through the top or
       the bottom, taking the entry farthest right, where the contours of
       different levels lie farthest apart; else at the right edge. */
    size_t entry = 0;
    bool top = false;
    for (size_t k = 1; k < CONTOUR_POINTS; k++) {
        bool enters_top = upper[k] <= p->y.hi && upper[k - 1] > p->y.hi;
        bool enters_bottom = lower[k] >= p->y.lo && lower[k - 1] < p->y.lo;
        if (enters_top || enters_bottom) {
            entry = k;
            top = enters_top;
        }
    }
    /* Left of the entry, where this branch is still outside the panel. */
    if (entry > 0 && panel_x(p, h[entry]) - 50 >= p->left) {
        double y = top ? p->top + 13 : p->top + p->height - 5;
        svg_text(&fig->doc, panel_x(p, h[entry]) - 5, y, 10.5, "end", CONTOUR_LABEL, text);
        return true;
    }
    double r_end = upper[CONTOUR_POINTS - 1];
    if (!isfinite(r_end))
        return false;
    /* The branches fall towards zero as h grows: the right end is where
       they come nearest. */
    bool up = r_end <= p->y.hi, down = -r_end >= p->y.lo;
    if (!up && !down)
        return false;
    double y = panel_y(p, up ? r_end : -r_end);
    svg_text(&fig->doc, p->left + p->width - 4, up ? y - 5 : y + 13, 10.5, "end",
             CONTOUR_LABEL, text);
    return true;
}

void figure_influence(figure *fig)
{
    const figures_input *in = fig->in;
    plot_key key;
    bool binned;
    size_t points =
        scatter_start(fig, in->leverage, in->std_residuals,
                      "Does any single row pull the fit strongly?", &key, &binned);
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "Cook's distance 0.5");
    key_line(&key, PLOT_INK, 1.3, "1.5 2.5", "Cook's distance 1");
    key_flagged(fig, &key);
    double x0, x1, y0, y1;
    range_or_unit(in->leverage, in->n, &x0, &x1);
    range_or_unit(in->std_residuals, in->n, &y0, &y1);
    plot_panel p;
    begin_panel(fig, &p, &key, 0.0, fmax(x1, 1e-3), fmin(y0, 0.0), fmax(y1, 0.0),
                "leverage (hat value)", "standardized residual", binned);
    scatter(fig, &p, in->leverage, in->std_residuals, binned);
    double zx[2] = {p.x.lo, p.x.hi}, zy[2] = {0.0, 0.0};
    layer_line(&fig->doc, &p, zx, zy, 2, "#888888", 1.0, "", false);
    double params = (double)in->n_params;
    bool shown = cooks_contour(fig, &p, 0.5, params, DASH_REFERENCE, "D = 0.5");
    shown = cooks_contour(fig, &p, 1.0, params, "1.5 2.5", "D = 1") || shown;
    if (!shown)
        svg_text(&fig->doc, p.left + p.width - 6, p.top + 14, 10.5, "end",
                 "fill=\"#555555\"", "Cook's distance 0.5 and 1 lie beyond this region");
    plot_obstacles others = row_obstacles(fig, in->leverage, in->std_residuals, binned);
    label_flagged(fig, &p, in->leverage, in->std_residuals, &others);

    buf_puts(
        &fig->caption,
        "Each row's standardized residual against its leverage, the hat value that "
        "measures how far its predictor values lie from the others'. Cook's distance "
        "combines the two: how far all fitted values would move if the row were left "
        "out. The dashed and dotted curves mark Cook's distance 0.5 and 1, levels that "
        "are common practice rather than derived thresholds; a curve that is not "
        "visible lies outside the plotted region, so every row is well inside it. Rows "
        "beyond a curve, or far to the right with a large residual, deserve a check of "
        "their data and of whether the conclusions hold without them.");
    caption_tail(fig, binned, points, false);
    buf_printf(&fig->alt,
               "Scatter plot of %zu standardized residuals against leverage, with Cook's "
               "distance contours at 0.5 and 1.",
               points);
}

/* ---- histogram of residuals --------------------------------------------------------- */

#define DENSITY_POINTS 160

void figure_residual_histogram(figure *fig)
{
    const figures_input *in = fig->in;
    size_t m;
    double *sorted = sorted_finite(in->residuals, in->n, &m);
    histogram_bins bins;
    histogram_bins_make(sorted, m, &bins);
    size_t *counts = xcalloc(bins.count, sizeof *counts), top = 0;
    for (size_t i = 0; i < m; i++) {
        double position = floor((sorted[i] - bins.start) / bins.width);
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
        "than normal; two humps can mean a missing category or term. The Q-Q plot "
        "shows the tails more clearly.");
    buf_printf(&fig->alt, "Histogram of %zu residuals in %zu bars", m, bars);
    buf_puts(&fig->alt, curve ? ", with a normal density curve." : ".");
    buf_free(&text);
    buf_free(&xt);
    free(counts);
    free(sorted);
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
    double top = canvas_header(&fig->doc, fig->title.data, &key);
    plot_panel p;
    figures_ticks_make(lo, hi, 6, &p.x);
    p.y = p.x;
    single_panel(&fig->doc, &p, top, binned);
    /* Equal scales: a square panel, centred. */
    double side = fmin(p.width, p.height);
    p.left += (p.width - side) / 2;
    p.width = p.height = side;
    panel_axes(&fig->doc, &p, xt.data, yt.data, true);
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
    caption_tail(fig, binned, points, false);
    buf_printf(
        &fig->alt,
        "Scatter plot of %zu observed values against predicted values, with the line "
        "where they are equal.",
        points);
    buf_free(&xt);
    buf_free(&yt);
}

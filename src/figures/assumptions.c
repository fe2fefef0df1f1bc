/*
 * assumptions.c — the figures that check the model's assumptions, each
 * built on a summary the reader can recompute: residuals against fitted
 * values with the median and quartiles of each bin of fitted values; the
 * detrended quantile comparison of the standardized residuals with the
 * normal; the spread of the standardized residuals per bin with its
 * interval; influence drawn on the report's own flag rules; and, with
 * order_by, the residuals along the run with each one against the one
 * before it.
 *
 * The binned summaries and the detrended quantiles are computed in
 * stats.c (methods cited there). The influence figure's axes are the
 * quantities the flag rules compare (influence.c): leverage in multiples
 * of its average p/n (Hoaglin & Welsch 1978 flag above 2), and the
 * externally studentized residual (Belsley, Kuh & Welsch 1980), whose
 * Bonferroni bound is the outlier test of Cook & Weisberg (1982); a
 * circle's area is proportional to Cook's distance (Cook 1977).
 */
#include "plot.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define BAND_FILL "#f3d2bd" /* the quartile band behind the points */
#define GREY_BAND "#dcdcdc" /* the pointwise band of the quantile figure */
#define DASH_DOTTED "1.5 2.5"
#define DASH_LONG "9 3 2 3"

/* Bins shown on the horizontal axis: each from halfway to its left
   neighbour to halfway to its right one, so that they tile the range. */
static void bin_edges(const figures_bin *bins, size_t k, size_t b, double *lo, double *hi)
{
    *lo = b == 0 ? bins[b].x_lo : (bins[b - 1].x_hi + bins[b].x_lo) / 2;
    *hi = b + 1 == k ? bins[b].x_hi : (bins[b].x_hi + bins[b + 1].x_lo) / 2;
}

/* A rectangle in data coordinates, at least 3 px wide so that a bin of tied
   values still shows. */
static void data_rect(buf *b, const plot_panel *p, double x0, double x1, double y0,
                      double y1)
{
    double left = panel_x(p, x0), right = panel_x(p, x1);
    if (right - left < 3) {
        double mid = (left + right) / 2;
        left = mid - 1.5;
        right = mid + 1.5;
    }
    double top = panel_y(p, y1), bottom = panel_y(p, y0);
    svg_path(b, "<rect x=\"@\" y=\"@\" width=\"@\" height=\"@\"/>\n", left, top,
             right - left, bottom - top);
}

/* "12 bins of 12 or 13 rows" */
static void bins_words(buf *b, const figures_bin *bins, size_t k, const char *rows)
{
    size_t lo = bins[0].count, hi = bins[0].count;
    for (size_t i = 1; i < k; i++) {
        lo = bins[i].count < lo ? bins[i].count : lo;
        hi = bins[i].count > hi ? bins[i].count : hi;
    }
    if (lo == hi)
        buf_printf(b, "%zu bin%s of %zu %s", k, k == 1 ? "" : "s", lo, rows);
    else
        buf_printf(b, "%zu bins of %zu or %zu %s", k, lo, hi, rows);
}

/* ---- residuals along the fitted values, summarised per bin -------------------- */

void figure_residuals_by_fitted(figure *fig)
{
    const figures_input *in = fig->in;
    plot_key key;
    bool binned;
    size_t points = scatter_start(
        fig, in->fitted, in->residuals,
        "Are the residuals centred on zero at every fitted value?", &key, &binned);
    figures_bin bins[FIGURES_MAX_BINS];
    size_t k = figures_bins_make(in->fitted, in->residuals, in->n, in->level, bins);
    key_line(&key, PLOT_SMOOTH, 3.0, "", "median of a bin");
    key_band(&key, BAND_FILL, "middle half of a bin (quartiles)");
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
    fig->original_axes = in->log_base > 0;
    begin_panel(fig, &p, &key, x0, x1, fmin(y0, 0.0), fmax(y1, 0.0), xt.data, yt.data,
                binned);
    if (fig->original_axes) {
        buf ot;
        buf_init(&ot);
        axis_title(&ot, "fitted", &in->original);
        panel_original_axis(&fig->doc, &p, true, in->log_base, false, ot.data);
        buf_reset(&ot);
        buf_puts(&ot, "residual, % of the fitted value");
        panel_original_axis(&fig->doc, &p, false, in->log_base, true, ot.data);
        buf_free(&ot);
    }
    buf *b = &fig->doc.body;
    /* The bands behind the rows, the medians over them. */
    buf_printf(b, "<g fill=\"%s\" clip-path=\"url(#%s)\">\n", BAND_FILL, p.clip);
    for (size_t i = 0; i < k; i++) {
        double lo, hi;
        bin_edges(bins, k, i, &lo, &hi);
        data_rect(b, &p, lo, hi, bins[i].q1, bins[i].q3);
    }
    buf_puts(b, "</g>\n");
    scatter(fig, &p, in->fitted, in->residuals, binned);
    reference_line(fig, &p, p.x.lo, 0.0, p.x.hi, 0.0, DASH_REFERENCE);
    for (size_t i = 0; i < k; i++) {
        double lo, hi;
        bin_edges(bins, k, i, &lo, &hi);
        double mx[2] = {lo, hi}, my[2] = {bins[i].median, bins[i].median};
        layer_line(&fig->doc, &p, mx, my, 2, PLOT_SMOOTH, 3.0, "", true);
    }
    plot_obstacles others = row_obstacles(fig, in->fitted, in->residuals, binned);
    label_flagged(fig, &p, in->fitted, in->residuals, &others);

    buf *c = &fig->caption;
    if (binned)
        buf_printf(c,
                   "The residuals (observed minus fitted %s) against the fitted values, ",
                   response_words(in));
    else
        buf_printf(c,
                   "Each point is one row: its residual (observed minus fitted %s) against "
                   "its fitted value, ",
                   response_words(in));
    buf_puts(c, "summarised in ");
    bins_words(c, bins, k, "rows");
    buf_puts(c,
             " taken in order of fitted value. In each bin the thick line is the median "
             "residual and the shaded block spans the middle half, from the first to the "
             "third quartile. If the model's form is right, every median sits near the "
             "dashed zero line and the blocks have similar heights. Medians that climb or "
             "sag from bin to bin, in a U or an arch, point to a missing curved term or "
             "interaction; blocks that grow taller along the fitted values point to a "
             "spread that changes with the level.");
    if (fig->original_axes)
        buf_printf(c,
                   " The model is fitted to the logarithm of %s: the top axis reads the "
                   "fitted values in %s itself, the right axis a residual as the "
                   "percentage by which the observed value exceeds the fitted one.",
                   in->original.label ? in->original.label : in->original.name,
                   in->original.label ? in->original.label : in->original.name);
    caption_tail(fig, binned, points);
    buf_printf(&fig->alt,
               "%s of %zu residuals against fitted values, with the median and quartiles "
               "of the residuals in %zu bins of fitted values and a dashed line at zero.",
               binned ? "Hexagonal-bin plot" : "Scatter plot", points, k);
    buf_free(&xt);
    buf_free(&yt);
}

/* ---- the detrended quantile comparison ---------------------------------------- */

/* Index of the first of q's m ascending sorted values (each its deviation
   plus its quantile) not below v. */
static size_t lower_bound(const figures_detrended *q, size_t m, double v)
{
    size_t lo = 0, hi = m;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (q->deviation[mid] + q->quantile[mid] < v)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

void figure_quantile_plot(figure *fig)
{
    const figures_input *in = fig->in;
    figures_detrended q;
    figures_detrended_take(residual_measures(in, false), in->n, in->level, &q);
    size_t m = q.count;
    bool binned = m > FIGURES_SCATTER_MAX;
    char level[32];
    percent_text(level, sizeof level, in->level);
    double bx[FIGURES_BAND_POINTS];
    for (size_t k = 0; k < q.n_band; k++)
        bx[k] = q.quantile[q.band_index[k]];

    buf_puts(&fig->title,
             "Where do the standardized residuals depart from a normal sample?");
    plot_key key = {.count = 0};
    if (!binned)
        key_mark(&key, 0, "row");
    char band_text[96];
    snprintf(band_text, sizeof band_text, "%s%% pointwise band if the errors are normal",
             level);
    key_band(&key, GREY_BAND, band_text);
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "zero: exactly normal");
    key_flagged(fig, &key);

    double x0 = m ? q.quantile[0] : -1.0, x1 = m ? q.quantile[m - 1] : 1.0, y0 = 0, y1 = 0;
    for (size_t i = 0; i < m; i++) {
        y0 = fmin(y0, q.deviation[i]);
        y1 = fmax(y1, q.deviation[i]);
    }
    for (size_t k = 0; k < q.n_band; k++) {
        y0 = fmin(y0, q.band_lo[k]);
        y1 = fmax(y1, q.band_hi[k]);
    }
    plot_panel p;
    begin_panel(fig, &p, &key, x0, x1, y0, y1, "normal quantile of the row's rank",
                "standardized residual minus normal quantile", binned);
    layer_band(&fig->doc, &p, bx, q.band_lo, q.band_hi, q.n_band, GREY_BAND);
    if (binned) {
        hex_summary hex;
        hex_grid *grid = hexbin_new(&p, q.quantile, q.deviation, m);
        layer_hexbin(&fig->doc, &p, grid, 0, &hex);
        hexbin_free(grid);
        hex_key(&fig->doc, &hex, p.left + p.width + 18, p.top + 10);
    } else {
        layer_points(&fig->doc, &p, q.quantile, q.deviation, NULL, m, 0);
    }
    reference_line(fig, &p, p.x.lo, 0.0, p.x.hi, 0.0, DASH_REFERENCE);
    /* A flagged row sits at its rank among the sorted residuals. */
    double qx[LABELLED_MAX], qy[LABELLED_MAX];
    for (size_t k = 0; k < fig->n_labelled; k++) {
        size_t i = fig->labelled[k];
        qx[k] = qy[k] = NAN;
        double r = row_measures(in, i).standardized;
        if (!isfinite(r) || m == 0)
            continue;
        size_t rank = lower_bound(&q, m, r);
        qx[k] = q.quantile[rank];
        qy[k] = q.deviation[rank];
    }
    plot_obstacles others = {q.quantile, q.deviation, binned ? 0 : m};
    label_flagged_at(fig, &p, qx, qy, &others);

    buf *c = &fig->caption;
    buf_printf(c,
               "The standardized residuals, sorted, each minus the quantile a standard "
               "normal sample of %zu would have at that rank (Blom's plotting positions), "
               "against that quantile. A normal sample lies along the dashed zero line; "
               "the shaded band holds each sorted residual with probability %s%% if the "
               "errors are normal, point by point (from the Beta distribution of uniform "
               "order statistics), so a few points of a large sample are expected just "
               "outside it. ",
               m, level);
    buf_puts(c, binned ? "Hexagons" : "Points");
    buf_puts(c, " that rise at the right end and fall at the left mean tails heavier "
                "than normal, the reverse lighter tails; a U or an arch across the whole "
                "range means skewness; a lone point far from zero at either end is an "
                "outlying row.");
    caption_tail(fig, binned, m);
    buf_printf(&fig->alt,
               "Detrended normal quantile plot of %zu standardized residuals: each "
               "sorted residual minus its normal quantile, with a %s%% pointwise band "
               "and a dashed line at zero.",
               m, level);
    figures_detrended_free(&q);
}

/* ---- the spread per bin of fitted values --------------------------------------- */

void figure_spread_by_fitted(figure *fig)
{
    const figures_input *in = fig->in;
    figures_bin bins[FIGURES_MAX_BINS];
    sort_pair *pairs = xmalloc((in->n ? in->n : 1) * sizeof *pairs);
    size_t used = 0;
    for (size_t i = 0; i < in->n; i++) {
        double r = row_measures(in, i).standardized;
        if (isfinite(in->fitted[i]) && isfinite(r))
            pairs[used++] = (sort_pair){in->fitted[i], r};
    }
    size_t k = figures_bins_from_pairs(pairs, used, in->level, bins);
    free(pairs);
    char level[32];
    percent_text(level, sizeof level, in->level);
    buf_puts(&fig->title, "Does the spread of the residuals change with the fitted value?");
    plot_key key = {.count = 0};
    key_dot(&key, true, "standard deviation within a bin");
    char text[96];
    snprintf(text, sizeof text, "its %s%% interval (normal errors)", level);
    key_line(&key, plot_colour[0], 1.6, "", text);
    key_line(&key, "#9a9a9a", 4.0, "", "the bin's fitted values");
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "1: the same spread everywhere");
    double x0, x1, y1 = 1.0;
    range_or_unit(in->fitted, in->n, &x0, &x1);
    for (size_t i = 0; i < k; i++)
        if (isfinite(bins[i].sd_hi))
            y1 = fmax(y1, bins[i].sd_hi);
    buf xt;
    buf_init(&xt);
    axis_title(&xt, "fitted", &in->response);
    plot_panel p;
    begin_panel(fig, &p, &key, x0, x1, 0.0, y1, xt.data, "standard deviation in the bin",
                false);
    reference_line(fig, &p, p.x.lo, 1.0, p.x.hi, 1.0, DASH_REFERENCE);
    buf *b = &fig->doc.body;
    for (size_t i = 0; i < k; i++) {
        if (!isfinite(bins[i].sd))
            continue;
        double lo, hi;
        bin_edges(bins, k, i, &lo, &hi);
        double ex[2] = {lo, hi}, ey[2] = {bins[i].sd, bins[i].sd};
        layer_line(&fig->doc, &p, ex, ey, 2, "#9a9a9a", 4.0, "", false);
        double vx[2] = {bins[i].x_mid, bins[i].x_mid};
        double vy[2] = {bins[i].sd_lo, bins[i].sd_hi};
        layer_line(&fig->doc, &p, vx, vy, 2, plot_colour[0], 1.6, "", false);
    }
    buf_printf(b, "<g fill=\"%s\" stroke=\"#ffffff\" stroke-width=\"1\">\n",
               plot_colour[0]);
    for (size_t i = 0; i < k; i++)
        if (isfinite(bins[i].sd))
            svg_path(b, "<circle cx=\"@\" cy=\"@\" r=\"4.2\"/>\n",
                     panel_x(&p, bins[i].x_mid), panel_y(&p, bins[i].sd));
    buf_puts(b, "</g>\n");

    buf *c = &fig->caption;
    buf_printf(c,
               "The %zu rows with a standardized residual, taken in order of fitted "
               "value and cut into ",
               used);
    bins_words(c, bins, k, "rows");
    buf_printf(c,
               ". Each dot is the standard deviation of the standardized residuals in one "
               "bin, drawn at the bin's median fitted value, with its %s%% interval "
               "(exact if the errors are normal); the grey bar spans the bin's fitted "
               "values. Standardized residuals have standard deviation 1 when the spread "
               "is the same everywhere, so the dots scatter around the dashed line at 1 "
               "and most intervals cross it. Dots that climb or fall along the fitted "
               "values show the spread growing or shrinking with the level; the standard "
               "errors then misstate the uncertainty, and a transformation of the "
               "response, weights, or heteroscedasticity-consistent standard errors are "
               "worth considering.",
               level);
    buf_printf(&fig->alt,
               "Standard deviation of the standardized residuals in %zu bins of fitted "
               "values, each with its %s%% interval, and a dashed line at 1.",
               k, level);
    buf_free(&xt);
}

/* ---- influence on the report's own rules -------------------------------------- */

/* Radius of a row's circle: area proportional to Cook's distance (radius
   8 at D = 0.04, where the 4/n rule lies for n = 100), no smaller than a
   dot that reads and no larger than a fifth of an inch. */
static double cooks_radius(double d)
{
    return isfinite(d) ? fmin(fmax(40.0 * sqrt(fmax(d, 0.0)), 1.8), 19.0) : 1.8;
}

void figure_influence(figure *fig)
{
    const figures_input *in = fig->in;
    double unit = (double)in->n_params / (double)(in->n ? in->n : 1);
    double *x = xmalloc((in->n ? in->n : 1) * sizeof *x);
    for (size_t i = 0; i < in->n; i++)
        x[i] = unit > 0 ? in->leverage[i] / unit : NAN;
    double *studentized = residual_measures(in, true);
    plot_key key;
    bool binned;
    char text[96];
    size_t points = scatter_start(
        fig, x, studentized,
        "Which rows do the report's influence rules flag, and why?", &key, &binned);
    key.count = 0;
    if (!binned) {
        char sample[32];
        double d = 4.0 / (double)(in->n ? in->n : 1);
        figures_format_number(sample, sizeof sample, d, 2);
        snprintf(text, sizeof text,
                 "row; circle area as Cook's distance (this size: 4/n = %s)", sample);
        key_circle(&key, plot_colour[0], 0.12, cooks_radius(d), text);
        key_circle(&key, PLOT_SMOOTH, 0.55, 4.5, "row flagged by a rule");
    }
    double lever = unit > 0 ? in->leverage_bound / unit : NAN;
    double outlier = in->outlier_bound, large = in->large_bound;
    if (isfinite(lever))
        key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "leverage 2p/n");
    if (isfinite(large)) {
        snprintf(text, sizeof text, "studentized residual \xc2\xb1%g", large);
        key_line(&key, PLOT_INK, 1.3, DASH_DOTTED, text);
    }
    if (isfinite(outlier)) {
        char bound[32];
        figures_format_number(bound, sizeof bound, outlier, 3);
        snprintf(text, sizeof text, "Bonferroni outlier bound \xc2\xb1%s", bound);
        key_line(&key, PLOT_SMOOTH, 1.3, DASH_LONG, text);
    }
    key_flagged(fig, &key);
    double x0, x1, y0, y1;
    range_or_unit(x, in->n, &x0, &x1);
    range_or_unit(studentized, in->n, &y0, &y1);
    /* Every threshold inside the panel, so that the key lists only what
       is drawn. */
    x1 = fmax(x1, isfinite(lever) ? lever * 1.1 : x1);
    double reach = fmax(isfinite(large) ? large : 0.0, isfinite(outlier) ? outlier : 0.0);
    y0 = fmin(y0, -reach * 1.05);
    y1 = fmax(y1, reach * 1.05);
    char x_title[160];
    snprintf(x_title, sizeof x_title,
             "leverage, in multiples of the average p/n (p = %zu, n = %zu)", in->n_params,
             in->n);
    plot_panel p;
    begin_panel(fig, &p, &key, 0.0, x1, y0, y1, x_title, "externally studentized residual",
                binned);
    /* Circles only when every row is drawn; hexagons need no radius. */
    double *radius = NULL;
    if (!binned) {
        radius = xmalloc((in->n ? in->n : 1) * sizeof *radius);
        for (size_t i = 0; i < in->n; i++)
            radius[i] = cooks_radius(row_measures(in, i).cooks);
    }
    if (binned) {
        scatter(fig, &p, x, studentized, true);
    } else {
        /* Largest circles first, so that small ones stay visible on top. */
        size_t *rows = xmalloc((in->n ? in->n : 1) * sizeof *rows);
        for (size_t i = 0; i < in->n; i++)
            rows[i] = i;
        for (size_t i = 1; i < in->n; i++) {
            size_t r = rows[i], j = i;
            while (j > 0 && radius[rows[j - 1]] < radius[r]) {
                rows[j] = rows[j - 1];
                j--;
            }
            rows[j] = r;
        }
        buf *b = &fig->doc.body;
        buf_printf(b, "<g stroke-width=\"1.2\" clip-path=\"url(#%s)\">\n", p.clip);
        for (size_t k = 0; k < in->n; k++) {
            size_t i = rows[k];
            if (!isfinite(x[i]) || !isfinite(studentized[i]))
                continue;
            svg_path(b, "<circle cx=\"@\" cy=\"@\" r=\"@\"", panel_x(&p, x[i]),
                     panel_y(&p, studentized[i]), radius[i]);
            buf_printf(b, " fill=\"%s\" fill-opacity=\"%s\" stroke=\"%s\"/>\n",
                       in->flagged[i] ? PLOT_SMOOTH : plot_colour[0],
                       in->flagged[i] ? "0.55" : "0.12",
                       in->flagged[i] ? PLOT_SMOOTH : plot_colour[0]);
        }
        buf_puts(b, "</g>\n");
        free(rows);
    }
    /* The thresholds over the data, so that hexagons never hide them. */
    if (isfinite(lever))
        reference_line(fig, &p, lever, p.y.lo, lever, p.y.hi, DASH_REFERENCE);
    for (int sign = -1; sign <= 1; sign += 2) {
        if (isfinite(large))
            reference_line(fig, &p, p.x.lo, sign * large, p.x.hi, sign * large,
                           DASH_DOTTED);
        if (isfinite(outlier)) {
            double lx[2] = {p.x.lo, p.x.hi}, ly[2] = {sign * outlier, sign * outlier};
            layer_line(&fig->doc, &p, lx, ly, 2, PLOT_SMOOTH, 1.3, DASH_LONG, true);
        }
    }
    /* Labels by data-file line, clear of the circles. */
    double px[LABELLED_MAX], py[LABELLED_MAX], pr[LABELLED_MAX];
    char line_text[LABELLED_MAX][16];
    const char *labels[LABELLED_MAX];
    size_t count = 0;
    for (size_t k = 0; k < fig->n_labelled; k++) {
        size_t i = fig->labelled[k];
        if (!isfinite(x[i]) || !isfinite(studentized[i]))
            continue;
        px[count] = x[i];
        py[count] = studentized[i];
        pr[count] = binned ? fig->doc.mark_size : radius[i];
        snprintf(line_text[count], sizeof line_text[count], "%lu",
                 (unsigned long)in->lines[i]);
        labels[count] = line_text[count];
        count++;
    }
    plot_obstacles others = row_obstacles(fig, x, studentized, binned);
    fig->unlabelled += layer_labels_sized(&fig->doc, &p, px, py, binned ? NULL : pr, labels,
                                          count, &others);

    buf *c = &fig->caption;
    buf_printf(c,
               "%s leverage, in multiples of its average p/n, against %s externally "
               "studentized residual (the residual scaled by the residual standard "
               "deviation of the fit without that row). The lines are the report's own "
               "flag rules: leverage above 2p/n (Hoaglin & Welsch 1978), a studentized "
               "residual beyond \xc2\xb1%g (common practice, no source)",
               binned ? "The rows'" : "Each row's", binned ? "their" : "its", large);
    if (isfinite(outlier)) {
        buf_puts(c, ", and the Bonferroni outlier bound \xc2\xb1");
        put_number(c, in, outlier);
        buf_puts(c, " (Cook & Weisberg 1982)");
    }
    buf_puts(c, ". ");
    if (binned)
        buf_puts(c, "At this size Cook's distance cannot be shown row by row; of the "
                    "flagged rows, those with the largest Cook's distance are labelled. ");
    else
        buf_puts(c, "A circle's area is proportional to the row's Cook's distance, which "
                    "combines the two: how far all fitted values would move if the row "
                    "were left out. Filled circles are rows that at least one rule flags, "
                    "including the rules on Cook's distance and DFFITS that have no line "
                    "here. ");
    buf_puts(c, "Rows to the right of the vertical line have unusual predictor values; "
                "rows beyond a horizontal line have responses the model does not expect; "
                "a large circle in a corner is a row that moves the fit, and deserves a "
                "check of its data and of whether the conclusions hold without it.");
    caption_tail(fig, binned, points);
    buf_printf(&fig->alt,
               "%s of %zu externally studentized residuals against leverage in multiples "
               "of p/n, with the report's flag thresholds drawn as lines%s.",
               binned ? "Hexagonal-bin plot" : "Bubble plot", points,
               binned ? "" : " and circle areas proportional to Cook's distance");
    free(radius);
    free(studentized);
    free(x);
}

/* ---- residuals along the run ------------------------------------------------------ */

void figure_residuals_in_order(figure *fig)
{
    const figures_input *in = fig->in;
    size_t n = in->n;
    double *pos = xmalloc((n ? n : 1) * sizeof *pos);
    double *res = xmalloc((n ? n : 1) * sizeof *res);
    for (size_t k = 0; k < n; k++) {
        size_t i = in->order[k];
        pos[k] = in->order_values ? in->order_values[i] : (double)(k + 1);
        res[k] = in->residuals[i];
    }
    /* The lag-one pairs are (res[k − 1], res[k]): res against itself
       shifted by one row. */
    size_t pairs = n ? n - 1 : 0;
    bool binned = n > FIGURES_SCATTER_MAX;
    buf_puts(&fig->title, "Do neighbouring rows in the run share their residuals?");
    plot_key key = {.count = 0};
    if (!binned) {
        key_mark(&key, 0, "row");
        key_line(&key, plot_colour[0], 0.8, "", "the run, in order");
    }
    key_line(&key, PLOT_INK, 1.3, DASH_REFERENCE, "zero");
    double top = canvas_header(&fig->doc, fig->title.data, &key);
    double x0, x1, y0, y1;
    range_or_unit(pos, n, &x0, &x1);
    range_or_unit(res, n, &y0, &y1);
    double reach = fmax(fabs(y0), fabs(y1));
    buf rt, xt, pt;
    buf_init(&rt);
    buf_init(&xt);
    buf_init(&pt);
    residual_title(&rt, in);
    if (in->order_values)
        axis_title(&xt, NULL, &in->order_by);
    else
        buf_printf(&xt, "position in the order of %s",
                   in->order_by.label ? in->order_by.label : in->order_by.name);
    buf_puts(&pt, "previous row's ");
    residual_title(&pt, in);

    /* Left: the run, two thirds of the width; right: the lag-one pairs on
       equal scales. */
    plot_panel run, lag;
    figures_ticks_make(x0, x1, 6, &run.x);
    figures_ticks_make(-reach, reach, 6, &run.y);
    ticks_pad(&run.x);
    ticks_pad(&run.y);
    lag.x = lag.y = run.y;
    double width = fig->doc.width, tick_w = ticks_width(&run.y);
    run.left = 46 + tick_w;
    run.top = lag.top = top + 10;
    run.height = lag.height = fig->doc.height - 56 - run.top;
    double gap = 40 + tick_w;
    double usable = width - 24 - run.left - gap - (binned ? HEX_KEY_WIDTH : 0.0);
    lag.width = fmin(usable / 3, lag.height);
    run.width = usable - lag.width;
    lag.left = run.left + run.width + gap;
    panel_axes(&fig->doc, &run, xt.data, rt.data, true);
    panel_axes(&fig->doc, &lag, pt.data, NULL, false);
    /* The lag panel's own tick labels, which panel_axes leaves out. */
    for (size_t t = 0; t < lag.y.count; t++)
        svg_text(&fig->doc, lag.left - 6, panel_y(&lag, lag.y.values[t]) + 4, 11, "end",
                 "fill=\"#333333\"", lag.y.labels[t]);
    if (binned) {
        /* One shading scale for both panels, so that one key serves. */
        hex_grid *grid = hexbin_new(&run, pos, res, n);
        hex_grid *grid_lag = hexbin_new(&lag, res, res + 1, pairs);
        size_t peak = hexbin_peak(grid), peak_lag = hexbin_peak(grid_lag);
        size_t shared = peak > peak_lag ? peak : peak_lag;
        hex_summary hex, hex_lag;
        layer_hexbin(&fig->doc, &run, grid, shared, &hex);
        layer_hexbin(&fig->doc, &lag, grid_lag, shared, &hex_lag);
        hexbin_free(grid);
        hexbin_free(grid_lag);
        hex_key(&fig->doc, &hex, lag.left + lag.width + 18, lag.top + 10);
    } else {
        layer_line(&fig->doc, &run, pos, res, n, plot_colour[0], 0.8, "", false);
        layer_points(&fig->doc, &run, pos, res, NULL, n, 0);
        layer_points(&fig->doc, &lag, res, res + 1, NULL, pairs, 0);
    }
    reference_line(fig, &run, run.x.lo, 0.0, run.x.hi, 0.0, DASH_REFERENCE);
    reference_line(fig, &lag, lag.x.lo, 0.0, lag.x.hi, 0.0, DASH_REFERENCE);
    reference_line(fig, &lag, 0.0, lag.y.lo, 0.0, lag.y.hi, DASH_REFERENCE);

    buf *c = &fig->caption;
    buf_printf(c,
               "Left: each row's residual in the order of %s%s. Right: each residual "
               "against the one before it in that order (%zu pairs), both axes over the "
               "same range. ",
               in->order_by.label ? in->order_by.label : in->order_by.name,
               binned ? "" : ", joined in sequence", n ? n - 1 : 0);
    buf_puts(c, "If the errors are independent, the run shows no waves or drifts and "
                "the pairs form a round cloud. Long stretches on one side of zero, or "
                "pairs that line up from lower left to upper right, mean that neighbours "
                "share their errors (positive autocorrelation); a zigzag run and pairs "
                "from upper left to lower right mean negative autocorrelation. Either way "
                "the standard errors misstate the uncertainty.");
    if (binned)
        buf_printf(c,
                   " With %zu rows, more than %d, each hexagon is shaded by how many rows "
                   "fall in it instead of drawing every row.",
                   n, FIGURES_SCATTER_MAX);
    buf_printf(&fig->alt,
               "Two panels: %zu residuals in run order, and each residual against the "
               "previous one.",
               n);
    buf_free(&rt);
    buf_free(&xt);
    buf_free(&pt);
    free(pos);
    free(res);
}

/*
 * stats.c — the few computations the figures draw from: summaries per bin
 * of fitted values, order statistics for the detrended quantile
 * comparison, histogram bins.
 *
 * Bins: the rows sorted by the horizontal quantity (ties by the vertical
 * one) and cut into k bins of equal count, k = min(⌊√m⌋, ⌊m/8⌋, 20);
 * per bin the median and quartiles of the vertical quantity (Hyndman and
 * Fan's type 7), in the spirit of Tukey's summaries of a scatter by
 * slices (J. W. Tukey, Exploratory Data Analysis, Addison-Wesley 1977) and
 * of binned residual plots (A. Gelman and J. Hill, Data Analysis Using
 * Regression and Multilevel/Hierarchical Models, CUP 2007). The spread of
 * a bin is its sample standard deviation s on m − 1 degrees of freedom,
 * with the interval for a normal standard deviation,
 * [s √((m − 1)/χ²₍₁₋α/₂₎), s √((m − 1)/χ²₍α/₂₎)] (G. Casella and
 * R. L. Berger, Statistical Inference, 2nd ed., Duxbury 2002, §9.2).
 *
 * Detrended quantiles: each sorted value minus the normal quantile of its
 * plotting position, so that normality is a horizontal line at zero (the
 * quantile comparison of M. B. Wilk and R. Gnanadesikan, Biometrika 55
 * (1968) 1–17, with the trend y = x taken out, as in the worm plot of
 * S. van Buuren and M. Fredriks, Statistics in Medicine 20 (2001)
 * 1259–1277).
 *
 * Quantile band: for a sample of n from a continuous F, F(X₍ᵢ₎) ~ Beta(i,
 * n − i + 1) (H. A. David and H. N. Nagaraja, Order Statistics, 3rd ed.,
 * Wiley 2003, §2.2); the band is Φ⁻¹ of that Beta's (1 ∓ level)/2
 * quantiles. Plotting positions: G. Blom, Statistical Estimates and
 * Transformed Beta-Variables, Wiley 1958: (i − 3/8)/(n + 1/4).
 *
 * Histogram: bin width 2 IQR n^(−1/3) (D. Freedman and P. Diaconis, "On the
 * histogram as a density estimator: L2 theory", Z. Wahrscheinlichkeits-
 * theorie verw. Gebiete 57 (1981) 453–476), rounded to 1, 2, 2.5 or 5 × 10^k;
 * ⌈log₂ n⌉ + 1 bins (H. A. Sturges, JASA 21 (1926) 65–66) when the IQR is 0.
 */
#include "plot.h"

#include "../util/sort.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* ---- summaries per bin of the horizontal axis ------------------------------ */

typedef sort_pair pair;

size_t figures_bin_count(size_t m)
{
    size_t k = (size_t)floor(sqrt((double)m));
    k = k < m / FIGURES_BIN_MIN_ROWS ? k : m / FIGURES_BIN_MIN_ROWS;
    k = k < FIGURES_MAX_BINS ? k : FIGURES_MAX_BINS;
    return k > 0 ? k : (m > 0 ? 1 : 0);
}

/* The summaries of one bin: the m pairs at p, ascending by x. scratch holds
   m doubles. */
static void bin_summarise(const pair *p, size_t m, double level, double *scratch,
                          figures_bin *out)
{
    out->count = m;
    out->x_lo = p[0].x;
    out->x_hi = p[m - 1].x;
    for (size_t i = 0; i < m; i++)
        scratch[i] = p[i].x;
    out->x_mid = sorted_quantile(scratch, m, 0.5);
    double sum = 0.0;
    for (size_t i = 0; i < m; i++) {
        scratch[i] = p[i].y;
        sum += p[i].y;
    }
    sort_doubles(scratch, m);
    out->q1 = sorted_quantile(scratch, m, 0.25);
    out->median = sorted_quantile(scratch, m, 0.5);
    out->q3 = sorted_quantile(scratch, m, 0.75);
    out->mean = sum / (double)m;
    out->sd = out->sd_lo = out->sd_hi = NAN;
    if (m < 2)
        return;
    /* Two passes: the deviations from the mean, then their squares. */
    double ss = 0.0;
    for (size_t i = 0; i < m; i++)
        ss += (p[i].y - out->mean) * (p[i].y - out->mean);
    double df = (double)m - 1.0, tail = (1.0 - level) / 2.0;
    out->sd = sqrt(ss / df);
    out->sd_lo = sqrt(ss / gsl_cdf_chisq_Qinv(tail, df));
    out->sd_hi = sqrt(ss / gsl_cdf_chisq_Pinv(tail, df));
}

size_t figures_bins_make(const double *x, const double *y, size_t n, double level,
                         figures_bin *out)
{
    size_t m = 0;
    for (size_t i = 0; i < n; i++)
        m += isfinite(x[i]) && isfinite(y[i]) ? 1 : 0;
    pair *pairs = xmalloc((m ? m : 1) * sizeof *pairs);
    m = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(x[i]) && isfinite(y[i]))
            pairs[m++] = (pair){x[i], y[i]};
    size_t k = figures_bins_from_pairs(pairs, m, level, out);
    free(pairs);
    return k;
}

size_t figures_bins_from_pairs(pair *pairs, size_t m, double level, figures_bin *out)
{
    size_t k = figures_bin_count(m);
    if (k == 0)
        return 0;
    sort_pair_records(pairs, m);
    double *scratch = xmalloc(m * sizeof *scratch);
    for (size_t b = 0; b < k; b++) {
        /* Ranks ⌊b m / k⌋ up to ⌊(b + 1) m / k⌋: sizes differ by at most one. */
        size_t first = (size_t)((unsigned long long)b * m / k);
        size_t last = (size_t)((unsigned long long)(b + 1) * m / k);
        bin_summarise(pairs + first, last - first, level, scratch, &out[b]);
    }
    free(scratch);
    return k;
}

/* ---- order statistics ---------------------------------------------------------- */

double *finite_values(const double *v, size_t n, size_t *count)
{
    double *out = xmalloc((n ? n : 1) * sizeof *out);
    size_t m = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]))
            out[m++] = v[i];
    *count = m;
    return out;
}

double selected_quantile(double *values, size_t n, double p)
{
    if (n == 0)
        return NAN;
    double h = (double)(n - 1) * p, low, high;
    size_t below = (size_t)floor(h);
    if (below + 1 >= n) {
        sort_select(values, n, n - 1, &low, &high);
        return low;
    }
    sort_select(values, n, below, &low, &high);
    return low + (h - (double)below) * (high - low);
}

double sorted_quantile(const double *sorted, size_t n, double p)
{
    if (n == 0)
        return NAN;
    double h = (double)(n - 1) * p;
    size_t below = (size_t)floor(h);
    if (below + 1 >= n)
        return sorted[n - 1];
    return sorted[below] + (h - (double)below) * (sorted[below + 1] - sorted[below]);
}

double blom_position(size_t i, size_t n)
{
    return ((double)i + 0.625) / ((double)n + 0.25);
}

/* The Beta(a, b) quantile q on the normal scale, by bisection on z of
   I_Φ(z)(a, b) = q; NaN when the incomplete beta function fails (very
   large a and b). */
static double beta_quantile_z(double a, double b, double q)
{
    double lo = -40.0, hi = 40.0;
    for (int k = 0; k < 80; k++) {
        double mid = (lo + hi) / 2;
        gsl_sf_result r;
        int status = gsl_sf_beta_inc_e(a, b, gsl_cdf_ugaussian_P(mid), &r);
        /* Underflow means a probability below DBL_MIN: zero is right. */
        if (status == GSL_EUNDRFLW)
            r.val = 0.0;
        else if (status != GSL_SUCCESS)
            return NAN;
        if (r.val < q)
            lo = mid;
        else
            hi = mid;
    }
    return (lo + hi) / 2;
}

void order_statistic_band(size_t i, size_t n, double level, double *lo, double *hi)
{
    double a = (double)i + 1.0, b = (double)(n - i);
    double tail = (1.0 - level) / 2;
    *lo = beta_quantile_z(a, b, tail);
    *hi = beta_quantile_z(a, b, 1.0 - tail);
    if (isfinite(*lo) && isfinite(*hi))
        return;
    /* Far beyond where the continued fraction converges the Beta is
       normal to many digits: its mean and standard deviation. */
    double mean = a / (a + b), sd = sqrt(a * b / ((a + b) * (a + b) * (a + b + 1.0)));
    double z = gsl_cdf_ugaussian_Qinv(tail);
    *lo = gsl_cdf_ugaussian_Pinv(fmax(mean - z * sd, 1e-300));
    *hi = gsl_cdf_ugaussian_Pinv(fmin(mean + z * sd, 1.0 - 1e-16));
}

/* Index of the i-th order statistic whose normal quantile is nearest to z
   among m: the inverse of Blom's position. */
static size_t position_of(double z, size_t m)
{
    double position = gsl_cdf_ugaussian_P(z) * ((double)m + 0.25) - 0.625;
    return (size_t)fmin(fmax(round(position), 0.0), (double)(m - 1));
}

void figures_detrended_take(double *values, size_t n, double level, figures_detrended *out)
{
    memset(out, 0, sizeof *out);
    size_t m = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(values[i]))
            values[m++] = values[i];
    sort_doubles(values, m);
    double *sorted = values;
    out->count = m;
    out->quantile = xmalloc((m ? m : 1) * sizeof *out->quantile);
    out->deviation = sorted;
    for (size_t i = 0; i < m; i++) {
        out->quantile[i] = gsl_cdf_ugaussian_Pinv(blom_position(i, m));
        out->deviation[i] = sorted[i] - out->quantile[i];
    }
    /* The band at every order statistic up to FIGURES_BAND_POINTS of them,
       else at that many spread evenly along the quantiles: each point
       costs two Beta quantiles. */
    size_t last = SIZE_MAX;
    for (size_t k = 0; k < FIGURES_BAND_POINTS && m > 0; k++) {
        size_t i = k;
        if (m > FIGURES_BAND_POINTS) {
            double z0 = out->quantile[0], z1 = out->quantile[m - 1];
            i = position_of(z0 + (z1 - z0) * (double)k / (FIGURES_BAND_POINTS - 1), m);
        } else if (k >= m) {
            break;
        }
        if (i == last)
            continue;
        last = i;
        double lo, hi, z = out->quantile[i];
        order_statistic_band(i, m, level, &lo, &hi);
        out->band_index[out->n_band] = i;
        out->band_lo[out->n_band] = lo - z;
        out->band_hi[out->n_band] = hi - z;
        out->n_band++;
    }
}

void figures_detrended_free(figures_detrended *d)
{
    free(d->quantile);
    free(d->deviation);
    memset(d, 0, sizeof *d);
}

/* ---- histogram ----------------------------------------------------------------- */

/* The nearest (on a log scale) of 1, 2, 2.5 and 5 × 10^k to x (x > 0). */
static double nice_width(double x)
{
    static const double steps[5] = {1.0, 2.0, 2.5, 5.0, 10.0};
    double scale = pow(10.0, floor(log10(x)));
    double best = scale;
    for (int k = 0; k < 5; k++)
        if (fabs(log(steps[k] * scale / x)) < fabs(log(best / x)))
            best = steps[k] * scale;
    return best;
}

void histogram_bins_make(double *values, size_t n, histogram_bins *out)
{
    memset(out, 0, sizeof *out);
    if (n == 0) {
        out->width = 1.0;
        out->start = -0.5;
        out->count = 1;
        return;
    }
    double min = values[0], max = values[0];
    for (size_t i = 1; i < n; i++) {
        min = values[i] < min ? values[i] : min;
        max = values[i] > max ? values[i] : max;
    }
    min = sort_plain_zero(min);
    max = sort_plain_zero(max);
    double range = max - min;
    double q3 = selected_quantile(values, n, 0.75);
    double iqr = q3 - selected_quantile(values, n, 0.25);
    double width;
    if (range <= 0.0) {
        width = min != 0.0 ? nice_width(fabs(min) * 0.1) : 1.0;
    } else if (iqr > 0.0) {
        width = nice_width(2.0 * iqr / cbrt((double)n));
    } else {
        out->sturges = true;
        width = nice_width(range / (ceil(log2((double)n)) + 1.0));
    }
    if (range / width > HISTOGRAM_MAX_BINS) {
        out->capped = true;
        width = nice_width(range / HISTOGRAM_MAX_BINS);
        while (range / width > HISTOGRAM_MAX_BINS)
            width *= 2;
    }
    out->width = width;
    out->start = floor(min / width) * width;
    out->count = (size_t)floor((max - out->start) / width) + 1;
    if (out->count > HISTOGRAM_MAX_BINS + 1)
        out->count = HISTOGRAM_MAX_BINS + 1;
}

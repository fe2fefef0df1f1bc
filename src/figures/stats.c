/*
 * stats.c — the few computations the figures draw from: the LOWESS
 * smoother, order statistics for the normal Q-Q plot, histogram bins.
 *
 * LOWESS: W. S. Cleveland, "Robust locally weighted regression and
 * smoothing scatterplots", JASA 74 (1979) 829–836, with the defaults of
 * his program (W. S. Cleveland, "LOWESS: a program for smoothing
 * scatterplots by robust locally weighted regression", The American
 * Statistician 35 (1981) 54): span f = 2/3, three robustness passes,
 * delta = 1% of the range. At x0 with h the distance to the q-th nearest
 * point (q = ⌊f n⌋), weights w = (1 − |u|³)³, u = (x − x0)/h, fit a straight
 * line by weighted least squares; robustness weights are (1 − (e/6m)²)²
 * with m the median absolute residual.
 *
 * Q-Q band: for a sample of n from a continuous F, F(X₍ᵢ₎) ~ Beta(i,
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

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_gamma.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* ---- LOWESS ------------------------------------------------------------- */

static double cube(double v)
{
    return v * v * v;
}

/* The fitted value at x[i]: a weighted straight line over the points
   within h of x[i]. */
static double local_fit(const double *x, const double *y, const double *prior,
                        const double *robust, size_t lo, size_t hi, size_t i, double h,
                        double range, bool *ok)
{
    double x0 = x[i], sw = 0.0, sx = 0.0, sy = 0.0;
    double *w = NULL, small[64];
    size_t count = hi - lo + 1;
    w = count <= 64 ? small : xmalloc(count * sizeof *w);
    for (size_t k = lo; k <= hi; k++) {
        double r = fabs(x[k] - x0), weight = 0.0;
        if (h == 0.0 || r < h)
            weight = h == 0.0 ? 1.0 : cube(1.0 - cube(r / h));
        weight *= (prior ? prior[k] : 1.0) * (robust ? robust[k] : 1.0);
        w[k - lo] = weight;
        sw += weight;
        sx += weight * x[k];
        sy += weight * y[k];
    }
    *ok = sw > 0.0;
    double fitted = y[i];
    if (*ok) {
        double xbar = sx / sw, ybar = sy / sw, sxx = 0.0, sxy = 0.0;
        for (size_t k = lo; k <= hi; k++) {
            sxx += w[k - lo] * (x[k] - xbar) * (x[k] - xbar);
            sxy += w[k - lo] * (x[k] - xbar) * (y[k] - ybar);
        }
        fitted = ybar;
        /* A slope only when the weighted x spread is not negligible. */
        if (sqrt(sxx / sw) > 0.001 * range)
            fitted += sxy / sxx * (x0 - xbar);
    }
    if (w != small)
        free(w);
    return fitted;
}

/* The nearest points to x[i] holding at least q of the prior weight:
   [*lo, *hi], and h, the distance to the farthest of them. */
static double neighbourhood(const double *x, const double *prior, size_t n, size_t i,
                            double q, size_t *lo, size_t *hi)
{
    size_t a = i, b = i;
    double held = prior ? prior[i] : 1.0;
    while (held < q && (a > 0 || b + 1 < n)) {
        bool left = b + 1 >= n || (a > 0 && x[i] - x[a - 1] <= x[b + 1] - x[i]);
        if (left)
            a--;
        else
            b++;
        held += prior ? prior[left ? a : b] : 1.0;
    }
    *lo = a;
    *hi = b;
    return fmax(x[i] - x[a], x[b] - x[i]);
}

/* One smoothing pass over all points with Cleveland's delta skipping:
   points within delta of the last fitted one are interpolated. */
static void lowess_pass(const double *x, const double *y, const double *prior,
                        const double *robust, size_t n, double q, double delta,
                        double range, double *fitted)
{
    size_t i = 0;
    long last = -1;
    for (;;) {
        size_t lo, hi;
        double h = neighbourhood(x, prior, n, i, q, &lo, &hi);
        /* Points beyond the window are at distance h or more and would
           get weight 0: the window is all the fit needs. */
        bool ok;
        fitted[i] = local_fit(x, y, prior, robust, lo, hi, i, h, range, &ok);
        if (last >= 0 && (size_t)last + 1 < i) {
            double span = x[i] - x[last];
            for (size_t k = (size_t)last + 1; k < i; k++) {
                double t = span > 0 ? (x[k] - x[last]) / span : 0.0;
                fitted[k] = t * fitted[i] + (1.0 - t) * fitted[last];
            }
        }
        last = (long)i;
        double cut = x[last] + delta;
        size_t next;
        for (next = (size_t)last + 1; next < n; next++) {
            if (x[next] > cut)
                break;
            if (x[next] == x[last]) {
                fitted[next] = fitted[last];
                last = (long)next;
            }
        }
        if ((size_t)last + 1 >= n)
            return;
        i = next - 1 > (size_t)last ? next - 1 : (size_t)last + 1;
    }
}

static int compare_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double median_of(double *values, size_t n)
{
    qsort(values, n, sizeof *values, compare_double);
    return n % 2 ? values[n / 2] : (values[n / 2 - 1] + values[n / 2]) / 2;
}

void figures_lowess(const double *x, const double *y, const double *weights, size_t n,
                    double span, int iterations, double delta, double *fitted)
{
    if (n == 0)
        return;
    double total = 0.0;
    for (size_t i = 0; i < n; i++)
        total += weights ? weights[i] : 1.0;
    double q = floor(span * total + 1e-10);
    q = fmax(fmin(q, total), fmin(2.0, total));
    double range = x[n - 1] - x[0];
    double *robust = NULL, *residual = xmalloc(n * sizeof *residual);
    for (int pass = 0;; pass++) {
        lowess_pass(x, y, weights, robust, n, q, delta, range, fitted);
        if (pass == iterations)
            break;
        for (size_t i = 0; i < n; i++)
            residual[i] = fabs(y[i] - fitted[i]);
        double *scratch = xmalloc(n * sizeof *scratch);
        memcpy(scratch, residual, n * sizeof *scratch);
        double cmad = 6.0 * median_of(scratch, n);
        free(scratch);
        if (cmad == 0.0)
            break; /* the fit is exact: nothing to down-weight */
        if (!robust)
            robust = xmalloc(n * sizeof *robust);
        for (size_t i = 0; i < n; i++) {
            double u = residual[i] / cmad;
            robust[i] = u < 1.0 ? (1.0 - u * u) * (1.0 - u * u) : 0.0;
        }
    }
    free(robust);
    free(residual);
}

/* ---- the smoothed curve of a figure --------------------------------------- */

typedef struct {
    double x, y;
} pair;

static int compare_pair(const void *a, const void *b)
{
    const pair *p = a, *q = b;
    if (p->x != q->x)
        return (p->x > q->x) - (p->x < q->x);
    return (p->y > q->y) - (p->y < q->y);
}

/* Points of the fitted sequence at least range/400 apart, and the last:
   LOWESS is linear between its delta-spaced anchors, so this thins the
   drawn line without changing its shape. */
static void thin_curve(const double *x, const double *y, size_t n, smooth_curve *out)
{
    out->x = xmalloc((n ? n : 1) * sizeof *out->x);
    out->y = xmalloc((n ? n : 1) * sizeof *out->y);
    double step = (x[n - 1] - x[0]) / 400.0;
    for (size_t i = 0; i < n; i++) {
        bool keep = out->n == 0 || i + 1 == n || x[i] - out->x[out->n - 1] >= step;
        if (!keep)
            continue;
        out->x[out->n] = x[i];
        out->y[out->n] = y[i];
        out->n++;
    }
}

static void smooth_exact(pair *pairs, size_t m, smooth_curve *out)
{
    qsort(pairs, m, sizeof *pairs, compare_pair);
    double *x = xmalloc(m * sizeof *x), *y = xmalloc(m * sizeof *y);
    double *fitted = xmalloc(m * sizeof *fitted);
    for (size_t i = 0; i < m; i++) {
        x[i] = pairs[i].x;
        y[i] = pairs[i].y;
    }
    figures_lowess(x, y, NULL, m, 2.0 / 3.0, 3, 0.01 * (x[m - 1] - x[0]), fitted);
    thin_curve(x, fitted, m, out);
    free(x);
    free(y);
    free(fitted);
}

static void smooth_binned(const double *x, const double *y, size_t n, double min,
                          double max, smooth_curve *out)
{
    double *sx = xcalloc(SMOOTH_BINS, sizeof *sx), *sy = xcalloc(SMOOTH_BINS, sizeof *sy);
    double *count = xcalloc(SMOOTH_BINS, sizeof *count);
    double width = (max - min) / SMOOTH_BINS;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i]))
            continue;
        size_t bin = width > 0 ? (size_t)fmin((x[i] - min) / width, SMOOTH_BINS - 1) : 0;
        sx[bin] += x[i];
        sy[bin] += y[i];
        count[bin] += 1.0;
    }
    size_t m = 0;
    for (size_t b = 0; b < SMOOTH_BINS; b++)
        if (count[b] > 0) {
            sx[m] = sx[b] / count[b];
            sy[m] = sy[b] / count[b];
            count[m] = count[b];
            m++;
        }
    double *fitted = xmalloc(m * sizeof *fitted);
    figures_lowess(sx, sy, count, m, 2.0 / 3.0, 0, 0.0, fitted);
    thin_curve(sx, fitted, m, out);
    out->binned = true;
    free(fitted);
    free(sx);
    free(sy);
    free(count);
}

void smooth_curve_make(const double *x, const double *y, size_t n, smooth_curve *out)
{
    memset(out, 0, sizeof *out);
    size_t m = 0;
    double min = 0.0, max = 0.0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(x[i]) && isfinite(y[i])) {
            min = m == 0 || x[i] < min ? x[i] : min;
            max = m == 0 || x[i] > max ? x[i] : max;
            m++;
        }
    if (m < 3)
        return;
    if (m > FIGURES_SCATTER_MAX) {
        smooth_binned(x, y, n, min, max, out);
        return;
    }
    pair *pairs = xmalloc(m * sizeof *pairs);
    m = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(x[i]) && isfinite(y[i]))
            pairs[m++] = (pair){x[i], y[i]};
    smooth_exact(pairs, m, out);
    free(pairs);
}

void smooth_curve_free(smooth_curve *c)
{
    free(c->x);
    free(c->y);
    memset(c, 0, sizeof *c);
}

/* ---- order statistics ---------------------------------------------------------- */

/* A double's bits as an unsigned key in the same order: flip every bit of
   a negative number, only the sign bit of a positive one. */
static uint64_t order_key(double value)
{
    uint64_t bits;
    memcpy(&bits, &value, sizeof bits);
    return bits >> 63 ? ~bits : bits | (UINT64_C(1) << 63);
}

static double key_value(uint64_t key)
{
    uint64_t bits = key >> 63 ? key & ~(UINT64_C(1) << 63) : ~key;
    double value;
    memcpy(&value, &bits, sizeof value);
    return value;
}

/* Least-significant-digit radix sort of the keys, 16 bits a pass: linear
   time, which matters at millions of residuals. Four passes, so the keys
   end in the array they started in. */
static void radix_sort(uint64_t *keys, size_t n)
{
    uint64_t *from = keys, *to = xmalloc((n ? n : 1) * sizeof *to), *spare = to;
    size_t *count = xmalloc(65536 * sizeof *count);
    for (int shift = 0; shift < 64; shift += 16) {
        memset(count, 0, 65536 * sizeof *count);
        for (size_t i = 0; i < n; i++)
            count[(from[i] >> shift) & 0xffff]++;
        size_t total = 0;
        for (size_t d = 0; d < 65536; d++) {
            size_t c = count[d];
            count[d] = total;
            total += c;
        }
        for (size_t i = 0; i < n; i++)
            to[count[(from[i] >> shift) & 0xffff]++] = from[i];
        uint64_t *swap = from;
        from = to;
        to = swap;
    }
    free(count);
    free(spare);
}

double *sorted_finite(const double *v, size_t n, size_t *count)
{
    size_t m = 0;
    for (size_t i = 0; i < n; i++)
        m += isfinite(v[i]) ? 1 : 0;
    double *out = xmalloc((m ? m : 1) * sizeof *out);
    if (m <= 4096) { /* small: the library sort is as quick */
        m = 0;
        for (size_t i = 0; i < n; i++)
            if (isfinite(v[i]))
                out[m++] = v[i];
        qsort(out, m, sizeof *out, compare_double);
        *count = m;
        return out;
    }
    uint64_t *keys = xmalloc(m * sizeof *keys);
    m = 0;
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]))
            keys[m++] = order_key(v[i] == 0.0 ? 0.0 : v[i]); /* −0 sorts as 0 */
    radix_sort(keys, m);
    for (size_t i = 0; i < m; i++)
        out[i] = key_value(keys[i]);
    free(keys);
    *count = m;
    return out;
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

void histogram_bins_make(const double *sorted, size_t n, histogram_bins *out)
{
    memset(out, 0, sizeof *out);
    if (n == 0) {
        out->width = 1.0;
        out->start = -0.5;
        out->count = 1;
        return;
    }
    double min = sorted[0], max = sorted[n - 1], range = max - min;
    double iqr = sorted_quantile(sorted, n, 0.75) - sorted_quantile(sorted, n, 0.25);
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

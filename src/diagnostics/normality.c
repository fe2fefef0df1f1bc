/*
 * normality.c — is the residual distribution normal?
 *
 * Shapiro & Wilk (1965), W = (Σ aᵢ x₍ᵢ₎)² / Σ (xᵢ − x̄)², with the
 * coefficients and the p-value of Royston's approximation (Royston 1992,
 * Statistics and Computing 2:117–119; algorithm AS R94, Royston 1995,
 * Applied Statistics 44:547–551), written here from the published
 * equations in double precision:
 *   mᵢ = Φ⁻¹((i − 3/8)/(n + 1/4)), u = 1/√n,
 *   aₙ = mₙ/‖m‖ + 0.221157u − 0.147981u² − 2.071190u³ + 4.434685u⁴ − 2.706056u⁵,
 *   aₙ₋₁ = mₙ₋₁/‖m‖ + 0.042981u − 0.293762u² − 1.752461u³ + 5.682633u⁴ − 3.582633u⁵
 *          (n > 5 only), the others mᵢ/√φ with φ making Σ aᵢ² = 1;
 *   n = 3: exact, P(W ≤ w) = (6/π)(arcsin √w − arcsin √(3/4)) (Shapiro & Wilk 1965);
 *   4 ≤ n ≤ 11: −log(γ − log(1 − W)) normal with γ = −2.273 + 0.459n and cubic
 *          polynomials in n for its mean and log standard deviation;
 *   n ≥ 12: log(1 − W) normal, mean and log sd polynomials in log n.
 * 1 − W is formed as a product of two factors rather than by subtraction,
 * since the p-value depends on log(1 − W) and W is close to 1.
 *
 * Moments: √b1 = m3/m2^1.5 and b2 = m4/m2², with D'Agostino's (1970)
 * transformation of √b1 and the Anscombe & Glynn (1983) transformation of
 * b2 to standard normal deviates, and the omnibus K² = Z₁² + Z₂² on two
 * degrees of freedom (D'Agostino & Pearson 1973), as collected in
 * D'Agostino, Belanger & D'Agostino (1990), The American Statistician
 * 44:316–321.
 */
#include "internal.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

static double polynomial(const double *c, size_t count, double x)
{
    double value = 0.0;
    for (size_t k = count; k > 0; k--)
        value = value * x + c[k - 1];
    return value;
}

static int compare_doubles(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Coefficients a for the upper half of the sample, largest first:
   a[k] multiplies x₍ₙ₋ₖ₎ − x₍ₖ₊₁₎. half = ⌊n/2⌋ entries. */
static void shapiro_coefficients(size_t n, double *a)
{
    static const double c1[] = {0.0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056};
    static const double c2[] = {0.0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633};
    size_t half = n / 2;
    if (n == 3) {
        a[0] = sqrt(0.5);
        return;
    }
    double *m = xmalloc(half * sizeof(double));
    long double sum_m2 = 0.0L;
    for (size_t k = 0; k < half; k++) {
        m[k] = -gsl_cdf_ugaussian_Pinv(((double)k + 1.0 - 0.375) / ((double)n + 0.25));
        sum_m2 += 2.0L * m[k] * m[k];
    }
    double norm = (double)sqrtl(sum_m2);
    double u = 1.0 / sqrt((double)n);
    a[0] = m[0] / norm + polynomial(c1, 6, u);
    size_t first_plain = 1;
    double phi;
    if (n > 5) {
        a[1] = m[1] / norm + polynomial(c2, 6, u);
        phi = ((double)sum_m2 - 2.0 * m[0] * m[0] - 2.0 * m[1] * m[1]) /
              (1.0 - 2.0 * a[0] * a[0] - 2.0 * a[1] * a[1]);
        first_plain = 2;
    } else {
        phi = ((double)sum_m2 - 2.0 * m[0] * m[0]) / (1.0 - 2.0 * a[0] * a[0]);
    }
    double root_phi = sqrt(phi);
    for (size_t k = first_plain; k < half; k++)
        a[k] = m[k] / root_phi;
    free(m);
}

/* W and 1 − W of the sorted sample x. False when x is constant. */
static bool shapiro_w(const double *x, size_t n, double *w, double *one_minus_w)
{
    size_t half = n / 2;
    double *a = xmalloc(half * sizeof(double));
    shapiro_coefficients(n, a);
    long double mean = 0.0L;
    for (size_t i = 0; i < n; i++)
        mean += x[i];
    mean /= (long double)n;
    long double ss = 0.0L, b = 0.0L, sum_a2 = 0.0L;
    for (size_t i = 0; i < n; i++)
        ss += (x[i] - mean) * (x[i] - mean);
    for (size_t k = 0; k < half; k++) {
        b += (long double)a[k] * ((long double)x[n - 1 - k] - x[k]);
        sum_a2 += 2.0L * a[k] * a[k];
    }
    free(a);
    if (!(ss > 0.0L))
        return false;
    /* W = b² / (Σa² · SS); 1 − W = (√(Σa² SS) − b)(√(Σa² SS) + b) / (Σa² SS). */
    long double scale = sqrtl(sum_a2 * ss);
    long double lower = scale - b;
    if (lower < 0.0L)
        lower = 0.0L; /* Cauchy–Schwarz: only rounding can make it negative */
    *one_minus_w = (double)(lower * (scale + b) / (scale * scale));
    *w = 1.0 - *one_minus_w;
    return true;
}

static double shapiro_p(size_t n, double w, double one_minus_w)
{
    static const double small_mean[] = {0.5440, -0.39978, 0.025054, -6.714e-4};
    static const double small_log_sd[] = {1.3822, -0.77857, 0.062767, -0.0020322};
    static const double large_mean[] = {-1.5861, -0.31082, -0.083751, 0.0038915};
    static const double large_log_sd[] = {-0.4803, -0.082676, 0.0030302};
    double nn = (double)n;
    if (n == 3) {
        double p = (6.0 / M_PI) * (asin(sqrt(w)) - M_PI / 3.0);
        return p < 0.0 ? 0.0 : (p > 1.0 ? 1.0 : p);
    }
    double y = log(one_minus_w);
    double z;
    if (n <= 11) {
        double gamma = -2.273 + 0.459 * nn;
        if (y >= gamma)
            return 0.0; /* beyond the range of the transformation: W far too small */
        z = (-log(gamma - y) - polynomial(small_mean, 4, nn)) /
            exp(polynomial(small_log_sd, 4, nn));
    } else {
        double ln = log(nn);
        z = (y - polynomial(large_mean, 4, ln)) / exp(polynomial(large_log_sd, 3, ln));
    }
    return diag_normal_q(z);
}

double diagnostics_shapiro_p(double w, size_t n)
{
    return n >= 3 && w >= 0.0 && w <= 1.0 ? shapiro_p(n, w, 1.0 - w) : NAN;
}

/* Chooses DIAG_SHAPIRO_MAX of the n values, keeping their order, with a
   Mersenne Twister seeded by DIAG_SUBSAMPLE_SEED: the same residuals give
   the same subsample on every machine. */
static void subsample(const double *x, size_t n, double *out)
{
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, DIAG_SUBSAMPLE_SEED);
    gsl_ran_choose(rng, out, DIAG_SHAPIRO_MAX, (void *)x, n, sizeof(double));
    gsl_rng_free(rng);
}

void diagnostics_shapiro_wilk(const double *x, size_t n, diag_shapiro *out)
{
    memset(out, 0, sizeof *out);
    out->w = out->p = NAN;
    out->n_total = n;
    if (n < 3) {
        out->reason = DIAG_REASON_TOO_FEW_ROWS;
        out->n = n;
        return;
    }
    size_t used = n > DIAG_SHAPIRO_MAX ? DIAG_SHAPIRO_MAX : n;
    double *sorted = xmalloc(used * sizeof(double));
    if (n > DIAG_SHAPIRO_MAX) {
        subsample(x, n, sorted);
        out->subsampled = true;
        out->seed = DIAG_SUBSAMPLE_SEED;
    } else {
        memcpy(sorted, x, n * sizeof(double));
    }
    out->n = used;
    qsort(sorted, used, sizeof(double), compare_doubles);
    double w, one_minus_w;
    if (shapiro_w(sorted, used, &w, &one_minus_w)) {
        out->computed = true;
        out->w = w;
        out->p = shapiro_p(used, w, one_minus_w);
    } else {
        out->reason = DIAG_REASON_EXACT_FIT;
    }
    free(sorted);
}

/* D'Agostino (1970): Z of √b1. */
static double skewness_z(double root_b1, double n)
{
    double y = root_b1 * sqrt((n + 1.0) * (n + 3.0) / (6.0 * (n - 2.0)));
    double beta2 = 3.0 * (n * n + 27.0 * n - 70.0) * (n + 1.0) * (n + 3.0) /
                   ((n - 2.0) * (n + 5.0) * (n + 7.0) * (n + 9.0));
    double w2 = -1.0 + sqrt(2.0 * (beta2 - 1.0));
    double delta = 1.0 / sqrt(0.5 * log(w2));
    double alpha = sqrt(2.0 / (w2 - 1.0));
    return delta * asinh(y / alpha);
}

/* Anscombe & Glynn (1983): Z of b2. */
static double kurtosis_z(double b2, double n)
{
    double mean = 3.0 * (n - 1.0) / (n + 1.0);
    double variance =
        24.0 * n * (n - 2.0) * (n - 3.0) / ((n + 1.0) * (n + 1.0) * (n + 3.0) * (n + 5.0));
    double x = (b2 - mean) / sqrt(variance);
    double root_beta1 = 6.0 * (n * n - 5.0 * n + 2.0) / ((n + 7.0) * (n + 9.0)) *
                        sqrt(6.0 * (n + 3.0) * (n + 5.0) / (n * (n - 2.0) * (n - 3.0)));
    double a = 6.0 + 8.0 / root_beta1 *
                         (2.0 / root_beta1 + sqrt(1.0 + 4.0 / (root_beta1 * root_beta1)));
    double ratio = (1.0 - 2.0 / a) / (1.0 + x * sqrt(2.0 / (a - 4.0)));
    return ((1.0 - 2.0 / (9.0 * a)) - cbrt(ratio)) / sqrt(2.0 / (9.0 * a));
}

void diagnostics_moments(const double *x, size_t n, diag_moments *out)
{
    long double m2 = 0.0L, m3 = 0.0L, m4 = 0.0L;
    if (n >= 3) {
        long double mean = 0.0L;
        for (size_t i = 0; i < n; i++)
            mean += x[i];
        mean /= (long double)n;
        for (size_t i = 0; i < n; i++) {
            long double d = x[i] - mean, d2 = d * d;
            m2 += d2;
            m3 += d2 * d;
            m4 += d2 * d2;
        }
        m2 /= (long double)n;
        m3 /= (long double)n;
        m4 /= (long double)n;
    }
    /* fewer than three rows: the reason is set there */
    diagnostics_moments_from_central(n, m2, m3, m4, out);
}

void diagnostics_moments_from_central(size_t n, long double m2, long double m3, long double m4,
                                      diag_moments *out)
{
    memset(out, 0, sizeof *out);
    out->n = n;
    out->skewness = out->excess_kurtosis = NAN;
    out->z_skewness = out->p_skewness = out->z_kurtosis = out->p_kurtosis = NAN;
    out->k2 = out->p_k2 = NAN;
    if (n < 3) {
        out->reason = DIAG_REASON_TOO_FEW_ROWS;
        return;
    }
    if (!(m2 > 0.0L)) {
        out->reason = DIAG_REASON_EXACT_FIT;
        return;
    }
    out->computed = true;
    out->skewness = (double)(m3 / powl(m2, 1.5L));
    double b2 = (double)(m4 / (m2 * m2));
    out->excess_kurtosis = b2 - 3.0;
    double nn = (double)n;
    if (n >= 8) {
        out->z_skewness = skewness_z(out->skewness, nn);
        out->p_skewness = 2.0 * diag_normal_q(fabs(out->z_skewness));
    }
    if (n >= 20) {
        out->z_kurtosis = kurtosis_z(b2, nn);
        out->p_kurtosis = 2.0 * diag_normal_q(fabs(out->z_kurtosis));
        out->k2 = out->z_skewness * out->z_skewness + out->z_kurtosis * out->z_kurtosis;
        out->p_k2 = diag_chi2_q(out->k2, 2.0);
    }
}

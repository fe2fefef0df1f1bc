/*
 * predict.c — predictions at new points: ŷ₀ = x₀ᵀβ with the confidence
 * interval of the mean, ŷ₀ ± t σ √(x₀ᵀVx₀), and the prediction interval of a
 * new observation of weight 1, ŷ₀ ± t σ √(1 + x₀ᵀVx₀), where V = (XᵀWX)⁻¹
 * and t is the two-sided quantile with the residual degrees of freedom
 * (Draper & Smith, "Applied Regression Analysis", 3rd ed., §5.3). Under
 * robust standard errors (HC0–HC3, Newey–West) the mean's standard error is
 * √(x₀ᵀV_robust x₀) and a new observation's √(x₀ᵀV_robust x₀ + σ²).
 *
 * A point is estimable when x₀ lies in the row space of X: x₀ is orthogonal
 * to every null vector e_k − Σ alias_k[j] e_j of an aliased column k.
 * Extrapolation: x₀ᵀVx₀ above the largest x_iᵀVx_i of the rows used (the
 * hat-matrix diagonal for unit weights), or a numeric value outside the
 * range of the rows used (design_point.outside).
 */
#include "internal.h"

#include <gsl/gsl_cdf.h>
#include <math.h>

/* Relative size of x₀'s component along a null vector beyond which the
   point is not estimable. */
static const long double ESTIMABLE_TOLERANCE = 1e-9L;

static bool point_estimable(const fit_result *f, const long double *x)
{
    for (size_t k = 0; k < f->n_coefs; k++) {
        const double *alias = f->coefs[k].alias;
        if (!alias)
            continue;
        long double along = x[k], scale = fabsl(x[k]);
        for (size_t j = 0; j < f->n_coefs; j++) {
            along -= alias[j] * x[j];
            scale += fabsl(alias[j] * x[j]);
        }
        if (fabsl(along) > ESTIMABLE_TOLERANCE * scale)
            return false;
    }
    return true;
}

/* xᵀVx with V one of f's covariance matrices, or (XᵀWX)⁻¹ when v is NULL,
   in the data's units (fit.h stores them with powers of two taken out). */
static long double quadratic_form(const fit_result *f, const gsl_matrix *v, const long double *x,
                                  size_t p)
{
    long double sum = 0.0L;
    for (size_t a = 0; a < p; a++)
        for (size_t b = 0; b < p; b++)
            sum += x[a] * (v ? fit_cov_at(f, v, a, b) : fit_xtx_inverse_at(f, a, b)) * x[b];
    return sum;
}

void fit_predict(const fit_result *f, const design_point *pt, fit_prediction *out)
{
    size_t p = f->n_coefs;
    *out = (fit_prediction){false, NAN, NAN, NAN, NAN, NAN, NAN, NAN, NAN, false, true};
    if (!point_estimable(f, pt->x))
        return;
    out->estimable = true;
    long double fit = 0.0L;
    for (size_t c = 0; c < p; c++)
        if (f->coefs[c].estimable)
            fit += f->coefs[c].estimate * pt->x[c];
    long double h = fmaxl(quadratic_form(f, NULL, pt->x, p), 0.0L);
    out->fit = (double)fit;
    out->leverage = (double)h;
    out->beyond_leverage = out->leverage > f->max_position * (1.0 + 1e-9);
    out->extrapolation = out->beyond_leverage || pt->n_outside > 0;
    if (!(f->df_residual > 0))
        return;
    double t = gsl_cdf_tdist_Qinv((1.0 - f->level) / 2.0, f->df_residual);
    out->se_fit = f->sigma * sqrt(out->leverage);
    out->se_prediction = f->sigma * sqrt(1.0 + out->leverage);
    const gsl_matrix *robust = NULL;
    switch (f->errors) {
    case SPEC_ERRORS_HC0: robust = f->robust_cov[FIT_HC0]; break;
    case SPEC_ERRORS_HC1: robust = f->robust_cov[FIT_HC1]; break;
    case SPEC_ERRORS_HC2: robust = f->robust_cov[FIT_HC2]; break;
    case SPEC_ERRORS_HC3: robust = f->robust_cov[FIT_HC3]; break;
    case SPEC_ERRORS_HAC: robust = f->hac_cov; break;
    case SPEC_ERRORS_CLASSICAL: break;
    }
    if (robust) {
        /* The mean's standard error under the covariance the model leads
           with; a new row adds the residual variance σ². */
        long double v = fmaxl(quadratic_form(f, robust, pt->x, p), 0.0L);
        double vd = (double)v;
        if (isnormal(vd) || v == 0.0L) {
            out->se_fit = sqrt(vd);
            out->se_prediction = sqrt(vd + f->sigma * f->sigma);
        } else {
            /* A variance beyond double's range (data near 1e±200). */
            long double sigma = f->sigma;
            out->se_fit = fit_root(v);
            out->se_prediction = fit_root(v + sigma * sigma);
        }
    }
    out->ci_low = out->fit - t * out->se_fit;
    out->ci_high = out->fit + t * out->se_fit;
    out->pi_low = out->fit - t * out->se_prediction;
    out->pi_high = out->fit + t * out->se_prediction;
}

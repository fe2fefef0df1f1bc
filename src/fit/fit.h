/*
 * fit.h — ordinary least squares on a design: estimates, their covariance,
 * standard errors, t tests and confidence intervals, and the whole-model
 * summaries (R², adjusted R², F test, log-likelihood, AIC, BIC).
 * Computation only: nothing here formats text.
 */
#ifndef FITPROOF_FIT_H
#define FITPROOF_FIT_H

#include "../design/design.h"

typedef struct {
    double estimate;
    double std_error;
    double t;
    double p;        /* two-sided */
    double ci_low;
    double ci_high;
    bool estimable;  /* false when aliased with other columns */
} fit_coef;

typedef struct {
    size_t n;            /* rows used */
    size_t n_coefs;      /* columns of the design */
    size_t rank;         /* estimable coefficients */
    fit_coef *coefs;     /* one per design column, in design order */
    gsl_matrix *cov;     /* covariance of the estimates (0 rows/cols if aliased) */
    gsl_vector *fitted;
    gsl_vector *residuals;
    double level;        /* confidence level of the intervals */
    double rss;          /* residual sum of squares */
    double tss;          /* total sum of squares: centred with an intercept */
    bool centred;        /* false: R² is the uncentred one (no intercept) */
    double df_model;
    double df_residual;
    double sigma;        /* residual standard deviation */
    double r_squared;
    double adj_r_squared;
    double f;            /* overall F statistic */
    double f_p;
    double log_likelihood;
    double aic;          /* counts the error variance as a parameter */
    double bic;
} fit_result;

/* GSL's default error handler aborts the process (on an underflow deep in
   a tail probability, say). fitproof checks status codes instead; call this
   once before any fit. */
void fit_library_init(void);

/* Fits d by least squares with confidence intervals at level (0 < level < 1).
   Never fails on rank deficiency: aliased coefficients are marked not
   estimable. Caller frees with fit_free. */
fit_result *fit_new(const design *d, double level);
void fit_free(fit_result *f);

/* Tail probabilities through the regularized incomplete beta function,
   which keeps full relative accuracy far into the tails (GSL's t and F
   cumulative functions lose digits below about 1e-40). */
/* Two-sided p-value of a t statistic with df degrees of freedom. */
double fit_t_p_value(double t, double df);
/* Upper-tail p-value of an F statistic with (df1, df2) degrees of freedom. */
double fit_f_p_value(double f, double df1, double df2);

#endif

/*
 * diagnostics.h — the assumption diagnostics of one fitted model: normality
 * of the residuals, constant variance, independence, linearity,
 * collinearity and influence, each with a verdict and remedies as data,
 * and the spec's checks evaluated against them. The stage sits after fit:
 * it reads the design, the fit and the data table and computes numbers
 * only; sentences are written by narrate, bytes by the renderers.
 *
 * With weights (design->weights) every quantity uses the √w-scaled design
 * and the Pearson residuals √w·(y − ŷ); fit->residuals must hold y − ŷ.
 */
#ifndef FITPROOF_DIAGNOSTICS_H
#define FITPROOF_DIAGNOSTICS_H

#include <stdint.h>

#include "../fit/fit.h"

/* ---- why something was not computed ------------------------------------ */

typedef enum {
    DIAG_REASON_NONE = 0,
    DIAG_REASON_TOO_FEW_ROWS,     /* fewer rows than the method needs */
    DIAG_REASON_EXACT_FIT,        /* residuals are zero (to rounding) */
    DIAG_REASON_NO_RESIDUAL_DF,   /* too few residual degrees of freedom */
    DIAG_REASON_NO_ORDER,         /* no order_by: d was taken in file order */
    DIAG_REASON_NO_REGRESSORS,    /* nothing but the intercept to test against */
    DIAG_REASON_FITTED_IN_DESIGN, /* powers of ŷ add nothing to the design */
    DIAG_REASON_NOT_ESTIMABLE,    /* the coefficient is aliased */
    DIAG_REASON_NOT_FINITE,       /* the value is not a finite number */
    DIAG_REASON_TERM_ALIASED      /* every column of the term is aliased */
} diag_reason;

/* ---- normality ---------------------------------------------------------- */

/* Residuals above this count are tested on a seeded random subsample of
   this size: Royston's approximation is validated for 3 ≤ n ≤ 5000. */
#define DIAG_SHAPIRO_MAX 5000
#define DIAG_SUBSAMPLE_SEED 19650101UL

typedef struct {
    bool computed;
    diag_reason reason;
    double w;
    double p;
    size_t n;       /* values the test used (DIAG_SHAPIRO_MAX when subsampled) */
    size_t n_total; /* values offered */
    bool subsampled;
    unsigned long seed; /* of the subsample; 0 when not subsampled */
} diag_shapiro;

/* Sample skewness √b1 = m3/m2^1.5 and excess kurtosis b2 − 3 = m4/m2² − 3
   with D'Agostino's skewness test (n ≥ 8), the Anscombe–Glynn kurtosis
   test (n ≥ 20) and their omnibus K² (both). Untested parts are NaN. */
typedef struct {
    bool computed;
    diag_reason reason;
    size_t n;
    double skewness;
    double excess_kurtosis;
    double z_skewness, p_skewness;
    double z_kurtosis, p_kurtosis;
    double k2, p_k2;
} diag_moments;

/* The moments' statistics and tests from the central moments m2, m3, m4
   (divided by n) of n values: the one formula for the in-process residuals
   and for sums computed elsewhere (src/pushdown). */
void diagnostics_moments_from_central(size_t n, long double m2, long double m3, long double m4,
                                      diag_moments *out);

/* ---- constant variance -------------------------------------------------- */

typedef struct {
    double statistic;
    double df;
    double p;
} diag_chi2_test;

typedef struct {
    bool computed;
    diag_reason reason;
    bool own_columns; /* tested against spec variance_columns */
    size_t n;
    double aux_r_squared;              /* of the squared residuals on the regressors */
    diag_chi2_test studentized;        /* Koenker (1981): n R² */
    diag_chi2_test original;           /* Breusch & Pagan (1979): ESS / 2 */
    double f, f_df_num, f_df_den, f_p; /* the same regression as an F test */
} diag_breusch_pagan;

/* The statistics from the auxiliary regression of the n squared residuals
   g on df regressors (and an intercept): its explained sum of squares ssr,
   the centred total sum of squares tss of g, the mean of g and rss = Σ g.
   The one formula for the in-process residuals and for sums computed
   elsewhere (src/pushdown); own_columns is left false. */
void diagnostics_breusch_pagan_from_ss(size_t n, size_t df, double ssr, long double tss,
                                       long double mean, double rss, diag_breusch_pagan *out);

/* ---- independence ------------------------------------------------------- */

/* Largest n − p for which the exact distribution of d is computed. */
#define DIAG_DW_EXACT_MAX 1000

typedef enum {
    DIAG_DW_EXACT, /* Imhof (1961) inversion on the eigenvalues of M A */
    DIAG_DW_BETA   /* d/4 as a beta variable with the exact mean and variance */
} diag_dw_method;

typedef struct {
    bool computed;
    diag_reason reason; /* DIAG_REASON_NO_ORDER: computed, in file order */
    bool ordered;       /* rows were put in order_by order */
    double d;
    double p_positive;  /* P(D ≤ d): small d means positive autocorrelation */
    double p_negative;  /* P(D ≥ d) */
    double p_two_sided; /* 2 min(p_positive, p_negative), at most 1 */
    diag_dw_method method;
    double mean_d; /* exact moments of D under independent errors */
    double variance_d;
    double autocorrelation; /* lag-1 estimate 1 − d/2 */
} diag_durbin_watson;

/* ---- linearity ---------------------------------------------------------- */

typedef struct {
    bool computed;
    diag_reason reason;
    double f;
    double df_num;
    double df_den;
    double p;
    double cohen_f2; /* (RSS0 − RSS1) / RSS1: the effect size */
} diag_reset;

/* RESET from the two added columns a₂, a₃ (√w ŷ², √w ŷ³ in any common
   scale) residualized against the design of p estimable columns: their
   Gram matrix gram (2 × 2, row-major), their products with the residuals
   cross, their squared lengths before residualizing, the model's RSS and
   n rows. The one formula for the in-process rows and for sums computed
   elsewhere (src/pushdown). */
void diagnostics_reset_from_gram(size_t n, size_t p, double rss, const long double gram[4],
                                 const long double cross[2], const long double length[2],
                                 diag_reset *out);

/* ---- collinearity ------------------------------------------------------- */

typedef struct {
    char *label;          /* the term's columns joined by " × " */
    size_t term;          /* index of the spec term */
    size_t df;            /* its estimable columns */
    double vif;           /* one-df terms; NaN otherwise */
    double gvif;          /* Fox & Monette (1992); equals vif when df = 1 */
    double gvif_adjusted; /* gvif^(1/(2 df)) */
} diag_vif;

typedef struct {
    bool computed;
    diag_reason reason;
    double condition_number; /* of the estimable columns scaled to unit length */
    diag_vif *terms;
    size_t n_terms;
    double max_vif;  /* largest vif, or gvif_adjusted² for multi-df terms */
    size_t max_term; /* index in terms of that largest value */
} diag_collinearity;

/* ---- influence ---------------------------------------------------------- */

/* The rules that flag a row. diag_rules[k] describes bit 1 << k. */
typedef enum {
    DIAG_FLAG_LEVERAGE = 1 << 0,       /* h > 2p/n */
    DIAG_FLAG_OUTLIER = 1 << 1,        /* Bonferroni outlier test at alpha */
    DIAG_FLAG_LARGE_RESIDUAL = 1 << 2, /* |externally studentized| > 3 */
    DIAG_FLAG_COOKS_MEDIAN = 1 << 3,   /* Cook's D > median of F(p, n − p) */
    DIAG_FLAG_COOKS_4_OVER_N = 1 << 4, /* Cook's D > 4/n */
    DIAG_FLAG_DFFITS = 1 << 5          /* |DFFITS| > 2 √(p/n) */
} diag_flag;

#define DIAG_N_RULES 6

/* Rows results.json names by influence; every row is in the residuals CSV. */
#define DIAG_TOP_ROWS 25

typedef struct {
    const char *id;     /* stable identifier, as in results.json */
    const char *source; /* the publication, or NULL for common practice */
} diag_rule;

extern const diag_rule diag_rules[DIAG_N_RULES];

/* The bound of each rule for n rows and p estimable coefficients at
   significance level alpha (the Bonferroni test's), in diag_rules order:
   the one set for the in-process rows and for src/pushdown's SQL. */
void diagnostics_influence_thresholds(size_t n, size_t p, double alpha,
                                      double threshold[DIAG_N_RULES]);

/* The residual measures of one row (NaN where undefined). */
typedef struct {
    double standardized; /* internally studentized: e / (s √(1 − h)) */
    double studentized;  /* externally studentized (leave-one-out s) */
    double cooks;        /* Cook's distance */
    double dffits;
} diag_row_measures;

/* Per-row measures are not stored: diag_influence_row computes them from
   the row's residual and leverage with the same operations each time, so
   every reader sees the same bits and the report holds no array of them. */
typedef struct {
    size_t n;              /* rows */
    size_t p;              /* estimable coefficients */
    const uint32_t *lines; /* data-file line of each row: the table's when every
                              row is used, else owned_lines */
    uint32_t *owned_lines;
    const double *scaled_residual; /* e·√w in units of 2^exponent: the fit's own
                                      residuals (no weights, exponent 0) or the
                                      diagnostics' copy, handed over */
    double *owned_residual;
    int exponent;          /* the fit's response_exponent */
    double scale;          /* s = √(Σe²/(n − p)) in those units */
    bool measured;         /* the residual measures are defined (not an exact fit,
                              some coefficient, s > 0) */
    const double *leverage; /* hat value: the fit's own array, borrowed (zeros without
                               coefficients, then owned as zeros below) */
    double *zero_leverage;
    uint8_t *flags;                 /* diag_flag bits per row */
    double threshold[DIAG_N_RULES]; /* the bound each rule used */
    size_t count[DIAG_N_RULES];     /* rows each rule flagged */
    size_t n_flagged;               /* rows with any flag */
    double max_leverage;
    uint32_t max_leverage_line;
    double max_cooks;
    uint32_t max_cooks_line;
    double hc3_change; /* max |SE_HC3 / SE − 1| over the coefficients */
    double chance_share; /* share of rows the DFFITS rule flags in a clean sample
                            (normal errors, every leverage p/n): P(|T| > 2√((n − p)/n)),
                            T ~ t(n − p − 1); the Cook's 4/n rule flags nearly as many */
    double expected_share[DIAG_N_RULES]; /* share of rows each rule flags in a clean
                                            sample (normal errors, every leverage p/n) */
    size_t top[DIAG_TOP_ROWS]; /* the most influential rows, largest Cook's distance
                                  first (leverage when no distance is defined) */
    size_t n_top;
} diag_influence;

/* Below this many rows the tests have little power (the report says so);
   at or above the large count they detect departures too small to matter,
   and the verdict rests on the size (common practice, no source). */
#define DIAG_SMALL_N 30
#define DIAG_LARGE_N 500

/* Row i's standardized and studentized residuals, Cook's distance and DFFITS. */
diag_row_measures diag_influence_row(const diag_influence *inf, size_t i);

/* Row i's raw residual (Pearson with weights) in the data's units. */
double diag_influence_residual(const diag_influence *inf, size_t i);

/* ---- verdicts ----------------------------------------------------------- */

typedef enum {
    DIAG_NORMALITY,
    DIAG_CONSTANT_VARIANCE,
    DIAG_INDEPENDENCE,
    DIAG_LINEARITY,
    DIAG_COLLINEARITY,
    DIAG_INFLUENCE,
    DIAG_N_ASSUMPTIONS
} diag_assumption;

typedef enum {
    DIAG_HOLDS,
    DIAG_DOUBTFUL,
    DIAG_VIOLATED,
    DIAG_NOT_ASSESSED
} diag_verdict_kind;

typedef enum {
    DIAG_REMEDY_NONE = 0,
    DIAG_REMEDY_HC3_ERRORS,         /* heteroscedasticity-consistent standard errors */
    DIAG_REMEDY_TRANSFORM_RESPONSE, /* log, square root, … of the response */
    DIAG_REMEDY_WEIGHTED_FIT,       /* weights inversely proportional to the variance */
    DIAG_REMEDY_ADD_TERMS,          /* polynomial or interaction terms */
    DIAG_REMEDY_ORDER_ROWS,         /* say the row order with order_by */
    DIAG_REMEDY_TIME_SERIES_MODEL,  /* model the dependence (autoregressive errors) */
    DIAG_REMEDY_CENTER_TERMS,       /* centre columns before powers and products */
    DIAG_REMEDY_COMBINE_TERMS,      /* drop or combine collinear terms */
    DIAG_REMEDY_INSPECT_ROWS        /* check the flagged rows at their source */
} diag_remedy;

/* What measured the size of a departure, for verdicts that weigh one. */
typedef enum {
    DIAG_EFFECT_NONE,
    DIAG_EFFECT_SHAPE,           /* max(|skewness| / 0.5, |excess kurtosis| / 1) */
    DIAG_EFFECT_SE_CHANGE,       /* max |SE_HC2 / SE − 1| */
    DIAG_EFFECT_AUTOCORRELATION, /* |1 − d/2| */
    DIAG_EFFECT_COHEN_F2,        /* RESET's (RSS0 − RSS1) / RSS1 */
    DIAG_EFFECT_VIF,             /* largest VIF (GVIF^(1/df) for multi-df terms) */
    DIAG_EFFECT_COOKS            /* largest Cook's D over the median of F(p, n − p) */
} diag_effect;

#define DIAG_MAX_REMEDIES 3

typedef struct {
    diag_assumption assumption;
    diag_verdict_kind verdict;
    diag_reason reason; /* when not assessed */
    double p;           /* the deciding p-value; NaN when none */
    diag_effect effect_kind;
    double effect;                           /* NaN when none */
    double effect_threshold;                 /* at or above it the departure is material */
    diag_remedy remedies[DIAG_MAX_REMEDIES]; /* most direct first */
    size_t n_remedies;
    bool remedy_in_use; /* the model already applies the first remedy */
} diag_verdict;

/* ---- one model's diagnostics -------------------------------------------- */

typedef struct {
    const design *design;  /* borrowed */
    const fit_result *fit; /* borrowed */
    double alpha;
    bool weighted;
    diag_shapiro shapiro;
    diag_moments moments;
    diag_breusch_pagan breusch_pagan;
    diag_durbin_watson durbin_watson;
    diag_reset reset;
    diag_collinearity collinearity;
    diag_influence influence;
    const char *order_by; /* borrowed from the spec; NULL when not given */
    const size_t *order;  /* rows in order_by order (file order when none): the
                             design's, borrowed, or owned_order */
    size_t *owned_order;
    diag_verdict verdicts[DIAG_N_ASSUMPTIONS];
} diagnostics;

/* Checks what the data stage could not: order_by and variance_columns name
   columns of the table (variance columns numeric) with a value on every
   row the model uses. Records located errors; returns false after any. */
bool diagnostics_validate(const spec *s, const design *d, const data_table *t,
                          error_list *errors);

/* Computes every diagnostic of a fitted model at significance level alpha.
   Borrows d, f and t, which must outlive the result; caller frees with
   diagnostics_free. Never fails: what cannot be computed says why. */
diagnostics *diagnostics_new(const design *d, const fit_result *f, const data_table *t,
                             double alpha);
void diagnostics_free(diagnostics *g);

/* ---- checks ------------------------------------------------------------- */

typedef struct {
    const spec_check *check; /* borrowed */
    bool passed;
    diag_reason reason;        /* why it could not be decided */
    diag_verdict_kind verdict; /* assumption checks */
    double value;              /* p-value, largest VIF or Cook's D, estimate, metric */
    double bound;              /* alpha, the bound, 0, or NaN */
    const char *label;         /* borrowed: the term or coefficient concerned; or NULL */
    uint32_t line;             /* the row concerned (Cook's D); 0 when none */
    double ci_low, ci_high;    /* sign checks: the interval of the estimate */
} diag_check_result;

/* Checks what can only be checked once the designs exist: a sign check's
   coefficient label exists in its model (with "did you mean"), and an
   independent_errors check's model gives order_by. */
bool diagnostics_check_validate(const spec *s, const spec_check *c, const design *d,
                                error_list *errors);

/* Evaluates c on its model's design, fit and diagnostics (all borrowed).
   Assumption checks pass unless the verdict is violated or not assessed. */
diag_check_result diagnostics_check(const spec_check *c, const design *d,
                                    const fit_result *f, const diagnostics *g);

/* ---- the tests on their own, for tests and figures ---------------------- */

/* Shapiro–Wilk W and p of x[0..n) (not modified); above DIAG_SHAPIRO_MAX on
   a subsample drawn with DIAG_SUBSAMPLE_SEED. */
void diagnostics_shapiro_wilk(const double *x, size_t n, diag_shapiro *out);
/* The p-value Royston's approximation gives W for a sample of n (3 ≤ n). */
double diagnostics_shapiro_p(double w, size_t n);
void diagnostics_moments(const double *x, size_t n, diag_moments *out);
/* Durbin–Watson test of residuals e[0..n), in time order, from a least-
   squares fit on the n × p full-rank design x (rows in the same order).
   The exact distribution is used while n − p ≤ exact_max. */
void diagnostics_durbin_watson(const gsl_matrix *x, const double *e, size_t exact_max,
                               diag_durbin_watson *out);
/* P(D ≤ c) for the design x (n × p, full rank) by the method chosen as above. */
double diagnostics_dw_cdf(const gsl_matrix *x, double c, size_t exact_max);

/* ---- stable identifiers, as written in results.json --------------------- */

const char *diag_reason_id(diag_reason r); /* NULL for DIAG_REASON_NONE */
const char *diag_assumption_id(diag_assumption a);
const char *diag_verdict_id(diag_verdict_kind v);
const char *diag_remedy_id(diag_remedy r);
const char *diag_effect_id(diag_effect e); /* NULL for DIAG_EFFECT_NONE */
const char *diag_dw_method_id(diag_dw_method m);

#endif

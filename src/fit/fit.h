/*
 * fit.h — least squares on a design (weighted when the design has weights):
 * estimates, their covariance, standard errors (classical and HC0–HC3),
 * t tests and confidence intervals, whole-model summaries (R², F test,
 * log-likelihood, AIC, BIC), per-term F tests (marginality-respecting and
 * sequential), predictions, and nested-model comparisons.
 * Computation only: nothing here formats text.
 */
#ifndef FITPROOF_FIT_H
#define FITPROOF_FIT_H

#include "../design/design.h"

/* Heteroscedasticity-consistent covariance estimators (MacKinnon & White
   1985): HC0 = (XᵀX)⁻¹ Xᵀ diag(e²) X (XᵀX)⁻¹, HC1 = HC0 · n/(n − r),
   HC2 with e²/(1 − h), HC3 with e²/(1 − h)². */
typedef enum { FIT_HC0, FIT_HC1, FIT_HC2, FIT_HC3, FIT_N_HC } fit_hc;

/* Standard error, t test and confidence interval of one coefficient under
   one covariance estimate (t with the residual degrees of freedom). */
typedef struct {
    double std_error;
    double t;
    double p;        /* two-sided */
    double ci_low;
    double ci_high;
} fit_inference;

typedef struct {
    double estimate;
    double std_error; /* classical: σ² (XᵀWX)⁻¹ */
    double t;
    double p;         /* two-sided */
    double ci_low;
    double ci_high;
    bool estimable;   /* false when aliased with other columns; numbers are NaN */
    fit_inference robust[FIT_N_HC];
    fit_inference hac; /* Newey–West; NaN without a row order (robust.c) */
    double *alias;    /* not estimable: n_coefs entries with this column =
                         Σ alias[j] · column j over the estimable j in the
                         rows used (all zero: the column is zero there);
                         NULL when estimable */
} fit_coef;

/* An F test of one spec term. */
typedef struct {
    size_t term;         /* index into design.terms */
    double df;           /* numerator degrees of freedom: the rank the term adds */
    double sum_squares;  /* (weighted) sum of squares the term accounts for */
    double f;            /* (sum_squares / df) / σ² of the full model; NaN when df = 0 */
    double p;
} fit_term_test;

/* Sizes (as powers of two) within which the response and the design's
   columns are used as they are; beyond, the fit takes out a power of two
   before anything is squared (exact: only the exponent changes). */
#define FIT_SAFE_EXPONENT 128

/* Which algorithm factored the design. */
typedef enum {
    FIT_SOLVER_AUTO = 0, /* dense up to FIT_DENSE_MAX entries, streaming beyond */
    FIT_SOLVER_DENSE,    /* whole n×p design in long double, augmented refinement */
    FIT_SOLVER_STREAMING /* rows folded into a triangle block by block, refinement
                            by corrected semi-normal equations */
} fit_solver;

/* Designs with at most this many entries (n_used × n_coefs) are factored
   dense (two long double copies: 8 MB at this size). */
#define FIT_DENSE_MAX ((size_t)1 << 18)

typedef struct {
    size_t n;            /* rows used */
    size_t n_coefs;      /* columns of the design */
    size_t rank;         /* estimable coefficients */
    fit_solver solver;   /* the one used: FIT_SOLVER_DENSE or FIT_SOLVER_STREAMING */
    spec_errors errors;  /* the standard errors the report leads with (the model's
                            standard_errors key) */
    fit_coef *coefs;     /* one per design column, in design order */
    /* The p × p matrices below are stored with powers of two taken out, so
       that data in any units (1e-200 … 1e200) fit in double: entry (a, b)
       of cov, robust_cov and hac_cov is the covariance times
       2^-(2·response_exponent + column_exponent[a] + column_exponent[b]),
       of xtx_inverse times 2^-(column_exponent[a] + column_exponent[b]).
       Both exponents are 0 for data of ordinary size; read entries through
       fit_cov_at and fit_xtx_inverse_at. */
    gsl_matrix *cov;     /* classical covariance of the estimates (0 rows/cols if aliased) */
    gsl_matrix *xtx_inverse;            /* (XᵀWX)⁻¹ over the estimable columns */
    gsl_matrix *robust_cov[FIT_N_HC];   /* HC0–HC3 covariances, same layout */
    int response_exponent; /* the fit ran on y·2^-e: 0 unless |y| is beyond 2^±FIT_SAFE_EXPONENT */
    int *column_exponent;  /* n_coefs entries, 0 unless a column's length is beyond 2^±FIT_SAFE_EXPONENT */
    double rss_scaled;     /* rss · 4^-response_exponent, always finite */
    gsl_vector *fitted;
    gsl_vector *residuals; /* y − fitted, unweighted */
    gsl_vector *leverage;  /* h_i = w_i x_iᵀ (XᵀWX)⁻¹ x_i (w_i = 1 unweighted) */
    double max_position;   /* largest x_iᵀ (XᵀWX)⁻¹ x_i over the rows used: the
                              in-sample leverage a weight-1 point is judged by */
    bool hc_defined;       /* false when some row has leverage 1 (HC2, HC3 are NaN) */
    double level;        /* confidence level of the intervals */
    bool weighted;
    double sum_log_weights; /* Σ log w_i (0 unweighted) */
    double rss;          /* residual sum of squares, Σ w_i e_i² (NaN when beyond double's
                            range in the data's units; every ratio is still computed) */
    double tss;          /* total: Σ w_i (y_i − ȳ_w)² with an intercept, Σ w_i y_i² without
                            (NaN likewise) */
    bool centred;        /* false: R² is the uncentred one (no intercept) */
    bool constant_spanned; /* no intercept term, but the columns add up to the constant
                              (one indicator per level): R², adjusted R² and the
                              overall F are the centred ones */
    double df_model;
    double df_residual;
    double sigma;        /* residual standard deviation √(RSS / df_residual) */
    double r_squared;
    double adj_r_squared;
    double f;            /* overall F statistic */
    double f_p;
    double log_likelihood;
    double aic;          /* counts the error variance as a parameter */
    double bic;
    fit_term_test *term_tests;       /* one per design term, marginality-respecting */
    fit_term_test *sequential_tests; /* one per design term, terms added in spec order */
    size_t n_terms;
    /* Newey–West covariance (robust.c), when the design has a row order. */
    bool hac_defined;
    size_t hac_lags;     /* the spec's lags, or ⌊4 (n/100)^(2/9)⌋ */
    gsl_matrix *hac_cov; /* n_coefs × n_coefs, or NULL */
    /* With robust standard errors (errors ≠ classical): every test as a Wald
       test under that covariance; NULL / NaN otherwise. */
    fit_term_test *wald_term_tests;       /* given the others */
    fit_term_test *wald_sequential_tests; /* in order */
    double wald_f, wald_df_num, wald_df_den, wald_f_p; /* the overall test */
    /* The triangular factor of the weighted design (factor.c): the only
       factorization of the design; the diagnostics read it. */
    struct fit_factor *factor;
    /* The triangle of the weighted [X | y] in design column order, y as the
       fit saw it (2^-response_exponent): sub-models are read from it. */
    struct lsq_tri *triangle;
} fit_result;

/* GSL's default error handler aborts the process (on an underflow deep in
   a tail probability, say). fitproof checks status codes instead; call this
   once before any fit. */
void fit_library_init(void);

/* Fits d by (weighted) least squares with confidence intervals at level
   (0 < level < 1). Never fails on rank deficiency: aliased coefficients are
   marked not estimable. Caller frees with fit_free. */
fit_result *fit_new(const design *d, double level);
/* The same with the algorithm chosen (tests and benchmarks). */
fit_result *fit_new_using(const design *d, double level, fit_solver solver);
void fit_free(fit_result *f);

/* Entry (a, b) of one of f's covariance matrices (f->cov, robust_cov[k],
   hac_cov) and of f->xtx_inverse, in the data's units (long double, whose
   range holds any square of a double). */
long double fit_cov_at(const fit_result *f, const gsl_matrix *v, size_t a, size_t b);
long double fit_xtx_inverse_at(const fit_result *f, size_t a, size_t b);

/* The standard errors the report leads with for coefficient c: the
   classical ones, or the HC kind the model asks for. */
fit_inference fit_lead_inference(const fit_result *f, size_t c);

/* A linear combination Σ w_c β_c of the coefficients (n_coefs weights):
   its value in *estimate, and its standard error √(wᵀVw), t test and
   interval under the covariance V the report leads with (classical, HC or
   Newey–West), on df_residual degrees of freedom. NaN when a weight falls
   on a coefficient that is not estimable. */
fit_inference fit_combination(const fit_result *f, const double *w, double *estimate);

/* ---- readings at representative values (readings.c) -------------------- */

/* A coefficient whose columns also enter a higher term (an interaction, or
   powers of its own column) has no single reading: what it stands for
   depends on the other columns of those terms. It is read instead at
   settings that occur: every level of a category partner, and for a numeric
   partner the spec's `at` values or the median of the fitted rows. Each
   reading is a combination Σ w_c β_c with its interval from the covariance
   the report leads with (fit_combination). */
typedef enum {
    FIT_READING_SLOPE,       /* a numeric column's slope (the derivative of the fit) */
    FIT_READING_DIFFERENCE,  /* a level against the reference (sum coding: against
                                the unweighted average of the levels), adjusted */
    FIT_READING_INTERACTION, /* a product's own contrast (a slope's change, a gap's
                                change) read at the settings of the higher term */
    FIT_READING_LEVEL_VALUE, /* no intercept: a level's fitted value, the numeric
                                predictors at their representative values and the
                                other categories at their reference (averaged
                                under sum coding) */
    FIT_READING_OMITTED      /* sum coding: the level without a coefficient, its
                                departure from the unweighted mean of the level
                                means (on the intercept's entry) */
} fit_reading_kind;

#define FIT_READING_MAX_AT 6 /* columns a setting names */
#define FIT_READING_MAX 12   /* settings read per coefficient and kind */

/* One column of a setting. */
typedef struct {
    const data_column *column;  /* borrowed */
    const design_range *range;  /* numeric: borrowed from the design; else NULL */
    double value;               /* numeric: the value, on the model's scale */
    int32_t code;               /* category: the level's code; -1 averaged over the
                                   levels (sum coding); unused for numeric */
} fit_setting;

typedef struct {
    size_t coef;                /* the design coefficient this reading explains */
    fit_reading_kind kind;
    const data_column *target;  /* borrowed: the slope's or the level's column, the
                                   first column of an interaction */
    int32_t level;              /* DIFFERENCE, LEVEL_VALUE, OMITTED: the level's code */
    fit_setting at[FIT_READING_MAX_AT];
    size_t n_at;
    size_t index;               /* 0, 1, … among the readings of (coef, kind) */
    size_t of;                  /* the settings there are for (coef, kind); only the
                                   first FIT_READING_MAX are read */
    double estimate;            /* per unit of every numeric column the contrast
                                   differentiates (the narrator scales to its step) */
    fit_inference inference;    /* under the covariance the report leads with */
} fit_reading;

typedef struct {
    fit_reading *items;         /* by coefficient in design order, then kind, then
                                   setting (categories' reference first, level order) */
    size_t n;
} fit_readings;

/* Every reading at representative values of f's design. Caller frees with
   fit_readings_free. */
fit_readings *fit_readings_new(const design *d, const fit_result *f);
void fit_readings_free(fit_readings *r);

/* ---- tests under a robust covariance (robust.c) ------------------------- */

typedef struct {
    double f;
    double df_num;
    double df_den;
    double p;
} fit_wald;

/* The Newey–West lag rule ⌊4 (n/100)^(2/9)⌋ (Newey & West 1994). */
size_t fit_hac_rule(size_t n);
/* Wald F test, under covariance kind (HC0–HC3 or HAC, not classical), that
   the coefficients flagged in tested are zero in the least-squares fit of
   the columns flagged in in_model (n_coefs flags each). NaN when it cannot
   be computed (HAC without a row order, leverage 1 for HC2/HC3). */
fit_wald fit_wald_columns(const design *d, const fit_result *f, const bool *in_model,
                          const bool *tested, spec_errors kind);
/* Every term's Wald test, given the others and in order (n_terms each, the
   same sub-models as the classical tests; sum_squares NaN). */
void fit_wald_terms(const design *d, const fit_result *f, spec_errors kind,
                    fit_term_test *marginal, fit_term_test *sequential);
/* The Wald test of every coefficient but the intercept. */
fit_wald fit_wald_overall(const design *d, const fit_result *f, spec_errors kind);
/* Fills coefs[].hac, hac_cov and hac_lags (fit_new calls it). */
void fit_hac_inference(const design *d, fit_result *f);

/* ---- the fit's factor (factor.c) ---------------------------------------- */

/* With S₁ the estimable columns in pivot order scaled by powers of two,
   X̃ S₁ = Q R, Q (n × rank) with orthonormal columns, R upper triangular. */
typedef struct fit_factor fit_factor;

/* The number of estimable columns (0 for NULL). */
size_t fit_factor_rank(const fit_factor *f);
/* The design column in pivot position k < rank. */
size_t fit_factor_column(const fit_factor *f, size_t k);
/* u = R⁻ᵀ S₁ᵀ x (rank entries) for a weighted row x̃ (n_coefs entries):
   the row of Q, so ‖u‖² is the leverage and Σ uᵢuᵢᵀ = I over the rows. */
void fit_factor_whiten(const fit_factor *f, const double *x, double *u);
void fit_factor_whiten_long(const fit_factor *f, const long double *x, long double *u);
/* Reads the whitened rows u = R⁻ᵀS₁ᵀx̃ of the design rows rows[0..n) in
   that order (an order_by order, say), a block of rows at a time: the same
   digits as fit_factor_whiten row by row, at the cost of a block pass.
   Owns its buffers; frees with fit_whitened_rows_free. */
typedef struct fit_whitened_rows fit_whitened_rows;
fit_whitened_rows *fit_whitened_rows_new(const fit_factor *f, const design *d,
                                         const size_t *rows, size_t n);
/* Copies the whitened row of step t (t never decreasing) into u (rank
   entries). */
void fit_whitened_row(fit_whitened_rows *w, size_t t, double *u);
void fit_whitened_rows_free(fit_whitened_rows *w);
/* b = (X̃ᵀX̃)⁻¹ c over the estimable columns, zero elsewhere (n_coefs
   entries each): the coefficients of a column whose X̃ᵀ-product is c. */
void fit_factor_solve(const fit_factor *f, const long double *c, long double *b);
/* S₁R⁻¹ M R⁻ᵀS₁ᵀ (n_coefs × n_coefs row-major, zero off the estimable
   columns) for a symmetric rank × rank M in the whitened coordinates of
   fit_factor_whiten: a sandwich covariance from its meat. */
void fit_factor_sandwich(const fit_factor *f, const long double *m, long double *out);
/* R with each column scaled to unit length (rank × rank row-major): the
   triangle of the design's estimable columns scaled to unit length. */
void fit_factor_unit_triangle(const fit_factor *f, double *r);

/* ---- predictions ---------------------------------------------------------- */

typedef struct {
    bool estimable;      /* false: the point needs a coefficient that is not estimable */
    double fit;          /* x₀ᵀβ */
    double se_fit;       /* σ √(x₀ᵀ (XᵀWX)⁻¹ x₀) */
    double se_prediction; /* σ √(1 + x₀ᵀ (XᵀWX)⁻¹ x₀): a new observation of weight 1 */
    double ci_low, ci_high; /* confidence interval of the mean */
    double pi_low, pi_high; /* prediction interval of a new observation */
    double leverage;     /* x₀ᵀ (XᵀWX)⁻¹ x₀ */
    bool beyond_leverage; /* leverage above fit.max_position */
    bool extrapolation;  /* beyond_leverage, or a value outside the rows' range */
} fit_prediction;

/* Predicts at point p of f's design. */
void fit_predict(const fit_result *f, const design_point *p, fit_prediction *out);

/* ---- nested models -------------------------------------------------------- */

typedef enum {
    FIT_NESTED,              /* the F test applies */
    FIT_SAME_SPACE,          /* both models span the same columns: nothing to test */
    FIT_NOT_NESTED,          /* a column of the small model is outside the big one */
    FIT_DIFFERENT_ROWS,      /* the models were fitted to different rows */
    FIT_DIFFERENT_RESPONSE,
    FIT_DIFFERENT_WEIGHTS
} fit_nesting;

typedef struct {
    fit_nesting nesting;
    size_t outside_coef;   /* FIT_NOT_NESTED: the first coefficient of the small
                              model outside the big model's columns; else SIZE_MAX */
    bool reversed;         /* FIT_NOT_NESTED: the big model lies in the small one */
    size_t rows_only_small; /* FIT_DIFFERENT_ROWS: rows used by one model only */
    size_t rows_only_big;
    double df_num;         /* rank(big) − rank(small) */
    double df_den;         /* residual degrees of freedom of the big model */
    double f;              /* ((RSS_small − RSS_big)/df_num) / (RSS_big/df_den); NaN
                              unless FIT_NESTED */
    double p;
    spec_errors wald_kind; /* the big model's standard errors */
    fit_wald wald;         /* robust errors and the small model's columns a subset of
                              the big one's: the Wald test of the others; else NaN */
} fit_comparison;

/* Compares two fitted models: are they nested and fitted to the same rows,
   and if so, the F test of the big model against the small one. */
void fit_compare(const design *small, const fit_result *fs, const design *big,
                 const fit_result *fb, fit_comparison *out);

/* The Wald test, under kind, of the big model's columns that the small one
   lacks, when every column of the small model is a column of the big one
   (by label); NaN otherwise. */
fit_wald fit_compare_wald(const design *small, const design *big, const fit_result *fb,
                          spec_errors kind);

/* Tail probabilities through the regularized incomplete beta function,
   which keeps full relative accuracy far into the tails (GSL's t and F
   cumulative functions lose digits below about 1e-40). */
/* Two-sided p-value of a t statistic with df degrees of freedom. */
double fit_t_p_value(double t, double df);
/* Upper-tail p-value of an F statistic with (df1, df2) degrees of freedom. */
double fit_f_p_value(double f, double df1, double df2);

#endif

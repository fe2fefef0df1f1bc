/*
 * analysis.h — one run of the statistical stages over every model of a
 * spec: for each model its design, its fit and its predictions; then the
 * model comparisons. Narration and the JSON renderer read it; it owns the
 * designs, fits and predictions, and borrows the spec and the data table,
 * which must outlive it.
 */
#ifndef FITPROOF_ANALYSIS_H
#define FITPROOF_ANALYSIS_H

#include "../diagnostics/diagnostics.h"
#include "../pushdown/pushdown.h"

/* One row of a spec's predict section, in spec order. */
typedef struct {
    design_point *point;     /* the row as a design row; owns it */
    fit_prediction result;
} analysis_prediction;

typedef struct {
    const spec_model *model; /* borrowed from the spec */
    /* ---- predictions (src/fit): every predict row naming this model ---- */
    analysis_prediction *predictions;
    size_t n_predictions;
    design *design;
    fit_result *fit;
    pushdown_result *pushdown; /* data.pushdown: the passes run in PostgreSQL; else NULL */
    diagnostics *diagnostics; /* assumption diagnostics (src/diagnostics) */
    fit_readings *readings;   /* coefficients read at representative values (src/fit) */
    /* ---- caveat: the model uses classical standard errors although an
       assumption they rest on is violated (independence, read first, then
       constant variance): the covariance whose figures the report gives
       beside the classical ones (Newey–West for dependence when the rows
       have an order, else HC3), and every test under it. caveat_kind is
       SPEC_ERRORS_CLASSICAL when no caveat applies. ---- */
    double smearing; /* a logged response (log or log10): Duan's (1983) smearing
                        factor, the mean of base^e_i over the rows used, that turns
                        a back-transformed median into a mean; NaN otherwise */
    spec_errors caveat_kind;
    diag_assumption caveat_assumption;
    fit_term_test *caveat_term_tests;       /* n_terms, given the others */
    fit_term_test *caveat_sequential_tests; /* n_terms, in order */
    fit_wald caveat_overall;
} analysis_model;

/* One pair of spec.compare. */
typedef struct {
    const spec_compare *pair;   /* borrowed from the spec */
    const analysis_model *small; /* borrowed from analysis.models */
    const analysis_model *big;
    fit_comparison result;
    fit_wald caveat; /* under big->caveat_kind when it has a caveat; else NaN */
} analysis_comparison;

typedef struct {
    const spec *spec;        /* borrowed */
    const data_table *table; /* borrowed */
    double level;            /* confidence level of every interval */
    double alpha;            /* significance level of tests and verdicts */
    /* ---- comparisons (src/fit): one per spec compare pair, in spec order ---- */
    analysis_comparison *comparisons;
    size_t n_comparisons;
    analysis_model *models;
    size_t n_models;
    /* ---- checks (src/diagnostics) ---- */
    diag_check_result *checks; /* one per spec check, in spec order */
    size_t n_checks;
    size_t n_failed_checks;
} analysis;

/* Builds the designs, fits every model, runs its diagnostics and evaluates
   the spec's checks. Returns NULL after recording errors located in the
   spec. Caller frees with analysis_free. */
analysis *analysis_new(const spec *s, const data_table *t, error_list *errors);
void analysis_free(analysis *a);

/* The first half of analysis_new: the designs (built, or taken over from
   designs, one per model, when not NULL) and everything that can be
   checked before a fit. A model without a design (its design failed, or
   designs[m] is NULL) is left out of the checks, so that the others are
   still checked in the same round. tables, when not NULL, holds for each
   model the table its design was built on (NULL: t), as the checks before
   a build build designs on a few rows. Always returns the analysis;
   *complete is false after recording errors (then it must not be fitted). */
analysis *analysis_prepare(const spec *s, const data_table *t, design **designs,
                           const data_table *const *tables, bool *complete,
                           error_list *errors);
/* The second half: fits, diagnostics, checks, predictions, comparisons. */
void analysis_fit(analysis *a);

#endif

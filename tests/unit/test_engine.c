/*
 * test_engine.c — the model engine against statsmodels (Debian's
 * python3-statsmodels 0.13.5, OLS and WLS), values computed once by
 * tests/reference/engine_statsmodels.py with the design matrices built by
 * hand in numpy, and committed in tests/reference/engine.expected.json with
 * the library versions. Models (tests/data/engine/engine.yaml): categories
 * in treatment and sum coding, numeric × numeric, numeric × category,
 * category × category and three-way interactions, weights, no intercept, a
 * polynomial; with estimates, standard errors, t, p, intervals, HC0–HC3,
 * R², F, log-likelihood, AIC, BIC, both term-test tables, predictions and
 * nested comparisons. Every model is fitted by both algorithms (dense and
 * streaming) and each must agree to 1e-9 relative.
 */
#include "testkit.h"

#include <jansson.h>
#include <stdio.h>
#include <stdlib.h>

#include "../../src/analysis/analysis.h"

static const double TOLERANCE = 1e-9;

/* Worst relative disagreement seen, per kind of quantity, for the
   "measured:" lines. */
typedef struct {
    const char *what;
    double worst;
} agreement;

static agreement seen[] = {{"estimates", 0}, {"std errors", 0},  {"p-values", 0},
                           {"HC0-HC3", 0},   {"R2, F, logL", 0}, {"term tests", 0},
                           {"predictions", 0}, {"comparisons", 0}};
enum { ESTIMATES, SES, PS, ROBUST, FIT, TERMS, PREDICTIONS, COMPARISONS };

/* Asserts |computed − expected| ≤ TOLERANCE · scale and records the worst. */
static void within(int kind, double computed, double expected, double scale,
                   const char *model, const char *what)
{
    double relative = fabs(computed - expected) / scale;
    if (!(relative <= TOLERANCE) || getenv("ENGINE_VERBOSE"))
        fprintf(stderr, "%s %s: computed %.17g, statsmodels %.17g\n", model, what, computed,
                expected);
    assert_true(relative <= TOLERANCE);
    if (relative > seen[kind].worst)
        seen[kind].worst = relative;
}

static void close_to(int kind, double computed, double expected, const char *model,
                     const char *what)
{
    within(kind, computed, expected, fabs(expected) > 0 ? fabs(expected) : 1.0, model, what);
}

/* An interval end is compared relative to the interval's half-width when
   that is larger: an end near zero is a difference of two larger numbers,
   and the t quantile of scipy 1.10 (behind statsmodels' intervals) is off
   by up to 1e-12 relative at these degrees of freedom (4e-10 at 5 df),
   against 40-digit values computed by hand with mpmath; GSL's quantile,
   used here, agrees with those to 1e-16. */
static void interval_close(int kind, double computed, double expected, double estimate,
                           const char *model, const char *what)
{
    within(kind, computed, expected, fmax(fabs(expected), fabs(expected - estimate)), model,
           what);
}

static double field(json_t *object, const char *key)
{
    json_t *value = json_object_get(object, key);
    if (!value)
        fprintf(stderr, "missing key %s\n", key);
    assert_non_null(value);
    return json_number_value(value);
}

typedef struct {
    error_list errors;
    spec *spec;
    data_table *table;
    analysis *analysis;
    json_t *expected;
} engine_run;

static void engine_load(engine_run *run)
{
    fit_library_init();
    error_list_init(&run->errors);
    run->spec = spec_load("tests/data/engine/engine.yaml", &run->errors);
    assert_non_null(run->spec);
    run->table = data_load(run->spec, &run->errors);
    assert_non_null(run->table);
    run->analysis = analysis_new(run->spec, run->table, &run->errors);
    if (!run->analysis)
        error_list_print(&run->errors);
    assert_non_null(run->analysis);
    json_error_t error;
    run->expected = json_load_file("tests/reference/engine.expected.json", 0, &error);
    assert_non_null(run->expected);
}

static void engine_free(engine_run *run)
{
    json_decref(run->expected);
    analysis_free(run->analysis);
    data_table_free(run->table);
    spec_free(run->spec);
    error_list_free(&run->errors);
}

static const char *const hc_names[FIT_N_HC] = {"hc0", "hc1", "hc2", "hc3"};

static void check_coefficients(const design *d, const fit_result *f, json_t *want,
                               const char *id)
{
    json_t *coefficients = json_object_get(want, "coefficients");
    assert_int_equal(json_array_size(coefficients), d->n_coefs);
    for (size_t c = 0; c < d->n_coefs; c++) {
        json_t *w = json_array_get(coefficients, c);
        const fit_coef *got = &f->coefs[c];
        assert_string_equal(d->coefs[c].label, json_string_value(json_object_get(w, "label")));
        assert_true(got->estimable);
        close_to(ESTIMATES, got->estimate, field(w, "estimate"), id, d->coefs[c].label);
        close_to(SES, got->std_error, field(w, "std_error"), id, "std_error");
        close_to(SES, got->t, field(w, "t"), id, "t");
        close_to(PS, got->p, field(w, "p"), id, "p");
        interval_close(SES, got->ci_low, field(w, "ci_low"), got->estimate, id, "ci_low");
        interval_close(SES, got->ci_high, field(w, "ci_high"), got->estimate, id, "ci_high");
        json_t *robust = json_object_get(w, "robust");
        for (int kind = 0; kind < FIT_N_HC; kind++) {
            json_t *r = json_object_get(robust, hc_names[kind]);
            const fit_inference *in = &got->robust[kind];
            close_to(ROBUST, in->std_error, field(r, "std_error"), id, hc_names[kind]);
            close_to(ROBUST, in->t, field(r, "t"), id, "robust t");
            close_to(ROBUST, in->p, field(r, "p"), id, "robust p");
            interval_close(ROBUST, in->ci_low, field(r, "ci_low"), got->estimate, id,
                           "robust ci_low");
            interval_close(ROBUST, in->ci_high, field(r, "ci_high"), got->estimate, id,
                           "robust ci_high");
        }
    }
}

static void check_summary(const fit_result *f, json_t *want, const char *id)
{
    json_t *fit = json_object_get(want, "fit");
    close_to(FIT, f->rss, field(fit, "rss"), id, "rss");
    close_to(FIT, f->tss, field(fit, "tss"), id, "tss");
    close_to(FIT, f->r_squared, field(fit, "r_squared"), id, "r_squared");
    close_to(FIT, f->adj_r_squared, field(fit, "adj_r_squared"), id, "adj_r_squared");
    close_to(FIT, f->sigma, field(fit, "sigma"), id, "sigma");
    close_to(FIT, f->df_model, field(fit, "df_model"), id, "df_model");
    close_to(FIT, f->df_residual, field(fit, "df_residual"), id, "df_residual");
    close_to(FIT, f->f, field(fit, "f"), id, "f");
    close_to(PS, f->f_p, field(fit, "f_p"), id, "f_p");
    close_to(FIT, f->log_likelihood, field(fit, "log_likelihood"), id, "log_likelihood");
    close_to(FIT, f->aic, field(fit, "aic"), id, "aic");
    close_to(FIT, f->bic, field(fit, "bic"), id, "bic");
}

static void check_term_table(const design *d, const fit_term_test *tests, json_t *want,
                             const char *id)
{
    assert_int_equal(json_array_size(want), d->n_terms);
    for (size_t k = 0; k < d->n_terms; k++) {
        json_t *w = json_array_get(want, k);
        assert_string_equal(d->terms[tests[k].term].label,
                            json_string_value(json_object_get(w, "label")));
        close_to(TERMS, tests[k].df, field(w, "df"), id, "term df");
        close_to(TERMS, tests[k].sum_squares, field(w, "sum_of_squares"), id, "term ss");
        close_to(TERMS, tests[k].f, field(w, "f"), id, d->terms[tests[k].term].label);
        close_to(TERMS, tests[k].p, field(w, "p"), id, "term p");
    }
}

static void check_model(const design *d, const fit_result *f, json_t *want, const char *id)
{
    assert_int_equal(d->n_used, json_integer_value(json_object_get(want, "n_used")));
    assert_int_equal(d->n_dropped, json_integer_value(json_object_get(want, "n_dropped")));
    assert_int_equal(f->rank, json_integer_value(json_object_get(want, "rank")));
    check_coefficients(d, f, want, id);
    check_summary(f, want, id);
    check_term_table(d, f->term_tests, json_object_get(want, "term_tests"), id);
    check_term_table(d, f->sequential_tests, json_object_get(want, "sequential_tests"), id);
}

static void check_predictions(const analysis_model *am, json_t *want, const char *id)
{
    json_t *list = json_object_get(want, "predictions");
    assert_int_equal(json_array_size(list), am->n_predictions);
    for (size_t k = 0; k < am->n_predictions; k++) {
        json_t *w = json_array_get(list, k);
        const fit_prediction *p = &am->predictions[k].result;
        assert_true(p->estimable);
        close_to(PREDICTIONS, p->fit, field(w, "fit"), id, "prediction");
        close_to(PREDICTIONS, p->se_fit, field(w, "se_fit"), id, "se_fit");
        close_to(PREDICTIONS, p->ci_low, field(w, "ci_low"), id, "ci_low");
        close_to(PREDICTIONS, p->ci_high, field(w, "ci_high"), id, "ci_high");
        close_to(PREDICTIONS, p->pi_low, field(w, "pi_low"), id, "pi_low");
        close_to(PREDICTIONS, p->pi_high, field(w, "pi_high"), id, "pi_high");
    }
}

/* Every model fitted by one algorithm (FIT_SOLVER_AUTO: as the analysis
   does, dense at this size, with the predictions). */
static void check_all_models(fit_solver solver)
{
    engine_run run;
    engine_load(&run);
    json_t *models = json_object_get(run.expected, "models");
    assert_int_equal(json_object_size(models), run.analysis->n_models);
    for (size_t m = 0; m < run.analysis->n_models; m++) {
        const analysis_model *am = &run.analysis->models[m];
        json_t *want = json_object_get(models, am->model->id);
        assert_non_null(want);
        if (solver == FIT_SOLVER_AUTO) {
            assert_int_equal(am->fit->solver, FIT_SOLVER_DENSE);
            check_model(am->design, am->fit, want, am->model->id);
            check_predictions(am, want, am->model->id);
            continue;
        }
        fit_result *f = fit_new_using(am->design, 0.95, solver);
        assert_int_equal(f->solver, solver);
        check_model(am->design, f, want, am->model->id);
        fit_free(f);
    }
    engine_free(&run);
}

static void test_models_against_statsmodels(void **state)
{
    (void)state;
    check_all_models(FIT_SOLVER_AUTO);
}

/* The streaming algorithm (used for large designs) on the same models. */
static void test_streaming_solver_against_statsmodels(void **state)
{
    (void)state;
    check_all_models(FIT_SOLVER_STREAMING);
}

static void test_comparisons_against_statsmodels(void **state)
{
    (void)state;
    engine_run run;
    engine_load(&run);
    json_t *list = json_object_get(run.expected, "comparisons");
    assert_int_equal(json_array_size(list), run.analysis->n_comparisons);
    for (size_t k = 0; k < run.analysis->n_comparisons; k++) {
        json_t *w = json_array_get(list, k);
        const analysis_comparison *c = &run.analysis->comparisons[k];
        assert_string_equal(c->pair->small, json_string_value(json_object_get(w, "small")));
        if (c->result.nesting != FIT_NESTED)
            fprintf(stderr, "%s vs %s: nesting %d\n", c->pair->small, c->pair->big,
                    (int)c->result.nesting);
        assert_int_equal(c->result.nesting, FIT_NESTED);
        close_to(COMPARISONS, c->result.df_num, field(w, "df_num"), "compare", "df_num");
        close_to(COMPARISONS, c->result.df_den, field(w, "df_den"), "compare", "df_den");
        close_to(COMPARISONS, c->result.f, field(w, "f"), "compare", "f");
        close_to(COMPARISONS, c->result.p, field(w, "p"), "compare", "p");
    }
    engine_free(&run);
}

/* Sum and treatment coding span the same columns: same residuals, and the
   same term tests, because those respect marginality (a hand derivation:
   each sub-model they compare spans the same space in either coding). */
static void test_sum_and_treatment_coding_agree(void **state)
{
    (void)state;
    engine_run run;
    engine_load(&run);
    const analysis_model *treat = &run.analysis->models[0], *sum = &run.analysis->models[2];
    assert_string_equal(sum->model->id, "sum");
    assert_true(fabs(treat->fit->rss - sum->fit->rss) < 1e-10 * treat->fit->rss);
    for (size_t k = 0; k < treat->design->n_terms; k++) {
        assert_true(fabs(treat->fit->term_tests[k].f - sum->fit->term_tests[k].f) <
                    1e-9 * treat->fit->term_tests[k].f);
        assert_true(fabs(treat->fit->sequential_tests[k].f - sum->fit->sequential_tests[k].f) <
                    1e-9 * treat->fit->sequential_tests[k].f);
    }
    assert_string_equal(sum->design->coefs[3].label, "g: b vs average of levels");
    assert_int_equal(sum->design->coefs[3].parts[0].kind, DESIGN_SUM);
    assert_string_equal(sum->design->coefs[3].parts[0].omitted, "a");
    engine_free(&run);
}

static int print_agreement(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof seen / sizeof seen[0]; k++)
        fprintf(stderr, "  measured: statsmodels agreement, worst relative difference: %-12s %.2g\n",
                seen[k].what, seen[k].worst);
    return 0;
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_models_against_statsmodels),
        cmocka_unit_test(test_streaming_solver_against_statsmodels),
        cmocka_unit_test(test_comparisons_against_statsmodels),
        cmocka_unit_test(test_sum_and_treatment_coding_agree),
    };
    return cmocka_run_group_tests_name("model engine vs statsmodels", tests, NULL,
                                       print_agreement);
}

/*
 * test_fit.c — the fit stage on cases whose answers follow by hand: rank
 * deficiency (exact collinearity, a level present only in dropped rows,
 * more coefficients than rows) on both algorithms, weighted least squares,
 * HC0, the one-way analysis of variance as a term test, predictions and
 * their extrapolation flags, and the comparison of models that are or are
 * not nested. Data: tests/data/design/oneway.csv and
 * tests/data/small/collinear.csv (invented).
 */
#include "testkit.h"

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include "../../src/analysis/analysis.h"

static void run_on(pipeline *run, const char *data, const char *model)
{
    char yaml[2048];
    snprintf(yaml, sizeof yaml,
             "fitproof: 1\ndata: {path: %s}\nmodels:\n  - id: m\n    response: y\n%s", data,
             model);
    pipeline_run(run, "tests/data/design/spec.yaml", yaml);
}

/* The same numbers from the dense and the streaming algorithm. */
static void assert_algorithms_agree(const design *d, double tolerance)
{
    fit_result *dense = fit_new_using(d, 0.95, FIT_SOLVER_DENSE);
    fit_result *streaming = fit_new_using(d, 0.95, FIT_SOLVER_STREAMING);
    assert_int_equal(dense->rank, streaming->rank);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const fit_coef *a = &dense->coefs[c], *b = &streaming->coefs[c];
        assert_int_equal(a->estimable, b->estimable);
        if (!a->estimable)
            continue;
        assert_true(fabs(a->estimate - b->estimate) <= tolerance * fmax(1, fabs(a->estimate)));
        if (isfinite(a->std_error))
            assert_true(fabs(a->std_error - b->std_error) <= tolerance * a->std_error);
    }
    /* An exact fit's RSS is rounding: compare it on the scale of the TSS. */
    assert_true(fabs(dense->rss - streaming->rss) <=
                tolerance * fmax(dense->rss, 1e-20 * dense->tss));
    fit_free(dense);
    fit_free(streaming);
}

/* c = a + b in collinear.csv: one of the three is aliased and the others'
   coefficients name the combination (1 · a + 1 · b or the like). */
static void test_exact_collinearity_names_the_alias(void **state)
{
    (void)state;
    pipeline run;
    pipeline_run(&run, "tests/data/small/spec.yaml",
                 "fitproof: 1\ndata: {path: collinear.csv}\nmodels:\n"
                 "  - {id: m, response: y, terms: [a, b, c]}\n");
    assert_non_null(run.fit);
    size_t aliased = SIZE_MAX;
    for (size_t c = 0; c < 4; c++)
        if (!run.fit->coefs[c].estimable)
            aliased = c;
    assert_true(aliased == 1 || aliased == 2 || aliased == 3);
    /* Columns a, b, c are 1, 2, 3 in the design; a + b − c = 0. */
    const double relation[4] = {0, 1, 1, -1};
    const double *alias = run.fit->coefs[aliased].alias;
    for (size_t c = 1; c < 4; c++) {
        double expected = c == aliased ? 0 : -relation[c] / relation[aliased];
        assert_true(fabs(alias[c] - expected) < 1e-12);
    }
    assert_true(fabs(alias[0]) < 1e-12);
    assert_algorithms_agree(run.design, 1e-10);
    pipeline_free(&run);
}

/* Level d of g has a single row, and it misses x: with x in the model the
   level is present only in a dropped row, so its column is zero. */
static void test_level_only_in_dropped_rows(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "oneway.csv", "    terms: [x, g]\n");
    assert_non_null(run.fit);
    size_t d = coef_index(run.design, "g = d");
    assert_false(run.fit->coefs[d].estimable);
    assert_true(isnan(run.fit->coefs[d].estimate));
    for (size_t c = 0; c < run.design->n_coefs; c++)
        assert_true(run.fit->coefs[d].alias[c] == 0.0);
    assert_int_equal(run.fit->rank, run.design->n_coefs - 1);
    assert_true(isfinite(run.fit->coefs[coef_index(run.design, "g = c")].std_error));
    assert_algorithms_agree(run.design, 1e-10);
    pipeline_free(&run);
}

/* More coefficients than rows: the excess is not estimable, nothing is
   left for the residual variance, so every standard error, test and robust
   error is NaN; the term tests say df and leave F undefined. */
static void test_more_coefficients_than_rows(void **state)
{
    (void)state;
    pipeline run;
    pipeline_run(&run, "tests/data/small/spec.yaml",
                 "fitproof: 1\ndata: {path: collinear.csv}\nmodels:\n"
                 "  - {id: m, response: y, terms: [{polynomial: a, degree: 5}, b, group]}\n");
    assert_non_null(run.fit);
    assert_int_equal(run.fit->rank, 6);
    assert_true(run.fit->df_residual == 0);
    for (size_t c = 0; c < run.design->n_coefs; c++) {
        assert_true(isnan(run.fit->coefs[c].std_error));
        assert_true(isnan(run.fit->coefs[c].robust[FIT_HC3].std_error));
    }
    assert_true(isnan(run.fit->term_tests[0].f));
    assert_true(run.fit->term_tests[0].df > 0);
    assert_algorithms_agree(run.design, 1e-8);
    pipeline_free(&run);
}

/* An intercept-only weighted model: the estimate is the weighted mean
   Σwy/Σw, RSS = Σw(y − ȳ_w)², and log L = −n/2 (log 2π + log(RSS/n) + 1)
   + ½ Σ log w (normal errors with variances σ²/w; hand derivation). */
static void test_weighted_mean_and_likelihood(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "oneway.csv", "    weights: w\n    terms: []\n");
    assert_non_null(run.fit);
    const double y[] = {4.1, 5.3, 4.7, 7.9, 8.8, 8.1, 2.2, 3.0, 2.5, 6.0};
    const double w[] = {1.0, 2.0, 1.0, 0.5, 1.0, 2.0, 1.0, 1.5, 1.0, 1.0};
    double sw = 0, swy = 0, slw = 0;
    for (int i = 0; i < 10; i++) {
        sw += w[i];
        swy += w[i] * y[i];
        slw += log(w[i]);
    }
    double mean = swy / sw, rss = 0;
    for (int i = 0; i < 10; i++)
        rss += w[i] * (y[i] - mean) * (y[i] - mean);
    assert_int_equal(run.fit->n, 10);
    assert_true(fabs(run.fit->coefs[0].estimate - mean) < 1e-13);
    assert_true(fabs(run.fit->rss - rss) < 1e-12 * rss);
    double ll = -5.0 * (log(2 * 3.14159265358979323846) + log(rss / 10) + 1) + 0.5 * slw;
    assert_true(fabs(run.fit->log_likelihood - ll) < 1e-12 * fabs(ll));
    assert_true(fabs(run.fit->sum_log_weights - slw) < 1e-14);
    assert_true(fabs(run.fit->aic - (-2 * ll + 4)) < 1e-11);
    pipeline_free(&run);
}

/* HC0 of a regression through the origin by hand (White 1980):
   Var(b) = Σ x² e² / (Σ x²)², and HC1 = HC0 · n/(n − 1). */
static void test_hc0_by_hand(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "oneway.csv", "    intercept: false\n    terms: [x]\n");
    assert_non_null(run.fit);
    const double x[] = {1.0, 2.0, 3.0, 1.5, 2.5, 3.5, 1.2, 2.2, 3.2, 2.5};
    const double y[] = {4.1, 5.3, 4.7, 7.9, 8.8, 8.1, 2.2, 3.0, 2.5, 5.5};
    double sxx = 0, sxy = 0;
    for (int i = 0; i < 10; i++) {
        sxx += x[i] * x[i];
        sxy += x[i] * y[i];
    }
    double b = sxy / sxx, meat = 0;
    for (int i = 0; i < 10; i++)
        meat += x[i] * x[i] * (y[i] - b * x[i]) * (y[i] - b * x[i]);
    double hc0 = sqrt(meat) / sxx;
    const fit_coef *c = &run.fit->coefs[0];
    assert_true(fabs(c->estimate - b) < 1e-13);
    assert_true(fabs(c->robust[FIT_HC0].std_error - hc0) < 1e-12 * hc0);
    assert_true(fabs(c->robust[FIT_HC1].std_error - hc0 * sqrt(10.0 / 9.0)) < 1e-12 * hc0);
    assert_true(c->robust[FIT_HC3].std_error > c->robust[FIT_HC2].std_error);
    pipeline_free(&run);
}

/* One-way analysis of variance (any textbook, e.g. Montgomery, "Design and
   Analysis of Experiments", §3.3): F = (SS_between / (k − 1)) /
   (SS_within / (n − k)); both term tables give it for g alone. */
static void test_one_way_anova_is_the_term_test(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "oneway.csv", "    terms: [g]\n");
    assert_non_null(run.fit);
    const double groups[4][4] = {{4.1, 5.3, 4.7, 5.5}, {7.9, 8.8, 8.1}, {2.2, 3.0, 2.5}, {6.0}};
    const int sizes[4] = {4, 3, 3, 1};
    double grand = 0, between = 0, within = 0;
    for (int g = 0; g < 4; g++)
        for (int i = 0; i < sizes[g]; i++)
            grand += groups[g][i] / 11;
    for (int g = 0; g < 4; g++) {
        double mean = 0;
        for (int i = 0; i < sizes[g]; i++)
            mean += groups[g][i] / sizes[g];
        between += sizes[g] * (mean - grand) * (mean - grand);
        for (int i = 0; i < sizes[g]; i++)
            within += (groups[g][i] - mean) * (groups[g][i] - mean);
    }
    double f = (between / 3) / (within / 7);
    for (int table = 0; table < 2; table++) {
        const fit_term_test *t = table ? &run.fit->sequential_tests[0] : &run.fit->term_tests[0];
        assert_true(t->df == 3);
        assert_true(fabs(t->sum_squares - between) < 1e-12 * between);
        assert_true(fabs(t->f - f) < 1e-12 * f);
    }
    assert_true(fabs(run.fit->f - f) < 1e-12 * f);
    pipeline_free(&run);
}

/* Marginality: in [x, g, [x, g]] the test of x drops x and x × g from the
   model without x × g; the test of x × g is the last sequential one. */
static void test_term_tests_respect_marginality(void **state)
{
    (void)state;
    pipeline full, main_effects, without_x;
    run_on(&full, "oneway.csv", "    terms: [x, z, g, [x, g]]\n");
    run_on(&main_effects, "oneway.csv", "    terms: [x, z, g]\n");
    run_on(&without_x, "oneway.csv", "    terms: [z, g]\n");
    assert_non_null(full.fit);
    double sigma2 = full.fit->rss / full.fit->df_residual;
    double ss_x = without_x.fit->rss - main_effects.fit->rss;
    const fit_term_test *x = &full.fit->term_tests[0];
    assert_true(x->df == 1);
    assert_true(fabs(x->sum_squares - ss_x) < 1e-9 * ss_x);
    assert_true(fabs(x->f - ss_x / sigma2) < 1e-9 * x->f);
    const fit_term_test *xg = &full.fit->term_tests[3], *xg_seq = &full.fit->sequential_tests[3];
    assert_true(fabs(xg->f - xg_seq->f) < 1e-12 * xg->f);
    assert_true(fabs(xg->sum_squares - (main_effects.fit->rss - full.fit->rss)) <
                1e-9 * xg->sum_squares);
    pipeline_free(&full);
    pipeline_free(&main_effects);
    pipeline_free(&without_x);
}

/* ---- predictions and comparisons ------------------------------------------- */

static analysis *analyse(pipeline *run, const char *yaml)
{
    memset(run, 0, sizeof *run);
    fit_library_init();
    error_list_init(&run->errors);
    run->spec = spec_parse("tests/data/design/spec.yaml", yaml, strlen(yaml), &run->errors);
    assert_non_null(run->spec);
    run->table = data_load(run->spec, &run->errors);
    assert_non_null(run->table);
    analysis *a = analysis_new(run->spec, run->table, &run->errors);
    if (!a)
        error_list_print(&run->errors);
    assert_non_null(a);
    return a;
}

/* ŷ = b₀ + b₁x by hand for a simple regression; the interval of the mean
   is ŷ ± t s √(1/n + (x − x̄)²/Sxx) and of a new observation
   ŷ ± t s √(1 + 1/n + (x − x̄)²/Sxx) (Draper & Smith, §1.4). */
static void test_predictions_by_hand(void **state)
{
    (void)state;
    pipeline run;
    analysis *a = analyse(&run,
                          "fitproof: 1\ndata: {path: oneway.csv}\nmodels:\n"
                          "  - {id: m, response: y, terms: [x]}\n"
                          "  - {id: n, response: y, terms: [x, g]}\n"
                          "predict:\n  - model: m\n    rows: [{x: 2}, {x: 5}]\n"
                          "  - model: n\n    rows: [{x: 2, g: d}, {x: 3.5, g: b}]\n");
    const analysis_model *m = &a->models[0];
    const fit_result *f = m->fit;
    assert_int_equal(m->n_predictions, 2);
    double xbar = 0, sxx = 0;
    for (size_t i = 0; i < m->design->n_used; i++)
        xbar += design_get(m->design, i, 1) / 10;
    for (size_t i = 0; i < m->design->n_used; i++)
        sxx += pow(design_get(m->design, i, 1) - xbar, 2);
    /* t(0.975, 8) = 2.306 (Abramowitz & Stegun, table 26.10); the further
       digits computed by hand with mpmath at 40 digits. */
    double t = 2.3060041352041667;
    const fit_prediction *p = &m->predictions[0].result;
    double fit = f->coefs[0].estimate + 2 * f->coefs[1].estimate;
    double se = f->sigma * sqrt(0.1 + pow(2 - xbar, 2) / sxx);
    assert_true(p->estimable);
    assert_true(fabs(p->fit - fit) < 1e-13);
    assert_true(fabs(p->ci_high - (fit + t * se)) < 1e-9);
    double se_new = f->sigma * sqrt(1.1 + pow(2 - xbar, 2) / sxx);
    assert_true(fabs(p->pi_low - (fit - t * se_new)) < 1e-9);
    assert_false(p->extrapolation);
    /* x = 5 lies beyond the rows' largest x (3.5), and beyond every row's
       leverage. */
    const fit_prediction *far = &m->predictions[1].result;
    assert_true(far->extrapolation && far->beyond_leverage);
    assert_int_equal(m->predictions[1].point->n_outside, 1);
    /* Level d is present only in a dropped row: not estimable there; at an
       observed row (x = 3.5, g = b) the leverage is within the data's. */
    const analysis_model *n = &a->models[1];
    assert_false(n->predictions[0].result.estimable);
    assert_true(isnan(n->predictions[0].result.fit));
    assert_true(n->predictions[1].result.estimable);
    assert_false(n->predictions[1].result.beyond_leverage);
    analysis_free(a);
    pipeline_free(&run);
}

static void test_comparisons_check_nesting(void **state)
{
    (void)state;
    pipeline run;
    analysis *a = analyse(&run,
                          "fitproof: 1\ndata: {path: oneway.csv}\nmodels:\n"
                          "  - {id: x_only, response: y, terms: [x]}\n"
                          "  - {id: x_g, response: y, terms: [x, g]}\n"
                          "  - {id: x_z, response: y, terms: [x, z]}\n"
                          "  - {id: x_g_sum, response: y, terms: [x, g], coding: sum}\n"
                          "  - {id: g_only, response: y, terms: [g]}\n"
                          "  - {id: x_of_z, response: x, terms: [z]}\n"
                          "  - {id: x_weighted, response: y, terms: [x, g], weights: w}\n"
                          "compare:\n  - [x_only, x_g]\n  - [x_g, x_z]\n"
                          "  - [x_g, x_g_sum]\n  - [x_g, g_only]\n  - [g_only, x_g]\n"
                          "  - [x_only, x_of_z]\n  - [x_g, x_weighted]\n");
    const analysis_comparison *c = a->comparisons;
    assert_int_equal(a->n_comparisons, 7);
    assert_int_equal(c[0].result.nesting, FIT_NESTED);
    assert_true(c[0].result.df_num == 2 && isfinite(c[0].result.p));
    /* F by hand from the two fits' residual sums of squares. */
    const fit_result *small = a->models[0].fit, *big = a->models[1].fit;
    double f = ((small->rss - big->rss) / 2) / (big->rss / big->df_residual);
    assert_true(fabs(c[0].result.f - f) < 1e-12 * f);
    assert_int_equal(c[1].result.nesting, FIT_NOT_NESTED);
    assert_string_equal(a->models[1].design->coefs[c[1].result.outside_coef].label, "g = b");
    assert_false(c[1].result.reversed);
    assert_int_equal(c[2].result.nesting, FIT_SAME_SPACE);
    assert_true(isnan(c[2].result.f));
    /* g_only keeps the row of level d, which x_g drops. */
    assert_int_equal(c[3].result.nesting, FIT_DIFFERENT_ROWS);
    assert_int_equal(c[3].result.rows_only_big, 1);
    assert_int_equal(c[4].result.nesting, FIT_DIFFERENT_ROWS);
    assert_int_equal(c[5].result.nesting, FIT_DIFFERENT_RESPONSE);
    assert_int_equal(c[6].result.nesting, FIT_DIFFERENT_WEIGHTS);
    analysis_free(a);
    pipeline_free(&run);
}

/* The small model's columns must lie in the big one's; when the pair is
   written the wrong way round, that is said too. */
static void test_comparison_written_backwards(void **state)
{
    (void)state;
    pipeline run;
    analysis *a = analyse(&run,
                          "fitproof: 1\ndata: {path: oneway.csv}\nmodels:\n"
                          "  - {id: small, response: y, terms: [x]}\n"
                          "  - {id: big, response: y, terms: [x, z]}\n"
                          "compare:\n  - [big, small]\n");
    assert_int_equal(a->comparisons[0].result.nesting, FIT_NOT_NESTED);
    assert_true(a->comparisons[0].result.reversed);
    analysis_free(a);
    pipeline_free(&run);
}

/* A design large enough for the streaming algorithm's rows to be cut into
   chunks on threads: the same numbers as the dense algorithm (to rounding),
   and the same bits on every run. Invented data from a fixed linear
   congruential generator (Knuth's MMIX constants). */
static void test_streaming_chunks_agree_with_dense(void **state)
{
    (void)state;
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "y,x,z,g\n");
    uint64_t seed = 12345;
    for (int i = 0; i < 20000; i++) {
        double u[3];
        for (int k = 0; k < 3; k++) {
            u[k] = testkit_uniform(&seed);
        }
        double x = 10 * u[0], z = 5 + u[1];
        const char *g = i % 3 == 0 ? "a" : i % 3 == 1 ? "b" : "c";
        double y = 1 + 2 * x - 3 * z + (i % 3) + (u[2] - 0.5) * (1 + x);
        buf_printf(&csv, "%.6f,%.4f,%.4f,%s\n", y, x, z, g);
    }
    const char *yaml = "fitproof: 1\ndata: {path: data.csv}\nmodels:\n"
                       "  - {id: m, response: y, terms: [x, z, g, [x, g]]}\n";
    pipeline run;
    memset(&run, 0, sizeof run);
    fit_library_init();
    error_list_init(&run.errors);
    run.spec = spec_parse("spec.yaml", yaml, strlen(yaml), &run.errors);
    run.table = data_parse("data.csv", csv.data, csv.length, run.spec, &run.errors);
    buf_free(&csv);
    run.design = design_new(run.spec, &run.spec->models[0], run.table, &run.errors);
    assert_non_null(run.design);
    fit_result *dense = fit_new_using(run.design, 0.95, FIT_SOLVER_DENSE);
    fit_result *a = fit_new_using(run.design, 0.95, FIT_SOLVER_STREAMING);
    fit_result *b = fit_new_using(run.design, 0.95, FIT_SOLVER_STREAMING);
    for (size_t c = 0; c < run.design->n_coefs; c++) {
        const fit_coef *d = &dense->coefs[c], *s = &a->coefs[c];
        assert_true(fabs(s->estimate - d->estimate) <= 1e-12 * fabs(d->estimate));
        assert_true(fabs(s->std_error - d->std_error) <= 1e-12 * d->std_error);
        assert_true(fabs(s->robust[FIT_HC3].std_error - d->robust[FIT_HC3].std_error) <=
                    1e-12 * d->robust[FIT_HC3].std_error);
        assert_memory_equal(&a->coefs[c], &b->coefs[c], offsetof(fit_coef, alias));
    }
    assert_true(fabs(a->term_tests[3].f - dense->term_tests[3].f) <= 1e-9 * dense->term_tests[3].f);
    assert_true(fabs(a->max_position - dense->max_position) <= 1e-12 * dense->max_position);
    for (size_t i = 0; i < run.design->n_used; i += 997)
        assert_true(fabs(gsl_vector_get(a->leverage, i) - gsl_vector_get(dense->leverage, i)) <=
                    1e-12 * gsl_vector_get(dense->leverage, i));
    assert_memory_equal(a->residuals->data, b->residuals->data, run.design->n_used * sizeof(double));
    fit_free(dense);
    fit_free(a);
    fit_free(b);
    pipeline_free(&run);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_exact_collinearity_names_the_alias),
        cmocka_unit_test(test_level_only_in_dropped_rows),
        cmocka_unit_test(test_more_coefficients_than_rows),
        cmocka_unit_test(test_weighted_mean_and_likelihood),
        cmocka_unit_test(test_hc0_by_hand),
        cmocka_unit_test(test_one_way_anova_is_the_term_test),
        cmocka_unit_test(test_term_tests_respect_marginality),
        cmocka_unit_test(test_predictions_by_hand),
        cmocka_unit_test(test_comparisons_check_nesting),
        cmocka_unit_test(test_comparison_written_backwards),
        cmocka_unit_test(test_streaming_chunks_agree_with_dense),
    };
    return cmocka_run_group_tests_name("fit", tests, NULL, NULL);
}

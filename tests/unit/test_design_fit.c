/*
 * test_design_fit.c — the design stage (coding, labels, row selection) and
 * the fit stage on small cases whose answers follow by hand, plus rank
 * deficiency and the no-intercept R².
 */
#include "testkit.h"

#include <stdio.h>

static void run_on(pipeline *run, const char *terms_and_options)
{
    char yaml[1024];
    snprintf(yaml, sizeof yaml,
             "fitproof: 1\ndata: {path: collinear.csv}\nmodels:\n  - id: m\n"
             "    response: y\n%s",
             terms_and_options);
    pipeline_run(run, "tests/data/small/spec.yaml", yaml);
}

/* Treatment coding: k levels give k − 1 indicators named "column = level",
   the reference (first in byte order) left out; interactions multiply. */
static void test_treatment_coding_and_labels(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "    terms: [a, group, [a, group]]\n");
    assert_non_null(run.design);
    const char *labels[] = {"baseline value", "a", "group = q", "group = r",
                            "a × group = q", "a × group = r"};
    assert_int_equal(run.design->n_coefs, 6);
    for (size_t c = 0; c < 6; c++)
        assert_string_equal(run.design->coefs[c].label, labels[c]);
    /* Row 2 (a = 2, group q): a × [group = q] = 2, a × [group = r] = 0. */
    assert_true(gsl_matrix_get(run.design->x, 1, 4) == 2.0);
    assert_true(gsl_matrix_get(run.design->x, 1, 5) == 0.0);
    assert_true(gsl_matrix_get(run.design->x, 1, 2) == 1.0);
    pipeline_free(&run);
}

static void test_polynomial_columns(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "    terms: [{polynomial: a, degree: 3}]\n");
    assert_non_null(run.design);
    assert_int_equal(run.design->n_coefs, 4);
    assert_string_equal(run.design->coefs[3].label, "a^3");
    assert_int_equal(run.design->coefs[3].parts[0].power, 3);
    /* Row 5: a = 5, so a³ = 125. */
    assert_true(gsl_matrix_get(run.design->x, 4, 3) == 125.0);
    pipeline_free(&run);
}

/* c = a + b exactly: one of the three is aliased, named, not estimated, and
   the fit of the others goes on (their estimates match the fit without c). */
static void test_rank_deficient_design_is_reported_not_fatal(void **state)
{
    (void)state;
    pipeline full, reduced;
    run_on(&full, "    terms: [a, b, c]\n");
    run_on(&reduced, "    terms: [a, b]\n");
    assert_non_null(full.fit);
    assert_int_equal(full.fit->rank, 3);
    size_t aliased = 0;
    for (size_t c = 0; c < 4; c++) {
        const fit_coef *coef = &full.fit->coefs[c];
        aliased += !coef->estimable;
        assert_true(coef->estimable ? isfinite(coef->estimate) : isnan(coef->estimate));
    }
    assert_int_equal(aliased, 1);
    assert_true(full.fit->coefs[0].estimable); /* the intercept is not involved */
    /* Same fitted values and residual variance as the model without c. */
    assert_true(fabs(full.fit->rss - reduced.fit->rss) < 1e-12 * reduced.fit->rss);
    assert_true(full.fit->df_residual == reduced.fit->df_residual);
    pipeline_free(&full);
    pipeline_free(&reduced);
}

/* Without an intercept, R² is 1 − RSS / Σy² (uncentred). */
static void test_no_intercept_uses_uncentred_r_squared(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "    terms: [a]\n    intercept: false\n");
    assert_non_null(run.fit);
    assert_false(run.fit->centred);
    double y[] = {3.1, 4.9, 7.2, 8.8, 11.1, 13.2}, a[] = {1, 2, 3, 4, 5, 6};
    double sxy = 0, sxx = 0, syy = 0;
    for (int i = 0; i < 6; i++) {
        sxy += a[i] * y[i];
        sxx += a[i] * a[i];
        syy += y[i] * y[i];
    }
    double slope = sxy / sxx, rss = syy - slope * sxy;
    assert_true(fabs(run.fit->coefs[0].estimate - slope) < 1e-13);
    assert_true(fabs(run.fit->r_squared - (1 - rss / syy)) < 1e-13);
    assert_true(run.fit->df_model == 1 && run.fit->df_residual == 5);
    pipeline_free(&run);
}

/* Simple regression by hand: slope = Sxy / Sxx, intercept = ȳ − slope x̄. */
static void test_simple_regression_by_hand(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "    terms: [a]\n");
    assert_non_null(run.fit);
    double y[] = {3.1, 4.9, 7.2, 8.8, 11.1, 13.2};
    double ybar = 0;
    for (int i = 0; i < 6; i++)
        ybar += y[i] / 6;
    double sxy = 0, sxx = 17.5; /* Σ(a − 3.5)² */
    for (int i = 0; i < 6; i++)
        sxy += (i + 1 - 3.5) * (y[i] - ybar);
    assert_true(fabs(run.fit->coefs[1].estimate - sxy / sxx) < 1e-13);
    assert_true(fabs(run.fit->coefs[0].estimate - (ybar - 3.5 * sxy / sxx)) < 1e-13);
    pipeline_free(&run);
}

/* More coefficients than rows: not an error; the excess is not estimable. */
static void test_more_coefficients_than_rows(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "    terms: [{polynomial: a, degree: 5}, b, c]\n");
    assert_non_null(run.fit);
    assert_int_equal(run.fit->rank, 6);
    assert_true(run.fit->df_residual == 0);
    assert_true(isnan(run.fit->sigma));
    pipeline_free(&run);
}

static void test_unknown_term_column_is_located(void **state)
{
    (void)state;
    pipeline run;
    run_on(&run, "    terms: [a, grup]\n");
    assert_null(run.design);
    assert_string_equal(first_error(&run),
                        "tests/data/small/spec.yaml:6:16: error: column 'grup' is not in "
                        "the data file; did you mean 'group'?");
    pipeline_free(&run);
}

static void test_category_response_is_refused(void **state)
{
    (void)state;
    pipeline run;
    pipeline_run(&run, "tests/data/small/spec.yaml",
                 "fitproof: 1\ndata: {path: collinear.csv}\nmodels:\n"
                 "  - {id: m, response: group, terms: [a]}\n");
    assert_null(run.design);
    assert_string_equal(first_error(&run),
                        "tests/data/small/spec.yaml:4:23: error: the response 'group' must "
                        "be numeric, but the data make it a category; fix the non-numeric "
                        "values or choose a numeric column");
    pipeline_free(&run);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_treatment_coding_and_labels),
        cmocka_unit_test(test_polynomial_columns),
        cmocka_unit_test(test_rank_deficient_design_is_reported_not_fatal),
        cmocka_unit_test(test_no_intercept_uses_uncentred_r_squared),
        cmocka_unit_test(test_simple_regression_by_hand),
        cmocka_unit_test(test_more_coefficients_than_rows),
        cmocka_unit_test(test_unknown_term_column_is_located),
        cmocka_unit_test(test_category_response_is_refused),
    };
    return cmocka_run_group_tests_name("design and fit", tests, NULL, NULL);
}

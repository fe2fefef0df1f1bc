/*
 * test_wide.c — term tests of a wide design (a 300-level category and a
 * numeric column, 301 coefficients), classical in order and given the
 * others and HC3 Wald in order, against statsmodels 0.13.5
 * (tests/reference/wide_statsmodels.py, run by hand; its output
 * tests/reference/wide.expected.json is committed). Agreement required:
 * relative 1e-9 on every F, absolute-or-relative 1e-9 on p-values.
 */
#include "testkit.h"

#include <jansson.h>
#include <stdio.h>
#include <stdlib.h>

static const double TOLERANCE = 1e-9;
static double worst = 0.0;

static void close_to(double computed, double expected, const char *what)
{
    double relative = fabs(computed - expected) / fmax(fabs(expected), 1e-12);
    if (fabs(expected) < 1e-12)
        relative = fabs(computed - expected);
    if (!(relative <= TOLERANCE))
        fprintf(stderr, "%s: computed %.17g, statsmodels %.17g\n", what, computed,
                expected);
    worst = fmax(worst, relative);
    assert_true(relative <= TOLERANCE);
}

static void check_list(const fit_term_test *tests, const json_t *want, const char *what)
{
    char label[96];
    for (size_t t = 0; t < json_array_size(want); t++) {
        const json_t *w = json_array_get(want, t);
        snprintf(label, sizeof label, "%s F of term %zu", what, t + 1);
        close_to(tests[t].f, json_real_value(json_object_get(w, "f")), label);
        snprintf(label, sizeof label, "%s p of term %zu", what, t + 1);
        close_to(tests[t].p, json_real_value(json_object_get(w, "p")), label);
        assert_true(tests[t].df == (double)json_integer_value(json_object_get(w, "df")));
    }
}

static void run_wide(const char *errors, pipeline *run)
{
    char yaml[256];
    snprintf(yaml, sizeof yaml,
             "fitproof: 1\n"
             "data: {path: wide.csv}\n"
             "models:\n"
             "  - id: wide\n    response: y\n    terms: [site, x]\n"
             "    standard_errors: %s\n",
             errors);
    pipeline_run(run, "tests/data/wide/spec.yaml", yaml);
    assert_non_null(run->fit);
    assert_int_equal(run->fit->n_coefs, 301);
}

static json_t *expected(void)
{
    json_error_t error;
    json_t *root = json_load_file("tests/reference/wide.expected.json", 0, &error);
    assert_non_null(root);
    return root;
}

static void test_classical_term_tests_against_statsmodels(void **state)
{
    (void)state;
    json_t *root = expected();
    pipeline run;
    run_wide("classical", &run);
    check_list(run.fit->sequential_tests, json_object_get(root, "sequential"),
               "classical in order");
    check_list(run.fit->term_tests, json_object_get(root, "marginal"), "classical given others");
    pipeline_free(&run);
    json_decref(root);
    print_message("  measured: wide design classical term tests vs statsmodels, worst "
                  "relative difference %.1e\n",
                  worst);
}

static void test_hc3_term_tests_against_statsmodels(void **state)
{
    (void)state;
    json_t *root = expected();
    pipeline run;
    run_wide("hc3", &run);
    check_list(run.fit->wald_sequential_tests, json_object_get(root, "hc3_sequential"),
               "HC3 in order");
    pipeline_free(&run);
    json_decref(root);
    print_message("  measured: wide design HC3 term tests vs statsmodels, worst relative "
                  "difference %.1e\n",
                  worst);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_classical_term_tests_against_statsmodels),
        cmocka_unit_test(test_hc3_term_tests_against_statsmodels),
    };
    return cmocka_run_group_tests_name("wide", tests, NULL, NULL);
}

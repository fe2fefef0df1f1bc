/*
 * test_nist.c — the least-squares engine against the NIST StRD linear
 * regression datasets (NIST StRD, Statistical Reference Datasets, Linear
 * Least Squares Regression: Norris.dat, Pontius.dat, NoInt1.dat,
 * NoInt2.dat, Longley.dat, Wampler1-5.dat, Filip.dat), whose certified
 * values were computed by NIST in multiple-precision arithmetic.
 * Data and certified values: tests/data/nist/ (see its README).
 *
 * Agreement is the log relative error (LRE, digits in common). Where a
 * certified value is 0 (Wampler1 and 2 fit exactly) the LRE is taken on the
 * absolute error, so "digits" there means "below 10^-digits".
 */
#include "testkit.h"

#include <jansson.h>
#include <stdio.h>

typedef struct {
    const char *name;
    int degree;      /* polynomial degree in x; 0 for the linear sets */
    int predictors;  /* x1..xk for linear sets */
    bool intercept;
    double min_digits; /* for both algorithms: dense and streaming (large designs),
                          whose covariance is R₀⁻¹G⁻¹R₀⁻ᵀ of the corrected triangle
                          (it was R₀⁻¹G⁻²R₀⁻ᵀ until December 2026, 8.3 digits on
                          Filip's standard errors) */
} nist_case;

/* Reads a certified value; NIST writes Fortran-style exponents (0.1E-03). */
static double certified(json_t *object, const char *key)
{
    const char *text = json_string_value(json_object_get(object, key));
    assert_non_null(text);
    return strtod(text, NULL);
}

static void build_yaml(const nist_case *c, char *yaml, size_t size)
{
    int used = snprintf(yaml, size,
                        "fitproof: 1\ndata:\n  path: %s.csv\nmodels:\n  - id: nist\n"
                        "    response: y\n    intercept: %s\n    terms: ",
                        c->name, c->intercept ? "true" : "false");
    if (c->degree > 0) {
        snprintf(yaml + used, size - (size_t)used, "[{polynomial: x, degree: %d}]\n",
                 c->degree);
        return;
    }
    used += snprintf(yaml + used, size - (size_t)used, "[");
    for (int k = 1; k <= c->predictors; k++)
        used += snprintf(yaml + used, size - (size_t)used, "%s%s", k > 1 ? ", " : "",
                         c->predictors == 1 ? "x" : (char[]){'x', (char)('0' + k), 0});
    snprintf(yaml + used, size - (size_t)used, "]\n");
}

static double min_digits_of(const nist_case *c, fit_solver solver, bool print)
{
    char path[256], yaml[512];
    snprintf(path, sizeof path, "tests/data/nist/%s.certified.json", c->name);
    json_error_t error;
    json_t *root = json_load_file(path, 0, &error);
    assert_non_null(root);
    build_yaml(c, yaml, sizeof yaml);
    pipeline run;
    pipeline_run(&run, "tests/data/nist/spec.yaml", yaml);
    if (!run.fit)
        fprintf(stderr, "%s\n", first_error(&run));
    assert_non_null(run.fit);

    if (solver != FIT_SOLVER_AUTO) {
        fit_free(run.fit);
        run.fit = fit_new_using(run.design, 0.95, solver);
    }
    json_t *parameters = json_object_get(root, "parameters");
    assert_int_equal(json_array_size(parameters), run.fit->n_coefs);
    double worst_estimate = 15, worst_se = 15;
    for (size_t j = 0; j < run.fit->n_coefs; j++) {
        json_t *parameter = json_array_get(parameters, j);
        const fit_coef *coef = &run.fit->coefs[j];
        assert_true(coef->estimable);
        double e = log_relative_error(coef->estimate, certified(parameter, "estimate"));
        double s = log_relative_error(coef->std_error, certified(parameter, "std_error"));
        worst_estimate = fmin(worst_estimate, e);
        worst_se = fmin(worst_se, s);
    }
    double sd = log_relative_error(run.fit->sigma, certified(root, "residual_sd"));
    double r2 = log_relative_error(run.fit->r_squared, certified(root, "r_squared"));
    if (print)
        fprintf(stderr, "  measured: NIST %-9s %-9s digits: estimates %5.2f  std errors %5.2f  "
                        "residual sd %5.2f  R² %5.2f\n",
                c->name, solver == FIT_SOLVER_STREAMING ? "streaming" : "dense",
                worst_estimate, worst_se, sd, r2);
    pipeline_free(&run);
    json_decref(root);
    return fmin(fmin(worst_estimate, worst_se), fmin(sd, r2));
}

static const nist_case cases[] = {
    {"norris", 0, 1, true, 12},   {"pontius", 2, 0, true, 10},  {"noint1", 0, 1, false, 12},
    {"noint2", 0, 1, false, 12},  {"longley", 0, 6, true, 10},  {"wampler1", 5, 0, true, 10},
    {"wampler2", 5, 0, true, 10}, {"wampler3", 5, 0, true, 10}, {"wampler4", 5, 0, true, 10},
    {"wampler5", 5, 0, true, 10}, {"filip", 10, 0, true, 10},
};

static void test_dataset(void **state)
{
    const nist_case *c = *state;
    double digits = min_digits_of(c, FIT_SOLVER_AUTO, true);
    double streaming = min_digits_of(c, FIT_SOLVER_STREAMING, true);
    assert_true(streaming >= c->min_digits);
    if (digits < c->min_digits)
        fprintf(stderr, "  %s: %.2f digits, %.0f required\n", c->name, digits,
                c->min_digits);
    assert_true(digits >= c->min_digits);
}

int main(void)
{
    struct CMUnitTest tests[sizeof cases / sizeof cases[0]];
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        tests[i] = (struct CMUnitTest){cases[i].name, test_dataset, NULL, NULL,
                                       (void *)&cases[i]};
    }
    return cmocka_run_group_tests_name("nist", tests, NULL, NULL);
}

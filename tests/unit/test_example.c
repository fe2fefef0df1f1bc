/*
 * test_example.c — the bundled cylinders example against reference values
 * computed once with statsmodels (Debian's python3-statsmodels 0.13.5, OLS)
 * by tests/reference/cylinders_statsmodels.py; the library versions are
 * recorded in tests/reference/cylinders.expected.json beside the values.
 */
#include "testkit.h"

#include <jansson.h>
#include <stdio.h>
#include <stdlib.h>

/* statsmodels computes in double precision with a different algorithm
   (pinv / QR in LAPACK), so agreement is to rounding of about 1e-12 on this
   well-conditioned design; 1e-9 leaves margin without hiding real errors. */
static const double TOLERANCE = 1e-9;

static char *read_text(const char *path, size_t *length)
{
    const char *why;
    char *text = file_read_all(path, length, &why);
    assert_non_null(text);
    return text;
}

static void assert_close(double computed, double expected, const char *what)
{
    double scale = fabs(expected) > 0 ? fabs(expected) : 1.0;
    if (fabs(computed - expected) > TOLERANCE * scale)
        fprintf(stderr, "%s: computed %.17g, statsmodels %.17g\n", what, computed, expected);
    assert_true(fabs(computed - expected) <= TOLERANCE * scale);
}

static double field(json_t *object, const char *key)
{
    json_t *value = json_object_get(object, key);
    assert_non_null(value);
    return json_number_value(value);
}

static void test_cylinders_against_statsmodels(void **state)
{
    (void)state;
    size_t length;
    char *yaml = read_text("examples/cylinders/cylinders.yaml", &length);
    pipeline run;
    pipeline_run(&run, "examples/cylinders/cylinders.yaml", yaml);
    free(yaml);
    assert_non_null(run.fit);
    json_error_t error;
    json_t *expected = json_load_file("tests/reference/cylinders.expected.json", 0, &error);
    assert_non_null(expected);

    assert_int_equal(run.design->n_used, json_integer_value(json_object_get(expected, "n_used")));
    assert_int_equal(run.design->n_dropped,
                     json_integer_value(json_object_get(expected, "n_dropped")));
    json_t *coefficients = json_object_get(expected, "coefficients");
    assert_int_equal(json_array_size(coefficients), run.design->n_coefs);
    for (size_t c = 0; c < run.design->n_coefs; c++) {
        json_t *want = json_array_get(coefficients, c);
        const fit_coef *got = &run.fit->coefs[c];
        assert_string_equal(run.design->coefs[c].label,
                            json_string_value(json_object_get(want, "label")));
        assert_close(got->estimate, field(want, "estimate"), "estimate");
        assert_close(got->std_error, field(want, "std_error"), "std_error");
        assert_close(got->t, field(want, "t"), "t");
        assert_close(got->p, field(want, "p"), "p");
        assert_close(got->ci_low, field(want, "ci_low"), "ci_low");
        assert_close(got->ci_high, field(want, "ci_high"), "ci_high");
    }
    json_t *fit = json_object_get(expected, "fit");
    const fit_result *f = run.fit;
    assert_close(f->r_squared, field(fit, "r_squared"), "r_squared");
    assert_close(f->adj_r_squared, field(fit, "adj_r_squared"), "adj_r_squared");
    assert_close(f->sigma, field(fit, "sigma"), "sigma");
    assert_close(f->df_model, field(fit, "df_model"), "df_model");
    assert_close(f->df_residual, field(fit, "df_residual"), "df_residual");
    assert_close(f->f, field(fit, "f"), "f");
    assert_close(f->f_p, field(fit, "f_p"), "f_p");
    assert_close(f->log_likelihood, field(fit, "log_likelihood"), "log_likelihood");
    /* statsmodels does not count the error variance as a parameter; we do,
       which adds 2 to AIC and log(n) to BIC. */
    assert_close(f->aic, field(fit, "aic_statsmodels") + 2.0, "aic");
    assert_close(f->bic, field(fit, "bic_statsmodels") + log((double)f->n), "bic");
    json_decref(expected);
    pipeline_free(&run);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_cylinders_against_statsmodels),
    };
    return cmocka_run_group_tests_name("example", tests, NULL, NULL);
}

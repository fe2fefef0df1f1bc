/*
 * test_robust.c — tests that follow the covariance: standard errors, term
 * tests (given the others and in order), the overall test and a nested
 * comparison as Wald tests under HC0–HC3 and Newey–West (HAC) covariances,
 * against statsmodels 0.13.5 (tests/reference/robust_statsmodels.py, run
 * by hand; its output tests/reference/robust.expected.json is committed).
 * Agreement required: 9 significant digits (relative 1e-9) on every
 * statistic, 1e-9 absolute-or-relative on p-values.
 */
#define _XOPEN_SOURCE 700
#include "testkit.h"

#include <jansson.h>
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "../../src/analysis/analysis.h"
#include "../../src/fit/internal.h"
#include "../../src/narrate/narrate.h"
#include "../../src/render/render.h"

static const double TOLERANCE = 1e-9;
static double worst = 0.0;

static void close_to(double computed, double expected, const char *what)
{
    double scale = fmax(fabs(expected), 1e-300);
    double relative = fabs(computed - expected) / scale;
    if (fabs(expected) < 1e-12)
        relative = fabs(computed - expected) / 1e-12 * 1e-12;
    if (!(relative <= TOLERANCE))
        fprintf(stderr, "%s: computed %.17g, statsmodels %.17g\n", what, computed,
                expected);
    worst = fmax(worst, relative);
    assert_true(relative <= TOLERANCE);
}

static double number(const json_t *o, const char *key)
{
    return json_real_value(json_object_get(o, key));
}

static const char *const SPEC_HEAD = "fitproof: 1\n"
                                     "data: {path: robust.csv}\n"
                                     "models:\n";

static void check_kind(const char *kind_name, const char *errors, const json_t *want)
{
    char yaml[512];
    snprintf(yaml, sizeof yaml,
             "%s  - id: m\n    response: y\n    terms: [x, z, g, [x, g]]\n"
             "    order_by: t\n    standard_errors: %s\n%s",
             SPEC_HEAD, errors, strcmp(errors, "hac") == 0 ? "    lags: 3\n" : "");
    pipeline run;
    pipeline_run(&run, "tests/data/robust/spec.yaml", yaml);
    assert_non_null(run.fit);
    const fit_result *f = run.fit;
    char what[128];
    json_t *se = json_object_get(want, "std_errors");
    for (size_t c = 0; c < f->n_coefs; c++) {
        fit_inference lead = fit_lead_inference(f, c);
        snprintf(what, sizeof what, "%s standard error of %s", kind_name,
                 run.design->coefs[c].label);
        close_to(lead.std_error, json_real_value(json_array_get(se, c)), what);
        snprintf(what, sizeof what, "%s p of %s", kind_name, run.design->coefs[c].label);
        close_to(lead.p, json_real_value(json_array_get(json_object_get(want, "p"), c)),
                 what);
    }
    const char *lists[] = {"marginal", "sequential"};
    const fit_term_test *tests[] = {f->wald_term_tests, f->wald_sequential_tests};
    for (int l = 0; l < 2; l++) {
        json_t *list = json_object_get(want, lists[l]);
        for (size_t t = 0; t < run.design->n_terms; t++) {
            json_t *w = json_array_get(list, t);
            snprintf(what, sizeof what, "%s %s F of %s", kind_name, lists[l],
                     run.design->terms[t].label);
            close_to(tests[l][t].f, number(w, "f"), what);
            close_to(tests[l][t].p, number(w, "p"), what);
            assert_true(tests[l][t].df == number(w, "df_num"));
        }
    }
    json_t *overall = json_object_get(want, "overall");
    close_to(f->wald_f, number(overall, "f"), "overall Wald F");
    close_to(f->wald_f_p, number(overall, "p"), "overall Wald p");
    assert_true(f->wald_df_den == number(overall, "df_den"));
    /* The comparison of [x, z] with the full model: Wald test of g, x × g. */
    pipeline small;
    snprintf(yaml, sizeof yaml, "%s  - {id: s, response: y, terms: [x, z]}\n", SPEC_HEAD);
    pipeline_run(&small, "tests/data/robust/spec.yaml", yaml);
    assert_non_null(small.fit);
    fit_comparison cmp;
    fit_compare(small.design, small.fit, run.design, f, &cmp);
    assert_int_equal(cmp.nesting, FIT_NESTED);
    json_t *compare = json_object_get(want, "compare");
    close_to(cmp.wald.f, number(compare, "f"), "comparison Wald F");
    close_to(cmp.wald.p, number(compare, "p"), "comparison Wald p");
    pipeline_free(&small);
    /* A prediction under the robust covariance. */
    snprintf(yaml, sizeof yaml,
             "%s  - id: m\n    response: y\n    terms: [x, z, g, [x, g]]\n"
             "    order_by: t\n    standard_errors: %s\n%s"
             "predict:\n  - model: m\n    rows: [{x: 5, z: 5, g: b}]\n",
             SPEC_HEAD, errors, strcmp(errors, "hac") == 0 ? "    lags: 3\n" : "");
    pipeline with_point;
    pipeline_load(&with_point, "tests/data/robust/spec.yaml", yaml);
    assert_non_null(with_point.table);
    analysis *a = analysis_new(with_point.spec, with_point.table, &with_point.errors);
    assert_non_null(a);
    json_t *prediction = json_object_get(want, "prediction");
    const fit_prediction *pr = &a->models[0].predictions[0].result;
    close_to(pr->fit, number(prediction, "fit"), "prediction");
    close_to(pr->se_fit, number(prediction, "se_fit"), "prediction se of the mean");
    close_to(pr->pi_low, number(prediction, "pi_low"), "prediction interval, low");
    close_to(pr->pi_high, number(prediction, "pi_high"), "prediction interval, high");
    analysis_free(a);
    pipeline_free(&with_point);
    pipeline_free(&run);
}

static json_t *expected(void)
{
    json_error_t error;
    json_t *root = json_load_file("tests/reference/robust.expected.json", 0, &error);
    assert_non_null(root);
    return root;
}

static void test_hc_kinds_against_statsmodels(void **state)
{
    (void)state;
    json_t *root = expected();
    json_t *kinds = json_object_get(root, "kinds");
    const char *names[] = {"HC0", "HC1", "HC2", "HC3"};
    const char *spec[] = {"hc0", "hc1", "hc2", "hc3"};
    for (int k = 0; k < 4; k++)
        check_kind(names[k], spec[k], json_object_get(kinds, names[k]));
    json_decref(root);
    print_message("  measured: robust Wald tests HC0-HC3 vs statsmodels, worst relative "
                  "difference %.1e\n",
                  worst);
}

static void test_newey_west_against_statsmodels(void **state)
{
    (void)state;
    json_t *root = expected();
    check_kind("HAC", "hac", json_object_get(json_object_get(root, "kinds"), "HAC"));
    /* The lag rule ⌊4 (n/100)^(2/9)⌋ at n = 120 (Newey & West 1994). */
    assert_int_equal(fit_hac_rule(120),
                     json_integer_value(json_object_get(root, "lag_rule")));
    json_decref(root);
    print_message("  measured: Newey-West errors and Wald tests vs statsmodels, worst "
                  "relative difference %.1e\n",
                  worst);
}

/* From FIT_HAC_SPLIT_ROWS rows on, the Newey–West pass runs as two
   stretches on two cores. Its standard errors must be those of the
   textbook sum (Newey & West 1987, Econometrica 55:703–708), computed
   here directly in long double on the same rows, with no small-sample
   factor:
     Ω = Γ₀ + Σ_{l=1}^{L} (1 − l/(L + 1)) (Γ_l + Γ_lᵀ), Γ_l = Σ_t s_t s_{t−l}ᵀ,
     s_t = e_t x_t, V = (XᵀX)⁻¹ Ω (XᵀX)⁻¹,
   on seeded rows y = 1 + 2x + u with AR(1) errors u_t = 0.5 u_{t−1} + ε_t. */
static void test_newey_west_two_stretches(void **state)
{
    (void)state;
    size_t n = FIT_HAC_SPLIT_ROWS + 37555;
    char folder[] = "/tmp/fitproof-hac-XXXXXX";
    assert_non_null(mkdtemp(folder));
    char csv[64], spec_path[64];
    snprintf(csv, sizeof csv, "%s/rows.csv", folder);
    snprintf(spec_path, sizeof spec_path, "%s/spec.yaml", folder);
    double *x = malloc(n * sizeof *x), *y = malloc(n * sizeof *y);
    FILE *out = fopen(csv, "w");
    assert_non_null(out);
    fputs("t,x,y\n", out);
    uint64_t state_bits = 20261204;
    double u = 0.0;
    for (size_t t = 0; t < n; t++) {
        double draw[2];
        for (int k = 0; k < 2; k++) {
            draw[k] = testkit_uniform(&state_bits);
        }
        u = 0.5 * u + (draw[1] - 0.5);
        x[t] = 10.0 * draw[0];
        y[t] = 1.0 + 2.0 * x[t] + u;
        fprintf(out, "%zu,%.17g,%.17g\n", t + 1, x[t], y[t]);
    }
    fclose(out);
    pipeline run;
    pipeline_run(&run, spec_path,
                 "fitproof: 1\ndata: {path: rows.csv}\nmodels:\n"
                 "  - {id: m, response: y, terms: [x], order_by: t}\n");
    assert_non_null(run.fit);
    /* OLS by the normal equations, then the scores' lagged products. */
    long double sx = 0, sxx = 0, sy = 0, sxy = 0, nn = (long double)n;
    for (size_t t = 0; t < n; t++) {
        sx += x[t];
        sxx += (long double)x[t] * x[t];
        sy += y[t];
        sxy += (long double)x[t] * y[t];
    }
    long double det = nn * sxx - sx * sx;
    long double a[4] = {sxx / det, -sx / det, -sx / det, nn / det}; /* (XᵀX)⁻¹ */
    long double b1 = (nn * sxy - sx * sy) / det, b0 = (sy - b1 * sx) / nn;
    size_t lags = fit_hac_rule(n);
    assert_int_equal(run.fit->hac_lags, lags);
    long double omega[4] = {0, 0, 0, 0};
    for (size_t l = 0; l <= lags; l++) {
        long double gamma[4] = {0, 0, 0, 0};
        for (size_t t = l; t < n; t++) {
            long double e = y[t] - b0 - b1 * x[t], e_before = y[t - l] - b0 - b1 * x[t - l];
            long double s[2] = {e, e * x[t]}, before[2] = {e_before, e_before * x[t - l]};
            for (int i = 0; i < 2; i++)
                for (int j = 0; j < 2; j++)
                    gamma[i * 2 + j] += s[i] * before[j];
        }
        long double weight = l == 0 ? 1.0L : 1.0L - (long double)l / (long double)(lags + 1);
        for (int i = 0; i < 2; i++)
            for (int j = 0; j < 2; j++)
                omega[i * 2 + j] += weight * (l == 0 ? gamma[i * 2 + j]
                                                     : gamma[i * 2 + j] + gamma[j * 2 + i]);
    }
    double worst_split = 0.0;
    for (int c = 0; c < 2; c++) {
        long double v = 0;
        for (int i = 0; i < 2; i++)
            for (int j = 0; j < 2; j++)
                v += a[c * 2 + i] * omega[i * 2 + j] * a[j * 2 + c];
        size_t k = run.design->coefs[0].n_parts == 0 ? (size_t)c : (size_t)(1 - c);
        double want = (double)sqrtl(v), got = run.fit->coefs[k].hac.std_error;
        worst_split = fmax(worst_split, fabs(got - want) / want);
    }
    print_message("  measured: Newey-West errors on %zu rows (two stretches) vs the "
                  "textbook sum, worst relative difference %.1e\n",
                  n, worst_split);
    assert_true(worst_split <= 1e-10);
    pipeline_free(&run);
    free(x);
    free(y);
    unlink(csv);
    rmdir(folder);
}

/* standard_errors: hac needs order_by; lags needs hac. */
static void test_hac_spec_errors(void **state)
{
    (void)state;
    pipeline run;
    char yaml[512];
    snprintf(yaml, sizeof yaml,
             "%s  - {id: m, response: y, terms: [x], standard_errors: hac}\n", SPEC_HEAD);
    pipeline_load(&run, "tests/data/robust/spec.yaml", yaml);
    assert_null(run.spec);
    assert_string_equal(
        first_error(&run),
        "tests/data/robust/spec.yaml:4:55: error: standard_errors: hac needs "
        "the order of the rows; add order_by: COLUMN to the model");
    pipeline_free(&run);
    snprintf(yaml, sizeof yaml, "%s  - {id: m, response: y, terms: [x], lags: 2}\n",
             SPEC_HEAD);
    pipeline_load(&run, "tests/data/robust/spec.yaml", yaml);
    assert_null(run.spec);
    assert_non_null(strstr(first_error(&run), "lags sets the Newey–West standard errors"));
    pipeline_free(&run);
}

typedef struct {
    pipeline run;
    analysis *a;
    char *md; /* Markdown escapes removed */
} report_run;

static void report_of(report_run *r, const char *model_yaml)
{
    char yaml[512];
    snprintf(yaml, sizeof yaml, "%s%s", SPEC_HEAD, model_yaml);
    pipeline_load(&r->run, "tests/data/robust/spec.yaml", yaml);
    assert_non_null(r->run.table);
    r->a = analysis_new(r->run.spec, r->run.table, &r->run.errors);
    assert_non_null(r->a);
    doc_node *doc = narrate_report(r->a, NULL, &r->run.errors);
    buf md, plain;
    buf_init(&md);
    buf_init(&plain);
    render_markdown(doc, &md);
    for (const char *p = md.data; *p; p++)
        if (*p != '\\')
            buf_putc(&plain, *p);
    buf_free(&md);
    doc_free(doc);
    r->md = buf_detach(&plain);
}

static void report_free(report_run *r)
{
    free(r->md);
    analysis_free(r->a);
    pipeline_free(&r->run);
}

/* The report says which covariance every p-value uses. */
static void test_report_names_the_covariance(void **state)
{
    (void)state;
    report_run r;
    report_of(&r,
              "  - {id: m, response: y, terms: [x, z, g, [x, g]], standard_errors: hc3}\n");
    const char *md = r.md;
    assert_non_null(strstr(md, "| Coefficient | Estimate | Standard error (HC3) |"));
    assert_non_null(strstr(md, "Every p-value of this model uses that covariance"));
    assert_non_null(
        strstr(md, "each test below is a Wald F test of the term's coefficients"));
    assert_non_null(strstr(md,
                           "the conclusion rests instead on the Wald test of every term "
                           "together under the HC3 covariance"));
    report_free(&r);
}

/* Classical errors with correlated errors along t (AR(1), rho 0.5): the
   independence verdict is violated, and every table and sentence with a
   p-value carries the caveat with the Newey–West figures beside. */
static void test_caveat_when_independence_is_violated(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "  - {id: m, response: y, terms: [x, z, g, [x, g]], order_by: t}\n");
    const char *md = r.md;
    const analysis *a = r.a;
    assert_int_equal(a->models[0].diagnostics->verdicts[DIAG_INDEPENDENCE].verdict,
                     DIAG_VIOLATED);
    assert_int_equal(a->models[0].caveat_kind, SPEC_ERRORS_HAC);
    assert_non_null(strstr(md, "**Caveat.** The independence check finds a violation"));
    assert_non_null(strstr(md, "| Standard error (Newey–West) | p-value (Newey–West) |"));
    assert_non_null(strstr(md, "Caveat: the intervals and p-values in these sentences are "
                               "the classical ones"));
    assert_non_null(
        strstr(md, "under the Newey–West covariance the Wald test of every term"));
    assert_non_null(strstr(md, "| Wald F given the others |"));
    /* The remedy offered is the one no other test contradicts: no new
       terms while the linearity test finds no departure. */
    if (a->models[0].diagnostics->verdicts[DIAG_LINEARITY].verdict == DIAG_HOLDS)
        assert_null(strstr(md, "add the missing shape"));
    report_free(&r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_hc_kinds_against_statsmodels),
        cmocka_unit_test(test_newey_west_against_statsmodels),
        cmocka_unit_test(test_newey_west_two_stretches),
        cmocka_unit_test(test_hac_spec_errors),
        cmocka_unit_test(test_report_names_the_covariance),
        cmocka_unit_test(test_caveat_when_independence_is_violated),
    };
    return cmocka_run_group_tests_name("robust", tests, NULL, NULL);
}

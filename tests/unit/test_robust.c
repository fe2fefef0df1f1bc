/*
 * test_robust.c — tests that follow the covariance: standard errors, term
 * tests (given the others and in order), the overall test and a nested
 * comparison as Wald tests under HC0–HC3 and Newey–West (HAC) covariances,
 * against statsmodels 0.13.5 (tests/reference/robust_statsmodels.py, run
 * by hand; its output tests/reference/robust.expected.json is committed).
 * Agreement required: 9 significant digits (relative 1e-9) on every
 * statistic, 1e-9 absolute-or-relative on p-values.
 */
#include "testkit.h"

#include <jansson.h>
#include <stdio.h>
#include <stdlib.h>

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
        fprintf(stderr, "%s: computed %.17g, statsmodels %.17g\n", what, computed, expected);
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
        close_to(lead.p, json_real_value(json_array_get(json_object_get(want, "p"), c)), what);
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
                  "difference %.1e\n", worst);
}

static void test_newey_west_against_statsmodels(void **state)
{
    (void)state;
    json_t *root = expected();
    check_kind("HAC", "hac", json_object_get(json_object_get(root, "kinds"), "HAC"));
    /* The lag rule ⌊4 (n/100)^(2/9)⌋ at n = 120 (Newey & West 1994). */
    assert_int_equal(fit_hac_rule(120), json_integer_value(json_object_get(root, "lag_rule")));
    json_decref(root);
    print_message("  measured: Newey-West errors and Wald tests vs statsmodels, worst "
                  "relative difference %.1e\n", worst);
}

/* standard_errors: hac needs order_by; lags needs hac. */
static void test_hac_spec_errors(void **state)
{
    (void)state;
    pipeline run;
    char yaml[512];
    snprintf(yaml, sizeof yaml, "%s  - {id: m, response: y, terms: [x], standard_errors: hac}\n",
             SPEC_HEAD);
    pipeline_load(&run, "tests/data/robust/spec.yaml", yaml);
    assert_null(run.spec);
    assert_string_equal(first_error(&run),
                        "tests/data/robust/spec.yaml:4:55: error: standard_errors: hac needs "
                        "the order of the rows; add order_by: COLUMN to the model");
    pipeline_free(&run);
    snprintf(yaml, sizeof yaml, "%s  - {id: m, response: y, terms: [x], lags: 2}\n", SPEC_HEAD);
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
    report_of(&r, "  - {id: m, response: y, terms: [x, z, g, [x, g]], standard_errors: hc3}\n");
    const char *md = r.md;
    assert_non_null(strstr(md, "| Coefficient | Estimate | Standard error (HC3) |"));
    assert_non_null(strstr(md, "Every p-value of this model uses that covariance"));
    assert_non_null(strstr(md, "each test below is a Wald F test of the term's coefficients"));
    assert_non_null(strstr(md, "the conclusion rests instead on the Wald test of every term "
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
    assert_non_null(strstr(md, "under the Newey–West covariance the Wald test of every term"));
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
        cmocka_unit_test(test_hac_spec_errors),
        cmocka_unit_test(test_report_names_the_covariance),
        cmocka_unit_test(test_caveat_when_independence_is_violated),
    };
    return cmocka_run_group_tests_name("robust", tests, NULL, NULL);
}

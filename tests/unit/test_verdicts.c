/*
 * test_verdicts.c — the words of every assumption verdict, at small and at
 * large n: no sentence may claim that an assumption holds; every verdict
 * prints the size of the departure beside its threshold and the
 * threshold's source (or "common practice, no source"); a test that finds
 * nothing at small n says it has little power, and at large n a detected
 * departure smaller than its threshold is judged by its size. The data are
 * made by tests/data/verdicts/generate.py (seeded); the Shapiro–Wilk
 * p-values and skewness quoted below are scipy's (1.10, scipy.stats.shapiro
 * and skew on the statsmodels OLS residuals), run by hand.
 */
#include "testkit.h"

#include <stdio.h>
#include <stdlib.h>

#include "../../src/narrate/narrate.h"
#include "../../src/render/render.h"

typedef struct {
    pipeline run;
    analysis *a;
    char *markdown; /* Markdown escapes removed */
} report_run;

static void report_of(report_run *r, const char *yaml)
{
    pipeline_run(&r->run, "tests/data/verdicts/spec.yaml", yaml);
    assert_non_null(r->run.fit);
    r->a = analysis_new(r->run.spec, r->run.table, &r->run.errors);
    assert_non_null(r->a);
    doc_node *doc = narrate_report(r->a, NULL, &r->run.errors);
    assert_non_null(doc);
    buf out, plain;
    buf_init(&out);
    buf_init(&plain);
    render_markdown(doc, &out);
    for (const char *p = out.data; *p; p++)
        if (*p != '\\')
            buf_putc(&plain, *p);
    r->markdown = buf_detach(&plain);
    buf_free(&out);
    doc_free(doc);
}

static void report_free(report_run *r)
{
    free(r->markdown);
    analysis_free(r->a);
    pipeline_free(&r->run);
}

/* The verdict paragraph of one assumption ("- **Normal residuals: …"). */
static char *verdict_of(const report_run *r, const char *title)
{
    buf key;
    buf_init(&key);
    buf_printf(&key, "- **%s: ", title);
    const char *start = strstr(r->markdown, key.data);
    if (!start)
        fprintf(stderr, "no verdict for %s\n", title);
    assert_non_null(start);
    const char *end = strchr(start, '\n');
    buf_free(&key);
    return xstrndup(start, (size_t)(end - start));
}

static void expect_in(const char *text, const char *part)
{
    if (!strstr(text, part))
        fprintf(stderr, "expected \"%s\" in:\n%s\n", part, text);
    assert_non_null(strstr(text, part));
}

static void expect_not_in(const char *text, const char *part)
{
    if (strstr(text, part))
        fprintf(stderr, "did not expect \"%s\" in:\n%s\n", part, text);
    assert_null(strstr(text, part));
}

/* Words that would claim an assumption is true. */
static void claims_nothing(const char *text)
{
    static const char *const claims[] = {" holds", "is satisfied", "is met", "are normal",
                                         "no departure that matters", "is constant",
                                         "are independent", "is linear"};
    for (size_t k = 0; k < sizeof claims / sizeof claims[0]; k++)
        expect_not_in(text, claims[k]);
}

static const char *const TITLES[] = {"Normal residuals", "Constant variance",
                                     "Independent errors", "Linearity", "Collinearity",
                                     "Influential rows"};

/* Every verdict: no claim, the size and a source for its threshold. */
static void every_verdict_sourced(const report_run *r, size_t count)
{
    const char *start = strstr(r->markdown, "### Assumptions");
    assert_non_null(start);
    const char *end = strstr(start, "\n## ");
    char *assumptions = xstrndup(start, end ? (size_t)(end - start) : strlen(start));
    claims_nothing(assumptions);
    free(assumptions);
    static const char *const sources[] = {"(common practice, no source)",
                                          "(fitproof's choice, no published source)",
                                          "Cohen (1988)", "Cohen (1988)",
                                          "(common practice, no source)", "(Cook 1977)"};
    for (size_t a = 0; a < count; a++) {
        char *v = verdict_of(r, TITLES[a]);
        if (a != 2 || strstr(v, "Durbin") == NULL) {
            expect_in(v, "Size: ");
            expect_in(v, "threshold");
            expect_in(v, sources[a]);
        }
        free(v);
    }
}

/* 12 rows with exponential errors: Shapiro–Wilk p = 0.619 (scipy), the
   residual skewness 0.633 beyond the 0.5 threshold. The verdict is "no
   departure detected", never "holds", and it says the test has little power
   and that the size is beyond its threshold. */
static void test_small_sample_with_exponential_errors(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "fitproof: 1\n"
                  "data: {path: small.csv}\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [x]}\n");
    const diagnostics *g = r.a->models[0].diagnostics;
    assert_true(fabs(g->shapiro.p - 0.6192758679389954) < 1e-4);
    assert_int_equal(g->verdicts[DIAG_NORMALITY].verdict, DIAG_HOLDS);
    char *v = verdict_of(&r, "Normal residuals");
    expect_in(v, "Normal residuals: no departure detected.");
    expect_in(v, "The test finds no departure (p = 0.619, level 0.05)");
    expect_in(v, "skewness 0.63");
    expect_in(v, "The size is beyond its threshold although the test does not confirm a "
                 "departure (with so few rows it has little power)");
    free(v);
    v = verdict_of(&r, "Linearity");
    expect_in(v, "little power");
    free(v);
    v = verdict_of(&r, "Independent errors");
    expect_in(v, "not assessed");
    expect_not_in(v, "d = ");
    free(v);
    every_verdict_sourced(&r, 6);
    /* No Durbin–Watson number without a row order. */
    expect_not_in(r.markdown, "| d = ");
    report_free(&r);
}

/* 2000 rows with mildly skewed errors: Shapiro–Wilk p = 3.9e-9 (scipy),
   skewness 0.357 below the 0.5 threshold: a possible departure, judged by
   its size. In time order the errors are independent. */
static void test_large_sample_judged_by_size(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "fitproof: 1\n"
                  "data: {path: large.csv}\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [x, z], order_by: t}\n");
    const diagnostics *g = r.a->models[0].diagnostics;
    assert_true(g->shapiro.p < 1e-6);
    assert_true(fabs(g->moments.skewness - 0.35683880217817915) < 1e-6);
    assert_int_equal(g->verdicts[DIAG_NORMALITY].verdict, DIAG_DOUBTFUL);
    char *v = verdict_of(&r, "Normal residuals");
    expect_in(v, "Normal residuals: possible departure.");
    expect_in(v, "The test finds a departure (p < 0.001, level 0.05)");
    expect_in(v, "skewness 0.36");
    expect_in(v, "With 2000 rows the test detects departures too small to matter, so the "
                 "verdict rests on the size of the departure");
    free(v);
    v = verdict_of(&r, "Independent errors");
    expect_in(v, "lag-one correlation of the residuals in the order of t");
    expect_in(v, "The test cannot rule out a moderate departure with n = 2000.");
    free(v);
    /* The influence verdict agrees with the flag counts and says what a
       clean sample flags: 2 P(|T| > 2 √(1997/2000)) with T ~ t(1996). */
    v = verdict_of(&r, "Influential rows");
    expect_in(v, "by chance");
    expect_in(v, "rows are flagged by at least one screening rule");
    expect_in(v, "The DFFITS rule flags ");
    assert_true(fabs(g->influence.chance_share - 0.0456) < 0.001);
    free(v);
    every_verdict_sourced(&r, 6);
    report_free(&r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_small_sample_with_exponential_errors),
        cmocka_unit_test(test_large_sample_judged_by_size),
    };
    return cmocka_run_group_tests_name("verdicts", tests, NULL, NULL);
}

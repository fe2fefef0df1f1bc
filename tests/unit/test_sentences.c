/*
 * test_sentences.c — the plain-language reading of every kind of
 * coefficient: the sentence must carry the fitted number in the report's
 * format, the unit, the right direction and the reference level, and must
 * say "cannot distinguish" (never "is zero") for an effect whose interval
 * contains zero. The expected wording is our own (no outside source); the
 * numbers come from the fit under test, checked elsewhere against NIST
 * and statsmodels.
 */
#include "testkit.h"

#include <stdio.h>
#include <stdlib.h>

#include "../../src/narrate/narrate.h"
#include "../../src/render/render.h"

typedef struct {
    pipeline run;
    analysis *a;
    char *markdown;
} report_run;

static void report_of(report_run *r, const char *yaml)
{
    pipeline_run(&r->run, "tests/data/sentences/spec.yaml", yaml);
    assert_non_null(r->run.fit);
    r->a = analysis_new(r->run.spec, r->run.table, &r->run.errors);
    assert_non_null(r->a);
    doc_node *doc = narrate_report(r->a, NULL, &r->run.errors);
    assert_non_null(doc);
    buf out;
    buf_init(&out);
    render_markdown(doc, &out);
    r->markdown = buf_detach(&out);
    doc_free(doc);
}

static void report_free(report_run *r)
{
    free(r->markdown);
    analysis_free(r->a);
    pipeline_free(&r->run);
}

/* The sentence of the coefficient labelled `label` (Markdown escapes
   removed), or fails. Caller frees. */
static char *sentence_of(const report_run *r, const char *label)
{
    buf plain;
    buf_init(&plain);
    for (const char *p = r->markdown; *p; p++)
        if (*p != '\\')
            buf_putc(&plain, *p);
    buf key;
    buf_init(&key);
    buf_printf(&key, "- **%s**: ", label);
    const char *start = strstr(plain.data, key.data);
    if (!start)
        fprintf(stderr, "no sentence for %s\n", label);
    assert_non_null(start);
    start += key.length;
    const char *end = strchr(start, '\n');
    char *sentence = xstrndup(start, (size_t)(end - start));
    buf_free(&key);
    buf_free(&plain);
    return sentence;
}

static void expect_in(const char *sentence, const char *part)
{
    if (!strstr(sentence, part))
        fprintf(stderr, "expected \"%s\" in:\n%s\n", part, sentence);
    assert_non_null(strstr(sentence, part));
}

static double estimate_of(const report_run *r, const char *label)
{
    const design *d = r->a->models[0].design;
    for (size_t c = 0; c < d->n_coefs; c++)
        if (strcmp(d->coefs[c].label, label) == 0)
            return r->a->models[0].fit->coefs[c].estimate;
    fail_msg("no coefficient %s", label);
    return NAN;
}

/* The number as the report prints it (4 significant digits). */
static const char *shown(double value, char *out)
{
    narrate_number(out, value, 4);
    return out;
}

static const char *const SPEC =
    "fitproof: 1\n"
    "data:\n"
    "  path: mixed.csv\n"
    "  rows_are: plots\n"
    "  columns:\n"
    "    y: {unit: kg, label: yield}\n"
    "    a: {unit: mm, label: rainfall}\n"
    "    b: {unit: h, label: shade}\n"
    "    g: {reference: ctl, label: treatment}\n"
    "models:\n"
    "  - id: m\n"
    "    response: y\n";

static void test_numeric_level_and_interactions(void **state)
{
    (void)state;
    char yaml[1024], number[NARRATE_NUMBER_SIZE];
    snprintf(yaml, sizeof yaml, "%s    terms: [a, b, g, h, [a, b], [g, h]]\n", SPEC);
    report_run r;
    report_of(&r, yaml);

    char *s = sentence_of(&r, "a");
    expect_in(s, "With shade at zero and the other terms held constant, each increase of "
                 "1 mm in rainfall goes with a yield ");
    expect_in(s, shown(estimate_of(&r, "a"), number));
    expect_in(s, estimate_of(&r, "a") > 0 ? " kg higher on average" : " kg lower on average");
    free(s);

    s = sentence_of(&r, "b");
    expect_in(s, "each increase of 1 h in shade goes with a yield ");
    expect_in(s, shown(fabs(estimate_of(&r, "b")), number));
    expect_in(s, " kg lower on average"); /* the data were made with slope −0.8 */
    free(s);

    s = sentence_of(&r, "g = trt");
    expect_in(s, "With h at its reference level 'hi' and the other terms held constant, "
                 "plots with treatment 'trt' average a yield ");
    expect_in(s, shown(fabs(estimate_of(&r, "g = trt")), number));
    expect_in(s, "than those with the reference level 'ctl'");
    free(s);

    s = sentence_of(&r, "a × b");
    expect_in(s, "The effect of rainfall on yield changes by ");
    expect_in(s, shown(estimate_of(&r, "a × b"), number));
    expect_in(s, " kg per 1 mm for each increase of 1 h in shade");
    free(s);

    s = sentence_of(&r, "g = trt × h = lo");
    expect_in(s, "The gap in yield between treatment 'trt' and its reference level 'ctl' is ");
    expect_in(s, shown(fabs(estimate_of(&r, "g = trt × h = lo")), number));
    expect_in(s, "for plots with h 'lo' than for those with its reference level 'hi'");
    free(s);

    s = sentence_of(&r, "baseline value");
    expect_in(s, "With every numeric predictor at zero, treatment at its reference level "
                 "'ctl' and h at its reference level 'hi', the model's expected yield is ");
    expect_in(s, shown(estimate_of(&r, "baseline value"), number));
    free(s);
    report_free(&r);
}

static void test_interval_containing_zero_is_not_called_zero(void **state)
{
    (void)state;
    char yaml[1024];
    snprintf(yaml, sizeof yaml, "%s    terms: [a, b, g, h, [a, b], [g, h]]\n", SPEC);
    report_run r;
    report_of(&r, yaml);
    /* h has no effect of its own in the generating model. */
    char *s = sentence_of(&r, "h = lo");
    const fit_result *f = r.a->models[0].fit;
    const fit_coef *h = NULL;
    for (size_t c = 0; c < r.a->models[0].design->n_coefs; c++)
        if (strcmp(r.a->models[0].design->coefs[c].label, "h = lo") == 0)
            h = &f->coefs[c];
    assert_non_null(h);
    assert_true(h->ci_low < 0 && h->ci_high > 0);
    expect_in(s, "the data cannot distinguish this effect from no effect; that is not "
                 "evidence that it is zero");
    free(s);
    report_free(&r);
}

static void test_polynomial_power(void **state)
{
    (void)state;
    char yaml[1024], number[NARRATE_NUMBER_SIZE];
    snprintf(yaml, sizeof yaml, "%s    terms: [{polynomial: a, degree: 2}]\n", SPEC);
    report_run r;
    report_of(&r, yaml);
    char *s = sentence_of(&r, "a^2");
    expect_in(s, "The power-2 term of rainfall bends the fitted curve: its coefficient ");
    expect_in(s, shown(estimate_of(&r, "a^2"), number));
    free(s);
    report_free(&r);
}

/* A logged response reads as percentages; a logged predictor as "each 10%
   increase", an elasticity when both are logged. The expected figures are
   computed here from the fitted estimate: 100 (1.1^b − 1) % for the
   elasticity and 100 (e^b − 1) % for the level. */
static void test_log_response_and_predictor(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "fitproof: 1\n"
                  "data:\n"
                  "  path: costs.csv\n"
                  "  rows_are: parcels\n"
                  "  columns:\n"
                  "    cost: {unit: EUR, label: cost}\n"
                  "    kind: {reference: std, label: service}\n"
                  "derive:\n"
                  "  - {name: log_cost, from: cost, transform: log}\n"
                  "  - {name: log_distance, from: distance, transform: log}\n"
                  "models:\n"
                  "  - {id: m, response: log_cost, terms: [log_distance, kind]}\n");
    char expected[128];
    double b = estimate_of(&r, "log_distance");
    assert_true(fabs(b - 0.4) < 0.05); /* the generating elasticity */
    char *s = sentence_of(&r, "log_distance");
    expect_in(s, "each 10% increase in distance goes with a cost ");
    snprintf(expected, sizeof expected, "%.1f%% higher on average (an elasticity)",
             100.0 * (pow(1.1, b) - 1.0));
    expect_in(s, expected);
    free(s);
    double level = estimate_of(&r, "kind = fast");
    s = sentence_of(&r, "kind = fast");
    snprintf(expected, sizeof expected, "parcels with service 'fast' typically have a cost "
                                        "%.1f%% higher",
             100.0 * (exp(level) - 1.0));
    expect_in(s, expected);
    expect_in(s, "than those with the reference level 'std'");
    free(s);
    report_free(&r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_numeric_level_and_interactions),
        cmocka_unit_test(test_interval_containing_zero_is_not_called_zero),
        cmocka_unit_test(test_polynomial_power),
        cmocka_unit_test(test_log_response_and_predictor),
    };
    return cmocka_run_group_tests_name("sentences", tests, NULL, NULL);
}

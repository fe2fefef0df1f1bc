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

#include <jansson.h>
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

    char *s;
    s = sentence_of(&r, "a × b");
    expect_in(s, "The change in yield per 1 mm of rainfall is ");
    expect_in(s, shown(estimate_of(&r, "a × b"), number));
    expect_in(s, " kg per 1 mm ");
    free(s);

    s = sentence_of(&r, "g = trt × h = lo");
    expect_in(s, "The gap in yield between treatment 'trt' and its reference level 'ctl' is ");
    expect_in(s, shown(fabs(estimate_of(&r, "g = trt × h = lo")), number));
    expect_in(s, "for plots with h 'lo' than for those with its reference level 'hi'");
    free(s);

    s = sentence_of(&r, "baseline value");
    expect_in(s, "With every numeric predictor at zero, treatment at its reference level "
                 "'ctl' and h at its reference level 'hi', the model's fitted yield is ");
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
    /* Read at each level of treatment, which it interacts with. */
    expect_in(s, "Where an interval includes zero the data cannot tell that difference from "
                 "none; that is not evidence that it is zero.");
    expect_in(s, "(95% confidence interval from ");
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
    expect_in(s, "each 10% increase in distance goes with a median cost ");
    expect_in(s, "is an elasticity");
    snprintf(expected, sizeof expected, "%.1f%% higher (95%% confidence interval",
             100.0 * (pow(1.1, b) - 1.0));
    expect_in(s, expected);
    free(s);
    double level = estimate_of(&r, "kind = fast");
    s = sentence_of(&r, "kind = fast");
    snprintf(expected, sizeof expected, "Parcels with service 'fast' have a median cost "
                                        "%.1f%% higher",
             100.0 * (exp(level) - 1.0));
    expect_in(s, expected);
    expect_in(s, "compared with those with the reference level 'std'");
    free(s);
    report_free(&r);
}

/* A saturated fit (3 rows, 3 coefficients): estimates without any
   interval, p-value or test, and a paragraph saying why. */
static void test_saturated_fit_reports_estimates_only(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "fitproof: 1\n"
                  "data: {path: tiny.csv}\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [x, g]}\n");
    assert_true(r.a->models[0].fit->df_residual == 0.0);
    expect_in(r.markdown, "no residual degrees of freedom are left: the fitted equation "
                          "passes through every row");
    char *s = sentence_of(&r, "x");
    assert_null(strstr(s, "confidence interval"));
    assert_null(strstr(s, "p ="));
    assert_null(strstr(s, "n/a"));
    free(s);
    assert_null(strstr(r.markdown, "Does each term matter?"));
    assert_null(strstr(r.markdown, "n/a to n/a"));
    report_free(&r);
}

/* A column the others span (b, after its centred copy b_c and the
   intercept) is aliased: its sentence says so, and the readings of the
   polynomial's other power and of b_c still give numbers, never n/a.
   (Listing the same term twice is refused by the spec stage.) */
static void test_reading_skips_aliased_columns(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "fitproof: 1\n"
                  "data: {path: mixed.csv}\n"
                  "derive: [{name: b_c, from: b, transform: center}]\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [b_c, {polynomial: b, degree: 2}]}\n");
    const char *md = r.markdown;
    const char *aliased = strstr(md, "- **b**: ");
    assert_non_null(aliased);
    assert_int_equal(strncmp(aliased + strlen("- **b**: "), "Not estimable", 13), 0);
    const char *labels[] = {"- **b\\_c**: ", "- **b^2**: "};
    for (size_t k = 0; k < 2; k++) {
        const char *first = strstr(md, labels[k]);
        assert_non_null(first);
        const char *end = strchr(first, '\n');
        char *line = xstrndup(first, (size_t)(end - first));
        assert_null(strstr(line, "n/a"));
        assert_non_null(strstr(line, "95% confidence interval"));
        free(line);
    }
    report_free(&r);
}

/* z = 2x exactly: the later column x is not estimable and its sentence
   names the earlier one with the multiplier rounded to the report's
   digits (0.5, not 0.5000 or rounding noise such as 1e-19 × (intercept)). */
static void test_aliased_column_named_with_rounded_multipliers(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "fitproof: 1\n"
                  "data: {path: duplicate.csv}\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [z, x]}\n");
    char *s = sentence_of(&r, "x");
    expect_in(s, "Not estimable: in the rows used, this column equals 0.5 × z, so the data "
                 "cannot separate it from the columns before it");
    assert_null(strstr(s, "e-"));
    assert_null(strstr(s, "baseline value"));
    free(s);
    report_free(&r);
}

/* ---- every kind against statsmodels ------------------------------------
   The numbers below come from tests/reference/sentences_statsmodels.py
   (statsmodels 0.13.5 OLS on hand-built designs; readings at representative
   values as c'b with se √(c'Vc)), committed as sentences.expected.json. The
   test checks that each sentence prints them in the report's format (4
   significant digits), with the unit, the direction word, the reference
   and the values it is read at. */

static json_t *reference(void)
{
    json_error_t error;
    json_t *root = json_load_file("tests/reference/sentences.expected.json", 0, &error);
    assert_non_null(root);
    return root;
}

static double ref_at(const json_t *root, const char *group, const char *name, const char *key)
{
    const json_t *v = json_object_get(json_object_get(json_object_get(root, group), name), key);
    assert_non_null(v);
    return json_real_value(v);
}

/* "<amount> <unit> <up|down><middle> (95% confidence interval <a> to <b>
   <unit> <word>;" — or "from <a> <unit> <down> to <b> <unit> <up>" when the
   interval crosses zero — from a reference entry. */
static void expect_amount(const char *sentence, const json_t *root, const char *group,
                          const char *name, const char *unit, const char *up,
                          const char *down, const char *middle)
{
    double value = ref_at(root, group, name, "value");
    double low = ref_at(root, group, name, "low"), high = ref_at(root, group, name, "high");
    const char *word = value >= 0 ? up : down;
    char v[NARRATE_NUMBER_SIZE], a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE], text[256];
    narrate_number(v, fabs(value), 4);
    snprintf(text, sizeof text, "%s %s %s%s (95%% confidence interval ", v, unit, word, middle);
    expect_in(sentence, text);
    if (low >= 0 || high <= 0) {
        narrate_number(a, fmin(fabs(low), fabs(high)), 4);
        narrate_number(b, fmax(fabs(low), fabs(high)), 4);
        snprintf(text, sizeof text, "interval %s to %s %s %s;", a, b, unit, word);
    } else {
        narrate_number(a, fabs(low), 4);
        narrate_number(b, high, 4);
        snprintf(text, sizeof text, "interval from %s %s %s to %s %s %s;", a, unit, down, b,
                 unit, up);
    }
    expect_in(sentence, text);
}

/* "2.222 kg higher on average (95% confidence interval 2.177 to 2.268 kg
   higher; p < 0.001)" from a reference entry, for a change of the response. */
static void expect_change(const char *sentence, const json_t *root, const char *group,
                          const char *name, const char *unit)
{
    expect_amount(sentence, root, group, name, unit, "higher", "lower", " on average");
}

static const char *const MIXED = "fitproof: 1\n"
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

static void model_report(report_run *r, const char *model_lines)
{
    char yaml[1024];
    snprintf(yaml, sizeof yaml, "%s%s", MIXED, model_lines);
    report_of(r, yaml);
}

/* Numeric × numeric and category × category: the slope of a at the median
   of b; the trt difference where h is 'hi' and where it is 'lo'; the raw
   interaction coefficients (a decrease read as "smaller" by a positive
   amount). */
static void test_interactions_against_statsmodels(void **state)
{
    (void)state;
    json_t *ref = reference();
    report_run r;
    model_report(&r, "    terms: [a, b, g, h, [a, b], [g, h]]\n");
    char *s = sentence_of(&r, "a");
    expect_in(s, "Adjusted for the other terms, each increase of 1 mm in rainfall goes with a "
                 "yield ");
    expect_change(s, ref, "num_num", "slope_a_at_median_b", "kg");
    char number[NARRATE_NUMBER_SIZE], text[160];
    narrate_number(number, json_real_value(json_object_get(ref, "median_b")), 4);
    snprintf(text, sizeof text, " where shade is %s h (the median of the fitted rows)", number);
    expect_in(s, text);
    expect_in(s, "The coefficient in the table, ");
    expect_in(s, "is the slope per unit of rainfall with shade at zero");
    free(s);

    s = sentence_of(&r, "g = trt");
    expect_in(s, "Adjusted for the other terms, plots with treatment 'trt' have a yield ");
    expect_change(s, ref, "cat_cat", "trt_at_hi", "kg");
    expect_change(s, ref, "cat_cat", "trt_at_lo", "kg");
    expect_in(s, " where h is 'hi'; and ");
    expect_in(s, " where h is 'lo', each compared with those with the reference level 'ctl'");
    free(s);

    s = sentence_of(&r, "g = trt × h = lo");
    double v = ref_at(ref, "cat_cat", "trt_times_lo", "value");
    assert_true(v < 0);
    narrate_number(number, -v, 4);
    snprintf(text, sizeof text, "is %s kg smaller (95%% confidence interval ", number);
    expect_in(s, "The gap in yield between treatment 'trt' and its reference level 'ctl' ");
    expect_in(s, text);
    expect_in(s, "for plots with h 'lo' than for those with its reference level 'hi'");
    assert_null(strstr(s, "-")); /* every amount positive, direction in words */
    free(s);

    s = sentence_of(&r, "a × b");
    narrate_number(number, ref_at(ref, "num_num", "a_times_b", "value"), 4);
    snprintf(text, sizeof text, "The change in yield per 1 mm of rainfall is %s kg per 1 mm "
                                "larger",
             number);
    expect_in(s, text);
    expect_in(s, "for each increase of 1 h in shade");
    free(s);
    report_free(&r);

    /* Numeric × category: the slope per level, the difference at the median. */
    model_report(&r, "    terms: [a, g, [a, g]]\n");
    s = sentence_of(&r, "a");
    expect_change(s, ref, "num_cat", "slope_a_ctl", "kg");
    expect_change(s, ref, "num_cat", "slope_a_trt", "kg");
    expect_in(s, " where treatment is 'ctl'; and ");
    expect_in(s, " where treatment is 'trt'.");
    free(s);
    s = sentence_of(&r, "g = trt");
    expect_change(s, ref, "num_cat", "trt_at_median_a", "kg");
    narrate_number(number, json_real_value(json_object_get(ref, "median_a")), 4);
    snprintf(text, sizeof text, " where rainfall is %s mm (the median of the fitted rows), "
                                "compared with those with the reference level 'ctl'",
             number);
    expect_in(s, text);
    expect_in(s, "is the difference with rainfall at zero, outside the data");
    free(s);
    s = sentence_of(&r, "a × g = trt");
    narrate_number(number, -ref_at(ref, "num_cat", "a_times_trt", "value"), 4);
    snprintf(text, sizeof text, "is %s kg per 1 mm smaller (95%% confidence interval from ",
             number);
    expect_in(s, text);
    expect_in(s, "the data cannot tell this difference from none");
    free(s);
    report_free(&r);
    json_decref(ref);
}

/* Plain numeric, level, and not significant (intervals across zero). */
static void test_plain_and_not_significant_against_statsmodels(void **state)
{
    (void)state;
    json_t *ref = reference();
    report_run r;
    model_report(&r, "    terms: [a, b, h]\n");
    char *s = sentence_of(&r, "a");
    expect_in(s, "Holding the other terms constant, each increase of 1 mm in rainfall goes "
                 "with a yield ");
    expect_change(s, ref, "plain", "a", "kg");
    assert_null(strstr(s, "cannot tell"));
    free(s);
    s = sentence_of(&r, "b");
    expect_change(s, ref, "plain", "b", "kg");
    expect_in(s, "The interval includes zero, so the data cannot tell this difference from "
                 "none; that is not evidence that it is zero.");
    free(s);
    s = sentence_of(&r, "h = lo");
    expect_in(s, "Plots with h 'lo' have a yield ");
    expect_change(s, ref, "plain", "lo", "kg");
    expect_in(s, "compared with those with the reference level 'hi', adjusted for the other "
                 "terms.");
    expect_in(s, "the data cannot tell this difference from none");
    free(s);
    /* Association, never cause, anywhere in the readings. */
    assert_null(strstr(r.markdown, "effect of"));
    report_free(&r);
    json_decref(ref);
}

/* A polynomial's linear term is read as the derivative at the median. */
static void test_polynomial_against_statsmodels(void **state)
{
    (void)state;
    json_t *ref = reference();
    report_run r;
    model_report(&r, "    terms: [{polynomial: a, degree: 2}]\n");
    char *s = sentence_of(&r, "a");
    expect_change(s, ref, "polynomial", "slope_at_median", "kg");
    expect_in(s, " where rainfall is 4.795 mm (the median of the fitted rows)");
    expect_in(s, "because the model includes powers of rainfall");
    expect_in(s, "with rainfall at zero, outside the data (0.23 to 9.86 mm)");
    free(s);
    report_free(&r);
    /* The analyst's values instead of the median. */
    report_of(&r, "fitproof: 1\n"
                  "data:\n"
                  "  path: mixed.csv\n"
                  "  columns:\n"
                  "    a: {unit: mm, label: rainfall, at: [2, 8]}\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [{polynomial: a, degree: 2}]}\n");
    s = sentence_of(&r, "a");
    expect_in(s, " where rainfall is 2 mm; and ");
    expect_in(s, " where rainfall is 8 mm.");
    assert_null(strstr(s, "median"));
    free(s);
    report_free(&r);
    json_decref(ref);
}

/* Sum coding: the intercept is the unweighted mean of the level means, a
   level's coefficient its departure from it. No intercept: each level's
   fitted value, and the centred R² because the indicators span the
   constant. */
static void test_sum_coding_and_no_intercept_against_statsmodels(void **state)
{
    (void)state;
    json_t *ref = reference();
    report_run r;
    model_report(&r, "    terms: [a, g]\n    coding: sum\n");
    char number[NARRATE_NUMBER_SIZE], text[200];
    char *s = sentence_of(&r, "baseline value");
    narrate_number(number, ref_at(ref, "sum", "intercept", "value"), 4);
    snprintf(text, sizeof text, "the model's fitted value, averaged with equal weight over the "
                                "levels of treatment (the unweighted mean of the level means), "
                                "of yield is %s kg",
             number);
    expect_in(s, text);
    /* The omitted level's departure is minus the others' (two levels: −trt). */
    narrate_number(number, ref_at(ref, "sum", "trt_vs_average", "value"), 4);
    snprintf(text, sizeof text, "Level 'ctl' of treatment, which has no coefficient of its "
                                "own, lies %s kg below that mean",
             number);
    expect_in(s, text);
    free(s);
    s = sentence_of(&r, "g: trt vs average of levels");
    expect_change(s, ref, "sum", "trt_vs_average", "kg");
    expect_in(s, "compared with the unweighted average over all levels of treatment, adjusted "
                 "for the other terms.");
    free(s);
    report_free(&r);

    /* No intercept: each level's fitted value at the median of rainfall
       (not at rainfall 0, outside the data), and trt against ctl adjusted
       for rainfall. */
    model_report(&r, "    terms: [g, a]\n    intercept: false\n");
    char median[NARRATE_NUMBER_SIZE];
    narrate_number(median, json_real_value(json_object_get(ref, "median_a")), 4);
    s = sentence_of(&r, "g = ctl");
    narrate_number(number, ref_at(ref, "no_intercept", "ctl_at_median_a", "value"), 4);
    snprintf(text, sizeof text, "Plots with treatment 'ctl' have a fitted yield of %s kg (95%% "
                                "confidence interval ",
             number);
    expect_in(s, text);
    snprintf(text, sizeof text, " where rainfall is %s mm (the median of the fitted rows) (the "
                                "model has no intercept, so each level has its own)",
             median);
    expect_in(s, text);
    narrate_number(number, ref_at(ref, "no_intercept", "ctl", "value"), 4);
    snprintf(text, sizeof text, "The coefficient in the table, %s, is the fitted value with "
                                "rainfall at zero, outside the data",
             number);
    expect_in(s, text);
    assert_null(strstr(s, "Adjusted for the other terms")); /* the reference: no difference */
    free(s);
    s = sentence_of(&r, "g = trt");
    narrate_number(number, ref_at(ref, "no_intercept", "trt_at_median_a", "value"), 4);
    snprintf(text, sizeof text, "have a fitted yield of %s kg", number);
    expect_in(s, text);
    expect_in(s, " Adjusted for the other terms, they have a yield ");
    expect_change(s, ref, "no_intercept", "trt_minus_ctl", "kg");
    expect_in(s, "compared with those with the reference level 'ctl'.");
    free(s);
    snprintf(number, sizeof number, "%.1f%%",
             100.0 * json_real_value(json_object_get(json_object_get(ref, "no_intercept"),
                                                     "r_squared_centred")));
    snprintf(text, sizeof text, "R² is therefore the centred one: the model accounts for %s "
                                "of the variation of yield around its mean",
             number);
    expect_in(r.markdown, text);
    report_free(&r);
    json_decref(ref);
}

/* Logged response and predictor: median changes in percent with their
   intervals, the elasticity, the natural logarithm named. */
static void test_logged_against_statsmodels(void **state)
{
    (void)state;
    json_t *ref = reference();
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
    char text[200];
    const json_t *per = json_object_get(json_object_get(ref, "logged"), "per_10_percent");
    char *s = sentence_of(&r, "log_distance");
    snprintf(text, sizeof text, "each 10%% increase in distance goes with a median cost %.1f%% "
                                "higher (95%% confidence interval %.1f%% to %.1f%% higher;",
             json_real_value(json_object_get(per, "value")),
             json_real_value(json_object_get(per, "low")),
             json_real_value(json_object_get(per, "high")));
    expect_in(s, text);
    char number[NARRATE_NUMBER_SIZE];
    narrate_number(number,
                   json_real_value(json_object_get(json_object_get(ref, "logged"), "elasticity")),
                   4);
    snprintf(text, sizeof text, "the coefficient %s is an elasticity", number);
    expect_in(s, text);
    free(s);
    const json_t *fast = json_object_get(json_object_get(ref, "logged"), "fast_percent");
    s = sentence_of(&r, "kind = fast");
    snprintf(text, sizeof text, "Parcels with service 'fast' have a median cost %.1f%% higher "
                                "(95%% confidence interval %.1f%% to %.1f%% higher;",
             json_real_value(json_object_get(fast, "value")),
             json_real_value(json_object_get(fast, "low")),
             json_real_value(json_object_get(fast, "high")));
    expect_in(s, text);
    free(s);
    expect_in(r.markdown, "the natural logarithm of cost");
    {
        /* With the interaction: the change per 10% increase in distance for
           each service, the reference level first. */
        report_run ri;
        report_of(&ri, "fitproof: 1\n"
                       "data:\n"
                       "  path: costs.csv\n"
                       "  rows_are: parcels\n"
                       "  columns:\n"
                       "    cost: {unit: EUR, label: cost}\n"
                       "    distance: {unit: km, label: distance}\n"
                       "    kind: {reference: std, label: service}\n"
                       "derive:\n"
                       "  - {name: log_cost, from: cost, transform: log}\n"
                       "  - {name: log_distance, from: distance, transform: log}\n"
                       "models:\n"
                       "  - {id: m, response: log_cost,\n"
                       "     terms: [log_distance, kind, [log_distance, kind]]}\n");
        const json_t *by = json_object_get(ref, "logged_by_kind");
        char *si = sentence_of(&ri, "log_distance");
        const char *names[] = {"std", "fast"};
        for (int k = 0; k < 2; k++) {
            const json_t *e = json_object_get(by, names[k]);
            snprintf(text, sizeof text, "%.1f%% higher (95%% confidence interval %.1f%% to "
                                        "%.1f%% higher; p < 0.001) where service is '%s'",
                     json_real_value(json_object_get(e, "value")),
                     json_real_value(json_object_get(e, "low")),
                     json_real_value(json_object_get(e, "high")), names[k]);
            expect_in(si, text);
        }
        assert_true(strstr(si, "'std'") < strstr(si, "'fast'"));
        free(si);
        si = sentence_of(&ri, "kind = fast");
        expect_in(si, "is the difference with distance at 1 km (its logarithm zero)");
        free(si);
        si = sentence_of(&ri, "log_distance × kind = fast");
        expect_in(si, "The change in cost per 10% increase in distance is ");
        free(si);
        report_free(&ri);
    }
    double smearing =
        json_real_value(json_object_get(json_object_get(ref, "logged"), "smearing"));
    assert_true(fabs(r.a->models[0].smearing - smearing) < 1e-12 * smearing);
    report_free(&r);
    json_decref(ref);
}

/* "0.3073 kg per 1 mm larger (95% confidence interval 0.2331 to 0.3816 kg
   per 1 mm larger;" from a reference entry, for a contrast of slopes or
   gaps (unit the amounts' unit, " per 1 mm" included). */
static void expect_contrast(const char *sentence, const json_t *root, const char *group,
                            const char *name, const char *unit)
{
    expect_amount(sentence, root, group, name, unit, "larger", "smaller", "");
}

/* Three-way interactions: the two-way products inside them are read at the
   third column's settings (each level, the median of a numeric), never at
   zero; the three-way product as the change of a two-way contrast, a
   positive amount with its direction. Numbers from
   sentences_statsmodels.py (groups num_num_cat, num_cat_cat, num_num_num).

   Hand derivation of one reading from the covariance (num × num × cat,
   columns 1, a, b, trt, ab, a·trt, b·trt, ab·trt): the change of rainfall's
   slope per 1 h of shade where treatment is 'trt' is
   ∂²ŷ/∂a∂b at trt = β_ab + β_ab·trt, w = (0,0,0,0,1,0,0,1), with
   SE² = V[ab,ab] + 2 V[ab,ab·trt] + V[ab·trt,ab·trt]; checked below
   against the fit's own covariance as well. */
static void test_three_way_against_statsmodels(void **state)
{
    (void)state;
    json_t *ref = reference();
    report_run r;
    char text[256];
    char median_a[NARRATE_NUMBER_SIZE], median_b[NARRATE_NUMBER_SIZE];
    narrate_number(median_a, json_real_value(json_object_get(ref, "median_a")), 4);
    narrate_number(median_b, json_real_value(json_object_get(ref, "median_b")), 4);

    model_report(&r, "    terms: [a, b, g, [a, b], [a, g], [b, g], [a, b, g]]\n");
    char *s = sentence_of(&r, "a × b");
    expect_in(s, "The change in yield per 1 mm of rainfall for each increase of 1 h in shade "
                 "is ");
    expect_contrast(s, ref, "num_num_cat", "a_times_b_at_ctl", "kg per 1 mm");
    expect_contrast(s, ref, "num_num_cat", "a_times_b_at_trt", "kg per 1 mm");
    expect_in(s, "larger; p < 0.001) where treatment is 'ctl'; and ");
    expect_in(s, "larger; p < 0.001) where treatment is 'trt'.");
    expect_in(s, "is this difference with treatment at its reference level 'ctl'.");
    free(s);
    s = sentence_of(&r, "a × g = trt");
    expect_in(s, "The change in yield per 1 mm of rainfall, for plots with treatment 'trt' "
                 "against those with the reference level 'ctl', is ");
    expect_contrast(s, ref, "num_num_cat", "a_times_trt_at_median_b", "kg per 1 mm");
    snprintf(text, sizeof text, " where shade is %s h (the median of the fitted rows).",
             median_b);
    expect_in(s, text);
    expect_in(s, "with shade at zero, outside the data (0.02 to 4.87 h)");
    free(s);
    s = sentence_of(&r, "b × g = trt");
    expect_contrast(s, ref, "num_num_cat", "b_times_trt_at_median_a", "kg per 1 h");
    snprintf(text, sizeof text, " where rainfall is %s mm (the median of the fitted rows).",
             median_a);
    expect_in(s, text);
    free(s);
    s = sentence_of(&r, "a");
    expect_change(s, ref, "num_num_cat", "slope_a_median_b_trt", "kg");
    snprintf(text, sizeof text, " where shade is %s h (the median of the fitted rows) and "
                                "treatment is 'trt'.",
             median_b);
    expect_in(s, text);
    free(s);
    s = sentence_of(&r, "a × b × g = trt");
    expect_in(s, "The change in yield per 1 mm of rainfall for each increase of 1 h in shade "
                 "(the rainfall × shade interaction) is ");
    expect_contrast(s, ref, "num_num_cat", "three_way", "kg per 1 mm");
    expect_in(s, "for plots with treatment 'trt' than for those with the reference level "
                 "'ctl'.");
    assert_null(strstr(s, "-")); /* amounts positive, direction in words */
    free(s);
    {
        /* The hand derivation above, from the fit's covariance. */
        const design *d = r.a->models[0].design;
        const fit_result *f = r.a->models[0].fit;
        size_t ab = SIZE_MAX, abt = SIZE_MAX;
        for (size_t c = 0; c < d->n_coefs; c++) {
            if (strcmp(d->coefs[c].label, "a × b") == 0)
                ab = c;
            if (strcmp(d->coefs[c].label, "a × b × g = trt") == 0)
                abt = c;
        }
        assert_true(ab != SIZE_MAX && abt != SIZE_MAX);
        double value = f->coefs[ab].estimate + f->coefs[abt].estimate;
        double se = sqrt(gsl_matrix_get(f->cov, ab, ab) + 2 * gsl_matrix_get(f->cov, ab, abt) +
                         gsl_matrix_get(f->cov, abt, abt));
        const fit_reading *found = NULL;
        for (size_t k = 0; k < r.a->models[0].readings->n; k++) {
            const fit_reading *it = &r.a->models[0].readings->items[k];
            if (it->coef == ab && it->kind == FIT_READING_INTERACTION && it->index == 1)
                found = it;
        }
        assert_non_null(found);
        assert_int_equal(found->n_at, 1);
        assert_string_equal(found->at[0].column->levels[found->at[0].code], "trt");
        assert_true(fabs(found->estimate - value) < 1e-12 * fabs(value));
        assert_true(fabs(found->inference.std_error - se) < 1e-9 * se);
        double sm = ref_at(ref, "num_num_cat", "a_times_b_at_trt", "value");
        assert_true(fabs(found->estimate - sm) < 1e-9 * fabs(sm)); /* statsmodels */
    }
    report_free(&r);

    model_report(&r, "    terms: [a, g, h, [a, g], [a, h], [g, h], [a, g, h]]\n");
    s = sentence_of(&r, "a × g = trt");
    expect_contrast(s, ref, "num_cat_cat", "a_times_trt_at_hi", "kg per 1 mm");
    expect_contrast(s, ref, "num_cat_cat", "a_times_trt_at_lo", "kg per 1 mm");
    expect_in(s, " where h is 'hi'; and ");
    expect_in(s, " where h is 'lo'.");
    free(s);
    s = sentence_of(&r, "g = trt × h = lo");
    expect_in(s, "The gap in yield between treatment 'trt' and its reference level 'ctl', for "
                 "plots with h 'lo' against those with its reference level 'hi', is ");
    expect_contrast(s, ref, "num_cat_cat", "trt_times_lo_at_median_a", "kg");
    snprintf(text, sizeof text, " where rainfall is %s mm (the median of the fitted rows).",
             median_a);
    expect_in(s, text);
    free(s);
    s = sentence_of(&r, "g = trt");
    expect_change(s, ref, "num_cat_cat", "trt_at_median_a_lo", "kg");
    free(s);
    s = sentence_of(&r, "a × g = trt × h = lo");
    expect_in(s, "(the rainfall × treatment interaction), is ");
    expect_contrast(s, ref, "num_cat_cat", "three_way", "kg per 1 mm");
    expect_in(s, "for plots with h 'lo' than for those with the reference level 'hi'.");
    free(s);
    report_free(&r);

    report_of(&r, "fitproof: 1\n"
                  "data:\n"
                  "  path: three.csv\n"
                  "  rows_are: plots\n"
                  "  columns:\n"
                  "    y: {unit: kg, label: yield}\n"
                  "    a: {unit: mm, label: rainfall}\n"
                  "    b: {unit: h, label: shade}\n"
                  "    c: {unit: degC, label: warmth}\n"
                  "models:\n"
                  "  - {id: m, response: y,\n"
                  "     terms: [a, b, c, [a, b], [a, c], [b, c], [a, b, c]]}\n");
    const json_t *medians = json_object_get(json_object_get(ref, "num_num_num"), "medians");
    char mb[NARRATE_NUMBER_SIZE], mc[NARRATE_NUMBER_SIZE];
    narrate_number(mb, json_real_value(json_object_get(medians, "b")), 4);
    narrate_number(mc, json_real_value(json_object_get(medians, "c")), 4);
    s = sentence_of(&r, "a × b");
    expect_contrast(s, ref, "num_num_num", "a_times_b_at_median_c", "kg per 1 mm");
    snprintf(text, sizeof text, " where warmth is %s degC (the median of the fitted rows).",
             mc);
    expect_in(s, text);
    free(s);
    s = sentence_of(&r, "a");
    expect_change(s, ref, "num_num_num", "slope_a_at_medians", "kg");
    snprintf(text, sizeof text, " where shade is %s h (the median of the fitted rows) and "
                                "warmth is %s degC (the median of the fitted rows).",
             mb, mc);
    expect_in(s, text);
    free(s);
    s = sentence_of(&r, "a × b × c");
    expect_in(s, "(the rainfall × shade interaction) is ");
    expect_contrast(s, ref, "num_num_num", "three_way", "kg per 1 mm");
    expect_in(s, "for each increase of 1 degC in warmth.");
    free(s);
    report_free(&r);
    json_decref(ref);
}

/* results.json carries the readings the sentences give: the same numbers,
   the kind, the column and the setting with where its value comes from. */
static void test_readings_in_results_json(void **state)
{
    (void)state;
    json_t *ref = reference();
    report_run r;
    model_report(&r, "    terms: [a, b, g, [a, b], [a, g], [b, g], [a, b, g]]\n");
    buf out;
    buf_init(&out);
    render_results_json(r.a, &out);
    json_error_t error;
    json_t *root = json_loads(out.data, 0, &error);
    assert_non_null(root);
    const json_t *list =
        json_object_get(json_array_get(json_object_get(root, "models"), 0), "readings");
    assert_true(json_array_size(list) > 0);
    const json_t *hit = NULL;
    size_t k;
    json_t *entry;
    json_array_foreach(list, k, entry)
    {
        if (strcmp(json_string_value(json_object_get(entry, "coefficient")), "a × g = trt") ==
            0)
            hit = entry;
    }
    assert_non_null(hit);
    assert_string_equal(json_string_value(json_object_get(hit, "kind")), "interaction");
    const json_t *at = json_array_get(json_object_get(hit, "at"), 0);
    assert_string_equal(json_string_value(json_object_get(at, "column")), "b");
    assert_string_equal(json_string_value(json_object_get(at, "source")), "median");
    assert_true(fabs(json_real_value(json_object_get(at, "value")) -
                     json_real_value(json_object_get(ref, "median_b"))) < 1e-12);
    double v = ref_at(ref, "num_num_cat", "a_times_trt_at_median_b", "value");
    double lo = ref_at(ref, "num_num_cat", "a_times_trt_at_median_b", "low");
    assert_true(fabs(json_real_value(json_object_get(hit, "estimate")) - v) < 1e-9 * fabs(v));
    assert_true(fabs(json_real_value(json_object_get(hit, "ci_low")) - lo) < 1e-9 * fabs(lo));
    json_decref(root);
    buf_free(&out);
    report_free(&r);
    json_decref(ref);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_numeric_level_and_interactions),
        cmocka_unit_test(test_interval_containing_zero_is_not_called_zero),
        cmocka_unit_test(test_polynomial_power),
        cmocka_unit_test(test_log_response_and_predictor),
        cmocka_unit_test(test_saturated_fit_reports_estimates_only),
        cmocka_unit_test(test_interactions_against_statsmodels),
        cmocka_unit_test(test_plain_and_not_significant_against_statsmodels),
        cmocka_unit_test(test_polynomial_against_statsmodels),
        cmocka_unit_test(test_sum_coding_and_no_intercept_against_statsmodels),
        cmocka_unit_test(test_logged_against_statsmodels),
        cmocka_unit_test(test_aliased_column_named_with_rounded_multipliers),
        cmocka_unit_test(test_reading_skips_aliased_columns),
        cmocka_unit_test(test_three_way_against_statsmodels),
        cmocka_unit_test(test_readings_in_results_json),
    };
    return cmocka_run_group_tests_name("sentences", tests, NULL, NULL);
}

/*
 * test_diagnostics_cases.c — the diagnostics stage on its edge cases and
 * seams: perfect fits, n = p + 1, squared residuals all equal, more than
 * 5000 rows, the weighted path, verdict rules, the spec's checks and the
 * errors they can raise, residuals_<model>.csv and the results.json keys.
 * Expected values follow by hand (stated beside each) or from the
 * statsmodels reference of tests/reference/diagnostics_reference.py.
 */
#define _XOPEN_SOURCE 700
#include "diagkit.h"

#include <gsl/gsl_blas.h>
#include <gsl/gsl_multifit.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <jansson.h>
#include <stdlib.h>
#include <unistd.h>

#include "../../src/render/render.h"

static const char *const SPEC_PATH = "tests/data/diagnostics/spec.yaml";

static void run_model(diag_run *run, const char *data, const char *model)
{
    char yaml[2048];
    snprintf(yaml, sizeof yaml, "fitproof: 1\ndata: {path: %s}\nmodels:\n  - %s\n", data,
             model);
    diag_run_yaml(run, SPEC_PATH, yaml);
    if (!run->analysis)
        error_list_print(&run->stages.errors);
    assert_non_null(run->analysis);
}

static const diagnostics *first(const diag_run *run)
{
    return run->analysis->models[0].diagnostics;
}

/* results.json of the run, parsed; caller json_decrefs. */
static json_t *results_json(const diag_run *run)
{
    buf out;
    buf_init(&out);
    render_results_json(run->analysis, &out);
    json_error_t error;
    json_t *root = json_loads(out.data, 0, &error);
    buf_free(&out);
    assert_non_null(root);
    return root;
}

/* A model without an intercept whose first category has every level is
   the model with an intercept and a reference level written another way;
   the (generalized) variance inflation factors do not depend on how a
   model is written (Fox & Monette 1992, JASA 87:178-183, section 2), so
   both ways give the same values, the category's with one degree of
   freedom less than its levels. Before, the indicators were judged
   uncentred and moisture's VIF came out about 30 here. */
static void test_spanning_category_judged_centred(void **state)
{
    (void)state;
    diag_run with, without;
    run_model(&with, "kilns.csv",
              "{id: m, response: shrinkage_pct, terms: [clay, moisture_pct, temperature_c]}");
    run_model(&without, "kilns.csv",
              "{id: m, response: shrinkage_pct, terms: [clay, moisture_pct, temperature_c], "
              "intercept: false}");
    const diag_collinearity *a = &first(&with)->collinearity,
                            *b = &first(&without)->collinearity;
    assert_int_equal(a->n_terms, 3);
    assert_int_equal(b->n_terms, 3);
    agreement same = {"VIF with and without the intercept written", 0};
    for (size_t t = 0; t < 3; t++) {
        assert_int_equal(a->terms[t].df, b->terms[t].df);
        agree(&same, b->terms[t].gvif, a->terms[t].gvif, 0, 1e-10, a->terms[t].label);
    }
    assert_int_equal(b->terms[0].df, 2); /* three clays */
    agree(&same, b->max_vif, a->max_vif, 0, 1e-10, "largest");
    agreement_print(&same);
    diag_run_free(&with);
    diag_run_free(&without);
}

/* ---- edge cases ----------------------------------------------------------- */

/* y = 1 + 2x exactly: every residual is zero, so nothing about their
   distribution can be tested; leverages still exist (hᵢ of a straight
   line: 1/n + (xᵢ − x̄)²/Σ(x − x̄)²; x = 0…7: x̄ = 3.5, Σ = 42). */
static void test_perfect_fit(void **state)
{
    (void)state;
    diag_run run;
    run_model(&run, "exact.csv", "{id: m, response: y, terms: [x], order_by: t}");
    const diagnostics *g = first(&run);
    assert_false(g->shapiro.computed);
    assert_int_equal(g->shapiro.reason, DIAG_REASON_EXACT_FIT);
    assert_false(g->moments.computed);
    assert_int_equal(g->breusch_pagan.reason, DIAG_REASON_EXACT_FIT);
    assert_int_equal(g->durbin_watson.reason, DIAG_REASON_EXACT_FIT);
    assert_int_equal(g->reset.reason, DIAG_REASON_EXACT_FIT);
    for (size_t i = 0; i < 8; i++) {
        double x = (double)i;
        assert_true(fabs(g->influence.leverage[i] -
                         (0.125 + (x - 3.5) * (x - 3.5) / 42.0)) < 1e-14);
        diag_row_measures m = diag_influence_row(&g->influence, i);
        assert_true(isnan(m.cooks) && isnan(m.standardized));
        assert_int_equal(g->influence.flags[i] & ~(unsigned)DIAG_FLAG_LEVERAGE, 0);
    }
    for (size_t a = 0; a < DIAG_N_ASSUMPTIONS; a++)
        if (a != DIAG_COLLINEARITY)
            assert_int_equal(g->verdicts[a].verdict, DIAG_NOT_ASSESSED);
    /* One regressor: its VIF is 1 by definition. */
    assert_true(fabs(g->collinearity.terms[0].vif - 1.0) < 1e-14);
    assert_int_equal(g->verdicts[DIAG_COLLINEARITY].verdict, DIAG_HOLDS);

    /* results.json writes what is not a number as null. */
    json_t *root = results_json(&run);
    json_t *d =
        json_object_get(json_array_get(json_object_get(root, "models"), 0), "diagnostics");
    json_t *sw = json_object_get(d, "shapiro_wilk");
    assert_true(json_is_null(json_object_get(sw, "w")));
    assert_string_equal(json_string_value(json_object_get(sw, "reason")), "exact_fit");
    assert_true(
        json_is_null(json_object_get(json_object_get(d, "durbin_watson"), "method")));
    json_decref(root);
    diag_run_free(&run);
}

/* Four rows, three coefficients: one residual degree of freedom. The
   leave-one-out variance has none, Durbin–Watson has a single residual
   eigenvalue (a point mass, no test), RESET has no room for two terms. */
static void test_one_residual_df(void **state)
{
    (void)state;
    diag_run run;
    run_model(&run, "tiny.csv", "{id: m, response: y, terms: [x, z]}");
    const diagnostics *g = first(&run);
    assert_true(g->shapiro.computed);
    assert_int_equal(g->shapiro.n, 4);
    assert_int_equal(g->durbin_watson.reason, DIAG_REASON_NO_RESIDUAL_DF);
    assert_false(g->reset.computed);
    assert_true(isnan(g->influence.threshold[1])); /* Bonferroni: no df */
    for (size_t i = 0; i < 4; i++) {
        diag_row_measures m = diag_influence_row(&g->influence, i);
        assert_true(isnan(m.studentized) && isnan(m.dffits));
        assert_true(isfinite(m.standardized));
        assert_true(isfinite(m.cooks));
    }
    /* Σ hᵢ = p (the trace of the hat matrix). */
    double trace = 0.0;
    for (size_t i = 0; i < 4; i++)
        trace += g->influence.leverage[i];
    assert_true(fabs(trace - 3.0) < 1e-13);
    diag_run_free(&run);
}

/* Groups at 10 ± 1 and 20 ± 1: the fit is the group means and every
   squared residual is 1, so the variance is exactly constant: both
   Breusch–Pagan statistics are 0 and p = 1. */
static void test_constant_squared_residuals(void **state)
{
    (void)state;
    diag_run run;
    run_model(&run, "plusminus.csv", "{id: m, response: y, terms: [g]}");
    const diag_breusch_pagan *bp = &first(&run)->breusch_pagan;
    assert_true(bp->computed);
    assert_true(bp->studentized.statistic == 0.0 && bp->studentized.p == 1.0);
    assert_true(bp->original.statistic == 0.0 && bp->original.p == 1.0);
    assert_int_equal(first(&run)->verdicts[DIAG_CONSTANT_VARIANCE].verdict, DIAG_HOLDS);
    diag_run_free(&run);
}

/* 6000 rows through the whole stage: a subsample for Shapiro–Wilk, the
   beta approximation for Durbin–Watson, and the "doubtful" verdict: noise
   with a mild skew (a tenth of the values shifted by +2: skewness about 0.36,
   excess kurtosis about 0.36) that so many
   rows detect although the shape is close to normal. */
static void test_many_rows(void **state)
{
    (void)state;
    char folder[] = "/tmp/fitproof-diagnostics-XXXXXX";
    assert_non_null(mkdtemp(folder));
    char data[128], spec_path[128];
    snprintf(data, sizeof data, "%s/big.csv", folder);
    snprintf(spec_path, sizeof spec_path, "%s/spec.yaml", folder);
    FILE *f = fopen(data, "w");
    assert_non_null(f);
    fputs("x,y\n", f);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 2024);
    for (size_t i = 0; i < 6000; i++) {
        double x = gsl_rng_uniform(rng) * 10.0;
        double noise =
            gsl_ran_gaussian(rng, 1.0) + (gsl_rng_uniform(rng) < 0.1 ? 2.0 : 0.0);
        fprintf(f, "%.17g,%.17g\n", x, 3.0 + 0.5 * x + noise);
    }
    gsl_rng_free(rng);
    fclose(f);
    diag_run run;
    diag_run_yaml(&run, spec_path,
                  "fitproof: 1\ndata: {path: big.csv}\nmodels:\n"
                  "  - {id: m, response: y, terms: [x]}\n");
    assert_non_null(run.analysis);
    const diagnostics *g = first(&run);
    assert_true(g->shapiro.subsampled);
    assert_int_equal(g->shapiro.n, 5000);
    assert_int_equal(g->shapiro.n_total, 6000);
    assert_int_equal(g->moments.n, 6000);
    assert_int_equal(g->durbin_watson.method, DIAG_DW_BETA);
    assert_int_equal(g->durbin_watson.reason, DIAG_REASON_NO_ORDER);
    assert_true(g->shapiro.p < 0.05);
    assert_int_equal(g->verdicts[DIAG_NORMALITY].verdict, DIAG_DOUBTFUL);
    assert_true(g->verdicts[DIAG_NORMALITY].effect < 1.0);
    /* No order given: d exists (file order) but independence is not judged. */
    assert_int_equal(g->verdicts[DIAG_INDEPENDENCE].verdict, DIAG_NOT_ASSESSED);
    assert_int_equal(g->verdicts[DIAG_INDEPENDENCE].remedies[0], DIAG_REMEDY_ORDER_ROWS);
    /* The moments of D streamed from the fit's factor equal the ones from
       a thin Q of the whole design (the same traces, computed two ways:
       independence.c's trace_moments on an n × p copy). */
    const design *d = run.analysis->models[0].design;
    const fit_result *fr = run.analysis->models[0].fit;
    gsl_matrix *x = gsl_matrix_alloc(d->n_used, d->n_coefs);
    double *e = malloc(d->n_used * sizeof(double));
    for (size_t i = 0; i < d->n_used; i++) {
        for (size_t c = 0; c < d->n_coefs; c++)
            gsl_matrix_set(x, i, c, design_get(d, i, c));
        e[i] = gsl_vector_get(fr->residuals, i);
    }
    diag_durbin_watson whole;
    diagnostics_durbin_watson(x, e, 0, &whole);
    agreement a = {"Durbin-Watson moments streamed from the factor vs a thin Q", 0};
    agree(&a, g->durbin_watson.mean_d, whole.mean_d, 0, 1e-12, "mean");
    agree(&a, g->durbin_watson.variance_d, whole.variance_d, 0, 1e-9, "variance");
    agree(&a, g->durbin_watson.p_two_sided, whole.p_two_sided, 0, 1e-9, "p");
    agreement_print(&a);
    free(e);
    gsl_matrix_free(x);
    diag_run_free(&run);
    unlink(data);
    rmdir(folder);
}

/* In a balanced design (four groups of equal size: every leverage is
   exactly p/n) with normal errors, each rule flags about the share
   results.json gives as expected_share. Binomial check at 4.5 standard
   errors (hand derivation in influence.c: tᵢ ~ t(n − p − 1), rᵢ²/(n − p) ~
   Beta(½, (n − p − 1)/2), Cook & Weisberg 1982, §2.2). */
static void test_expected_shares(void **state)
{
    (void)state;
    char folder[] = "/tmp/fitproof-diagnostics-XXXXXX";
    assert_non_null(mkdtemp(folder));
    char data[128], spec_path[128];
    snprintf(data, sizeof data, "%s/clean.csv", folder);
    snprintf(spec_path, sizeof spec_path, "%s/spec.yaml", folder);
    FILE *f = fopen(data, "w");
    assert_non_null(f);
    fputs("group,y\n", f);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 15);
    size_t n = 40000;
    for (size_t i = 0; i < n; i++)
        fprintf(f, "g%zu,%.17g\n", i % 4, (double)(i % 4) + gsl_ran_gaussian(rng, 1.0));
    gsl_rng_free(rng);
    fclose(f);
    diag_run run;
    diag_run_yaml(&run, spec_path,
                  "fitproof: 1\ndata: {path: clean.csv, columns: {group: {kind: category}}}\n"
                  "models:\n  - {id: m, response: y, terms: [group]}\n");
    assert_non_null(run.analysis);
    const diag_influence *inf = &first(&run)->influence;
    assert_int_equal(inf->count[0], 0); /* no leverage above 2p/n */
    assert_true(inf->expected_share[0] == 0.0);
    for (size_t k = 2; k < DIAG_N_RULES; k++) {
        double share = inf->expected_share[k];
        double observed = (double)inf->count[k] / (double)n;
        if (share * (double)n < 1e-3) { /* Cook's F median: about 0.8, never reached */
            assert_int_equal(inf->count[k], 0);
            continue;
        }
        double se = sqrt(share * (1.0 - share) / (double)n);
        printf("  measured: rule %s flags %.5f of clean rows, expected %.5f (%.1f SE)\n",
               diag_rules[k].id, observed, share, (observed - share) / se);
        assert_true(fabs(observed - share) < 4.5 * se);
    }
    /* The most influential rows: 25, by Cook's distance, the first the
       largest. */
    assert_int_equal(inf->n_top, DIAG_TOP_ROWS);
    assert_int_equal(inf->lines[inf->top[0]], inf->max_cooks_line);
    double *cooks = measure_rows(inf, MEASURE_COOKS);
    for (size_t k = 1; k < inf->n_top; k++)
        assert_true(cooks[inf->top[k - 1]] >= cooks[inf->top[k]]);
    size_t above = 0;
    for (size_t i = 0; i < n; i++)
        above += cooks[i] > cooks[inf->top[DIAG_TOP_ROWS - 1]];
    free(cooks);
    assert_int_equal(above, DIAG_TOP_ROWS - 1);
    diag_run_free(&run);
    unlink(data);
    rmdir(folder);
}

/* ---- the weighted path ------------------------------------------------------ */

/* The weighted fit is OLS on √w-scaled rows. The weighted design is put
   together here (weights from the data's weight column) and fitted by the
   fit stage, whose factor the diagnostics read. Reference: statsmodels
   OLS on the √w-scaled data (tests/reference/diagnostics_reference.py). */
static void test_weighted_fit(void **state)
{
    (void)state;
    json_error_t error;
    json_t *root = json_load_file("tests/reference/diagnostics.expected.json", 0, &error);
    assert_non_null(root);
    json_t *want = json_object_get(json_object_get(root, "kilns"), "weighted");
    diag_run run;
    diag_run_yaml(
        &run, SPEC_PATH,
        "fitproof: 1\ndata: {path: kilns.csv, columns: {clay: {kind: category},"
        " shelf: {kind: category}}}\nmodels:\n  - {id: kilns, response: shrinkage_pct,"
        " terms: [moisture_pct, temperature_c, clay, shelf, [moisture_pct, clay]],"
        " order_by: batch}\n");
    assert_non_null(run.analysis);
    const analysis_model *am = &run.analysis->models[0];
    size_t n = am->design->n_used;
    const data_column *weight = data_find(run.stages.table, "weight");
    design weighted = *am->design;
    weighted.weights = gsl_vector_alloc(n);
    for (size_t i = 0; i < n; i++)
        gsl_vector_set(weighted.weights, i, weight->numbers[design_table_row(am->design, i)]);
    fit_result *fit = fit_new(&weighted, 0.95);
    diagnostics *g = diagnostics_new(&weighted, fit, run.stages.table, 0.05);
    assert_true(g->weighted);
    agreement a = {"weighted influence, d and W vs statsmodels on sqrt(w)-scaled data", 0};
    const char *keys[] = {"hat", "standardized", "studentized", "cooks", "dffits"};
    double *got[] = {NULL, measure_rows(&g->influence, MEASURE_STANDARDIZED),
                     measure_rows(&g->influence, MEASURE_STUDENTIZED),
                     measure_rows(&g->influence, MEASURE_COOKS),
                     measure_rows(&g->influence, MEASURE_DFFITS)};
    for (size_t k = 0; k < 5; k++)
        for (size_t i = 0; i < n; i++)
            agree(&a, k ? got[k][i] : g->influence.leverage[i],
                  json_number_value(json_array_get(json_object_get(want, keys[k]), i)), 1.0,
                  1e-8, keys[k]);
    for (size_t k = 1; k < 5; k++)
        free(got[k]);
    agree(&a, g->durbin_watson.d, json_number_value(json_object_get(want, "dw")), 0, 1e-9,
          "d");
    json_t *sw = json_object_get(want, "shapiro_double");
    agree(&a, g->shapiro.w, json_number_value(json_array_get(sw, 0)), 0, 1e-9, "W");
    agree(&a, g->shapiro.p, json_number_value(json_array_get(sw, 1)), 0, 1e-7, "p");
    agreement_print(&a);

    /* The residual table says so: weight and Pearson residual columns. */
    analysis_model shown = *am;
    shown.design = &weighted;
    shown.fit = fit;
    shown.diagnostics = g;
    buf csv;
    buf_init(&csv);
    render_residuals_csv(&shown, run.stages.table, &csv);
    assert_non_null(strstr(csv.data, "line,fitted,residual,weight,pearson_residual,"));
    buf_free(&csv);

    diagnostics_free(g);
    fit_free(fit);
    gsl_vector_free(weighted.weights);
    diag_run_free(&run);
    json_decref(root);
}

/* ---- verdicts and checks ----------------------------------------------------- */

static const char KILNS_CHECKS[] =
    "fitproof: 1\n"
    "data:\n"
    "  path: kilns.csv\n"
    "  columns: {clay: {kind: category}, shelf: {kind: category}}\n"
    "models:\n"
    "  - id: kilns\n"
    "    response: shrinkage_pct\n"
    "    terms: [moisture_pct, temperature_c, clay, shelf, [moisture_pct, clay]]\n"
    "    order_by: batch\n"
    "checks:\n"
    "  - {model: kilns, require: normal_residuals}\n"
    "  - {model: kilns, require: constant_variance}\n"
    "  - {model: kilns, require: independent_errors}\n"
    "  - {model: kilns, require: linearity}\n"
    "  - {model: kilns, require: max_vif, value: 10}\n"
    "  - {model: kilns, require: max_cooks_distance, value: 1}\n"
    "  - {model: kilns, require: positive, coefficient: moisture_pct}\n"
    "  - {model: kilns, require: negative, coefficient: moisture_pct}\n"
    "  - {model: kilns, require: metric, metric: r_squared, at_least: 0.5}\n"
    "  - {model: kilns, require: metric, metric: n_used, at_most: 10}\n";

/* The kilns data (reference values from statsmodels/scipy): residual
   Shapiro–Wilk p ≈ 6e-6 with excess kurtosis ≈ 7 (the planted outlier):
   violated. Koenker's Breusch–Pagan p ≈ 0.081: holds. d ≈ 1.515 in batch
   order with exact two-sided p ≈ 0.027 and |1 − d/2| ≈ 0.24: violated.
   RESET p ≈ 0.40: holds. GVIF of clay ≈ 866 (uncentred interaction):
   violated, centring first. One Bonferroni outlier and no Cook's D above
   the F median: doubtful. */
static void test_verdicts_and_checks(void **state)
{
    (void)state;
    diag_run run;
    diag_run_yaml(&run, SPEC_PATH, KILNS_CHECKS);
    assert_non_null(run.analysis);
    const diagnostics *g = first(&run);
    const diag_verdict *v = g->verdicts;
    assert_int_equal(v[DIAG_NORMALITY].verdict, DIAG_VIOLATED);
    assert_int_equal(v[DIAG_NORMALITY].remedies[0], DIAG_REMEDY_TRANSFORM_RESPONSE);
    assert_int_equal(v[DIAG_NORMALITY].remedies[1], DIAG_REMEDY_INSPECT_ROWS);
    assert_int_equal(v[DIAG_CONSTANT_VARIANCE].verdict, DIAG_HOLDS);
    assert_int_equal(v[DIAG_INDEPENDENCE].verdict, DIAG_VIOLATED);
    assert_int_equal(v[DIAG_INDEPENDENCE].remedies[0], DIAG_REMEDY_TIME_SERIES_MODEL);
    assert_int_equal(v[DIAG_LINEARITY].verdict, DIAG_HOLDS);
    assert_int_equal(v[DIAG_COLLINEARITY].verdict, DIAG_VIOLATED);
    assert_int_equal(v[DIAG_COLLINEARITY].remedies[0], DIAG_REMEDY_CENTER_TERMS);
    assert_int_equal(v[DIAG_INFLUENCE].verdict, DIAG_DOUBTFUL);
    for (size_t a = 0; a < DIAG_N_ASSUMPTIONS; a++)
        assert_int_equal(v[a].n_remedies == 0, v[a].verdict == DIAG_HOLDS);

    const analysis *an = run.analysis;
    assert_int_equal(an->n_checks, 10);
    const bool passed[] = {false, true, false, true, false, true, true, false, true, false};
    for (size_t k = 0; k < 10; k++)
        assert_int_equal(an->checks[k].passed, passed[k]);
    assert_int_equal(an->n_failed_checks, 5);
    assert_string_equal(an->checks[4].label, "moisture_pct × clay");
    assert_true(an->checks[4].value > 10.0);
    assert_true(an->checks[5].line >= 2);
    assert_true(an->checks[6].value > 0 && an->checks[6].ci_low < an->checks[6].value);
    assert_true(an->checks[9].value == 80.0);
    diag_run_free(&run);
}

/* What a check or a diagnostic needs of the spec is a located error. */
static void expect_error(const char *yaml, const char *message)
{
    diag_run run;
    diag_run_yaml(&run, SPEC_PATH, yaml);
    assert_null(run.analysis);
    assert_true(run.stages.errors.count >= 1);
    if (!strstr(run.stages.errors.messages[0], message))
        fprintf(stderr, "got: %s\nwanted: %s\n", run.stages.errors.messages[0], message);
    assert_non_null(strstr(run.stages.errors.messages[0], message));
    diag_run_free(&run);
}

static void test_spec_errors(void **state)
{
    (void)state;
    expect_error(
        "fitproof: 1\ndata: {path: exact.csv}\nmodels:\n"
        "  - {id: m, response: y, terms: [x]}\n"
        "checks:\n  - {model: m, require: positive, coefficient: X}\n",
        "tests/data/diagnostics/spec.yaml:6:48: error: model 'm' has no coefficient "
        "'X'; did you mean 'x'?");
    expect_error(
        "fitproof: 1\ndata: {path: exact.csv}\nmodels:\n"
        "  - {id: m, response: y, terms: [x]}\n"
        "checks:\n  - {model: m, require: negative, coefficient: slope}\n",
        "model 'm' has no coefficient 'slope'; its coefficients are 'baseline value', "
        "'x'");
    expect_error("fitproof: 1\ndata: {path: exact.csv}\nmodels:\n"
                 "  - {id: m, response: y, terms: [x]}\n"
                 "checks:\n  - {model: m, require: independent_errors}\n",
                 "spec.yaml:6:5: error: an independent_errors check needs the order of the "
                 "rows; add 'order_by: COLUMN' (a time or sequence column) to model 'm'");
    expect_error(
        "fitproof: 1\ndata: {path: exact.csv}\nmodels:\n"
        "  - {id: m, response: y, terms: [x], order_by: tt}\n",
        "spec.yaml:4:48: error: order_by 'tt' is not a column of the data file; did "
        "you mean 't'?");
    expect_error(
        "fitproof: 1\ndata: {path: formula.csv, columns: {step: {kind: category}}}\n"
        "models:\n  - {id: m, response: y, terms: [x], variance_columns: [step]}\n",
        "variance column 'step' is a category; the variance test needs numeric columns");
    expect_error(
        "fitproof: 1\ndata: {path: formula.csv, columns: {step: {kind: category}}}\n"
        "models:\n  - {id: m, response: y, terms: [x], order_by: seq}\n",
        "order_by column 'seq' has no value on line 5, a row model 'm' uses; fill it in "
        "or leave the row out with where:");
}

/* ---- residuals_<model>.csv ------------------------------------------------------ */

/* Levels that a spreadsheet would run as formulas get a leading
   apostrophe (OWASP, "CSV Injection"); "-3" is a plain number and stays;
   RFC 4180 quoting for the comma and the quotes; CRLF line ends; numbers,
   negative ones included, are written bare. */
static void test_residuals_csv_cells(void **state)
{
    (void)state;
    diag_run run;
    diag_run_yaml(
        &run, SPEC_PATH,
        "fitproof: 1\ndata: {path: formula.csv, columns: {step: {kind: category}}}\n"
        "models:\n  - {id: m, response: y, terms: [x], order_by: step}\n");
    assert_non_null(run.analysis);
    buf csv;
    buf_init(&csv);
    render_residuals_csv(&run.analysis->models[0], run.stages.table, &csv);
    const char *text = csv.data;
    assert_non_null(strstr(text,
                           "line,fitted,residual,standardized_residual,"
                           "studentized_residual,leverage,cooks_distance,dffits,flags,"
                           "order_position,step\r\n"));
    assert_non_null(strstr(text, ",'=SUM(A1)\r\n"));
    assert_non_null(strstr(text, ",'+cmd\r\n"));
    assert_non_null(strstr(text, ",-3\r\n"));
    assert_non_null(strstr(text, ",'@home\r\n"));
    assert_non_null(strstr(text, ",\"plain, text\"\r\n"));
    assert_non_null(strstr(text, ",\"say \"\"hi\"\"\"\r\n"));
    assert_null(strstr(text, ",'-")); /* negative numbers are numbers */
    /* Row order is the file's; line 2 holds "=SUM(A1)", first in byte order
       after "+cmd" and "-3": order position 3. */
    assert_non_null(strstr(text, "\r\n2,"));
    assert_non_null(strstr(text, ",3,'=SUM(A1)\r\n"));
    size_t lines = 0;
    for (const char *c = text; *c; c++)
        lines += *c == '\n';
    assert_int_equal(lines, 7);
    buf_free(&csv);
    diag_run_free(&run);
}

/* ---- results.json keys ------------------------------------------------------------ */

static void has_keys(json_t *object, const char *const *keys)
{
    assert_true(json_is_object(object));
    for (const char *const *key = keys; *key; key++) {
        if (!json_object_get(object, *key))
            fprintf(stderr, "missing key %s\n", *key);
        assert_non_null(json_object_get(object, *key));
    }
}

/* The keys the issue fixes for outside tools (docs/results.md). */
static void test_results_json_keys(void **state)
{
    (void)state;
    diag_run run;
    diag_run_yaml(&run, SPEC_PATH, KILNS_CHECKS);
    assert_non_null(run.analysis);
    json_t *root = results_json(&run);
    json_t *d =
        json_object_get(json_array_get(json_object_get(root, "models"), 0), "diagnostics");
    has_keys(d, (const char *const[]){"shapiro_wilk", "breusch_pagan", "durbin_watson",
                                      "reset", "condition_number", "vif", "influence",
                                      "verdicts", NULL});
    has_keys(json_object_get(d, "shapiro_wilk"),
             (const char *const[]){"w", "p", "n", "subsampled", NULL});
    const char *const test[] = {"statistic", "df", "p", NULL};
    has_keys(json_object_get(json_object_get(d, "breusch_pagan"), "studentized"), test);
    has_keys(json_object_get(json_object_get(d, "breusch_pagan"), "original"), test);
    has_keys(json_object_get(d, "durbin_watson"),
             (const char *const[]){"d", "p_positive", "p_negative", "p_two_sided", "method",
                                   NULL});
    assert_string_equal(
        json_string_value(json_object_get(json_object_get(d, "durbin_watson"), "method")),
        "exact_imhof");
    has_keys(json_object_get(d, "reset"),
             (const char *const[]){"f", "df_num", "df_den", "p", NULL});
    has_keys(json_array_get(json_object_get(d, "vif"), 0),
             (const char *const[]){"label", "vif", "gvif", "gvif_adjusted", "df", NULL});
    json_t *influence = json_object_get(d, "influence");
    has_keys(influence, (const char *const[]){"max_leverage", "max_cooks_distance",
                                               "rows_flagged", "most_influential", NULL});
    has_keys(json_array_get(json_object_get(influence, "rules"), 0),
             (const char *const[]){"id", "rows", "expected_share", NULL});
    json_t *top = json_object_get(influence, "most_influential");
    assert_true(json_array_size(top) >= 1 && json_array_size(top) <= DIAG_TOP_ROWS);
    has_keys(json_array_get(top, 0),
             (const char *const[]){"line", "leverage", "studentized_residual",
                                   "cooks_distance", "dffits", "reasons", NULL});
    assert_int_equal(json_integer_value(json_object_get(json_array_get(top, 0), "line")),
                     json_integer_value(json_object_get(influence, "max_cooks_line")));
    json_t *verdicts = json_object_get(d, "verdicts");
    assert_int_equal(json_array_size(verdicts), DIAG_N_ASSUMPTIONS);
    has_keys(json_array_get(verdicts, 0),
             (const char *const[]){"assumption", "verdict", "remedy", NULL});
    json_t *checks = json_object_get(root, "checks");
    assert_int_equal(json_array_size(checks), 10);
    has_keys(json_array_get(checks, 0),
             (const char *const[]){"name", "passed", "detail", NULL});
    assert_true(json_is_false(json_object_get(json_array_get(checks, 0), "passed")));
    json_decref(root);
    diag_run_free(&run);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_spanning_category_judged_centred),
        cmocka_unit_test(test_perfect_fit),
        cmocka_unit_test(test_one_residual_df),
        cmocka_unit_test(test_constant_squared_residuals),
        cmocka_unit_test(test_many_rows),
        cmocka_unit_test(test_expected_shares),
        cmocka_unit_test(test_weighted_fit),
        cmocka_unit_test(test_verdicts_and_checks),
        cmocka_unit_test(test_spec_errors),
        cmocka_unit_test(test_residuals_csv_cells),
        cmocka_unit_test(test_results_json_keys),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

/*
 * test_diagnostics.c — accuracy of the assumption diagnostics against
 * sources outside the project:
 *   - scipy.stats.shapiro (Debian python3-scipy 1.10, single precision) and
 *     a double-precision numpy run of the published algorithm (Royston
 *     1992; AS R94), both made by tests/reference/diagnostics_reference.py
 *     and committed in tests/reference/diagnostics.expected.json;
 *   - exact facts about W (Shapiro & Wilk 1965);
 *   - statsmodels 0.13.5 OLS influence, Breusch–Pagan, Durbin–Watson, VIF
 *     and RESET, scipy's moment tests, numpy's GVIF and condition number, on
 *     the invented kilns data (tests/data/diagnostics/kilns.csv);
 *   - a seeded Monte Carlo simulation of the Durbin–Watson statistic under
 *     independent normal errors (same script);
 *   - the Savin & White (1977) bounds of the Durbin–Watson test.
 */
#include "diagkit.h"

#include <gsl/gsl_math.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <jansson.h>
#include <stdlib.h>

#include "../../src/diagnostics/diagnostics.h"

static json_t *reference(void)
{
    json_error_t error;
    json_t *root = json_load_file("tests/reference/diagnostics.expected.json", 0, &error);
    assert_non_null(root);
    return root;
}

static double number_at(json_t *object, const char *key)
{
    json_t *value = json_object_get(object, key);
    assert_non_null(value);
    return json_number_value(value);
}

static double item(json_t *array, size_t index)
{
    json_t *value = json_array_get(array, index);
    assert_non_null(value);
    return json_number_value(value);
}

static double *numbers(json_t *array, size_t *n)
{
    *n = json_array_size(array);
    double *values = malloc(*n * sizeof(double));
    for (size_t i = 0; i < *n; i++)
        values[i] = item(array, i);
    return values;
}

/* ---- Shapiro–Wilk --------------------------------------------------------- */

/* scipy runs AS R94 in single precision: W carries about 7 digits, p 2 to 5
   (the tolerances: W 2e-6, p 1e-2 relative). The numpy run is the
   same published algorithm in double precision: 1e-9. */
static void test_shapiro_against_scipy_and_double(void **state)
{
    (void)state;
    json_t *root = reference();
    json_t *cases = json_object_get(root, "shapiro");
    agreement scipy_w = {"Shapiro-Wilk W vs scipy (float32)", 0};
    agreement scipy_p = {"Shapiro-Wilk p vs scipy (float32)", 0};
    agreement double_w = {"Shapiro-Wilk W vs numpy double run of AS R94", 0};
    agreement double_p = {"Shapiro-Wilk p vs numpy double run of AS R94", 0};
    assert_int_equal(json_array_size(cases), 10);
    for (size_t k = 0; k < json_array_size(cases); k++) {
        json_t *c = json_array_get(cases, k);
        size_t n;
        double *x = numbers(json_object_get(c, "x"), &n);
        assert_int_equal(n, (size_t)number_at(c, "n"));
        diag_shapiro sw;
        diagnostics_shapiro_wilk(x, n, &sw);
        assert_true(sw.computed);
        assert_false(sw.subsampled);
        agree(&scipy_w, sw.w, number_at(c, "scipy_w"), 0, 2e-6, "W");
        agree(&scipy_p, sw.p, number_at(c, "scipy_p"), 0, 1e-2, "p");
        agree(&double_w, sw.w, number_at(c, "double_w"), 0, 1e-9, "W");
        agree(&double_p, sw.p, number_at(c, "double_p"), 0, 1e-9, "p");
        free(x);
    }
    agreement_print(&scipy_w);
    agreement_print(&scipy_p);
    agreement_print(&double_w);
    agreement_print(&double_p);
    json_decref(root);
}

/* Exact facts that do not depend on any other program. */
static void test_shapiro_exact_facts(void **state)
{
    (void)state;
    /* n = 3, x = (0, 1, 3), a = (−√½, 0, √½) (Shapiro & Wilk 1965): b = 3/√2,
       b² = 9/2; mean 4/3, SS = 16/9 + 1/9 + 25/9 = 42/9; W = (9/2)/(42/9) =
       27/28. P(W ≤ w) = (6/π)(arcsin √w − arcsin √(3/4)) exactly (ibid.). */
    double x3[] = {3.0, 0.0, 1.0};
    diag_shapiro sw;
    diagnostics_shapiro_wilk(x3, 3, &sw);
    assert_true(fabs(sw.w - 27.0 / 28.0) < 1e-15);
    double exact = (6.0 / M_PI) * (asin(sqrt(27.0 / 28.0)) - asin(sqrt(0.75)));
    assert_true(fabs(sw.p - exact) < 1e-14);
    /* The distribution's ends: W cannot be below 3/4 for n = 3. */
    assert_true(diagnostics_shapiro_p(0.75, 3) == 0.0);
    assert_true(fabs(diagnostics_shapiro_p(1.0, 3) - 1.0) < 1e-15);

    /* Shapiro & Wilk (1965), Table 6, 5% points of W (as reproduced in the
       US EPA's unified guidance, Table 10-3): for n ≤ 20 the paper used
       exact coefficients, so Royston's approximation should put p near
       0.05 (±0.01, which also covers the table's rounding to 3 decimals:
       ±0.0005 in W moves p by about 0.001). Above n = 20 the paper's
       coefficients were approximations (recalled from memory), and its
       points belong to a slightly different statistic. */
    const double five[] = {0.842, 0.850, 0.859, 0.866, 0.874, 0.881,
                           0.887, 0.892, 0.897, 0.901, 0.905};
    for (size_t n = 10; n <= 20; n++) {
        double p = diagnostics_shapiro_p(five[n - 10], n);
        assert_true(fabs(p - 0.05) <= 0.01);
    }
    /* 1% points n = 10, 15, 20: 0.781, 0.835, 0.868 (Table 6, recalled from
       memory). */
    const size_t sizes[] = {10, 15, 20};
    const double one[] = {0.781, 0.835, 0.868};
    for (size_t k = 0; k < 3; k++)
        assert_true(fabs(diagnostics_shapiro_p(one[k], sizes[k]) - 0.01) <= 0.003);
}

/* W depends on the sample only through its standardized order statistics:
   shifting and scaling change nothing (up to rounding of the data). */
static void test_shapiro_invariance(void **state)
{
    (void)state;
    json_t *root = reference();
    json_t *c = json_array_get(json_object_get(root, "shapiro"), 6); /* n = 50 */
    size_t n;
    double *x = numbers(json_object_get(c, "x"), &n);
    double *y = malloc(n * sizeof(double));
    diag_shapiro base, moved;
    diagnostics_shapiro_wilk(x, n, &base);
    for (size_t i = 0; i < n; i++)
        y[i] = 250.0 - 0.037 * x[i];
    diagnostics_shapiro_wilk(y, n, &moved);
    assert_true(fabs(moved.w - base.w) <= 1e-12 * base.w);
    assert_true(fabs(moved.p - base.p) <= 1e-9 * base.p);
    free(y);
    free(x);
    json_decref(root);
}

/* Above 5000 values: a seeded subsample of 5000, the same every time. */
static void test_shapiro_subsample(void **state)
{
    (void)state;
    size_t n = 6000;
    double *x = malloc(n * sizeof(double));
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 42);
    for (size_t i = 0; i < n; i++)
        x[i] = gsl_ran_gaussian(rng, 1.0) + (i % 7 == 0 ? 0.5 : 0.0);
    gsl_rng_free(rng);
    diag_shapiro first, second;
    diagnostics_shapiro_wilk(x, n, &first);
    diagnostics_shapiro_wilk(x, n, &second);
    assert_true(first.computed && first.subsampled);
    assert_int_equal(first.n, 5000);
    assert_int_equal(first.n_total, 6000);
    assert_int_equal(first.seed, DIAG_SUBSAMPLE_SEED);
    assert_memory_equal(&first.w, &second.w, sizeof(double));
    assert_memory_equal(&first.p, &second.p, sizeof(double));
    /* The subsample is not simply the first 5000 values. */
    diag_shapiro head;
    diagnostics_shapiro_wilk(x, 5000, &head);
    assert_false(head.subsampled);
    assert_true(head.w != first.w);
    /* The moment tests use every value. */
    diag_moments m;
    diagnostics_moments(x, n, &m);
    assert_int_equal(m.n, 6000);
    assert_true(m.computed && !isnan(m.p_k2));
    free(x);

    double two[] = {1.0, 2.0};
    diagnostics_shapiro_wilk(two, 2, &first);
    assert_false(first.computed);
    assert_int_equal(first.reason, DIAG_REASON_TOO_FEW_ROWS);
}

/* ---- the kilns model against statsmodels ---------------------------------- */

static const char KILNS[] =
    "fitproof: 1\n"
    "data:\n"
    "  path: kilns.csv\n"
    "  columns:\n"
    "    clay: {kind: category}\n"
    "    shelf: {kind: category}\n"
    "models:\n"
    "  - id: kilns\n"
    "    response: shrinkage_pct\n"
    "    terms: [moisture_pct, temperature_c, clay, shelf, [moisture_pct, clay]]\n"
    "    order_by: batch\n"
    "  - id: humidity\n"
    "    response: shrinkage_pct\n"
    "    terms: [moisture_pct, temperature_c, clay, shelf, [moisture_pct, clay]]\n"
    "    order_by: batch\n"
    "    variance_columns: [humidity_pct]\n";

static void run_kilns(diag_run *run)
{
    diag_run_yaml(run, "tests/data/diagnostics/spec.yaml", KILNS);
    if (!run->analysis)
        error_list_print(&run->stages.errors);
    assert_non_null(run->analysis);
}

/* The kilns analysis with its reference values. */
typedef struct {
    json_t *root;
    json_t *want; /* the "kilns" object */
    diag_run run;
} kilns_case;

static void kilns_open(kilns_case *c)
{
    c->root = reference();
    c->want = json_object_get(c->root, "kilns");
    run_kilns(&c->run);
}

static void kilns_close(kilns_case *c)
{
    diag_run_free(&c->run);
    json_decref(c->root);
}

/* statsmodels solves by pinv in double precision, fitproof by an extended-
   precision QR; on this design (condition number 154) both are good to
   about 1e-12, so 1e-8 leaves room without hiding a wrong formula. */
static const double STATSMODELS_TOLERANCE = 1e-8;

static void compare_rows(agreement *a, const double *got, json_t *want, size_t n,
                         const char *what)
{
    assert_int_equal(json_array_size(want), n);
    for (size_t i = 0; i < n; i++)
        agree(a, got[i], item(want, i), 1.0, STATSMODELS_TOLERANCE, what);
}

static void test_influence_against_statsmodels(void **state)
{
    (void)state;
    kilns_case kc;
    kilns_open(&kc);
    json_t *k = kc.want;
    const analysis_model *am = &kc.run.analysis->models[0];
    json_t *labels = json_object_get(k, "labels");
    for (size_t c = 0; c < am->design->n_coefs; c++)
        assert_string_equal(am->design->coefs[c].label,
                            json_string_value(json_array_get(labels, c)));
    const diag_influence *inf = &am->diagnostics->influence;
    agreement a = {"influence (hat, studentized, Cook's D, DFFITS) vs statsmodels", 0};
    size_t n = inf->n;
    compare_rows(&a, inf->leverage, json_object_get(k, "hat"), n, "hat");
    const char *keys[] = {"standardized", "studentized", "cooks", "dffits"};
    for (measure m = MEASURE_STANDARDIZED; m <= MEASURE_DFFITS; m++) {
        double *values = measure_rows(inf, m);
        compare_rows(&a, values, json_object_get(k, keys[m]), n, keys[m]);
        free(values);
    }
    /* Bonferroni outlier test: flagged exactly where statsmodels' adjusted
       p-value is below alpha = 0.05. */
    json_t *bonferroni = json_object_get(k, "bonferroni_p");
    size_t outliers = 0;
    for (size_t i = 0; i < n; i++) {
        bool flagged = (inf->flags[i] & DIAG_FLAG_OUTLIER) != 0;
        assert_int_equal(flagged, item(bonferroni, i) < 0.05);
        outliers += flagged;
        assert_int_equal(inf->lines[i], (uint32_t)(i + 2));
    }
    assert_int_equal(outliers, 1); /* the cracked bar the script planted */
    agreement_print(&a);
    kilns_close(&kc);
}

static void compare_bp(agreement *a, const diag_breusch_pagan *bp, json_t *want)
{
    json_t *studentized = json_object_get(want, "studentized");
    json_t *original = json_object_get(want, "original");
    json_t *f = json_object_get(want, "f");
    assert_true(bp->computed);
    agree(a, bp->studentized.statistic, item(studentized, 0), 0, STATSMODELS_TOLERANCE,
          "LM");
    agree(a, bp->studentized.p, item(studentized, 1), 0, STATSMODELS_TOLERANCE, "LM p");
    agree(a, bp->original.statistic, item(original, 0), 0, STATSMODELS_TOLERANCE, "BP");
    agree(a, bp->original.p, item(original, 1), 0, 1e-6, "BP p");
    agree(a, bp->f, item(f, 0), 0, STATSMODELS_TOLERANCE, "F");
    agree(a, bp->f_p, item(f, 1), 0, STATSMODELS_TOLERANCE, "F p");
}

static void test_tests_against_statsmodels(void **state)
{
    (void)state;
    kilns_case kc;
    kilns_open(&kc);
    json_t *k = kc.want;
    const diagnostics *g = kc.run.analysis->models[0].diagnostics;
    agreement a = {"Breusch-Pagan, Durbin-Watson d, VIF, GVIF, RESET vs statsmodels/numpy",
                   0};
    compare_bp(&a, &g->breusch_pagan, json_object_get(k, "bp_model"));
    assert_false(g->breusch_pagan.own_columns);
    const diagnostics *h = kc.run.analysis->models[1].diagnostics;
    compare_bp(&a, &h->breusch_pagan, json_object_get(k, "bp_humidity"));
    assert_true(h->breusch_pagan.own_columns);
    assert_true(h->breusch_pagan.studentized.df == 1.0);

    assert_true(g->durbin_watson.ordered);
    agree(&a, g->durbin_watson.d, number_at(k, "dw"), 0, STATSMODELS_TOLERANCE, "d");

    json_t *vif = json_object_get(k, "vif");
    json_t *gvif = json_object_get(k, "gvif");
    const diag_collinearity *c = &g->collinearity;
    assert_int_equal(c->n_terms, 5);
    const char *labels[] = {"moisture_pct", "temperature_c", "clay", "shelf",
                            "moisture_pct × clay"};
    for (size_t t = 0; t < 5; t++)
        assert_string_equal(c->terms[t].label, labels[t]);
    agree(&a, c->terms[0].vif, number_at(vif, "moisture_pct"), 0, STATSMODELS_TOLERANCE,
          "vif");
    agree(&a, c->terms[1].vif, number_at(vif, "temperature_c"), 0, STATSMODELS_TOLERANCE,
          "vif");
    agree(&a, c->terms[3].vif, number_at(vif, "shelf = top"), 0, STATSMODELS_TOLERANCE,
          "vif");
    agree(&a, c->terms[0].gvif, number_at(gvif, "moisture_pct"), 0, STATSMODELS_TOLERANCE,
          "gvif");
    agree(&a, c->terms[2].gvif, number_at(gvif, "clay"), 0, STATSMODELS_TOLERANCE, "gvif");
    agree(&a, c->terms[4].gvif, number_at(gvif, "moisture_pct × clay"), 0,
          STATSMODELS_TOLERANCE, "gvif");
    assert_int_equal(c->terms[2].df, 2);
    assert_true(isnan(c->terms[2].vif));
    agree(&a, c->terms[2].gvif_adjusted, pow(number_at(gvif, "clay"), 0.25), 0,
          STATSMODELS_TOLERANCE, "gvif^(1/4)");
    agree(&a, c->condition_number, number_at(k, "condition_number"), 0,
          STATSMODELS_TOLERANCE, "condition number");

    json_t *reset = json_object_get(k, "reset");
    assert_true(g->reset.computed);
    agree(&a, g->reset.f, number_at(reset, "f"), 0, STATSMODELS_TOLERANCE, "RESET F");
    agree(&a, g->reset.p, number_at(reset, "p"), 0, STATSMODELS_TOLERANCE, "RESET p");
    assert_true(g->reset.df_num == number_at(reset, "df_num"));
    assert_true(g->reset.df_den == number_at(reset, "df_den"));
    agreement_print(&a);

    agreement m = {"skewness/kurtosis/omnibus tests vs scipy.stats", 0};
    const diag_moments *mo = &g->moments;
    agree(&m, mo->skewness, number_at(k, "skewness"), 0, 1e-9, "skewness");
    agree(&m, mo->excess_kurtosis, number_at(k, "excess_kurtosis"), 0, 1e-9, "kurtosis");
    json_t *sk = json_object_get(k, "skewtest"), *ku = json_object_get(k, "kurtosistest"),
           *om = json_object_get(k, "normaltest");
    agree(&m, mo->z_skewness, item(sk, 0), 0, 1e-9, "skew z");
    agree(&m, mo->p_skewness, item(sk, 1), 0, 1e-9, "skew p");
    agree(&m, mo->z_kurtosis, item(ku, 0), 0, 1e-9, "kurtosis z");
    agree(&m, mo->p_kurtosis, item(ku, 1), 0, 1e-9, "kurtosis p");
    agree(&m, mo->k2, item(om, 0), 0, 1e-9, "K2");
    agree(&m, mo->p_k2, item(om, 1), 0, 1e-9, "K2 p");
    agreement_print(&m);

    agreement s = {"Shapiro-Wilk of the residuals vs numpy double run", 0};
    json_t *sw = json_object_get(k, "shapiro_double");
    agree(&s, g->shapiro.w, item(sw, 0), 0, 1e-9, "W");
    agree(&s, g->shapiro.p, item(sw, 1), 0, 1e-7, "p");
    json_t *sw32 = json_object_get(k, "shapiro_scipy");
    assert_true(fabs(g->shapiro.w - item(sw32, 0)) <= 2e-6 * item(sw32, 0));
    assert_true(fabs(g->shapiro.p - item(sw32, 1)) <= 1e-2 * item(sw32, 1));
    agreement_print(&s);
    kilns_close(&kc);
}

/* ---- Durbin–Watson p-values ------------------------------------------------ */

/* The ordered (weighted) design the test uses, rebuilt from the analysis. */
static gsl_matrix *ordered_design(const analysis_model *am)
{
    const design *d = am->design;
    gsl_matrix *x = gsl_matrix_alloc(d->n_used, d->n_coefs);
    for (size_t i = 0; i < d->n_used; i++) {
        gsl_vector_const_view row = gsl_matrix_const_row(d->x, am->diagnostics->order[i]);
        gsl_matrix_set_row(x, i, &row.vector);
    }
    return x;
}

/* A Monte Carlo estimate from N replications has standard error
   √(p(1 − p)/N); four of them (plus one count) is the tolerance. */
static void compare_monte_carlo(agreement *a, const gsl_matrix *x, json_t *mc)
{
    json_t *points = json_object_get(mc, "points"), *p = json_object_get(mc, "p");
    double reps = number_at(mc, "reps");
    for (size_t k = 0; k < json_array_size(points); k++) {
        double want = item(p, k);
        double got = diagnostics_dw_cdf(x, item(points, k), DIAG_DW_EXACT_MAX);
        double se = sqrt(want * (1.0 - want) / reps);
        double difference = fabs(got - want);
        if (!(difference <= 4.0 * se + 1.0 / reps))
            fprintf(stderr, "P(D <= %.6f): computed %.6f, Monte Carlo %.6f (se %.2g)\n",
                    item(points, k), got, want, se);
        assert_true(difference <= 4.0 * se + 1.0 / reps);
        if (se > 0 && difference / se > a->worst)
            a->worst = difference / se;
        printf("  measured: P(D <= %.4f) = %.6f, Monte Carlo %.6f ± %.1g\n",
               item(points, k), got, want, se);
    }
}

static void test_durbin_watson_against_monte_carlo(void **state)
{
    (void)state;
    json_t *root = reference();
    diag_run run;
    run_kilns(&run);
    const analysis_model *am = &run.analysis->models[0];
    agreement a = {"Durbin-Watson P(D <= c) vs Monte Carlo", 0};
    gsl_matrix *x = ordered_design(am);
    json_t *mc = json_object_get(json_object_get(root, "kilns"), "dw_mc");
    compare_monte_carlo(&a, x, mc);
    const diag_durbin_watson *dw = &am->diagnostics->durbin_watson;
    assert_int_equal(dw->method, DIAG_DW_EXACT);
    assert_true(fabs(dw->p_positive - item(json_object_get(mc, "p"), 0)) < 0.001);
    assert_true(fabs(dw->p_positive + dw->p_negative - 1.0) < 1e-12);
    assert_true(fabs(dw->p_two_sided - 2.0 * dw->p_positive) < 1e-12);
    gsl_matrix_free(x);
    diag_run_free(&run);

    /* 1,200 rows: n − p above DIAG_DW_EXACT_MAX, the beta approximation. */
    diag_run_yaml(&run, "tests/data/diagnostics/spec.yaml",
                  "fitproof: 1\ndata: {path: long.csv}\nmodels:\n"
                  "  - {id: long, response: true_value, terms: [reading, ambient_c, probe],"
                  " order_by: seq}\n");
    assert_non_null(run.analysis);
    am = &run.analysis->models[0];
    assert_int_equal(am->diagnostics->durbin_watson.method, DIAG_DW_BETA);
    x = ordered_design(am);
    json_t *long_mc = json_object_get(json_object_get(root, "long"), "dw_mc");
    compare_monte_carlo(&a, x, long_mc);
    assert_true(fabs(am->diagnostics->durbin_watson.d -
                     number_at(json_object_get(root, "long"), "dw")) < 1e-10);
    gsl_matrix_free(x);
    printf("  measured: %s: worst difference %.2g standard errors\n", a.name, a.worst);
    diag_run_free(&run);
    json_decref(root);
}

/* Regressors 1 and a cosine vᵢ(t) = cos(π j (t − ½)/n): vⱼ is an
   eigenvector of the differencing matrix A, so with j = 1 the residual
   eigenvalues are A's n − 2 largest and D is distributed as Durbin &
   Watson's upper bound d_U; with j = n − 1 as the lower bound d_L. The
   5% critical values of d_L and d_U for one regressor (Savin & White 1977,
   Econometrica 45:1989–1996, table for k' = 1, reproduced from Durbin &
   Watson 1951 for n ≥ 15), rounded to 3 decimals, must bracket P = 0.05
   within that rounding. 1% values (2 decimals) likewise. */
static gsl_matrix *cosine_design(size_t n, size_t j)
{
    gsl_matrix *x = gsl_matrix_alloc(n, 2);
    for (size_t t = 0; t < n; t++) {
        gsl_matrix_set(x, t, 0, 1.0);
        gsl_matrix_set(x, t, 1, cos(M_PI * (double)j * ((double)t + 0.5) / (double)n));
    }
    return x;
}

static void bracket(size_t n, size_t j, double table, double half_step, double level)
{
    gsl_matrix *x = cosine_design(n, j);
    double below = diagnostics_dw_cdf(x, table - half_step, DIAG_DW_EXACT_MAX);
    double above = diagnostics_dw_cdf(x, table + half_step, DIAG_DW_EXACT_MAX);
    if (!(below <= level && level <= above))
        fprintf(stderr, "n=%zu j=%zu: P(D <= %.4f) = %.5f, P(D <= %.4f) = %.5f\n", n, j,
                table - half_step, below, table + half_step, above);
    assert_true(below <= level && level <= above);
    gsl_matrix_free(x);
}

static void test_durbin_watson_savin_white_bounds(void **state)
{
    (void)state;
    const size_t n[] = {6, 10, 20, 50, 100};
    const double lower[] = {0.610, 0.879, 1.201, 1.503, 1.654};
    const double upper[] = {1.400, 1.320, 1.411, 1.585, 1.694};
    for (size_t k = 0; k < 5; k++) {
        bracket(n[k], n[k] - 1, lower[k], 0.0005, 0.05);
        bracket(n[k], 1, upper[k], 0.0005, 0.05);
    }
    const size_t n1[] = {20, 50, 100};
    const double lower1[] = {0.95, 1.32, 1.52};
    const double upper1[] = {1.15, 1.40, 1.56};
    for (size_t k = 0; k < 3; k++) {
        bracket(n1[k], n1[k] - 1, lower1[k], 0.005, 0.01);
        bracket(n1[k], 1, upper1[k], 0.005, 0.01);
    }
}

/* The beta approximation uses the exact mean and variance; how far it is
   from the exact distribution says when it may replace it. Measured on the
   kilns design (n = 80) and on a 600-row design. */
static void test_durbin_watson_beta_against_exact(void **state)
{
    (void)state;
    diag_run run;
    run_kilns(&run);
    const analysis_model *am = &run.analysis->models[0];
    gsl_matrix *x = ordered_design(am);
    double worst_small = 0.0;
    for (double c = 1.0; c <= 3.0; c += 0.05) {
        double d = fabs(diagnostics_dw_cdf(x, c, 0) - diagnostics_dw_cdf(x, c, 1000));
        worst_small = d > worst_small ? d : worst_small;
    }
    gsl_matrix_free(x);
    /* The exact moments from the eigenvalues and from the trace formulas. */
    diag_durbin_watson exact, beta;
    gsl_matrix *xo = ordered_design(am);
    double *e = malloc(am->design->n_used * sizeof(double));
    for (size_t i = 0; i < am->design->n_used; i++)
        e[i] = gsl_vector_get(am->fit->residuals, am->diagnostics->order[i]);
    diagnostics_durbin_watson(xo, e, 1000, &exact);
    diagnostics_durbin_watson(xo, e, 0, &beta);
    assert_int_equal(beta.method, DIAG_DW_BETA);
    assert_true(fabs(exact.mean_d - beta.mean_d) < 1e-12);
    assert_true(fabs(exact.variance_d - beta.variance_d) < 1e-12 * exact.variance_d * 1e3);
    free(e);
    gsl_matrix_free(xo);
    diag_run_free(&run);

    size_t n = 600;
    x = gsl_matrix_alloc(n, 3);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 7);
    for (size_t t = 0; t < n; t++) {
        gsl_matrix_set(x, t, 0, 1.0);
        gsl_matrix_set(x, t, 1, (double)t / (double)n + gsl_ran_gaussian(rng, 0.1));
        gsl_matrix_set(x, t, 2, gsl_rng_uniform(rng) < 0.3 ? 1.0 : 0.0);
    }
    gsl_rng_free(rng);
    double worst_large = 0.0;
    for (double c = 1.8; c <= 2.2; c += 0.05) {
        double d = fabs(diagnostics_dw_cdf(x, c, 0) - diagnostics_dw_cdf(x, c, 1000));
        worst_large = d > worst_large ? d : worst_large;
    }
    gsl_matrix_free(x);
    printf(
        "  measured: Durbin-Watson beta approximation vs exact: max |dP| %.2g at n = 80, "
        "%.2g at n = 600\n",
        worst_small, worst_large);
    assert_true(worst_small < 0.01);
    assert_true(worst_large < 1e-3);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_shapiro_against_scipy_and_double),
        cmocka_unit_test(test_shapiro_exact_facts),
        cmocka_unit_test(test_shapiro_invariance),
        cmocka_unit_test(test_shapiro_subsample),
        cmocka_unit_test(test_influence_against_statsmodels),
        cmocka_unit_test(test_tests_against_statsmodels),
        cmocka_unit_test(test_durbin_watson_against_monte_carlo),
        cmocka_unit_test(test_durbin_watson_savin_white_bounds),
        cmocka_unit_test(test_durbin_watson_beta_against_exact),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

/*
 * test_figures.c — the figures stage: Heckbert's ticks on awkward ranges,
 * number words, LOWESS and the Q-Q band against statsmodels and scipy,
 * influence measures against statsmodels on the bundled example, and the
 * figure set itself (which figures, marks per row, hexagonal bins above
 * the threshold, sizes, escaping, byte-stable output, degenerate input).
 * Reference values: tests/reference/figures.expected.json, written by
 * tests/reference/figures_reference.py (library versions recorded there).
 */
#include "testkit.h"

#include <float.h>
#include <jansson.h>
#include <stdio.h>
#include <stdlib.h>

#include "../../src/figures/figures.h"
/* White-box: the stage's private helpers (order statistics, sorting). */
#include "../../src/figures/plot.h"

#define MINUS "\xe2\x88\x92"

/* ---- ticks ------------------------------------------------------------------ */

/* What every tick set must satisfy for data [min, max]. */
static void assert_ticks_sound(const figures_ticks *t, double min, double max)
{
    assert_true(t->count >= 2 && t->count <= FIGURES_MAX_TICKS);
    assert_true(t->lo <= min && t->hi >= max);
    assert_true(t->lo < t->hi);
    for (size_t i = 0; i < t->count; i++) {
        assert_true(isfinite(t->values[i]));
        assert_true(t->values[i] >= t->lo && t->values[i] <= t->hi);
        if (i > 0) {
            assert_true(t->values[i] > t->values[i - 1]);
            assert_string_not_equal(t->labels[i], t->labels[i - 1]);
        }
        /* No float noise: never more than 16 characters. */
        assert_true(strlen(t->labels[i]) <= 24);
    }
}

static void assert_labels(const figures_ticks *t, const char *const *expected, size_t n)
{
    assert_int_equal(t->count, n);
    for (size_t i = 0; i < n; i++)
        assert_string_equal(t->labels[i], expected[i]);
}

static void test_ticks_unit_range(void **state)
{
    (void)state;
    /* Hand derivation (Heckbert 1990): range 1 over 5 intervals is 0.2,
       already nice; floor(0/0.2) = 0, ceil(1/0.2) = 5. */
    figures_ticks t;
    figures_ticks_make(0.0, 1.0, 6, &t);
    const char *const want[] = {"0.0", "0.2", "0.4", "0.6", "0.8", "1.0"};
    assert_labels(&t, want, 6);
    assert_ticks_sound(&t, 0.0, 1.0);
}

static void test_ticks_no_float_noise(void **state)
{
    (void)state;
    /* 0.3/4 = 0.075 rounds to the nice step 0.1; 3 × 0.1 is
       0.30000000000000004 in binary, the label must still read 0.3. */
    figures_ticks t;
    figures_ticks_make(0.0, 0.3, 5, &t);
    const char *const want[] = {"0.0", "0.1", "0.2", "0.3"};
    assert_labels(&t, want, 4);
    assert_true(t.values[3] == 0.3);
}

static void test_ticks_negative(void **state)
{
    (void)state;
    /* 9.4/4 = 2.35 rounds to 2; floor(−7.3/2) = −4, ceil(2.1/2) = 2. */
    figures_ticks t;
    figures_ticks_make(-7.3, 2.1, 5, &t);
    const char *const want[] = {MINUS "8", MINUS "6", MINUS "4", MINUS "2", "0", "2", "4"};
    assert_labels(&t, want, 7);
    assert_ticks_sound(&t, -7.3, 2.1);
}

static void test_ticks_zero_among_tens(void **state)
{
    (void)state;
    /* 40/4 = 10: f = 1, e = 1; the tick at zero must read "0", not "00". */
    figures_ticks t;
    figures_ticks_make(-19.0, 19.5, 5, &t);
    const char *const want[] = {MINUS "20", MINUS "10", "0", "10", "20"};
    assert_labels(&t, want, 5);
}

static void test_ticks_tiny(void **state)
{
    (void)state;
    /* 2e-9/4 = 5e-10, a nice step; ticks 2..6 × 5e-10, written with the
       common exponent of the largest, 10⁻⁹. */
    figures_ticks t;
    figures_ticks_make(1e-9, 3e-9, 5, &t);
    const char *const want[] = {"1.0×10⁻⁹", "1.5×10⁻⁹", "2.0×10⁻⁹", "2.5×10⁻⁹", "3.0×10⁻⁹"};
    assert_labels(&t, want, 5);
    assert_ticks_sound(&t, 1e-9, 3e-9);
}

static void test_ticks_huge(void **state)
{
    (void)state;
    /* 3e300/4 = 7.5e299 rounds to 1e300. */
    figures_ticks t;
    figures_ticks_make(0.0, 3e300, 5, &t);
    const char *const want[] = {"0", "1×10³⁰⁰", "2×10³⁰⁰", "3×10³⁰⁰"};
    assert_labels(&t, want, 4);
    figures_ticks_make(-DBL_MAX, DBL_MAX, 5, &t);
    assert_ticks_sound(&t, -DBL_MAX, DBL_MAX);
    figures_ticks_make(0.0, DBL_MAX, 5, &t);
    assert_ticks_sound(&t, 0.0, DBL_MAX);
}

static void test_ticks_zero_width_and_single_point(void **state)
{
    (void)state;
    figures_ticks t;
    /* A single value is widened by 5% either side: [4.75, 5.25]. */
    figures_ticks_make(5.0, 5.0, 5, &t);
    assert_ticks_sound(&t, 5.0, 5.0);
    bool has_five = false;
    for (size_t i = 0; i < t.count; i++)
        has_five = has_five || strcmp(t.labels[i], "5.0") == 0;
    assert_true(has_five);
    figures_ticks_make(0.0, 0.0, 5, &t);
    assert_ticks_sound(&t, 0.0, 0.0);
    assert_true(t.lo <= -1.0 && t.hi >= 1.0);
    figures_ticks_make(-3e-7, -3e-7, 5, &t);
    assert_ticks_sound(&t, -3e-7, -3e-7);
    /* Non-finite input falls back to [0, 1]; reversed input is swapped. */
    figures_ticks_make(NAN, 1.0, 5, &t);
    assert_ticks_sound(&t, 0.0, 1.0);
    figures_ticks_make(10.0, -10.0, 5, &t);
    assert_ticks_sound(&t, -10.0, 10.0);
    /* A spread far below the magnitude's resolution reads as one value. */
    figures_ticks_make(1e6, 1e6 + 1e-7, 5, &t);
    assert_ticks_sound(&t, 1e6, 1e6 + 1e-7);
}

static void test_format_number(void **state)
{
    (void)state;
    char text[64];
    figures_format_number(text, sizeof text, 0.14679, 4);
    assert_string_equal(text, "0.1468");
    figures_format_number(text, sizeof text, -64.1949, 4);
    assert_string_equal(text, MINUS "64.19");
    figures_format_number(text, sizeof text, 4.89, 4); /* trailing zero kept */
    assert_string_equal(text, "4.890");
    figures_format_number(text, sizeof text, 123456789.0, 4);
    assert_string_equal(text, "1.235×10⁸");
    figures_format_number(text, sizeof text, 0.0000123, 3);
    assert_string_equal(text, "1.23×10⁻⁵");
    figures_format_number(text, sizeof text, 2500.0, 2);
    assert_string_equal(text, "2500");
    figures_format_number(text, sizeof text, 0.0, 4);
    assert_string_equal(text, "0");
}

/* ---- against the reference libraries ---------------------------------------- */

static json_t *reference(void)
{
    json_error_t error;
    json_t *root = json_load_file("tests/reference/figures.expected.json", 0, &error);
    assert_non_null(root);
    return root;
}

static void test_band_matches_scipy(void **state)
{
    (void)state;
    /* scipy 1.10 beta.ppf and norm.ppf (tests/reference/figures_reference.py). */
    json_t *root = reference();
    json_t *cases = json_object_get(root, "band");
    double worst = 0.0;
    for (size_t k = 0; k < json_array_size(cases); k++) {
        json_t *c = json_array_get(cases, k);
        double lo, hi;
        order_statistic_band((size_t)json_integer_value(json_object_get(c, "i")),
                             (size_t)json_integer_value(json_object_get(c, "n")),
                             json_number_value(json_object_get(c, "level")), &lo, &hi);
        worst = fmax(worst, fabs(lo - json_number_value(json_object_get(c, "lo"))));
        worst = fmax(worst, fabs(hi - json_number_value(json_object_get(c, "hi"))));
    }
    printf("  measured: order-statistic band vs scipy, largest difference %.1e\n", worst);
    assert_true(worst < 1e-6);
    json_decref(root);
}

static void test_sorting_large_and_small(void **state)
{
    (void)state;
    /* Above 4096 values the radix sort runs: ascending order, non-finite
       values dropped, negative and positive magnitudes interleaved. */
    for (size_t n = 100; n <= 10000; n *= 100) {
        double *v = malloc((n + 3) * sizeof *v);
        uint64_t state = 99;
        for (size_t i = 0; i < n; i++) {
            double u = testkit_uniform(&state);
            v[i] = (u - 0.5) * pow(10.0, (double)(i % 40) - 20.0);
        }
        v[n] = NAN;
        v[n + 1] = INFINITY;
        v[n + 2] = -0.0;
        size_t m;
        double *sorted = finite_values(v, n + 3, &m);
        sort_doubles(sorted, m);
        assert_int_equal(m, n + 1);
        for (size_t i = 1; i < m; i++)
            assert_true(sorted[i - 1] <= sorted[i]);
        free(sorted);
        free(v);
    }
}

/* The quantiles by selection (the histogram's quartiles) are the bits of
   the quantiles of the sorted values, ties, −0 and both ends included. */
static void test_selected_quantiles_equal_sorted(void **state)
{
    (void)state;
    static const double probabilities[] = {0.0, 0.25, 0.5, 0.75, 1.0, 0.1};
    size_t sizes[] = {1, 2, 3, 10, 101, 5000};
    uint64_t bits = 7;
    for (size_t s = 0; s < sizeof sizes / sizeof *sizes; s++) {
        size_t n = sizes[s];
        double *v = malloc(n * sizeof *v), *work = malloc(n * sizeof *v);
        for (size_t i = 0; i < n; i++) {
            double u = testkit_uniform(&bits);
            v[i] = i % 7 == 0 ? -0.0 : i % 5 == 0 ? 1.0 : (u - 0.5) * 1e3;
        }
        size_t m;
        double *sorted = finite_values(v, n, &m);
        sort_doubles(sorted, m);
        for (size_t k = 0; k < sizeof probabilities / sizeof *probabilities; k++) {
            memcpy(work, v, n * sizeof *v);
            double want = sorted_quantile(sorted, m, probabilities[k]);
            double got = selected_quantile(work, n, probabilities[k]);
            assert_memory_equal(&got, &want, sizeof got);
        }
        free(sorted);
        free(work);
        free(v);
    }
}

static void test_influence_matches_statsmodels(void **state)
{
    (void)state;
    /* statsmodels 0.13.5 OLSInfluence on the bundled example
       (tests/reference/figures_reference.py). */
    pipeline run;
    size_t length;
    const char *why;
    char *yaml = file_read_all("examples/cylinders/cylinders.yaml", &length, &why);
    assert_non_null(yaml);
    pipeline_run(&run, "examples/cylinders/cylinders.yaml", yaml);
    assert_non_null(run.fit);
    diagnostics *g = diagnostics_new(run.design, run.fit, run.table, 0.05);
    figures_input *in = figures_input_new(run.spec, run.table, run.design, run.fit, g, 0);
    json_t *root = reference();
    json_t *ref = json_object_get(root, "influence");
    const char *keys[3] = {"hat", "studentized_internal", "cooks"};
    double digits = 15.0;
    for (int k = 0; k < 3; k++) {
        json_t *want = json_object_get(ref, keys[k]);
        assert_int_equal(json_array_size(want), in->n);
        for (size_t i = 0; i < in->n; i++) {
            figures_row_measures m = in->measures(in->measures_source, i);
            double got = k == 0 ? in->leverage[i] : k == 1 ? m.standardized : m.cooks;
            digits = fmin(digits,
                          log_relative_error(got, json_number_value(json_array_get(want, i))));
        }
    }
    printf("  measured: hat values, standardized residuals, Cook's distances vs "
           "statsmodels: %.1f digits\n",
           digits);
    assert_true(digits >= 9.0);
    json_decref(root);
    figures_input_free(in);
    diagnostics_free(g);
    pipeline_free(&run);
    free(yaml);
}

static void test_fitted_curves_follow_the_model(void **state)
{
    (void)state;
    pipeline run;
    size_t length;
    const char *why;
    char *yaml = file_read_all("examples/cylinders/cylinders.yaml", &length, &why);
    assert_non_null(yaml);
    pipeline_run(&run, "examples/cylinders/cylinders.yaml", yaml);
    diagnostics *g = diagnostics_new(run.design, run.fit, run.table, 0.05);
    figures_input *in = figures_input_new(run.spec, run.table, run.design, run.fit, g, 0);
    assert_int_equal(in->n_predictors, 2);
    assert_string_equal(in->predictors[0].column.name, "age_days");
    assert_string_equal(in->predictors[1].column.name, "wc_ratio");
    assert_string_equal(in->predictors[0].column.unit, "day");
    assert_string_equal(in->group_name, "admixture");
    assert_int_equal(in->n_levels, 3);
    assert_int_equal(in->n_fixed, 0);
    /* Hand derivation from the model's terms: on the age panel, level
       "none" (the reference), y = b0 + b_age age + b_wc mean(wc); for
       "plasticizer" add b_plast + b_age×plast age. Coefficient order is
       the design's: 1, age, wc, plast, super, age×plast, age×super. */
    const figures_predictor *age = &in->predictors[0];
    double b[7];
    for (size_t c = 0; c < 7; c++)
        b[c] = run.fit->coefs[c].estimate;
    /* The coefficient figure reads wc_ratio per its step of 0.05 kg/kg. */
    assert_true(fabs(in->estimate[2] - 0.05 * b[2]) < 1e-12 * fabs(b[2]));
    assert_string_equal(in->coef_labels[2], "water-cement ratio, per 0.05 kg/kg");
    assert_string_equal(in->coef_labels[0], "baseline value");
    double wc_mean = in->predictors[1].mean;
    for (size_t k = 0; k < age->n_grid; k += 13) {
        double a = age->curve_x[k];
        assert_true(fabs(age->curve_y[k] - (b[0] + b[1] * a + b[2] * wc_mean)) < 1e-9);
        size_t j = age->n_grid + k; /* level 1: plasticizer */
        double a1 = age->curve_x[j];
        assert_true(fabs(age->curve_y[j] -
                         (b[0] + b[1] * a1 + b[2] * wc_mean + b[3] + b[5] * a1)) < 1e-9);
    }
    figures_input_free(in);
    diagnostics_free(g);
    pipeline_free(&run);
    free(yaml);
}

/* ---- the figure set on invented input ---------------------------------------- */

typedef struct {
    size_t n;
    double *observed, *fitted, *residuals, *std, *leverage, *cooks, *x1, *x2;
    uint32_t *lines;
    uint8_t *flagged;
    int32_t *group;
    size_t *order;
    double curve_x[2][2 * 4], curve_y[2][2 * 4];
    figures_predictor predictors[2];
    figures_input in;
} invented;

static const char *const LEVELS[2] = {"<b>&\"x\"", "plain"};
static const char *const LABELS[3] = {"baseline value", "x1", "x2 × g = plain"};
static const double ESTIMATE[3] = {1.5, 0.002, -350.0};
static const double LOW[3] = {1.0, -0.001, -400.0};
static const double HIGH[3] = {2.0, 0.005, -300.0};

/* The invented rows' measures: the studentized residual is the
   standardized one. */
static figures_row_measures invented_measures(const void *source, size_t i)
{
    const invented *v = source;
    return (figures_row_measures){v->std[i], v->std[i], v->cooks[i]};
}

/* A deterministic scatter of n rows: y = 1.5 + x1 + noise, residuals by
   a linear congruential generator (no library randomness). */
static void invent(invented *v, size_t n, const char *model_id)
{
    memset(v, 0, sizeof *v);
    v->n = n;
    size_t bytes = (n ? n : 1) * sizeof(double);
    v->observed = malloc(bytes);
    v->fitted = malloc(bytes);
    v->residuals = malloc(bytes);
    v->std = malloc(bytes);
    v->leverage = malloc(bytes);
    v->cooks = malloc(bytes);
    v->x1 = malloc(bytes);
    v->x2 = malloc(bytes);
    v->lines = malloc((n ? n : 1) * sizeof *v->lines);
    v->flagged = malloc((n ? n : 1) * sizeof *v->flagged);
    v->group = malloc((n ? n : 1) * sizeof *v->group);
    v->order = malloc((n ? n : 1) * sizeof *v->order);
    uint64_t state = 12345;
    for (size_t i = 0; i < n; i++) {
        double u[3];
        for (int k = 0; k < 3; k++) {
            u[k] = testkit_uniform(&state);
        }
        v->x1[i] = 10.0 * u[0];
        v->x2[i] = u[1];
        v->residuals[i] = (u[2] - 0.5) * 2.0;
        v->fitted[i] = 1.5 + v->x1[i];
        v->observed[i] = v->fitted[i] + v->residuals[i];
        v->leverage[i] = 3.0 / (double)n * (1.0 + u[1]);
        v->std[i] = v->residuals[i] / 0.6;
        v->cooks[i] = v->std[i] * v->std[i] * v->leverage[i] / (3 * (1 - v->leverage[i]));
        v->flagged[i] = i % 97 == 5;
        v->lines[i] = (uint32_t)(i + 2);
        v->group[i] = (int32_t)(i % 2);
        v->order[i] = n - 1 - i; /* the run backwards through the file */
    }
    for (int p = 0; p < 2; p++) {
        for (int L = 0; L < 2; L++)
            for (int k = 0; k < 4; k++) {
                v->curve_x[p][L * 4 + k] = (p ? 1.0 : 10.0) * k / 3.0;
                v->curve_y[p][L * 4 + k] = 1.5 + 5.0 * k / 3.0 + L;
            }
        v->predictors[p] = (figures_predictor){{p ? "x2" : "x1", NULL, p ? NULL : "mm"},
                                               p ? v->x2 : v->x1,
                                               p ? 0.5 : 5.0,
                                               4,
                                               v->curve_x[p],
                                               v->curve_y[p]};
    }
    figures_input *in = &v->in;
    in->model_id = model_id;
    in->n = n;
    in->lines = v->lines;
    in->observed = v->observed;
    in->fitted = v->fitted;
    in->residuals = v->residuals;
    in->leverage = v->leverage;
    in->measures = invented_measures;
    in->measures_source = v;
    in->flagged = v->flagged;
    in->leverage_bound = 6.0 / (double)(n ? n : 1);
    in->outlier_bound = 3.5;
    in->large_bound = 3.0;
    in->order = v->order;
    in->order_by = (figures_quantity){"run", "position in the run", NULL};
    in->sigma = 0.6;
    in->n_params = 3;
    in->level = 0.95;
    in->digits = 4;
    in->response = (figures_quantity){"y", "yield & <loss>", "g/L"};
    in->n_coefs = 3;
    in->coef_labels = LABELS;
    in->estimate = ESTIMATE;
    in->ci_low = LOW;
    in->ci_high = HIGH;
    in->group_name = "g";
    in->group_levels = LEVELS;
    in->n_levels = 2;
    in->group = v->group;
    in->predictors = v->predictors;
    in->n_predictors = 2;
}

static void invented_free(invented *v)
{
    free(v->observed);
    free(v->fitted);
    free(v->residuals);
    free(v->std);
    free(v->leverage);
    free(v->cooks);
    free(v->x1);
    free(v->x2);
    free(v->lines);
    free(v->flagged);
    free(v->group);
    free(v->order);
}

static const figures_figure *find_figure(const figures_set *set, const char *name)
{
    for (size_t k = 0; k < set->count; k++)
        if (strcmp(set->items[k].name, name) == 0)
            return &set->items[k];
    return NULL;
}

/* Coordinate pairs in the data polylines (each mark is one vertex). */
static size_t count_marks(const char *svg)
{
    size_t count = 0;
    const char *p = svg;
    while ((p = strstr(p, "<polyline points=\"")) != NULL) {
        p += strlen("<polyline points=\"");
        count++;
        for (; *p != '"'; p++)
            count += *p == ' ';
    }
    return count;
}

/* Circles drawn (<circle elements). */
static size_t count_circles(const char *svg)
{
    size_t count = 0;
    for (const char *p = svg; (p = strstr(p, "<circle ")) != NULL; p++)
        count++;
    return count;
}

/* Hexagons drawn and the rows they hold (the sum of their data-n). */
static size_t count_binned(const char *svg, size_t *cells)
{
    size_t rows = 0;
    *cells = 0;
    const char *p = svg;
    while ((p = strstr(p, "data-n=\"")) != NULL) {
        p += strlen("data-n=\"");
        rows += strtoul(p, NULL, 10);
        (*cells)++;
    }
    return rows;
}

static void test_every_figure_and_its_words(void **state)
{
    (void)state;
    invented v;
    invent(&v, 500, "main model/2");
    figures_set *set = figures_draw(&v.in, NULL);
    assert_int_equal(set->count, 9);
    for (size_t k = 0; k < set->count; k++) {
        const figures_figure *f = &set->items[k];
        assert_string_equal(f->name, spec_figure_names[k]);
        char file[128];
        snprintf(file, sizeof file, "figures/main_model_2-%s.svg", f->name);
        assert_string_equal(f->file, file);
        assert_true(f->title[strlen(f->title) - 1] == '?');
        assert_true(strlen(f->caption) > 100);
        assert_true(strlen(f->alt) > 20);
        assert_int_equal(strlen(f->svg), f->svg_length);
        assert_non_null(strstr(f->svg, "viewBox=\"0 0 "));
        assert_non_null(strstr(f->svg, "<title id="));
        assert_non_null(strstr(f->svg, "<desc id="));
        /* User text is escaped: no raw markup from the level or label. */
        assert_null(strstr(f->svg, "<b>"));
        assert_null(strstr(f->svg, "<loss>"));
    }
    const char *by_predictor = find_figure(set, "response_by_predictor")->svg;
    assert_non_null(strstr(by_predictor, "g = &lt;b&gt;&amp;&quot;x&quot;"));
    assert_non_null(strstr(by_predictor, "x1 (mm)"));
    /* One mark per row in each scatter; two panels in the first figure. */
    assert_int_equal(count_marks(by_predictor), 2 * 500);
    const char *const scatters[] = {"residuals_by_fitted", "quantile_plot",
                                    "observed_by_predicted"};
    for (size_t k = 0; k < 3; k++)
        assert_int_equal(count_marks(find_figure(set, scatters[k])->svg), 500);
    /* The influence figure draws a circle per row, a ring round each of the
       6 flagged rows and three circles in its key; the run figure the run
       and the 499 lag-one pairs. */
    assert_int_equal(count_circles(find_figure(set, "influence")->svg), 500 + 6 + 3);
    assert_int_equal(count_marks(find_figure(set, "residuals_in_order")->svg), 500 + 499);
    /* The spread figure: one dot per bin and one in its key, no rows. */
    assert_int_equal(count_marks(find_figure(set, "spread_by_fitted")->svg), 0);
    assert_int_equal(count_circles(find_figure(set, "spread_by_fitted")->svg),
                     figures_bin_count(500) + 1);
    /* The histogram's bars hold every residual. */
    size_t bars;
    assert_int_equal(count_binned(find_figure(set, "residual_histogram")->svg, &bars), 500);
    assert_true(bars >= 5);
    /* Flagged rows (every 97th from row 5) are labelled by line: 7, 104, … */
    assert_non_null(strstr(find_figure(set, "influence")->svg, ">7</text>"));
    figures_set_free(set);
    invented_free(&v);
}

static void test_large_data_is_binned_and_small(void **state)
{
    (void)state;
    size_t n = 30000; /* above FIGURES_SCATTER_MAX; 1e7 is measured in bench/ */
    invented v;
    invent(&v, n, "big");
    figures_set *set = figures_draw(&v.in, NULL);
    assert_int_equal(set->count, 9);
    const char *const scatters[] = {"response_by_predictor", "residuals_by_fitted",
                                    "quantile_plot",         "influence",
                                    "observed_by_predicted", "residuals_in_order"};
    for (size_t k = 0; k < 6; k++) {
        const figures_figure *f = find_figure(set, scatters[k]);
        assert_int_equal(count_marks(f->svg), 0);
        size_t cells;
        size_t rows = count_binned(f->svg, &cells);
        /* Every row lands in a hexagon (twice in the two-panel figure). */
        assert_int_equal(rows, k == 0 ? 2 * n : k == 5 ? 2 * n - 1 : n);
        assert_true(cells > 50);
        assert_non_null(strstr(f->caption, "hexagon"));
    }
    for (size_t k = 0; k < set->count; k++)
        assert_true(set->items[k].svg_length < 1000000);
    figures_set_free(set);
    invented_free(&v);
}

static void test_selection_and_stability(void **state)
{
    (void)state;
    invented v;
    invent(&v, 200, "m");
    char *names[2] = {"observed_by_predicted", "influence"};
    spec_report report;
    memset(&report, 0, sizeof report);
    report.figures_given = true;
    report.figures = names;
    report.n_figures = 2;
    figures_set *set = figures_draw(&v.in, &report);
    /* The spec's names choose; the order is spec_figure_names'. */
    assert_int_equal(set->count, 2);
    assert_string_equal(set->items[0].name, "influence");
    assert_string_equal(set->items[1].name, "observed_by_predicted");
    figures_set *again = figures_draw(&v.in, &report);
    for (size_t k = 0; k < 2; k++) {
        assert_int_equal(set->items[k].svg_length, again->items[k].svg_length);
        assert_memory_equal(set->items[k].svg, again->items[k].svg,
                            set->items[k].svg_length);
    }
    figures_set_free(again);
    figures_set_free(set);
    report.n_figures = 0;
    set = figures_draw(&v.in, &report);
    assert_int_equal(set->count, 0);
    figures_set_free(set);
    /* Without numeric predictors there is no response_by_predictor. */
    v.in.n_predictors = 0;
    set = figures_draw(&v.in, NULL);
    assert_int_equal(set->count, 8);
    assert_null(find_figure(set, "response_by_predictor"));
    figures_set_free(set);
    /* Without order_by there is no figure along the run. */
    v.in.order = NULL;
    set = figures_draw(&v.in, NULL);
    assert_int_equal(set->count, 7);
    assert_null(find_figure(set, "residuals_in_order"));
    figures_set_free(set);
    invented_free(&v);
}

static void test_degenerate_input(void **state)
{
    (void)state;
    /* One row, no residual variance: every value a figure needs is NaN or
       constant. The figures must still be whole documents. */
    invented v;
    invent(&v, 1, "one");
    v.std[0] = v.leverage[0] = v.cooks[0] = NAN;
    v.in.sigma = NAN;
    double nan_ci[3] = {NAN, NAN, NAN};
    v.in.ci_low = v.in.ci_high = nan_ci;
    figures_set *set = figures_draw(&v.in, NULL);
    assert_int_equal(set->count, 9);
    for (size_t k = 0; k < set->count; k++) {
        assert_non_null(strstr(set->items[k].svg, "</svg>\n"));
        /* No NaN or infinity written as a number ("influence" is a word). */
        assert_null(strstr(set->items[k].svg, "nan"));
        assert_null(strstr(set->items[k].svg, "\"inf"));
        assert_null(strstr(set->items[k].svg, "\"-inf"));
        assert_null(strstr(set->items[k].svg, " inf "));
    }
    figures_set_free(set);
    /* No rows at all. */
    invented_free(&v);
    invent(&v, 0, "none");
    set = figures_draw(&v.in, NULL);
    assert_int_equal(set->count, 9);
    figures_set_free(set);
    invented_free(&v);
}

static void test_invalid_text_is_replaced(void **state)
{
    (void)state;
    invented v;
    invent(&v, 20, "m");
    /* A lone continuation byte, a control character and an overlong form. */
    v.in.response = (figures_quantity){"y", "bad \x80 \x01 \xc0\xaf end", NULL};
    figures_set *set = figures_draw(&v.in, NULL);
    for (size_t k = 0; k < set->count; k++) {
        const char *svg = set->items[k].svg;
        assert_null(strchr(svg, '\x80'));
        assert_null(strchr(svg, '\x01'));
        assert_null(strstr(svg, "\xc0\xaf"));
    }
    assert_non_null(strstr(find_figure(set, "residuals_by_fitted")->svg,
                           "bad \xef\xbf\xbd \xef\xbf\xbd \xef\xbf\xbd\xef\xbf\xbd end"));
    figures_set_free(set);
    invented_free(&v);
}

static void test_long_title_is_wrapped_and_cut(void **state)
{
    (void)state;
    invented v;
    invent(&v, 20, "m");
    char label[400] = "";
    for (int k = 0; k < 40; k++)
        strcat(label, k % 7 == 6 ? "überlänge " : "word ");
    v.in.response = (figures_quantity){"y", label, NULL};
    figures_set *set = figures_draw(&v.in, NULL);
    const char *svg = find_figure(set, "response_by_predictor")->svg;
    /* Three title lines at most, the last one ending in an ellipsis. */
    size_t lines = 0;
    for (const char *p = svg; (p = strstr(p, "font-weight=\"600\"")) != NULL; p++)
        lines++;
    assert_int_equal(lines, 3);
    assert_non_null(strstr(svg, "\xe2\x80\xa6</text>"));
    figures_set_free(set);
    invented_free(&v);
}

static void test_logged_response_reads_on_its_scale(void **state)
{
    (void)state;
    /* Hand derivation: with log cost as the response, a coefficient b per
       step s multiplies the cost by e^(b s): a change of 100 (e^(b s) − 1)
       percent; the intercept is the cost e^b0 itself. */
    pipeline run;
    size_t length;
    const char *why;
    char *yaml = file_read_all("examples/parcels/parcels.yaml", &length, &why);
    assert_non_null(yaml);
    pipeline_run(&run, "examples/parcels/parcels.yaml", yaml);
    assert_non_null(run.fit);
    diagnostics *g = diagnostics_new(run.design, run.fit, run.table, 0.05);
    figures_input *in = figures_input_new(run.spec, run.table, run.design, run.fit, g, 0);
    assert_true(in->coef_percent);
    assert_true(fabs(in->log_base - exp(1.0)) < 1e-15);
    assert_string_equal(in->original.unit, "EUR");
    assert_string_equal(in->response.label, "log of delivery cost");
    assert_string_equal(in->response.unit, "log EUR");
    assert_int_equal(in->coef_intercept, 0);
    const fit_coef *c = run.fit->coefs;
    assert_true(fabs(in->estimate[0] - exp(c[0].estimate)) < 1e-12 * exp(c[0].estimate));
    assert_string_equal(in->coef_labels[1], "road distance from the depot, per 100 km");
    double want = 100.0 * (exp(100.0 * c[1].estimate) - 1.0);
    assert_true(fabs(in->estimate[1] - want) < 1e-12 * fabs(want));
    want = 100.0 * (exp(100.0 * c[1].ci_low) - 1.0);
    assert_true(fabs(in->ci_low[1] - want) < 1e-12 * fabs(want));
    figures_set *set = figures_draw(in, NULL);
    /* Second axes in EUR on the residual and observed figures. */
    assert_non_null(strstr(find_figure(set, "residuals_by_fitted")->svg,
                           ">fitted delivery cost (EUR)</text>"));
    assert_non_null(strstr(find_figure(set, "observed_by_predicted")->svg,
                           ">observed delivery cost (EUR)</text>"));
    assert_non_null(
        strstr(find_figure(set, "coefficient_intervals")->caption, "percentage change"));
    figures_set_free(set);
    figures_input_free(in);
    diagnostics_free(g);
    pipeline_free(&run);
    free(yaml);
}

/* Captions true for the kind of term (wording our own, no outside source):
   the cylinders model crosses curing age with admixture, so its lines'
   slopes differ by level and the coefficient figure warns that a main
   effect's row is read at zero of the other columns; the tablets model has
   no interaction, so its lines run parallel and no such warning is given.
   Both say which rows the held means come from. */
static void test_captions_follow_the_kind_of_term(void **state)
{
    (void)state;
    const char *const examples[] = {"examples/cylinders/cylinders.yaml",
                                    "examples/tablets/tablets.yaml"};
    for (size_t k = 0; k < 2; k++) {
        pipeline run;
        size_t length;
        const char *why;
        char *yaml = file_read_all(examples[k], &length, &why);
        assert_non_null(yaml);
        pipeline_run(&run, examples[k], yaml);
        assert_non_null(run.fit);
        diagnostics *g = diagnostics_new(run.design, run.fit, run.table, 0.05);
        figures_input *in =
            figures_input_new(run.spec, run.table, run.design, run.fit, g, 0);
        figures_set *set = figures_draw(in, NULL);
        const char *lines = find_figure(set, "response_by_predictor")->caption;
        const char *rows = strstr(lines, "rows the model used");
        assert_non_null(rows);
        const char *coefs = find_figure(set, "coefficient_intervals")->caption;
        if (k == 0) {
            assert_true(in->group_interacts && in->coef_conditional);
            assert_non_null(strstr(lines, "the lines' slopes differ between levels because "
                                          "the model includes an interaction of admixture"));
            assert_non_null(strstr(coefs, "is its coefficient with the other columns of that "
                                          "term at zero"));
        } else {
            assert_false(in->group_interacts || in->coef_conditional);
            assert_non_null(strstr(lines, "the lines run parallel because the model includes "
                                          "no interaction of press"));
            assert_null(strstr(coefs, "at zero"));
        }
        assert_null(strstr(lines, "an interaction the model includes"));
        figures_set_free(set);
        figures_input_free(in);
        diagnostics_free(g);
        pipeline_free(&run);
        free(yaml);
    }
}

/* ---- the diagnostic figures' summaries against numpy and scipy ----------------- */

static json_t *summaries_reference(void)
{
    json_error_t error;
    json_t *root =
        json_load_file("tests/reference/figure_summaries.expected.json", 0, &error);
    assert_non_null(root);
    return root;
}

/* Numbers of a JSON array, null as NaN (caller frees). */
static double *numbers_or_nan(json_t *array, size_t *n)
{
    *n = json_array_size(array);
    double *out = malloc((*n ? *n : 1) * sizeof *out);
    for (size_t i = 0; i < *n; i++) {
        json_t *v = json_array_get(array, i);
        out[i] = json_is_null(v) ? NAN : json_number_value(v);
    }
    return out;
}

static double relative_gap(double got, double want)
{
    double scale = fabs(want) > 1.0 ? fabs(want) : 1.0;
    return fabs(got - want) / scale;
}

static void test_bins_match_numpy(void **state)
{
    (void)state;
    /* numpy 1.24 quantile (linear) and std (ddof 1), scipy 1.10 chi2.ppf, by
       tests/reference/figure_summaries_reference.py. */
    json_t *root = summaries_reference();
    json_t *ref = json_object_get(root, "bins");
    size_t n, m;
    double *x = numbers_or_nan(json_object_get(ref, "x"), &n);
    double *y = numbers_or_nan(json_object_get(ref, "y"), &m);
    assert_int_equal(n, m);
    figures_bin bins[FIGURES_MAX_BINS];
    size_t k =
        figures_bins_make(x, y, n, json_number_value(json_object_get(ref, "level")), bins);
    json_t *want = json_object_get(ref, "bins");
    assert_int_equal(k, json_array_size(want));
    static const char *const keys[] = {"x_lo", "x_hi", "x_mid", "q1",    "median",
                                       "q3",   "mean", "sd",    "sd_lo", "sd_hi"};
    double worst = 0.0;
    for (size_t b = 0; b < k; b++) {
        json_t *w = json_array_get(want, b);
        assert_int_equal(bins[b].count, json_integer_value(json_object_get(w, "count")));
        const double got[] = {bins[b].x_lo,   bins[b].x_hi, bins[b].x_mid, bins[b].q1,
                              bins[b].median, bins[b].q3,   bins[b].mean,  bins[b].sd,
                              bins[b].sd_lo,  bins[b].sd_hi};
        for (size_t j = 0; j < sizeof keys / sizeof keys[0]; j++)
            worst =
                fmax(worst,
                     relative_gap(got[j], json_number_value(json_object_get(w, keys[j]))));
    }
    printf("  measured: bin medians, quartiles and spreads vs numpy/scipy, largest "
           "relative difference %.1e\n",
           worst);
    assert_true(worst < 1e-9);
    free(x);
    free(y);
    json_decref(root);
}

static void test_detrended_matches_scipy(void **state)
{
    (void)state;
    /* scipy 1.10 norm.ppf and beta.ppf (figure_summaries_reference.py): the
       deviations at every rank, the band at n = 40 (every rank) and at
       n = 500 (200 ranks spread along the quantiles). */
    json_t *root = summaries_reference();
    json_t *cases = json_object_get(root, "detrended");
    double worst = 0.0, worst_band = 0.0;
    for (size_t c = 0; c < json_array_size(cases); c++) {
        json_t *ref = json_array_get(cases, c);
        size_t n, m;
        double *values = numbers_or_nan(json_object_get(ref, "values"), &n);
        double *quantile = numbers_or_nan(json_object_get(ref, "quantile"), &m);
        double *deviation = numbers_or_nan(json_object_get(ref, "deviation"), &m);
        figures_detrended d; /* takes values */
        figures_detrended_take(values, n, json_number_value(json_object_get(ref, "level")),
                               &d);
        assert_int_equal(d.count, n);
        for (size_t i = 0; i < n; i++) {
            worst = fmax(worst, fabs(d.quantile[i] - quantile[i]));
            worst = fmax(worst, fabs(d.deviation[i] - deviation[i]));
        }
        json_t *index = json_object_get(ref, "band_index");
        assert_int_equal(d.n_band, json_array_size(index));
        for (size_t k = 0; k < d.n_band; k++) {
            assert_int_equal(d.band_index[k], json_integer_value(json_array_get(index, k)));
            double lo =
                json_number_value(json_array_get(json_object_get(ref, "band_lo"), k));
            double hi =
                json_number_value(json_array_get(json_object_get(ref, "band_hi"), k));
            worst_band =
                fmax(worst_band, fmax(fabs(d.band_lo[k] - lo), fabs(d.band_hi[k] - hi)));
        }
        figures_detrended_free(&d);
        free(quantile);
        free(deviation);
    }
    printf("  measured: detrended quantiles vs scipy, largest difference %.1e; "
           "band %.1e\n",
           worst, worst_band);
    assert_true(worst < 1e-12);
    assert_true(worst_band < 1e-6);
    json_decref(root);
}

static void test_influence_thresholds_match_scipy(void **state)
{
    (void)state;
    /* scipy 1.10 t.ppf for the Bonferroni bound; 2p/n and 3 by hand
       (figure_summaries_reference.py), as the influence figure draws them
       for the bundled cylinders example. */
    pipeline run;
    size_t length;
    const char *why;
    char *yaml = file_read_all("examples/cylinders/cylinders.yaml", &length, &why);
    assert_non_null(yaml);
    pipeline_run(&run, "examples/cylinders/cylinders.yaml", yaml);
    assert_non_null(run.fit);
    json_t *root = summaries_reference();
    json_t *ref = json_object_get(root, "thresholds");
    diagnostics *g = diagnostics_new(run.design, run.fit, run.table,
                                     json_number_value(json_object_get(ref, "alpha")));
    figures_input *in = figures_input_new(run.spec, run.table, run.design, run.fit, g, 0);
    assert_int_equal(in->n, json_integer_value(json_object_get(ref, "n")));
    assert_int_equal(in->n_params, json_integer_value(json_object_get(ref, "p")));
    double bonferroni = json_number_value(json_object_get(ref, "bonferroni"));
    assert_true(relative_gap(in->leverage_bound,
                             json_number_value(json_object_get(ref, "leverage"))) < 1e-15);
    double multiple = in->leverage_bound / ((double)in->n_params / (double)in->n);
    assert_true(fabs(multiple - 2.0) < 1e-14);
    printf("  measured: Bonferroni bound %.10g vs scipy %.10g\n", in->outlier_bound,
           bonferroni);
    /* GSL's t quantile this far in the tail (p ≈ 1.7e-4) agrees with scipy's
       to about nine digits. */
    assert_true(relative_gap(in->outlier_bound, bonferroni) < 1e-8);
    assert_true(in->large_bound == json_number_value(json_object_get(ref, "large")));
    /* The figure names the bound it draws, to three digits. */
    figures_set *set = figures_draw(in, NULL);
    char text[96];
    char bound[32];
    figures_format_number(bound, sizeof bound, bonferroni, 3);
    snprintf(text, sizeof text, "Bonferroni outlier bound \xc2\xb1%s</text>", bound);
    assert_non_null(strstr(find_figure(set, "influence")->svg, text));
    figures_set_free(set);
    json_decref(root);
    figures_input_free(in);
    diagnostics_free(g);
    pipeline_free(&run);
    free(yaml);
}

/* ---- every text inside the frame, no two overlapping ---------------------------- */

typedef struct {
    double x0, y0, x1, y1;
    char text[160];
} text_box;

/* The value of attribute name in the tag [tag, end), or NULL. */
static const char *attribute(const char *tag, const char *end, const char *name)
{
    size_t length = strlen(name);
    for (const char *p = tag; p + length + 2 < end; p++)
        if (p[-1] == ' ' && strncmp(p, name, length) == 0 && p[length] == '=' &&
            p[length + 1] == '"')
            return p + length + 2;
    return NULL;
}

/* Text content with the five XML entities decoded. */
static void decode(const char *from, const char *to, char *out, size_t size)
{
    size_t n = 0;
    static const char *const entities[][2] = {
        {"&amp;", "&"}, {"&lt;", "<"}, {"&gt;", ">"}, {"&quot;", "\""}, {"&#39;", "'"}};
    while (from < to && n + 1 < size) {
        bool replaced = false;
        for (size_t k = 0; k < 5 && *from == '&'; k++) {
            size_t length = strlen(entities[k][0]);
            if (strncmp(from, entities[k][0], length) == 0) {
                out[n++] = entities[k][1][0];
                from += length;
                replaced = true;
                break;
            }
        }
        if (!replaced)
            out[n++] = *from++;
    }
    out[n] = '\0';
}

/* The boxes of every <text> of an SVG, from its own coordinates: x, y,
   text-anchor, font-size (inherited from enclosing groups), a rotate(±90)
   transform; width by the layout's estimate of a sans-serif face, height
   from the ascent (0.75 em) to the descent (0.22 em). */
static size_t text_boxes(const char *svg, text_box *boxes, size_t capacity, double *width,
                         double *height)
{
    const char *view = strstr(svg, "viewBox=\"0 0 ");
    assert_non_null(view);
    assert_int_equal(sscanf(view + strlen("viewBox=\"0 0 "), "%lf %lf", width, height), 2);
    double sizes[64] = {12.0};
    size_t depth = 0, count = 0;
    for (const char *p = svg; (p = strchr(p, '<')) != NULL; p++) {
        const char *end = strchr(p, '>');
        assert_non_null(end);
        if (strncmp(p, "<g", 2) == 0 && (p[2] == ' ' || p[2] == '>') && end[-1] != '/') {
            const char *size = attribute(p, end, "font-size");
            assert_true(depth + 1 < 64);
            sizes[depth + 1] = size ? strtod(size, NULL) : sizes[depth];
            depth++;
        } else if (strncmp(p, "</g>", 4) == 0) {
            assert_true(depth > 0);
            depth--;
        } else if (strncmp(p, "<text ", 6) == 0) {
            const char *close = strstr(end, "</text>");
            assert_non_null(close);
            assert_true(count < capacity);
            text_box *b = &boxes[count++];
            decode(end + 1, close, b->text, sizeof b->text);
            double x = strtod(attribute(p, end, "x"), NULL);
            double y = strtod(attribute(p, end, "y"), NULL);
            const char *size_at = attribute(p, end, "font-size");
            double size = size_at ? strtod(size_at, NULL) : sizes[depth];
            const char *anchor = attribute(p, end, "text-anchor");
            double w = svg_text_width(b->text, size);
            double left = !anchor                             ? x
                          : strncmp(anchor, "middle", 6) == 0 ? x - w / 2
                                                              : x - w;
            b->x0 = left;
            b->x1 = left + w;
            b->y0 = y - 0.75 * size;
            b->y1 = y + 0.22 * size;
            const char *turn = attribute(p, end, "transform");
            if (turn) {
                /* rotate(∓90 x y) about the anchor: (dx, dy) → (dy, −dx) for
                   −90, (−dy, dx) for +90. */
                assert_true(strncmp(turn, "rotate(-90 ", 11) == 0 ||
                            strncmp(turn, "rotate(90 ", 10) == 0);
                bool up = turn[7] == '-';
                text_box r = *b;
                b->x0 = up ? x + (r.y0 - y) : x - (r.y1 - y);
                b->x1 = up ? x + (r.y1 - y) : x - (r.y0 - y);
                b->y0 = up ? y - (r.x1 - x) : y + (r.x0 - x);
                b->y1 = up ? y - (r.x0 - x) : y + (r.x1 - x);
            }
            p = close;
        }
    }
    return count;
}

/* The texts that leave the viewBox and the pairs of texts that overlap by
   more than a square pixel, each named on stderr. */
static size_t text_problems(const char *svg, const char *what)
{
    static text_box boxes[600];
    double width, height;
    size_t n = text_boxes(svg, boxes, 600, &width, &height), problems = 0;
    for (size_t i = 0; i < n; i++) {
        const text_box *a = &boxes[i];
        bool inside =
            a->x0 >= -0.5 && a->y0 >= -0.5 && a->x1 <= width + 0.5 && a->y1 <= height + 0.5;
        if (!inside)
            fprintf(stderr, "%s: \"%s\" leaves the viewBox (%.1f %.1f %.1f %.1f)\n", what,
                    a->text, a->x0, a->y0, a->x1, a->y1);
        problems += inside ? 0 : 1;
        for (size_t j = i + 1; j < n; j++) {
            const text_box *b = &boxes[j];
            double w = fmin(a->x1, b->x1) - fmax(a->x0, b->x0);
            double h = fmin(a->y1, b->y1) - fmax(a->y0, b->y0);
            bool apart = w <= 0 || h <= 0 || w * h <= 1.0;
            if (!apart)
                fprintf(stderr, "%s: \"%s\" overlaps \"%s\"\n", what, a->text, b->text);
            problems += apart ? 0 : 1;
        }
    }
    return problems;
}

/* A titled SVG with text, every text inside and apart. */
static void assert_texts_apart(const char *svg, const char *what)
{
    assert_non_null(strstr(svg, "<title id="));
    assert_non_null(strstr(svg, "<text "));
    assert_int_equal(text_problems(svg, what), 0);
}

static void test_text_check_finds_problems(void **state)
{
    (void)state;
    /* Hand-made cases: the check itself must see an overlap, a text past
       the edge, a rotated title past the bottom, and inherited sizes. */
    const char *overlap = "<svg viewBox=\"0 0 200 100\"><text x=\"10\" y=\"20\">left "
                          "label</text><text x=\"40\" y=\"24\">other</text></svg>";
    assert_int_equal(text_problems(overlap, "overlap"), 1);
    const char *edge = "<svg viewBox=\"0 0 200 100\"><text x=\"199\" y=\"20\" "
                       "text-anchor=\"middle\">wide text</text></svg>";
    assert_int_equal(text_problems(edge, "edge"), 1);
    const char *rotated = "<svg viewBox=\"0 0 200 100\"><text x=\"20\" y=\"60\" "
                          "text-anchor=\"middle\" transform=\"rotate(-90 20 60)\">a long "
                          "rotated axis title</text></svg>";
    assert_int_equal(text_problems(rotated, "rotated"), 1);
    const char *apart = "<svg viewBox=\"0 0 200 100\"><g font-size=\"10\"><text x=\"10\" "
                        "y=\"20\">one</text><text x=\"10\" y=\"31\">two</text></g></svg>";
    assert_int_equal(text_problems(apart, "apart"), 0);
    const char *big = "<svg viewBox=\"0 0 200 100\"><g font-size=\"30\"><text x=\"10\" "
                      "y=\"30\">one</text><text x=\"10\" y=\"41\">two</text></g></svg>";
    assert_int_equal(text_problems(big, "inherited size"), 1);
}

static void test_example_figures_texts_apart(void **state)
{
    (void)state;
    /* Every figure of every model of the three bundled examples. */
    static const char *const specs[] = {"examples/cylinders/cylinders.yaml",
                                        "examples/parcels/parcels.yaml",
                                        "examples/tablets/tablets.yaml"};
    size_t checked = 0;
    for (size_t e = 0; e < 3; e++) {
        size_t length;
        const char *why;
        char *yaml = file_read_all(specs[e], &length, &why);
        assert_non_null(yaml);
        pipeline run;
        pipeline_load(&run, specs[e], yaml);
        assert_non_null(run.table);
        for (size_t m = 0; m < run.spec->n_models; m++) {
            design *d = design_new(run.spec, &run.spec->models[m], run.table, &run.errors);
            assert_non_null(d);
            fit_result *f = fit_new(d, 0.95);
            diagnostics *g = diagnostics_new(d, f, run.table, 0.05);
            figures_input *in = figures_input_new(run.spec, run.table, d, f, g, m);
            figures_set *set = figures_draw(in, NULL);
            for (size_t k = 0; k < set->count; k++) {
                char what[160];
                snprintf(what, sizeof what, "%s %s", specs[e], set->items[k].file);
                assert_texts_apart(set->items[k].svg, what);
                checked++;
            }
            figures_set_free(set);
            figures_input_free(in);
            diagnostics_free(g);
            fit_free(f);
            design_free(d);
        }
        pipeline_free(&run);
        free(yaml);
    }
    printf("  measured: %zu example figures, every text inside its frame and apart\n",
           checked);
    assert_true(checked >= 25);
}

static void test_large_figures_texts_apart(void **state)
{
    (void)state;
    invented v;
    invent(&v, 30000, "big");
    figures_set *set = figures_draw(&v.in, NULL);
    for (size_t k = 0; k < set->count; k++)
        assert_texts_apart(set->items[k].svg, set->items[k].file);
    figures_set_free(set);
    invented_free(&v);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_selected_quantiles_equal_sorted),
        cmocka_unit_test(test_ticks_unit_range),
        cmocka_unit_test(test_ticks_no_float_noise),
        cmocka_unit_test(test_ticks_negative),
        cmocka_unit_test(test_ticks_zero_among_tens),
        cmocka_unit_test(test_ticks_tiny),
        cmocka_unit_test(test_ticks_huge),
        cmocka_unit_test(test_ticks_zero_width_and_single_point),
        cmocka_unit_test(test_format_number),
        cmocka_unit_test(test_band_matches_scipy),
        cmocka_unit_test(test_sorting_large_and_small),
        cmocka_unit_test(test_influence_matches_statsmodels),
        cmocka_unit_test(test_fitted_curves_follow_the_model),
        cmocka_unit_test(test_every_figure_and_its_words),
        cmocka_unit_test(test_large_data_is_binned_and_small),
        cmocka_unit_test(test_selection_and_stability),
        cmocka_unit_test(test_degenerate_input),
        cmocka_unit_test(test_invalid_text_is_replaced),
        cmocka_unit_test(test_long_title_is_wrapped_and_cut),
        cmocka_unit_test(test_logged_response_reads_on_its_scale),
        cmocka_unit_test(test_captions_follow_the_kind_of_term),
        cmocka_unit_test(test_bins_match_numpy),
        cmocka_unit_test(test_detrended_matches_scipy),
        cmocka_unit_test(test_influence_thresholds_match_scipy),
        cmocka_unit_test(test_text_check_finds_problems),
        cmocka_unit_test(test_example_figures_texts_apart),
        cmocka_unit_test(test_large_figures_texts_apart),
    };
    fit_library_init(); /* GSL reports underflow by status, not by abort */
    return cmocka_run_group_tests(tests, NULL, NULL);
}

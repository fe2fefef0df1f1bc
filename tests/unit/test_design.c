/*
 * test_design.c — the design stage: sum coding, every level without an
 * intercept, interactions of every kind, term labels, weights and their
 * errors, the per-column accounting of dropped rows, the level limit,
 * declared levels without rows, prediction rows, and the row accessors.
 * Data: tests/data/design/oneway.csv (invented; expected values by hand).
 */
#include "testkit.h"

#include <stdio.h>
#include <stdlib.h>

static const char *const SPEC = "tests/data/design/spec.yaml";

static void run_model(pipeline *run, const char *model)
{
    char yaml[2048];
    snprintf(yaml, sizeof yaml,
             "fitproof: 1\ndata: {path: oneway.csv}\nmodels:\n  - id: m\n    response: y\n%s",
             model);
    pipeline_run(run, SPEC, yaml);
}

/* Runs spec text on CSV text held in the test (data_parse), up to the
   design of the first model. */
static void run_on_text(pipeline *run, const char *yaml, const char *csv)
{
    memset(run, 0, sizeof *run);
    fit_library_init();
    error_list_init(&run->errors);
    run->spec = spec_parse(SPEC, yaml, strlen(yaml), &run->errors);
    assert_non_null(run->spec);
    run->table = data_parse("data.csv", csv, strlen(csv), run->spec, &run->errors);
    assert_non_null(run->table);
    run->design = design_new(run->spec, &run->spec->models[0], run->table, &run->errors);
}

/* Level means of oneway.csv when x is not used (hand computed): a has
   4.1, 5.3, 4.7, 5.5; b 7.9, 8.8, 8.1; c 2.2, 3.0, 2.5; d 6.0. */
static const double MEAN_A = (4.1 + 5.3 + 4.7 + 5.5) / 4, MEAN_B = (7.9 + 8.8 + 8.1) / 3,
                    MEAN_C = (2.2 + 3.0 + 2.5) / 3, MEAN_D = 6.0;

/* Sum coding, one-way (hand derivation of the sum-to-zero parametrization):
   the intercept is the unweighted average of the level means and each
   coefficient the level's mean less that average; the reference level a
   has no coefficient of its own. */
static void test_sum_coding_one_way(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    coding: sum\n    terms: [g]\n");
    assert_non_null(run.fit);
    const design *d = run.design;
    assert_int_equal(d->n_coefs, 4);
    double average = (MEAN_A + MEAN_B + MEAN_C + MEAN_D) / 4;
    assert_true(fabs(run.fit->coefs[0].estimate - average) < 1e-13);
    size_t b = coef_index(d, "g: b vs average of levels");
    assert_int_equal(d->coefs[b].parts[0].kind, DESIGN_SUM);
    assert_string_equal(d->coefs[b].parts[0].omitted, "a");
    assert_true(fabs(run.fit->coefs[b].estimate - (MEAN_B - average)) < 1e-13);
    size_t dd = coef_index(d, "g: d vs average of levels");
    assert_true(fabs(run.fit->coefs[dd].estimate - (MEAN_D - average)) < 1e-13);
    /* Row 1 has level a: every sum-coded column is −1 there. */
    assert_true(design_entry(d, 0, b) == -1.0L);
    pipeline_free(&run);
}

/* Sum coding leaves out a level without rows (d: its only row misses x),
   so that the average is over the levels that have rows; the level is
   listed. */
static void test_sum_coding_leaves_out_a_level_without_rows(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    coding: sum\n    terms: [x, g]\n");
    assert_non_null(run.fit);
    const design *d = run.design;
    assert_int_equal(d->n_coefs, 4); /* intercept, x, b, c */
    assert_string_equal(d->coefs[3].label, "g: c vs average of levels");
    assert_int_equal(run.fit->rank, 4);
    assert_int_equal(d->n_empty_levels, 1);
    assert_string_equal(d->empty_levels[0].level, "d");
    pipeline_free(&run);
}

/* Without an intercept the first category has every level: the
   coefficients are the level means (hand derivation). */
static void test_no_intercept_gives_every_level(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    intercept: false\n    terms: [g]\n");
    assert_non_null(run.fit);
    assert_int_equal(run.design->n_coefs, 4);
    const double means[] = {MEAN_A, MEAN_B, MEAN_C, MEAN_D};
    const char *labels[] = {"g = a", "g = b", "g = c", "g = d"};
    for (size_t c = 0; c < 4; c++) {
        assert_string_equal(run.design->coefs[c].label, labels[c]);
        assert_int_equal(run.design->coefs[c].parts[0].kind, DESIGN_ALL_LEVELS);
        assert_true(fabs(run.fit->coefs[c].estimate - means[c]) < 1e-13);
    }
    /* The four indicators add up to one on every row: R² is centred. */
    assert_true(run.fit->centred);
    assert_true(run.fit->constant_spanned);
    pipeline_free(&run);
}

/* Interactions of every kind: labels join the parts with ×, entries are the
   products (row 2: x = 2, z = 1.5, g = a, h = q). */
static void test_interactions_of_every_kind(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    terms: [x, z, g, h, [x, z], [x, g], [g, h], [x, g, h]]\n");
    assert_non_null(run.design);
    const design *d = run.design;
    /* 1 + x + z + g (b, c, d) + h (q) + x×z + x×g (3) + g×h (3) + x×g×h (3) */
    assert_int_equal(d->n_coefs, 17);
    size_t xz = coef_index(d, "x × z");
    size_t xg = coef_index(d, "x × g = b");
    size_t gh = coef_index(d, "g = c × h = q");
    size_t xgh = coef_index(d, "x × g = d × h = q");
    assert_true(design_entry(d, 1, xz) == 3.0L);
    assert_true(design_entry(d, 1, xg) == 0.0L);
    /* Row 4: x = 1.5, g = b, h = q. */
    assert_true(design_entry(d, 3, xg) == 1.5L);
    assert_true(design_entry(d, 3, gh) == 0.0L);
    assert_true(design_entry(d, 3, coef_index(d, "x × g = b × h = q")) == 1.5L);
    assert_true(design_entry(d, 3, xgh) == 0.0L);
    assert_int_equal(d->coefs[xgh].n_parts, 3);
    assert_int_equal(d->coefs[xgh].term, 7);
    assert_int_equal(d->n_terms, 8);
    assert_string_equal(d->terms[7].label, "x × g × h");
    assert_int_equal(d->terms[7].n_coefs, 3);
    assert_int_equal(d->terms[5].first_coef, xg);
    pipeline_free(&run);
}

static void test_polynomial_term_label(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    terms: [{polynomial: x, degree: 3}, z]\n");
    assert_non_null(run.design);
    assert_string_equal(run.design->terms[0].label, "x up to x^3");
    assert_int_equal(run.design->terms[0].n_coefs, 3);
    assert_string_equal(run.design->terms[1].label, "z");
    pipeline_free(&run);
}

/* Weights: a row without a weight is dropped like any missing value and
   counted under the weights column; the rows' weights are kept in order. */
static void test_weights_and_dropped_rows_by_column(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    weights: w\n    terms: [x, g]\n");
    assert_non_null(run.design);
    const design *d = run.design;
    assert_int_equal(d->n_used, 9);
    assert_int_equal(d->n_dropped, 2);
    assert_non_null(d->weights);
    assert_true(gsl_vector_get(d->weights, 1) == 2.0);
    assert_true(gsl_vector_get(d->weights, 3) == 0.5);
    assert_int_equal(d->n_missing, 4); /* y, x, g, w */
    const char *names[] = {"y", "x", "g", "w"};
    const size_t rows[] = {0, 1, 0, 1};
    for (size_t k = 0; k < 4; k++) {
        assert_string_equal(d->missing[k].column->name, names[k]);
        assert_int_equal(d->missing[k].rows, rows[k]);
    }
    assert_int_equal(d->n_ranges, 1);
    assert_true(d->ranges[0].min == 1.0 && d->ranges[0].max == 3.5);
    pipeline_free(&run);
}

static const char *const WEIGHTED_YAML =
    "fitproof: 1\ndata: {path: data.csv}\nmodels:\n  - id: m\n    response: y\n"
    "    weights: w\n    terms: [x]\n";

static void test_zero_and_negative_weights_are_errors(void **state)
{
    (void)state;
    pipeline run;
    run_on_text(&run, WEIGHTED_YAML, "y,x,w\n1,1,1\n2,2,0\n3,3,-2\n4,4,\n5,5,1\n");
    assert_null(run.design);
    assert_string_equal(first_error(&run),
                        "tests/data/design/spec.yaml:6:14: error: weights must be positive, "
                        "but weight column 'w' is 0 on line 3 of data.csv and not positive on "
                        "1 more line (4); fix the values or remove the rows");
    pipeline_free(&run);
}

static void test_category_weights_are_refused(void **state)
{
    (void)state;
    pipeline run;
    run_on_text(&run, WEIGHTED_YAML, "y,x,w\n1,1,heavy\n2,2,light\n3,3,heavy\n");
    assert_null(run.design);
    assert_string_equal(first_error(&run),
                        "tests/data/design/spec.yaml:6:14: error: the weights column 'w' "
                        "must be numeric, but the data make it a category; name a column of "
                        "positive numbers");
    pipeline_free(&run);
}

/* A category with 1001 levels is refused at the term naming it. */
static void test_too_many_levels_is_a_located_error(void **state)
{
    (void)state;
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "y,big\n");
    for (int i = 0; i < 1001; i++)
        buf_printf(&csv, "%d,level%04d\n", i % 7, i);
    pipeline run;
    run_on_text(&run,
                "fitproof: 1\ndata: {path: data.csv}\nmodels:\n  - id: m\n    response: y\n"
                "    terms: [big]\n",
                csv.data);
    buf_free(&csv);
    assert_null(run.design);
    assert_string_equal(first_error(&run),
                        "tests/data/design/spec.yaml:6:13: error: category 'big' has 1001 "
                        "levels, more than the 1000 a category term may have; merge rare "
                        "levels or use a numeric column");
    pipeline_free(&run);
}

/* A declared level that no row has gets a zero column: named, not
   estimable, and the fit of the others goes on. */
static void test_declared_level_without_rows(void **state)
{
    (void)state;
    pipeline run;
    pipeline_run(&run, SPEC,
                 "fitproof: 1\ndata:\n  path: oneway.csv\n  columns:\n"
                 "    g: {kind: category, levels: [a, b, c, d, e]}\n"
                 "models:\n  - {id: m, response: y, terms: [g]}\n");
    assert_non_null(run.fit);
    size_t e = coef_index(run.design, "g = e");
    assert_false(run.fit->coefs[e].estimable);
    for (size_t c = 0; c < run.design->n_coefs; c++)
        assert_true(run.fit->coefs[e].alias[c] == 0.0);
    size_t b = coef_index(run.design, "g = b");
    assert_true(fabs(run.fit->coefs[b].estimate - (MEAN_B - MEAN_A)) < 1e-13);
    pipeline_free(&run);
}

/* The row accessors agree with design_entry and design.x. */
static void test_row_accessors_agree(void **state)
{
    (void)state;
    pipeline run;
    run_model(&run, "    terms: [{polynomial: x, degree: 2}, g, [x, z], [g, h]]\n");
    assert_non_null(run.design);
    const design *d = run.design;
    size_t n = d->n_used, p = d->n_coefs;
    long double *block = xmalloc(n * p * sizeof(long double));
    double *block_double = xmalloc(n * p * sizeof(double));
    long double *row = xmalloc(p * sizeof(long double));
    design_block(d, 0, n, block, n);
    design_block_double(d, 1, n - 1, block_double, n);
    for (size_t i = 0; i < n; i++) {
        design_row(d, i, row);
        for (size_t c = 0; c < p; c++) {
            long double entry = design_entry(d, i, c);
            assert_true(row[c] == entry);
            assert_true(block[c * n + i] == entry);
            assert_true(design_get(d, i, c) == gsl_matrix_get(d->x, i, c));
            assert_true(design_get(d, i, c) == (double)entry);
            if (i > 0)
                assert_true(block_double[c * n + i - 1] == (double)entry);
        }
    }
    free(block);
    free(block_double);
    free(row);
    pipeline_free(&run);
}

/* ---- prediction rows ------------------------------------------------------ */

static const char *point_error(const char *row, design_point **out)
{
    static char message[512];
    char yaml[1024];
    snprintf(yaml, sizeof yaml,
             "fitproof: 1\ndata: {path: oneway.csv}\nmodels:\n"
             "  - {id: m, response: y, terms: [x, g]}\n"
             "predict:\n  - model: m\n    rows:\n      - %s\n",
             row);
    pipeline run;
    pipeline_run(&run, SPEC, yaml);
    assert_non_null(run.design);
    design_point *p = design_point_new(run.design, run.spec, &run.spec->predict[0].rows[0],
                                       &run.errors);
    snprintf(message, sizeof message, "%s", first_error(&run));
    if (out && p) {
        /* x = 4 is beyond the rows' largest x (3.5); g = c. */
        assert_true(p->x[0] == 1.0L && p->x[1] == 4.0L);
        assert_true(p->x[coef_index(run.design, "g = c")] == 1.0L);
        assert_int_equal(p->n_outside, 1);
        assert_true(p->outside[0].value == 4.0 && p->outside[0].range->max == 3.5);
        *out = p;
    } else {
        design_point_free(p);
    }
    pipeline_free(&run);
    return message;
}

static void test_prediction_row_errors(void **state)
{
    (void)state;
    design_point *p = NULL;
    assert_string_equal(point_error("{x: 4, g: c}", &p), "");
    assert_non_null(p);
    design_point_free(p);
    assert_string_equal(point_error("{xx: 4, g: c}", NULL),
                        "tests/data/design/spec.yaml:8:14: error: 'xx' is not a predictor of "
                        "model 'm'; did you mean 'x'?");
    assert_string_equal(point_error("{x: 4}", NULL),
                        "tests/data/design/spec.yaml:8:9: error: this prediction row gives no "
                        "value for 'g'; model 'm' needs every one of its predictors");
    assert_string_equal(point_error("{x: four, g: c}", NULL),
                        "tests/data/design/spec.yaml:8:13: error: 'x' is numeric, but 'four' "
                        "is not a number");
    assert_string_equal(point_error("{x: 4, g: bb}", NULL),
                        "tests/data/design/spec.yaml:8:19: error: 'bb' is not a level of 'g'; "
                        "did you mean 'b'?");
    assert_string_equal(point_error("{x: 4, g: c, note: hi}", NULL),
                        "tests/data/design/spec.yaml:8:28: error: 'note' is not a predictor of "
                        "model 'm'; its predictors are 'x', 'g'");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_sum_coding_one_way),
        cmocka_unit_test(test_sum_coding_leaves_out_a_level_without_rows),
        cmocka_unit_test(test_no_intercept_gives_every_level),
        cmocka_unit_test(test_interactions_of_every_kind),
        cmocka_unit_test(test_polynomial_term_label),
        cmocka_unit_test(test_weights_and_dropped_rows_by_column),
        cmocka_unit_test(test_zero_and_negative_weights_are_errors),
        cmocka_unit_test(test_category_weights_are_refused),
        cmocka_unit_test(test_too_many_levels_is_a_located_error),
        cmocka_unit_test(test_declared_level_without_rows),
        cmocka_unit_test(test_row_accessors_agree),
        cmocka_unit_test(test_prediction_row_errors),
    };
    return cmocka_run_group_tests_name("design", tests, NULL, NULL);
}

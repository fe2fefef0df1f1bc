/*
 * test_data_rows.c — what the data stage does after reading: the where
 * filter (numeric and category comparisons, all/any, missing cells, the
 * removed rows' lines, levels and references of the kept rows) and the
 * derived columns (each transform, in spec order, on the kept rows), with
 * the exact located messages for each mistake. Expected values are worked
 * by hand from the small tables in the tests.
 */
#include "datakit.h"

static const char CSV[] = "site,dose,y\n"
                          "a,1,10\n"
                          "b,2,20\n"
                          "a,,30\n"
                          "c,4,40\n"
                          ",5,50\n";

static void load_where(loaded *run, const char *where)
{
    char yaml[1024];
    snprintf(yaml, sizeof yaml,
             "fitproof: 1\ndata: {path: x.csv}\nwhere: %s\nmodels: [{id: m, response: y}]\n",
             where);
    load_ok(run, yaml, CSV);
}

static void assert_kept(const char *where, const unsigned *lines, size_t n)
{
    loaded run;
    load_where(&run, where);
    assert_lines(&run, lines, n);
    assert_int_equal(run.table->rows_read, 5);
    assert_int_equal(run.table->n_removed, 5 - n);
    unload(&run);
}

/* ---- where ---------------------------------------------------------------- */

static void test_numeric_comparisons(void **state)
{
    (void)state;
    const unsigned at_least_2[] = {3, 5, 6};
    assert_kept("{column: dose, at_least: 2}", at_least_2, 3);
    const unsigned below_4[] = {2, 3};
    assert_kept("{column: dose, below: 4}", below_4, 2);
    const unsigned is_2[] = {3};
    assert_kept("{column: dose, is: 2}", is_2, 1);
    const unsigned in_1_5[] = {2, 6};
    assert_kept("{column: dose, in: [1, 5.0]}", in_1_5, 2);
    /* A missing cell is removed by an ordered comparison, kept by is_not. */
    const unsigned is_not_2[] = {2, 4, 5, 6};
    assert_kept("{column: dose, is_not: 2}", is_not_2, 4);
    const unsigned at_most_40[] = {2, 3, 4, 5};
    assert_kept("{column: y, at_most: 40}", at_most_40, 4);
    const unsigned above_10[] = {3, 4, 5, 6};
    assert_kept("{column: y, above: 10}", above_10, 4);
}

static void test_category_comparisons(void **state)
{
    (void)state;
    const unsigned is_a[] = {2, 4};
    assert_kept("{column: site, is: a}", is_a, 2);
    const unsigned is_not_a[] = {3, 5, 6};
    assert_kept("{column: site, is_not: a}", is_not_a, 3);
    const unsigned in_b_c[] = {3, 5};
    assert_kept("{column: site, in: [b, c]}", in_b_c, 2);
}

static void test_all_and_any(void **state)
{
    (void)state;
    const unsigned both[] = {4};
    assert_kept("{all: [{column: site, is: a}, {column: y, above: 15}]}", both, 1);
    const unsigned either[] = {2, 4, 5};
    assert_kept("{any: [{column: site, is: a}, {column: dose, is: 4}]}", either, 3);
    const unsigned nested[] = {3, 5};
    assert_kept("{all: [{any: [{column: site, is: b}, {column: site, is: c}]}, "
                "{column: y, at_least: 0}]}",
                nested, 2);
}

/* Removed rows are recorded by line; levels and counts are those of the
   kept rows, and a level left without rows is absent. */
static void test_removed_rows_and_levels(void **state)
{
    (void)state;
    loaded run;
    load_where(&run, "{column: site, is_not: b}");
    const data_table *t = run.table;
    assert_int_equal(t->n_removed, 1);
    assert_int_equal(t->removed_lines[0], 3);
    const data_column *site = column(&run, "site");
    assert_int_equal(site->n_levels, 2);
    assert_string_equal(site->levels[0], "a");
    assert_string_equal(site->levels[1], "c");
    assert_int_equal(site->level_counts[0], 2);
    assert_int_equal(site->level_counts[1], 1);
    assert_int_equal(site->n_absent_levels, 1);
    assert_string_equal(site->absent_levels[0], "b");
    assert_string_equal(level_of(site, 2), "c");
    assert_int_equal(site->n_missing, 1);
    assert_int_equal(column(&run, "dose")->n_missing, 1);
    assert_true(column(&run, "y")->numbers[2] == 40.0);
    unload(&run);
}

static void test_reference_removed_by_where(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\n"
                     "data:\n"
                     "  path: x.csv\n"
                     "  columns: {site: {reference: b}}\n"
                     "where: {column: site, is_not: b}\n"
                     "models: [{id: m, response: y}]\n",
                     CSV,
                     "t/spec.yaml:4:31: error: reference level 'b' of column 'site' has no "
                     "rows among the rows kept; choose one of 'a', 'c'");
}

static void test_where_errors(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\nwhere: {column: dos, above: 1}\n"
                     "models: [{id: m, response: y}]\n",
                     CSV,
                     "t/spec.yaml:3:17: error: where names column 'dos', which is not in "
                     "t/x.csv; did you mean 'dose'?");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\nwhere: {column: dose, is: low}\n"
                     "models: [{id: m, response: y}]\n",
                     CSV,
                     "t/spec.yaml:3:27: error: column 'dose' is numeric, so 'is' must compare "
                     "it with a number, not 'low'");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\nwhere: {column: site, above: 1}\n"
                     "models: [{id: m, response: y}]\n",
                     CSV,
                     "t/spec.yaml:3:8: error: 'above' compares numbers, but column 'site' is a "
                     "category; use is, is_not or in");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\nwhere: {column: site, in: [a, B]}\n"
                     "models: [{id: m, response: y}]\n",
                     CSV,
                     "t/spec.yaml:3:31: error: 'B' is not a level of column 'site'; did you "
                     "mean 'b'?");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\n"
                     "derive: [{name: log_y, from: y, transform: log}]\n"
                     "where: {column: log_y, above: 1}\n"
                     "models: [{id: m, response: y}]\n",
                     CSV,
                     "t/spec.yaml:4:17: error: where filters the file's rows before derived "
                     "columns are computed, so it cannot use derived column 'log_y'; filter on "
                     "the column it comes from");
}

/* One condition per filter, even when the first is an empty list (which
   once leaked and was silently replaced). */
static void test_two_conditions_refused(void **state)
{
    (void)state;
    static const char yaml[] = "fitproof: 1\ndata: {path: x.csv}\n"
                               "where: {column: dose, in: [], is: 3}\n"
                               "models: [{id: m, response: y}]\n";
    error_list errors;
    error_list_init(&errors);
    assert_null(spec_parse(SPEC_PATH, yaml, strlen(yaml), &errors));
    assert_int_equal(errors.count, 1);
    assert_string_equal(errors.messages[0],
                        "t/spec.yaml:3:31: error: a filter compares with one condition; split "
                        "it into several under all:");
    error_list_free(&errors);
}

/* ---- derive ------------------------------------------------------------------- */

static void test_transforms(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv}\n"
            "derive:\n"
            "  - {name: ln, from: x, transform: log}\n"
            "  - {name: lg, from: x, transform: log10}\n"
            "  - {name: root, from: x, transform: sqrt}\n"
            "  - {name: sq, from: x, transform: square}\n"
            "  - {name: inv, from: x, transform: reciprocal}\n"
            "  - {name: c, from: x, transform: center}\n"
            "  - {name: z, from: x, transform: standardize}\n"
            "  - {name: zz, from: z, transform: square}\n"
            "models: [{id: m, response: y}]\n",
            "x,y\n1,0\n4,0\n,0\n100,0\n");
    const data_table *t = run.table;
    assert_int_equal(t->n_file_columns, 2);
    assert_int_equal(t->n_columns, 10);
    const data_column *ln = column(&run, "ln");
    assert_true(ln->numbers[0] == 0.0 && ln->numbers[1] == log(4.0) && isnan(ln->numbers[2]));
    assert_int_equal(ln->n_missing, 1);
    assert_ptr_equal(ln->derive, &run.spec->derive[0]);
    assert_null(column(&run, "x")->derive);
    assert_true(column(&run, "lg")->numbers[3] == 2.0);
    assert_true(column(&run, "root")->numbers[1] == 2.0);
    assert_true(column(&run, "sq")->numbers[3] == 10000.0);
    assert_true(column(&run, "inv")->numbers[1] == 0.25);
    /* Mean of 1, 4, 100 is 35; sample sd is sqrt(((−34)² + (−31)² + 65²)/2)
       = sqrt(3171). */
    const data_column *c = column(&run, "c"), *z = column(&run, "z");
    assert_true(c->derive_mean == 35.0 && isnan(c->derive_sd));
    assert_true(c->numbers[0] == -34.0 && c->numbers[3] == 65.0);
    assert_true(fabs(z->derive_sd - sqrt(3171.0)) < 1e-12);
    assert_true(fabs(z->numbers[3] - 65.0 / sqrt(3171.0)) < 1e-15);
    /* A derived column can use an earlier one. */
    assert_true(fabs(column(&run, "zz")->numbers[0] - 34.0 * 34.0 / 3171.0) < 1e-15);
    unload(&run);
}

/* Centring uses the rows the where filter keeps. */
static void test_center_after_where(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv}\nwhere: {column: x, below: 50}\n"
            "derive: [{name: c, from: x, transform: center}]\n"
            "models: [{id: m, response: y}]\n",
            "x,y\n1,0\n3,0\n100,0\n");
    const data_column *c = column(&run, "c");
    assert_int_equal(run.table->n_rows, 2);
    assert_true(c->derive_mean == 2.0 && c->numbers[0] == -1.0 && c->numbers[1] == 1.0);
    unload(&run);
}

static void test_derive_errors(void **state)
{
    (void)state;
    static const char csv[] = "x,g,y\n2,a,1\n0,b,2\n";
    const char *const names[] = {
        "t/spec.yaml:3:10: error: derived column 'y' has the name of a column in t/x.csv; "
        "choose another name",
        "t/spec.yaml:4:28: error: column 'xx' is not in t/x.csv; did you mean 'x'?",
        "t/spec.yaml:5:30: error: derived column 'early' uses 'late', which is derived "
        "further down; list 'late' first",
        NULL};
    assert_errors("fitproof: 1\ndata: {path: x.csv}\n"
                  "derive: [{name: y, from: x, transform: log},\n"
                  "         {name: bad, from: xx, transform: log},\n"
                  "         {name: early, from: late, transform: log},\n"
                  "         {name: late, from: x, transform: sqrt}]\n"
                  "models: [{id: m, response: y}]\n",
                  csv, names);
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\n"
                     "derive: [{name: lg, from: g, transform: log}]\n"
                     "models: [{id: m, response: y}]\n",
                     csv, "t/spec.yaml:3:27: error: log needs a numeric column, but 'g' is a "
                          "category");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\n"
                     "derive: [{name: lx, from: x, transform: log}]\n"
                     "models: [{id: m, response: y}]\n",
                     csv, "t/spec.yaml:3:10: error: log of 'x' needs values above zero, but "
                          "the row at line 3 of t/x.csv has 0; remove the row with where, or "
                          "choose another transform");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\n"
                     "derive: [{name: r, from: x, transform: reciprocal}]\n"
                     "models: [{id: m, response: y}]\n",
                     csv, "t/spec.yaml:3:10: error: reciprocal of 'x' needs values other than "
                          "zero, but the row at line 3 of t/x.csv has 0; remove the row with "
                          "where, or choose another transform");
    assert_one_error("fitproof: 1\ndata: {path: x.csv}\n"
                     "derive: [{name: z, from: x, transform: standardize}]\n"
                     "models: [{id: m, response: y}]\n",
                     "x,y\n3,1\n3,2\n",
                     "t/spec.yaml:3:10: error: standardize of 'x' needs at least two "
                     "different values, and the rows kept have 2 values, all equal");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_numeric_comparisons),
        cmocka_unit_test(test_category_comparisons),
        cmocka_unit_test(test_all_and_any),
        cmocka_unit_test(test_removed_rows_and_levels),
        cmocka_unit_test(test_reference_removed_by_where),
        cmocka_unit_test(test_where_errors),
        cmocka_unit_test(test_two_conditions_refused),
        cmocka_unit_test(test_transforms),
        cmocka_unit_test(test_center_after_where),
        cmocka_unit_test(test_derive_errors),
    };
    return cmocka_run_group_tests_name("data rows", tests, NULL, NULL);
}

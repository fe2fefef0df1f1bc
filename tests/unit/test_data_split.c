/*
 * test_data_split.c — reading with two threads (src/data/split.c) gives
 * exactly the table, or exactly the errors, that one thread gives. The
 * split is forced on small texts (data_set_split), and the texts put at the
 * split point what makes a join impossible: a quoted line break, a word in
 * a column read as numbers, a NaN word, a late switch to a category, blank
 * lines, and errors whose line numbers must come out right.
 */
#include "datakit.h"

#include "../../src/data/internal.h"

typedef struct {
    data_table *table;
    error_list errors;
    spec *spec;
} result;

static void read_with(result *r, const char *yaml, const char *csv, size_t threshold,
                      size_t prefix)
{
    error_list_init(&r->errors);
    r->spec = spec_parse(SPEC_PATH, yaml, strlen(yaml), &r->errors);
    assert_non_null(r->spec);
    data_set_split(threshold, prefix);
    r->table = data_parse(CSV_PATH, csv, strlen(csv), r->spec, &r->errors);
    data_set_split((size_t)16 << 20, (size_t)1 << 20);
}

static void result_free(result *r)
{
    data_table_free(r->table);
    spec_free(r->spec);
    error_list_free(&r->errors);
}

static void assert_same_column(const data_column *a, const data_column *b, size_t n_rows)
{
    assert_string_equal(a->name, b->name);
    assert_int_equal(a->kind, b->kind);
    assert_int_equal(a->n_missing, b->n_missing);
    if (a->kind == DATA_NUMERIC) {
        assert_memory_equal(a->numbers, b->numbers, n_rows * sizeof(double));
        return;
    }
    assert_memory_equal(a->codes, b->codes, n_rows * sizeof(int32_t));
    assert_int_equal(a->n_levels, b->n_levels);
    for (size_t i = 0; i < a->n_levels; i++) {
        assert_string_equal(a->levels[i], b->levels[i]);
        assert_int_equal(a->level_counts[i], b->level_counts[i]);
    }
    assert_int_equal(a->reference, b->reference);
}

/* One thread and two threads (split after a 1-byte prefix, on any text
   over 16 bytes) must agree on everything. Returns the row count. */
static size_t assert_same(const char *yaml, const char *csv)
{
    result one, two;
    read_with(&one, yaml, csv, SIZE_MAX, 0);
    read_with(&two, yaml, csv, 16, 1);
    assert_int_equal(one.errors.count, two.errors.count);
    for (size_t i = 0; i < one.errors.count; i++)
        assert_string_equal(one.errors.messages[i], two.errors.messages[i]);
    assert_int_equal(one.table != NULL, two.table != NULL);
    size_t n_rows = one.table ? one.table->n_rows : 0;
    if (one.table) {
        assert_int_equal(one.table->n_rows, two.table->n_rows);
        assert_int_equal(one.table->rows_read, two.table->rows_read);
        assert_memory_equal(one.table->lines, two.table->lines, n_rows * sizeof(uint32_t));
        assert_int_equal(one.table->n_columns, two.table->n_columns);
        for (size_t j = 0; j < one.table->n_columns; j++)
            assert_same_column(&one.table->columns[j], &two.table->columns[j], n_rows);
    }
    result_free(&one);
    result_free(&two);
    return n_rows;
}

/* Rows "id,g,x" with a text column g (inferred category) and numbers;
   the line at `special` (0-based) is replaced by special_line. */
static char *rows(size_t n, size_t special, const char *special_line)
{
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "id,g,x\n");
    static const char *const words[] = {"north", "south", "east", "west"};
    for (size_t i = 0; i < n; i++) {
        if (i == special)
            buf_puts(&csv, special_line);
        else
            buf_printf(&csv, "%zu,%s,%zu.%zu\n", i, words[(i * 7) % 4], i % 97, i % 10);
    }
    return buf_detach(&csv);
}

static void test_plain_rows(void **state)
{
    (void)state;
    char *csv = rows(2000, SIZE_MAX, NULL);
    assert_int_equal(assert_same(MINIMAL_SPEC, csv), 2000);
    free(csv);
}

/* The split point falls inside a quoted field that spans lines: the first
   half's last record crosses it, and the helper's work is thrown away. */
static void test_quoted_line_breaks_near_the_middle(void **state)
{
    (void)state;
    for (size_t special = 950; special < 1050; special += 7) {
        char *csv = rows(2000, special, "1,\"a\nlong\n\nnote\",3\n");
        assert_int_equal(assert_same(MINIMAL_SPEC, csv), 2000);
        free(csv);
    }
    /* A quoted field of 6000 bytes with a line break every 60 covers the
       middle whatever the exact split. */
    buf note;
    buf_init(&note);
    buf_puts(&note, "1000,\"");
    for (int k = 0; k < 100; k++)
        buf_puts(&note, "a note written over many lines, as a lab notebook would\n");
    buf_puts(&note, "\",1\n");
    char *csv = rows(2000, 1000, note.data);
    assert_int_equal(assert_same(MINIMAL_SPEC, csv), 2000);
    free(csv);
    buf_free(&note);
}

/* A word in the second half of a column read as numbers: the helper
   gives up and the column becomes a category from there. */
static void test_word_in_the_second_half(void **state)
{
    (void)state;
    char *csv = rows(2000, 1800, "1800,east,n/a\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
    /* In the first half, after the helper started. */
    csv = rows(2000, 600, "600,east,n/a\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
}

static void test_nan_in_the_second_half(void **state)
{
    (void)state;
    char *csv = rows(2000, 1500, "1500,east,NaN\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
}

static void test_blank_lines_and_crlf(void **state)
{
    (void)state;
    char *csv = rows(2000, 1000, "\n\r\n\n1000,west,2.5\r\n");
    assert_int_equal(assert_same(MINIMAL_SPEC, csv), 2000);
    free(csv);
}

/* Errors in the second half come out with the right line numbers. */
static void test_errors_in_the_second_half(void **state)
{
    (void)state;
    char *csv = rows(2000, 1700, "1700,east\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
    csv = rows(2000, 1900, "1900,caf\xE9,1\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
    csv = rows(2000, 1990, "1990,\"open,1\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
}

/* Declared kinds and levels, missing tokens: the helper's texts join the
   main thread's levels. */
static void test_declared_columns(void **state)
{
    (void)state;
    char *csv = rows(3000, 2500, "2500,,NA\n");
    assert_same("fitproof: 1\n"
                "data:\n"
                "  path: x.csv\n"
                "  missing: [NA]\n"
                "  columns:\n"
                "    g: {levels: [west, east, south, north], reference: east}\n"
                "    x: {kind: numeric}\n"
                "models: [{id: m, response: x}]\n",
                csv);
    free(csv);
    /* A level seen only in the second half. */
    csv = rows(3000, 2999, "2999,far north,1\n");
    assert_same(MINIMAL_SPEC, csv);
    free(csv);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_plain_rows),
        cmocka_unit_test(test_quoted_line_breaks_near_the_middle),
        cmocka_unit_test(test_word_in_the_second_half),
        cmocka_unit_test(test_nan_in_the_second_half),
        cmocka_unit_test(test_blank_lines_and_crlf),
        cmocka_unit_test(test_errors_in_the_second_half),
        cmocka_unit_test(test_declared_columns),
    };
    return cmocka_run_group_tests_name("data split", tests, NULL, NULL);
}

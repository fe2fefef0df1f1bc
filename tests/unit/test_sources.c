/*
 * test_sources.c — the parts of the database and spreadsheet sources that
 * need no database: the top-level ORDER BY test of a query, passwords in a
 * libpq connection string (keyword form and URI form, as the libpq manual,
 * "Connection Strings", 34.1.1, defines them), and the canonical text form
 * of the rows (sql.h): quoting per RFC 4180, NULL as an empty field, rows
 * named by their position, their key or their sheet row, and messages moved
 * from the text to the spec's query or to the sheet's cell.
 */
#include "datakit.h"

#include <math.h>

#include "../../src/data/sql.h"

static void test_order_by(void **state)
{
    (void)state;
    assert_true(spec_query_is_ordered("SELECT * FROM t ORDER BY id"));
    assert_true(spec_query_is_ordered("select * from t\norder\tby id desc"));
    assert_true(spec_query_is_ordered("SELECT (SELECT 1) AS a FROM t ORDER BY a"));
    /* Only inside a subquery, a string, a quoted name or a comment. */
    assert_false(spec_query_is_ordered("SELECT * FROM (SELECT * FROM t ORDER BY id) AS s"));
    assert_false(spec_query_is_ordered("SELECT 'ORDER BY x' FROM t"));
    assert_false(spec_query_is_ordered("SELECT \"order by\" FROM t"));
    assert_false(spec_query_is_ordered("SELECT * FROM t -- ORDER BY id"));
    assert_false(spec_query_is_ordered("SELECT reorder_by FROM t"));
    assert_false(spec_query_is_ordered("SELECT * FROM t ORDER"));
}

static const char *first_message(const char *yaml, error_list *errors)
{
    error_list_init(errors);
    spec *s = spec_parse(SPEC_PATH, yaml, strlen(yaml), errors);
    spec_free(s);
    return errors->count ? errors->messages[0] : "";
}

static void test_passwords(void **state)
{
    (void)state;
    static const char *const with[] = {
        "host=db dbname=lims password=secret", "password = 'x y' host=db",
        "postgresql://analyst:secret@db/lims", "postgres://db/lims?password=secret", NULL};
    static const char *const without[] = {
        "service=lims", "host=db dbname=lims user=analyst", "postgresql://analyst@db/lims",
        "host=db passwordless_hint=1", NULL};
    char yaml[512];
    for (size_t i = 0; with[i]; i++) {
        snprintf(yaml, sizeof yaml,
                 "fitproof: 1\ndata:\n  postgres: \"%s\"\n  query: SELECT 1 ORDER BY 1\n"
                 "models: [{id: m, response: y}]\n",
                 with[i]);
        error_list errors;
        assert_string_equal(
            first_message(yaml, &errors),
            "t/spec.yaml:3:13: error: the connection string holds a password, "
            "which would be archived with the report; keep it in ~/.pgpass (or "
            "PGPASSFILE) and remove it from the spec");
        error_list_free(&errors);
    }
    for (size_t i = 0; without[i]; i++) {
        snprintf(yaml, sizeof yaml,
                 "fitproof: 1\ndata:\n  postgres: \"%s\"\n  query: SELECT 1 ORDER BY 1\n"
                 "models: [{id: m, response: y}]\n",
                 without[i]);
        error_list errors;
        assert_string_equal(first_message(yaml, &errors), "");
        error_list_free(&errors);
    }
}

/* Rows a b / 1 "x,y" / NULL "two\nlines" / 3 q"q, as the canonical text. */
static void fill(sql_rows *r)
{
    sql_rows_init(r);
    sql_rows_column(r, "a", SPEC_KIND_INFER);
    sql_rows_column(r, "b", SPEC_KIND_CATEGORY);
}

static void add_rows(sql_rows *r)
{
    sql_rows_field(r, "1", 1);
    sql_rows_field(r, "x,y", 3);
    sql_rows_end_row(r);
    sql_rows_field(r, NULL, 0);
    sql_rows_field(r, "two\nlines", 9);
    sql_rows_end_row(r);
    sql_rows_field(r, "3", 1);
    sql_rows_field(r, "q\"q", 3);
    sql_rows_end_row(r);
}

static void test_canonical_text(void **state)
{
    (void)state;
    sql_rows r;
    fill(&r);
    sql_rows_set_key(&r, NULL);
    add_rows(&r);
    assert_string_equal(r.text.data, "a,b\n1,\"x,y\"\n,\"two\nlines\"\n3,\"q\"\"q\"\n");
    /* The record after a quoted line break starts one line further down. */
    assert_int_equal(r.row_lines[0], 2);
    assert_int_equal(r.row_lines[1], 3);
    assert_int_equal(r.row_lines[2], 5);
    loaded run;
    memset(&run, 0, sizeof run);
    error_list_init(&run.errors);
    const char *yaml =
        "fitproof: 1\ndata:\n  sqlite: x.db\n  query: SELECT a, b FROM t ORDER BY a\n"
        "models: [{id: m, response: a}]\n";
    run.spec = spec_parse(SPEC_PATH, yaml, strlen(yaml), &run.errors);
    assert_non_null(run.spec);
    run.table = sql_rows_load(&r, run.spec, 0, "x.db", &run.errors);
    assert_non_null(run.table);
    /* Rows are named by their position in the result. */
    assert_int_equal(run.table->lines[0], 1);
    assert_int_equal(run.table->lines[2], 3);
    assert_string_equal(run.table->position_word, "row");
    const data_column *b = data_find(run.table, "b");
    assert_int_equal(b->kind, DATA_CATEGORY);
    assert_string_equal(b->levels[1], "two\nlines");
    assert_int_equal(data_find(run.table, "a")->n_missing, 1);
    unload(&run);
    sql_rows_free(&r);
}

static void test_messages_moved(void **state)
{
    (void)state;
    sql_rows r;
    fill(&r);
    sql_rows_set_key(&r, NULL);
    add_rows(&r);
    loaded run;
    memset(&run, 0, sizeof run);
    error_list_init(&run.errors);
    const char *yaml =
        "fitproof: 1\ndata:\n  sqlite: x.db\n  query: SELECT a, b FROM t ORDER BY a\n"
        "  columns: {b: {levels: [\"x,y\", \"two\\nlines\"]}}\n"
        "models: [{id: m, response: a}]\n";
    run.spec = spec_parse(SPEC_PATH, yaml, strlen(yaml), &run.errors);
    assert_non_null(run.spec);
    run.table = sql_rows_load(&r, run.spec, 0, "x.db", &run.errors);
    assert_null(run.table);
    assert_int_equal(run.errors.count, 1);
    assert_string_equal(
        run.errors.messages[0],
        "t/spec.yaml:4:10: error: in row 3 of the result, column 'b': 'q\"q' in "
        "column 'b' is not one of the levels the spec declares; the declared "
        "levels are 'x,y', 'two\nlines'");
    unload(&run);
    sql_rows_free(&r);
    /* A spreadsheet's rows: named by sheet row, messages at the cell. */
    fill(&r);
    r.sheet = "Batch 12";
    r.first_column = 2;
    r.header_row = 3;
    sql_rows_set_key(&r, NULL);
    sql_rows_field(&r, "1", 1);
    sql_rows_field(&r, "x,y", 3);
    sql_rows_end_sheet_row(&r, 4);
    sql_rows_field(&r, "2", 1);
    sql_rows_field(&r, "zz", 2);
    sql_rows_end_sheet_row(&r, 9);
    memset(&run, 0, sizeof run);
    error_list_init(&run.errors);
    const char *book =
        "fitproof: 1\ndata:\n  path: r.xlsx\n  columns: {b: {levels: [\"x,y\"]}}\n"
        "models: [{id: m, response: a}]\n";
    run.spec = spec_parse(SPEC_PATH, book, strlen(book), &run.errors);
    assert_non_null(run.spec);
    run.table = sql_rows_load(&r, run.spec, 0, "r.xlsx", &run.errors);
    assert_null(run.table);
    assert_int_equal(run.errors.count, 1);
    assert_string_equal(
        run.errors.messages[0],
        "r.xlsx:Batch 12!C9: error: 'zz' in column 'b' is not one of the levels "
        "the spec declares; the declared levels are 'x,y'");
    unload(&run);
    sql_rows_free(&r);
}

/* The canonical text of a double reads back to the same double (checked
   with the C library's strtod, bit for bit) and has the fewest decimals. */
static void test_double_text(void **state)
{
    (void)state;
    const struct {
        double value;
        const char *text;
    } cases[] = {{0.62, "0.62"},
                 {0.05, "0.05"},
                 {-3.25, "-3.25"},
                 {0.0, "0"},
                 {-0.0, "-0"},
                 {26.8, "26.8"},
                 {1e15, "1000000000000000"},
                 {0.1 + 0.2, "0.30000000000000004"},
                 {1e300, "1e+300"},
                 {123456.7, "123456.7"},
                 {5e-324, "4.94065645841247e-324"}};
    char out[32];
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        sql_format_double(cases[i].value, out, sizeof out);
        assert_string_equal(out, cases[i].text);
    }
    uint64_t state_bits = 0x9E3779B97F4A7C15ULL;
    for (int i = 0; i < 200000; i++) {
        state_bits ^= state_bits << 13, state_bits ^= state_bits >> 7,
            state_bits ^= state_bits << 17;
        double x;
        if (i % 2) { /* a short decimal, as data hold */
            x = (double)(int64_t)(state_bits % 2000000001ULL - 1000000000) /
                (double)(1ULL << (i % 7)) / 1000.0;
        } else { /* any finite double */
            memcpy(&x, &state_bits, sizeof x);
            if (!isfinite(x))
                continue;
        }
        sql_format_double(x, out, sizeof out);
        double back = strtod(out, NULL);
        assert_memory_equal(&back, &x, sizeof x);
    }
}

static void test_cell_names(void **state)
{
    (void)state;
    /* ECMA-376 Part 1, 18.3.1.4: columns A–Z, AA–ZZ, AAA–XFD. */
    const struct {
        unsigned column, row;
        const char *name;
    } cases[] = {
        {1, 1, "A1"},   {26, 7, "Z7"},   {27, 2, "AA2"},   {52, 3, "AZ3"},
        {53, 4, "BA4"}, {702, 5, "ZZ5"}, {703, 6, "AAA6"}, {16384, 1048576, "XFD1048576"}};
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        buf out;
        buf_init(&out);
        sql_cell_name(&out, cases[i].column, cases[i].row);
        assert_string_equal(out.data, cases[i].name);
        buf_free(&out);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_order_by),       cmocka_unit_test(test_passwords),
        cmocka_unit_test(test_canonical_text), cmocka_unit_test(test_messages_moved),
        cmocka_unit_test(test_cell_names),     cmocka_unit_test(test_double_text),
    };
    return cmocka_run_group_tests_name("sources", tests, NULL, NULL);
}

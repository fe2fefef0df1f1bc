/*
 * test_data_traps.c — the data stage never turns a numeric column into a
 * category quietly: a column the spec uses that holds numbers except for a
 * few texts is a located error naming them, counting their cells and
 * saying the fix; and the sniffer's guesses about delimiters, decimal
 * commas and encodings (offered in messages, never applied). Expected
 * messages are written out by hand from the inputs.
 */
#include "../../src/data/internal.h"
#include "datakit.h"

static const char USES_X[] =
    "fitproof: 1\ndata: {path: x.csv}\nmodels: [{id: m, response: y, terms: [x]}]\n";

static void test_missing_word_among_numbers(void **state)
{
    (void)state;
    assert_one_error(USES_X, "y,x\n1,10\n2,NA\n3,12\n4,NA\n5,14\n",
                     "t/x.csv:3:3: error: column 'x' holds numbers but also 'NA' (2 cells, "
                     "the first of them here), so it would be read as a category; if 'NA' "
                     "means no value, add missing: [NA] under data; or, if the column is a "
                     "category, declare it 'kind: category'");
}

static void test_other_notations_named_first_cell_first(void **state)
{
    (void)state;
    assert_one_error(
        USES_X, "y,x\n1,10\n2,11\n3,0x10\n4,13\n5,1_000\n6,15\n",
        "t/x.csv:4:3: error: column 'x' holds numbers but also '0x10' and "
        "'1_000' (2 cells, the first of them here), so it would be read as a "
        "category; correct '0x10' and '1_000'; or, if the column is a category, "
        "declare it 'kind: category'");
}

static void test_the_response_is_trapped_too(void **state)
{
    (void)state;
    assert_one_error(
        USES_X, "y,x\n1,10\n-,11\n3,12\n",
        "t/x.csv:3:1: error: column 'y' holds numbers but also '-' (1 cell, this "
        "one), so it would be read as a category; if '-' means no value, add "
        "missing: [\"-\"] under data; or, if the column is a category, declare "
        "it 'kind: category'");
}

/* Texts as common as the numbers, a declared category, and a column no
   model uses are categories as before. */
static void test_what_is_not_a_trap(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, USES_X, "y,x,z\n1,a,1\n2,b,2\n3,1,NA\n4,2,4\n5,c,5\n");
    assert_int_equal(column(&run, "x")->kind, DATA_CATEGORY);
    assert_int_equal(column(&run, "z")->kind, DATA_CATEGORY);
    unload(&run);
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, columns: {x: {kind: category}}}\n"
            "models: [{id: m, response: y, terms: [x]}]\n",
            "y,x\n1,10\n2,NA\n3,12\n");
    assert_int_equal(column(&run, "x")->kind, DATA_CATEGORY);
    unload(&run);
}

static void test_a_where_filter_or_derive_uses_the_column(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\ndata: {path: x.csv}\nwhere: {column: z, is_not: 'q'}\n"
        "models: [{id: m, response: y}]\n",
        "y,z\n1,10\n2,?\n3,12\n",
        "t/x.csv:3:3: error: column 'z' holds numbers but also '?' (1 cell, this "
        "one), so it would be read as a category; if '?' means no value, add "
        "missing: [\"?\"] under data; or, if the column is a category, declare "
        "it 'kind: category'");
}

static void test_decimal_commas_with_the_delimiter_declared(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ndata: {path: x.csv, delimiter: ';'}\n"
                     "models: [{id: m, response: y, terms: [x]}]\n",
                     "y;x\n1;1,5\n2;2,5\n3;3,75\n",
                     "t/x.csv:2:3: error: column 'x' holds numbers written with a decimal "
                     "comma ('1,5' here), so it would be read as a category; add decimal: "
                     "comma under data");
}

static void test_wrong_delimiter_is_named(void **state)
{
    (void)state;
    assert_one_error(
        USES_X, "y;x\n1,5;1\n2,5;2\n",
        "t/x.csv:1:1: error: the header names one column, 'y;x'; the file looks "
        "semicolon-separated with decimal commas; add delimiter: \";\" and "
        "decimal: comma under data");
    assert_one_error(
        USES_X, "y|x\n1|1\n2|2\n",
        "t/x.csv:1:1: error: the header names one column, 'y|x'; the file looks "
        "'|'-separated; add delimiter: \"|\" under data");
}

static void test_utf16_and_utf32_are_named(void **state)
{
    (void)state;
    loaded run;
    static const char le_bom[] = "\xFF\xFEy\0,\0x\0\n\0";
    memset(&run, 0, sizeof run);
    error_list_init(&run.errors);
    run.spec = spec_parse(SPEC_PATH, USES_X, strlen(USES_X), &run.errors);
    const struct {
        const char *bytes;
        size_t length;
        const char *encoding;
    } cases[] = {{le_bom, sizeof le_bom - 1, "UTF-16"},
                 {"\xFE\xFF\0y\0,", 6, "UTF-16"},
                 {"y\0,\0x\0", 6, "UTF-16"}, /* no byte-order mark */
                 {"\xFF\xFE\0\0y\0\0\0", 8, "UTF-32"},
                 {"\0\0\xFE\xFF\0\0\0y", 8, "UTF-32"}};
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        data_sniffed sniffed;
        data_sniff(cases[i].bytes, cases[i].length, &sniffed);
        assert_non_null(sniffed.encoding);
        assert_string_equal(sniffed.encoding, cases[i].encoding);
    }
    run.table = data_parse(CSV_PATH, le_bom, sizeof le_bom - 1, run.spec, &run.errors);
    assert_null(run.table);
    assert_int_equal(run.errors.count, 1);
    assert_string_equal(run.errors.messages[0],
                        "t/x.csv:1:1: error: this file is UTF-16, which fitproof does not "
                        "read; save it as UTF-8");
    unload(&run);
}

static void test_sniff_delimiters(void **state)
{
    (void)state;
    data_sniffed s;
    data_sniff("a,b;c\n1,2\n", 10, &s);
    assert_int_equal(s.delimiter, ',');
    assert_false(s.decimal_comma);
    data_sniff("\"a;b\",c,d\n", 10, &s); /* quoted delimiters do not count */
    assert_int_equal(s.delimiter, ',');
    assert_int_equal(s.header_fields, 3);
    data_sniff("a\tb\tc\n1,5\t2\t3\n", 15, &s);
    assert_int_equal(s.delimiter, '\t');
    assert_true(s.decimal_comma);
    data_sniff("a;b\n1;2\n", 8, &s);
    assert_int_equal(s.delimiter, ';');
    assert_false(s.decimal_comma);
    assert_null(s.encoding);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_missing_word_among_numbers),
        cmocka_unit_test(test_other_notations_named_first_cell_first),
        cmocka_unit_test(test_the_response_is_trapped_too),
        cmocka_unit_test(test_what_is_not_a_trap),
        cmocka_unit_test(test_a_where_filter_or_derive_uses_the_column),
        cmocka_unit_test(test_decimal_commas_with_the_delimiter_declared),
        cmocka_unit_test(test_wrong_delimiter_is_named),
        cmocka_unit_test(test_utf16_and_utf32_are_named),
        cmocka_unit_test(test_sniff_delimiters),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

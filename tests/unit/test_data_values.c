/*
 * test_data_values.c — the data stage's reading of values and formats:
 * TSV, other delimiters and the decimal comma, missing tokens, NaN and
 * infinity words, integers beyond 2^53, invalid UTF-8, declared levels and
 * their bound, the SHA-256 pin, and the fast path of the reader (cells of
 * long files) against the general one, with the exact located messages.
 */
#include "datakit.h"

/* ---- formats ---------------------------------------------------------------- */

static void test_tsv_and_other_delimiters(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, "fitproof: 1\ndata: {path: x.tsv}\nmodels: [{id: m, response: y}]\n",
            "g\ty\na b,c\t1.5\n");
    assert_string_equal(level_of(column(&run, "g"), 0), "a b,c");
    assert_true(column(&run, "y")->numbers[0] == 1.5);
    unload(&run);
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, delimiter: \"|\"}\n"
            "models: [{id: m, response: y}]\n",
            "g|y\n\"a|b\"|2\n");
    assert_string_equal(level_of(column(&run, "g"), 0), "a|b");
    assert_true(column(&run, "y")->numbers[0] == 2.0);
    unload(&run);
}

/* A delimiter that could be part of a number ('.', '-') still separates
   fields, in long files too. */
static void test_delimiter_inside_numbers(void **state)
{
    (void)state;
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "a.b.y\n");
    for (int i = 0; i < 50; i++)
        buf_puts(&csv, "1.25.3\n");
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, delimiter: \".\"}\n"
            "models: [{id: m, response: y}]\n",
            csv.data);
    assert_true(column(&run, "a")->numbers[49] == 1.0);
    assert_true(column(&run, "b")->numbers[49] == 25.0);
    assert_true(column(&run, "y")->numbers[49] == 3.0);
    unload(&run);
    buf_reset(&csv);
    buf_puts(&csv, "a-b-y\n");
    for (int i = 0; i < 50; i++)
        buf_puts(&csv, "12-0.5-7\n");
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, delimiter: \"-\"}\n"
            "models: [{id: m, response: y}]\n",
            csv.data);
    assert_true(column(&run, "a")->numbers[49] == 12.0);
    assert_true(column(&run, "b")->numbers[49] == 0.5);
    unload(&run);
    buf_free(&csv);
}

/* decimal: comma reads "1,5" as 1.5 (with ';' between fields); a point is
   then not a decimal mark, so "1.5" is not a number. */
static void test_decimal_comma(void **state)
{
    (void)state;
    static const char yaml[] = "fitproof: 1\ndata: {path: x.csv, decimal: comma}\n"
                               "models: [{id: m, response: y}]\n";
    loaded run;
    load_ok(&run, yaml, "x;y\n1,5;-0,25\n\"2,5\";3\n1e3;,5\n");
    const data_column *x = column(&run, "x"), *y = column(&run, "y");
    assert_true(x->numbers[0] == 1.5 && x->numbers[1] == 2.5 && x->numbers[2] == 1000.0);
    assert_true(y->numbers[0] == -0.25 && y->numbers[1] == 3.0 && y->numbers[2] == 0.5);
    unload(&run);
    load_ok(&run, yaml, "x;y\n1.5;1\n");
    assert_int_equal(column(&run, "x")->kind, DATA_CATEGORY);
    unload(&run);
}

/* Lines may end in CR alone (old spreadsheet exports). */
static void test_cr_line_ends(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "a,b\r1,2\r\r3,4\r");
    const unsigned lines[] = {2, 4};
    assert_lines(&run, lines, 2);
    assert_true(column(&run, "b")->numbers[1] == 4.0);
    unload(&run);
}

/* ---- missing cells -------------------------------------------------------------- */

static void test_missing_tokens(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, missing: [NA, \"-999\", n/a]}\n"
            "models: [{id: m, response: y}]\n",
            "x,g,y\n1,a,NA\n NA ,NA,-999\n-999.0,n/a,2\n\"NA\",b, -999 \n");
    const data_column *x = column(&run, "x"), *g = column(&run, "g"), *y = column(&run, "y");
    assert_int_equal(x->kind, DATA_NUMERIC);
    assert_true(x->numbers[0] == 1.0 && isnan(x->numbers[1]) && isnan(x->numbers[3]));
    /* Tokens match the text, not the value: -999.0 is a number. */
    assert_true(x->numbers[2] == -999.0);
    assert_int_equal(x->n_missing, 2);
    assert_int_equal(g->kind, DATA_CATEGORY);
    assert_int_equal(g->n_levels, 2);
    assert_int_equal(g->n_missing, 2);
    assert_true(isnan(y->numbers[0]) && isnan(y->numbers[1]) && isnan(y->numbers[3]));
    assert_int_equal(y->n_missing, 3);
    unload(&run);
}

/* Without a missing token, NA makes an inferred column a category. */
static void test_na_without_token(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "x,y\n1,1\nNA,2\n");
    const data_column *x = column(&run, "x");
    assert_int_equal(x->kind, DATA_CATEGORY);
    assert_string_equal(level_of(x, 1), "NA");
    unload(&run);
}

/* ---- NaN, infinity and large integers ------------------------------------------ */

static void test_nonfinite_words_in_numbers(void **state)
{
    (void)state;
    const char *nan_message =
        "t/x.csv:3:3: error: 'NaN' in column 'b' is not a number fitproof can use; if it "
        "marks a missing value, list it under data.missing";
    assert_one_error(MINIMAL_SPEC, "a,b\n1,2\n3,NaN\n4,5\n", nan_message);
    assert_one_error("fitproof: 1\ndata: {path: x.csv, columns: {b: {kind: numeric}}}\n"
                     "models: [{id: m, response: y}]\n",
                     "a,b\n1,2\n3,NaN\n", nan_message);
    assert_one_error(MINIMAL_SPEC, "a,b\n1,-Infinity\n",
                     "t/x.csv:2:3: error: '-Infinity' in column 'b' is not a number fitproof "
                     "can use; if it marks a missing value, list it under data.missing");
    /* Listed as missing, it is missing. */
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, missing: [NaN]}\nmodels: [{id: m, response: y}]\n",
            "a,b\n1,2\n3,NaN\n");
    assert_true(isnan(column(&run, "b")->numbers[1]));
    unload(&run);
    /* Among words, it is a level like the others. */
    load_ok(&run, MINIMAL_SPEC, "a,b\n1,nan\n3,low\n");
    assert_int_equal(column(&run, "b")->kind, DATA_CATEGORY);
    assert_string_equal(level_of(column(&run, "b"), 0), "nan");
    unload(&run);
}

static void test_integers_beyond_two_to_the_53(void **state)
{
    (void)state;
    const char *message =
        "t/x.csv:3:1: error: '9007199254740993' in column 'id' is an integer beyond 2^53, "
        "which a double cannot hold exactly; if it identifies something, declare the column "
        "'kind: category'";
    assert_one_error(MINIMAL_SPEC, "id,y\n9007199254740992,1\n9007199254740993,2\n", message);
    /* Declared a category, the text is kept exactly. */
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, columns: {id: {kind: category}}}\n"
            "models: [{id: m, response: y}]\n",
            "id,y\n9007199254740993,1\n9007199254740992,2\n");
    assert_string_equal(level_of(column(&run, "id"), 0), "9007199254740993");
    unload(&run);
    /* A point or an exponent makes it a decimal number, read rounded. */
    load_ok(&run, MINIMAL_SPEC, "id,y\n9007199254740993.0,1\n1e30,2\n");
    assert_true(column(&run, "id")->numbers[0] == 9007199254740992.0);
    unload(&run);
}

/* ---- values in messages ------------------------------------------------------- */

static const char NUMERIC_Y_SPEC[] =
    "fitproof: 1\ndata: {path: x.csv, columns: {y: {kind: numeric}}}\n"
    "models: [{id: m, response: y}]\n";

/* A line break in the value is shown as \n; a long value is cut at 40
   bytes, backing up to the start of a character. */
static void test_value_shown_safely(void **state)
{
    (void)state;
    assert_one_error(NUMERIC_Y_SPEC, "g,y\na,\"1\n2\"\n",
                     "t/x.csv:2:3: error: '1\\n2' in column 'y' is not a number, but the spec "
                     "declares the column numeric; correct the value or declare the column "
                     "'kind: category'");
    /* 39 ASCII bytes, then "é" (2 bytes) straddling the 40-byte cut. */
    assert_one_error(NUMERIC_Y_SPEC,
                     "g,y\na,abcdefghijklmnopqrstuvwxyz0123456789ABC\xC3\xA9xyz\n",
                     "t/x.csv:2:3: error: 'abcdefghijklmnopqrstuvwxyz0123456789ABC…' in column "
                     "'y' is not a number, but the spec declares the column numeric; correct "
                     "the value or declare the column 'kind: category'");
}

/* ---- UTF-8 ------------------------------------------------------------------------ */

static void test_invalid_utf8(void **state)
{
    (void)state;
    /* Latin-1 "é" (0xE9) in a category cell: located at the byte. */
    assert_one_error(MINIMAL_SPEC, "g,y\nab,1\ncaf\xE9,2\n",
                     "t/x.csv:3:4: error: byte 0xE9 is not valid UTF-8; save the file as "
                     "UTF-8 (most programs offer it under 'Save as')");
    /* In the header. */
    assert_one_error(MINIMAL_SPEC, "g,\xFFy\n1,2\n",
                     "t/x.csv:1:3: error: byte 0xFF is not valid UTF-8; save the file as "
                     "UTF-8 (most programs offer it under 'Save as')");
    /* In a quoted field, after a line break inside it. */
    assert_one_error(MINIMAL_SPEC, "g,y\n\"ab\ncd\xC0\xAF\",1\n",
                     "t/x.csv:3:3: error: byte 0xC0 is not valid UTF-8; save the file as "
                     "UTF-8 (most programs offer it under 'Save as')");
    /* An encoded surrogate (ED A0 80) is not UTF-8 either. */
    assert_one_error(MINIMAL_SPEC, "g,y\n\xED\xA0\x80,1\n",
                     "t/x.csv:2:1: error: byte 0xED is not valid UTF-8; save the file as "
                     "UTF-8 (most programs offer it under 'Save as')");
    /* In a cell of a numeric column. */
    assert_one_error(NUMERIC_Y_SPEC, "g,y\na,1\xA0\n",
                     "t/x.csv:2:4: error: byte 0xA0 is not valid UTF-8; save the file as "
                     "UTF-8 (most programs offer it under 'Save as')");
    /* A NUL byte. */
    const char csv[] = "g,y\na\0b,1\n";
    loaded run;
    memset(&run, 0, sizeof run);
    error_list_init(&run.errors);
    run.spec = spec_parse(SPEC_PATH, MINIMAL_SPEC, strlen(MINIMAL_SPEC), &run.errors);
    run.table = data_parse(CSV_PATH, csv, sizeof csv - 1, run.spec, &run.errors);
    assert_null(run.table);
    assert_int_equal(run.errors.count, 1);
    assert_string_equal(run.errors.messages[0],
                        "t/x.csv:2:2: error: a NUL byte (0x00) cannot appear in CSV text; is "
                        "this a text file?");
    unload(&run);
    /* Valid multi-byte text is fine, including 4-byte sequences. */
    load_ok(&run, MINIMAL_SPEC, "g,y\n\xE2\x82\xAC,1\n\xF0\x9F\x99\x82,2\n");
    assert_int_equal(column(&run, "g")->n_levels, 2);
    unload(&run);
}

static void test_blank_header_name(void **state)
{
    (void)state;
    assert_one_error(MINIMAL_SPEC, "a,  ,b\n1,2,3\n",
                     "t/x.csv:1:3: error: column 2 has an empty name; give every column a "
                     "header");
}

/* ---- declared levels ----------------------------------------------------------- */

static const char LEVELS_SPEC[] = "fitproof: 1\n"
                                  "data:\n"
                                  "  path: x.csv\n"
                                  "  columns:\n"
                                  "    plant: {levels: [south, north, east], reference: north}\n"
                                  "models: [{id: m, response: y}]\n";

static void test_declared_level_order(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, LEVELS_SPEC, "plant,y\nnorth,1\nsouth,2\nnorth,3\n,4\n");
    const data_column *plant = column(&run, "plant");
    assert_int_equal(plant->kind, DATA_CATEGORY);
    /* Declared order; "east" has no row, so it is absent, not coded. */
    assert_int_equal(plant->n_levels, 2);
    assert_string_equal(plant->levels[0], "south");
    assert_string_equal(plant->levels[1], "north");
    assert_int_equal(plant->level_counts[0], 1);
    assert_int_equal(plant->level_counts[1], 2);
    assert_int_equal(plant->n_absent_levels, 1);
    assert_string_equal(plant->absent_levels[0], "east");
    assert_string_equal(plant->levels[plant->reference], "north");
    assert_int_equal(plant->codes[0], 1);
    assert_int_equal(plant->codes[3], -1);
    unload(&run);
}

static void test_value_not_a_declared_level(void **state)
{
    (void)state;
    assert_one_error(LEVELS_SPEC, "plant,y\nnorth,1\nNorth,2\n",
                     "t/x.csv:3:1: error: 'North' in column 'plant' is not one of the levels "
                     "the spec declares; did you mean 'north'?");
    assert_one_error(LEVELS_SPEC, "plant,y\nwestern,2\n",
                     "t/x.csv:2:1: error: 'western' in column 'plant' is not one of the levels "
                     "the spec declares; the declared levels are 'south', 'north', 'east'");
}

/* A declared category used by a model may have at most DATA_MAX_LEVELS
   levels; the message says which column and how many. */
static void test_too_many_levels(void **state)
{
    (void)state;
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "lot,y\n");
    for (int i = 0; i < DATA_MAX_LEVELS + 5; i++)
        buf_printf(&csv, "L%d,%d\n", i, i);
    assert_one_error("fitproof: 1\n"
                     "data:\n"
                     "  path: x.csv\n"
                     "  columns:\n"
                     "    lot: {kind: category}\n"
                     "models: [{id: m, response: y, terms: [lot]}]\n",
                     csv.data,
                     "t/spec.yaml:5:5: error: column 'lot' is declared a category and model "
                     "'m' uses it, but it has 1005 different values, more than the 1000 a "
                     "category may have; if it identifies rows, leave it out of the models");
    /* An identifier no model uses may have any number. */
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, columns: {lot: {kind: category}}}\n"
            "models: [{id: m, response: y}]\n",
            csv.data);
    assert_int_equal(column(&run, "lot")->n_levels, DATA_MAX_LEVELS + 5);
    unload(&run);
    buf_free(&csv);
}

/* ---- SHA-256 ----------------------------------------------------------------------- */

/* The digest of a loaded table: "abc\n1\n" (a column abc and one row)
   has the SHA-256 that GNU coreutils' sha256sum prints for those six
   bytes. FIPS 180-2's own vector, SHA-256("abc"), is checked below through
   the mismatch message, which reports the digest before anything is
   parsed. */
static void test_sha256_of_the_file(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "abc\n1\n");
    assert_string_equal(run.table->sha256,
                        "5cb310b6f87a23bce211e77652daf4e4931a010ffbca35148659961a9207e0fb");
    assert_int_equal(run.table->file_bytes, 6);
    unload(&run);
}

static void test_sha256_pin(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\n"
            "data:\n"
            "  path: x.csv\n"
            "  sha256: 5CB310B6F87A23BCE211E77652DAF4E4931A010FFBCA35148659961A9207E0FB\n"
            "models: [{id: m, response: y}]\n",
            "abc\n1\n");
    unload(&run);
    /* FIPS 180-2, appendix B.1: SHA-256("abc"). */
    assert_one_error("fitproof: 1\n"
                     "data:\n"
                     "  path: x.csv\n"
                     "  sha256: 0000000000000000000000000000000000000000000000000000000000000000\n"
                     "models: [{id: m, response: y}]\n",
                     "abc",
                     "t/spec.yaml:4:11: error: the SHA-256 of t/x.csv is "
                     "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad, but "
                     "data.sha256 pins "
                     "0000000000000000000000000000000000000000000000000000000000000000; the file "
                     "has changed since the pin was written: check the data, then update the "
                     "pin");
}

/* ---- the fast path ------------------------------------------------------------------ */

/* Cells of a long file go through the reader's fast path; every value must
   equal what the general path (and strtod) gives, whatever its form. */
static void test_fast_path_matches(void **state)
{
    (void)state;
    static const char *const numbers[] = {
        "0", "7", "-3", "42.5", "-0.125", "1234567", "12345678", "123456789012", ".5",
        "5.", "0.1234567", "0.12345678", "3.14159265358979", "1e5", "-2.5E-3", "+4",
        "007", "  8 ", "\"9.5\"", "1234567.1234567", "99999999.5", "-0",
        "123456789012345", "1234567890123456", "-98765432.25", "12345678.1234567",
        "9007199254740993.5"};
    static const char *const words[] = {"superplasticizer", "none", "plasticizer",
                                        "a rather long level name over sixteen bytes", "x",
                                        "sixteen-bytes-ab", "seventeen-bytes-a", "\"q,uoted\""};
    size_t n_numbers = sizeof numbers / sizeof numbers[0];
    size_t n_words = sizeof words / sizeof words[0];
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "x,g,y\n");
    for (size_t row = 0; row < 400; row++)
        buf_printf(&csv, "%s,%s,%s\n", numbers[row % n_numbers], words[row % n_words],
                   numbers[(row * 7) % n_numbers]);
    loaded run;
    load_ok(&run, MINIMAL_SPEC, csv.data);
    const data_column *x = column(&run, "x"), *g = column(&run, "g"), *y = column(&run, "y");
    for (size_t row = 0; row < 400; row++) {
        const char *text = numbers[row % n_numbers];
        double want = strtod(text[0] == '"' ? text + 1 : text, NULL);
        assert_memory_equal(&x->numbers[row], &want, sizeof want);
        text = numbers[(row * 7) % n_numbers];
        want = strtod(text[0] == '"' ? text + 1 : text, NULL);
        assert_memory_equal(&y->numbers[row], &want, sizeof want);
        const char *word = words[row % n_words];
        if (word[0] == '"')
            assert_string_equal(level_of(g, row), "q,uoted");
        else
            assert_string_equal(level_of(g, row), word);
    }
    assert_int_equal(g->n_levels, n_words);
    unload(&run);
    buf_free(&csv);
}

/* A column read as numbers for many rows that then meets a word becomes a
   category with every earlier value's exact text. */
static void test_late_switch_to_category(void **state)
{
    (void)state;
    buf csv;
    buf_init(&csv);
    buf_puts(&csv, "code,y\n");
    for (int row = 0; row < 300; row++)
        buf_printf(&csv, "%s,%d\n", row == 250 ? "X7" : row % 2 ? "010" : "2.50", row);
    loaded run;
    load_ok(&run, MINIMAL_SPEC, csv.data);
    const data_column *code = column(&run, "code");
    assert_int_equal(code->kind, DATA_CATEGORY);
    assert_int_equal(code->n_levels, 3);
    assert_string_equal(code->levels[0], "010");
    assert_string_equal(code->levels[1], "2.50");
    assert_string_equal(code->levels[2], "X7");
    assert_int_equal(code->level_counts[0], 150); /* odd rows */
    assert_int_equal(code->level_counts[1], 149); /* even rows but row 250 */
    assert_string_equal(level_of(code, 0), "2.50");
    assert_string_equal(level_of(code, 249), "010");
    assert_string_equal(level_of(code, 250), "X7");
    assert_int_equal(run.table->rows_read, 300);
    unload(&run);
    buf_free(&csv);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_tsv_and_other_delimiters),
        cmocka_unit_test(test_delimiter_inside_numbers),
        cmocka_unit_test(test_decimal_comma),
        cmocka_unit_test(test_cr_line_ends),
        cmocka_unit_test(test_missing_tokens),
        cmocka_unit_test(test_na_without_token),
        cmocka_unit_test(test_nonfinite_words_in_numbers),
        cmocka_unit_test(test_integers_beyond_two_to_the_53),
        cmocka_unit_test(test_value_shown_safely),
        cmocka_unit_test(test_invalid_utf8),
        cmocka_unit_test(test_blank_header_name),
        cmocka_unit_test(test_declared_level_order),
        cmocka_unit_test(test_value_not_a_declared_level),
        cmocka_unit_test(test_too_many_levels),
        cmocka_unit_test(test_sha256_of_the_file),
        cmocka_unit_test(test_sha256_pin),
        cmocka_unit_test(test_fast_path_matches),
        cmocka_unit_test(test_late_switch_to_category),
    };
    return cmocka_run_group_tests_name("data values", tests, NULL, NULL);
}

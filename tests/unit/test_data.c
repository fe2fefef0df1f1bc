/*
 * test_data.c — the CSV reader on text held in the test: the RFC 4180
 * rules, kind inference, category levels and references, missing cells,
 * and the exact located message for each kind of bad file. Data messages
 * are located in the CSV ("t/x.csv:line:column"); problems with a column
 * declaration are located in the spec ("t/spec.yaml:line:column").
 */
#include "datakit.h"

/* ---- RFC 4180, section 2 ------------------------------------------------ */

/* RFC 4180, section 2, rule 5: fields may be enclosed in double quotes. */
static void test_quoted_fields(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "\"name\",\"y\"\n\"apple\",\"1.5\"\n\"pear\",2\n");
    assert_int_equal(run.table->n_columns, 2);
    assert_string_equal(run.table->columns[0].name, "name");
    const data_column *name = column(&run, "name");
    assert_string_equal(level_of(name, 0), "apple");
    assert_string_equal(level_of(name, 1), "pear");
    /* A quoted number is still a number. */
    const data_column *y = column(&run, "y");
    assert_int_equal(y->kind, DATA_NUMERIC);
    assert_true(y->numbers[0] == 1.5);
    assert_true(y->numbers[1] == 2.0);
    unload(&run);
}

/* RFC 4180, section 2, rule 7: a double quote inside a quoted field is
   written as two double quotes. */
static void test_doubled_quotes_inside_quotes(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC,
            "g,y\n\"x, \"\"q\"\"\",1\n\"\"\"\",2\n\"say \"\"hi\"\" twice\",3\n");
    const data_column *g = column(&run, "g");
    assert_string_equal(level_of(g, 0), "x, \"q\"");
    assert_string_equal(level_of(g, 1), "\"");
    assert_string_equal(level_of(g, 2), "say \"hi\" twice");
    unload(&run);
}

/* RFC 4180, section 2, rule 6: delimiters and line breaks inside quotes are
   part of the field. A row's line is where its record starts, and the rows
   after it count the embedded line break. */
static void test_delimiter_and_line_break_inside_quotes(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC,
            "a,b,c\n\"line1\nline2, still a\",1,2\nz,3,4\n\"p\n\nq\",5,6\nw,7,8\n");
    const unsigned lines[] = {2, 4, 5, 8};
    assert_lines(&run, lines, 4);
    const data_column *a = column(&run, "a");
    assert_string_equal(level_of(a, 0), "line1\nline2, still a");
    assert_string_equal(level_of(a, 1), "z");
    assert_string_equal(level_of(a, 2), "p\n\nq");
    assert_true(column(&run, "b")->numbers[3] == 7.0);
    assert_true(column(&run, "c")->numbers[3] == 8.0);
    unload(&run);
}

/* RFC 4180, section 2, rules 1 and 6: records end in CRLF, and a CRLF
   inside quotes is kept as written and counted as one line break. */
static void test_crlf_line_endings(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "a,b\r\n1,2\r\n\"x\r\ny\",4\r\n5,6\r\n");
    const unsigned lines[] = {2, 3, 5};
    assert_lines(&run, lines, 3);
    const data_column *a = column(&run, "a");
    assert_string_equal(level_of(a, 0), "1");
    assert_string_equal(level_of(a, 1), "x\r\ny");
    /* No '\r' is left on the last field of a record. */
    const data_column *b = column(&run, "b");
    assert_int_equal(b->kind, DATA_NUMERIC);
    assert_true(b->numbers[0] == 2.0 && b->numbers[2] == 6.0);
    unload(&run);
}

/* RFC 4180, section 2, rule 2: the last record may lack a line break. */
static void test_final_record_without_line_break(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "a,b\n1,2\n3,4");
    const unsigned lines[] = {2, 3};
    assert_lines(&run, lines, 2);
    assert_true(column(&run, "b")->numbers[1] == 4.0);
    unload(&run);

    load_ok(&run, MINIMAL_SPEC, "a,b\n1,2\n\"x\",\"y\"");
    assert_string_equal(level_of(column(&run, "b"), 1), "y");
    unload(&run);

    /* A trailing delimiter at the very end is one more, empty field. */
    load_ok(&run, MINIMAL_SPEC, "a,b\n1,");
    assert_int_equal(column(&run, "b")->n_missing, 1);
    unload(&run);
}

/* RFC 4180, section 2, rule 3 has a header line; a UTF-8 byte-order mark
   before it (written by spreadsheet programs) is not part of the name. */
static void test_utf8_byte_order_mark(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "\xEF\xBB\xBFy,g\n1,a\n");
    assert_string_equal(run.table->columns[0].name, "y");
    assert_non_null(data_find(run.table, "y"));
    unload(&run);
    /* Columns on the first line are counted after the mark. */
    assert_one_error(MINIMAL_SPEC, "\xEF\xBB\xBFy,,g\n1,2,3\n",
                     "t/x.csv:1:3: error: column 2 has an empty name; give every column a "
                     "header");
}

static void test_blank_lines_are_skipped(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "\na,b\n1,2\n\n\r\n3,4\n\n");
    const unsigned lines[] = {3, 6};
    assert_lines(&run, lines, 2);
    unload(&run);
}

/* ---- kinds ---------------------------------------------------------------- */

static void test_all_numbers_make_a_numeric_column(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "x,y\n1,-2.5\n007,+.5\n3e2,760.\n");
    const data_column *x = column(&run, "x");
    assert_int_equal(x->kind, DATA_NUMERIC);
    assert_null(x->codes);
    assert_int_equal(x->n_levels, 0);
    assert_true(x->numbers[0] == 1.0 && x->numbers[1] == 7.0 && x->numbers[2] == 300.0);
    const data_column *y = column(&run, "y");
    assert_true(y->numbers[0] == -2.5 && y->numbers[1] == 0.5 && y->numbers[2] == 760.0);
    unload(&run);
}

/* One non-number makes a category, and levels keep their exact text:
   "007" does not become "7", even though it was first read as a number. */
static void test_one_non_number_makes_a_category(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "g,y\n007,1\n1.50,2\n007,3\nabc,4\n");
    const data_column *g = column(&run, "g");
    assert_int_equal(g->kind, DATA_CATEGORY);
    assert_null(g->numbers);
    assert_int_equal(g->n_levels, 3);
    assert_string_equal(g->levels[0], "007");
    assert_string_equal(g->levels[1], "1.50");
    assert_string_equal(g->levels[2], "abc");
    assert_int_equal(g->codes[0], 0);
    assert_int_equal(g->codes[1], 1);
    assert_int_equal(g->codes[2], 0);
    assert_int_equal(g->codes[3], 2);
    /* The other column is untouched by the second reading. */
    const data_column *y = column(&run, "y");
    assert_int_equal(y->kind, DATA_NUMERIC);
    assert_true(y->numbers[3] == 4.0);
    const unsigned lines[] = {2, 3, 4, 5};
    assert_lines(&run, lines, 4);
    unload(&run);
}

static void test_declared_category_of_numbers(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, columns: {batch: {kind: category}}}\n"
            "models: [{id: m, response: y}]\n",
            "batch,y\n2,1\n10,2\n2,3\n");
    const data_column *batch = column(&run, "batch");
    assert_int_equal(batch->kind, DATA_CATEGORY);
    /* Byte order, not numeric order. */
    assert_string_equal(batch->levels[0], "10");
    assert_string_equal(batch->levels[1], "2");
    unload(&run);
}

/* ---- levels and references ---------------------------------------------- */

static void test_levels_sorted_by_byte_order_with_counts(void **state)
{
    (void)state;
    loaded run;
    /* "é" is 0xC3 0xA9 in UTF-8, after every ASCII byte. */
    load_ok(&run, MINIMAL_SPEC, "g,y\nb,1\n\xC3\xA9t\xC3\xA9,2\nB,3\na,4\nZ,5\nb,6\nb,7\n");
    const data_column *g = column(&run, "g");
    const char *const sorted[] = {"B", "Z", "a", "b", "\xC3\xA9t\xC3\xA9"};
    const size_t counts[] = {1, 1, 1, 3, 1};
    assert_int_equal(g->n_levels, 5);
    for (size_t i = 0; i < 5; i++) {
        assert_string_equal(g->levels[i], sorted[i]);
        assert_int_equal(g->level_counts[i], counts[i]);
    }
    /* Row codes follow the sorted order. */
    const char *const rows[] = {"b", "\xC3\xA9t\xC3\xA9", "B", "a", "Z", "b", "b"};
    for (size_t row = 0; row < 7; row++)
        assert_string_equal(level_of(g, row), rows[row]);
    /* The reference defaults to the first sorted level. */
    assert_int_equal(g->reference, 0);
    unload(&run);
}

static void test_declared_reference_honoured(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, columns: {g: {reference: b}}}\n"
            "models: [{id: m, response: y}]\n",
            "g,y\na,1\nc,2\nb,3\n");
    const data_column *g = column(&run, "g");
    assert_int_equal(g->reference, 1);
    assert_string_equal(g->levels[g->reference], "b");
    unload(&run);
}

/* A reference makes the column a category even when every value is a
   number, and is matched against the exact text. */
static void test_reference_on_a_column_of_numbers(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run,
            "fitproof: 1\ndata: {path: x.csv, columns: {dose: {reference: \"10\"}}}\n"
            "models: [{id: m, response: y}]\n",
            "dose,y\n1,1\n2,2\n10,3\n");
    const data_column *dose = column(&run, "dose");
    assert_int_equal(dose->kind, DATA_CATEGORY);
    assert_int_equal(dose->n_levels, 3);
    assert_string_equal(dose->levels[dose->reference], "10");
    assert_int_equal(dose->reference, 1);
    unload(&run);
}

static void test_reference_not_a_level(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\n"
        "data:\n"
        "  path: x.csv\n"
        "  columns:\n"
        "    g: {reference: zz}\n"
        "models: [{id: m, response: y}]\n",
        "g,y\nc,1\na,2\n",
        "t/spec.yaml:5:20: error: reference level 'zz' does not occur in column "
        "'g'; its levels are 'a', 'c'");
}

static void test_reference_not_a_level_lists_ten(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\ndata: {path: x.csv, columns: {g: {reference: q}}}\n"
        "models: [{id: m, response: y}]\n",
        "g,y\na,1\nb,1\nc,1\nd,1\ne,1\nf,1\ng,1\nh,1\ni,1\nj,1\nk,1\n",
        "t/spec.yaml:2:46: error: reference level 'q' does not occur in column "
        "'g'; its levels are 'a', 'b', 'c', 'd', 'e', 'f', 'g', 'h', 'i', 'j', "
        "…");
}

/* ---- missing cells ---------------------------------------------------------- */

static void test_blank_cells_are_missing(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "x,g,y\n1,a,1\n,,2\n  ,\t,3\n\" \",b,4\n5, ,5\n");
    const data_column *x = column(&run, "x");
    assert_int_equal(x->kind, DATA_NUMERIC);
    assert_int_equal(x->n_missing, 3);
    assert_true(x->numbers[0] == 1.0);
    assert_true(isnan(x->numbers[1]));
    assert_true(isnan(x->numbers[2]));
    assert_true(isnan(x->numbers[3]));
    assert_true(x->numbers[4] == 5.0);
    /* Blank cells are not levels and do not turn x into a category. */
    const data_column *g = column(&run, "g");
    assert_int_equal(g->kind, DATA_CATEGORY);
    assert_int_equal(g->n_missing, 3);
    assert_int_equal(g->n_levels, 2);
    assert_int_equal(g->codes[1], -1);
    assert_int_equal(g->codes[2], -1);
    assert_int_equal(g->codes[4], -1);
    assert_int_equal(g->level_counts[0] + g->level_counts[1], 2);
    assert_int_equal(column(&run, "y")->n_missing, 0);
    unload(&run);
}

/* A header and no rows is its own error, at the line where the first row
   would start: after a header that ends its line, after one that does not,
   after one spanning two lines, and with only blank lines below it. */
static void test_header_only_file(void **state)
{
    (void)state;
    const char *tail = ": error: the file has a header and no data rows; add the rows below "
                       "the header, or point data.path at the file that holds them";
    char expected[256];
    snprintf(expected, sizeof expected, "t/x.csv:2:1%s", tail);
    assert_one_error(MINIMAL_SPEC, "a,b\n", expected);
    assert_one_error(MINIMAL_SPEC, "a,b", expected);
    assert_one_error(MINIMAL_SPEC, "a,b\r\n\r\n\n", expected);
    snprintf(expected, sizeof expected, "t/x.csv:3:1%s", tail);
    assert_one_error(MINIMAL_SPEC, "\"a\nA\",b\n", expected);
}

/* ---- errors in the file --------------------------------------------------- */

static const char NUMERIC_B_SPEC[] =
    "fitproof: 1\ndata: {path: x.csv, columns: {b: {kind: numeric}}}\n"
    "models: [{id: m, response: y}]\n";

static void test_declared_numeric_with_a_non_number(void **state)
{
    (void)state;
    assert_one_error(
        NUMERIC_B_SPEC, "a,b\n1,2\n3, 4x \n",
        "t/x.csv:3:3: error: ' 4x ' in column 'b' is not a number, but the spec "
        "declares the column numeric; correct the value or declare the column "
        "'kind: category'");
    /* Long values are cut at 40 bytes. */
    assert_one_error(
        NUMERIC_B_SPEC, "a,b\n1,abcdefghijklmnopqrstuvwxyz0123456789ABCDEFGH\n",
        "t/x.csv:2:3: error: 'abcdefghijklmnopqrstuvwxyz0123456789ABCD…' in "
        "column 'b' is not a number, but the spec declares the column numeric; "
        "correct the value or declare the column 'kind: category'");
}

/* The value's own line, when a quoted line break came earlier in its row. */
static void test_non_number_after_a_quoted_line_break(void **state)
{
    (void)state;
    assert_one_error(
        NUMERIC_B_SPEC, "a,b\n\"x\ny\",abc\n",
        "t/x.csv:3:4: error: 'abc' in column 'b' is not a number, but the spec "
        "declares the column numeric; correct the value or declare the column "
        "'kind: category'");
}

/* A value too large for a double is not read as infinity, whether the
   column is declared numeric or inferred. */
static void test_number_overflowing_to_infinity(void **state)
{
    (void)state;
    const char *message = "t/x.csv:2:3: error: '1e999' in column 'b' is too large for a "
                          "double (the largest is about 1.8e308); correct the value";
    assert_one_error(NUMERIC_B_SPEC, "a,b\n1,1e999\n", message);
    assert_one_error(MINIMAL_SPEC, "a,b\n1,1e999\n", message);
}

static void test_ragged_row(void **state)
{
    (void)state;
    assert_one_error(MINIMAL_SPEC, "a,b\n1,2\n3,4,5\n",
                     "t/x.csv:3:1: error: this row has 3 fields but the header names 2 "
                     "columns; check for a missing or extra delimiter");
    /* Located where the record starts. */
    assert_one_error(MINIMAL_SPEC, "a,b,c,d\n\"x\ny\",2,3\n",
                     "t/x.csv:2:1: error: this row has 3 fields but the header names 4 "
                     "columns; check for a missing or extra delimiter");
}

static void test_unterminated_quote(void **state)
{
    (void)state;
    assert_one_error(
        MINIMAL_SPEC, "a,b\n1,2\n3,\"abc\n4,5\n",
        "t/x.csv:3:3: error: this quoted field is never closed; add the closing "
        "'\"'");
    assert_one_error(
        MINIMAL_SPEC, "a,\"b\n",
        "t/x.csv:1:3: error: this quoted field is never closed; add the closing "
        "'\"'");
}

static void test_text_after_closing_quote(void **state)
{
    (void)state;
    assert_one_error(MINIMAL_SPEC, "a,b\n1,2\n\"ab\"c,3\n",
                     "t/x.csv:3:5: error: unexpected text after a closing quote; quote the "
                     "whole field and double any quote inside it");
    /* A backslash is not an escape in CSV. */
    assert_one_error(MINIMAL_SPEC, "a,b\n\"x \\\"q\\\"\",1\n",
                     "t/x.csv:2:6: error: unexpected text after a closing quote; quote the "
                     "whole field and double any quote inside it");
}

static void test_duplicate_header_name(void **state)
{
    (void)state;
    assert_one_error(MINIMAL_SPEC, "a,b,a\n1,2,3\n",
                     "t/x.csv:1:5: error: column name 'a' appears twice in the header; "
                     "rename one");
    /* One message per repeated cell. */
    const char *const three[] = {
        "t/x.csv:1:5: error: column name 'a' appears twice in the header; rename one",
        "t/x.csv:1:7: error: column name 'a' appears twice in the header; rename one",
        NULL};
    assert_errors(MINIMAL_SPEC, "a,b,a,a\n1,2,3,4\n", three);
    /* Located on its own line after a quoted line break in the header. */
    assert_one_error(MINIMAL_SPEC, "\"x\ny\",b,b\n1,2,3\n",
                     "t/x.csv:2:6: error: column name 'b' appears twice in the header; "
                     "rename one");
}

static void test_empty_header_name(void **state)
{
    (void)state;
    assert_one_error(MINIMAL_SPEC, "a,,b\n1,2,3\n",
                     "t/x.csv:1:3: error: column 2 has an empty name; give every column a "
                     "header");
    assert_one_error(MINIMAL_SPEC, "a,b,\"\"\n1,2,3\n",
                     "t/x.csv:1:5: error: column 3 has an empty name; give every column a "
                     "header");
}

static void test_empty_file(void **state)
{
    (void)state;
    const char *message =
        "t/x.csv: error: the file is empty; it needs a header row naming the columns";
    assert_one_error(MINIMAL_SPEC, "", message);
    assert_one_error(MINIMAL_SPEC, "\n\r\n\n", message);
    assert_one_error(MINIMAL_SPEC, "\xEF\xBB\xBF", message);
}

static void test_declared_column_not_in_file(void **state)
{
    (void)state;
    const char *const expected[] = {
        "t/spec.yaml:5:5: error: column 'wieght' is declared in the spec but not found in "
        "t/x.csv; did you mean 'weight'?",
        "t/spec.yaml:6:5: error: column 'Y' is declared in the spec but not found in "
        "t/x.csv; did you mean 'y'?",
        NULL};
    assert_errors("fitproof: 1\n"
                  "data:\n"
                  "  path: x.csv\n"
                  "  columns:\n"
                  "    wieght: {unit: kg}\n"
                  "    Y: {kind: numeric}\n"
                  "    y: {kind: numeric}\n"
                  "models: [{id: m, response: y}]\n",
                  "weight,y\n1,2\n", expected);
}

static void test_data_find(void **state)
{
    (void)state;
    loaded run;
    load_ok(&run, MINIMAL_SPEC, "a,b\n1,2\n");
    assert_ptr_equal(data_find(run.table, "b"), &run.table->columns[1]);
    assert_null(data_find(run.table, "B"));
    assert_null(data_find(run.table, "c"));
    unload(&run);
}

/* ---- data_parse_number ---------------------------------------------------- */

static bool parse_number(const char *text, double *out)
{
    return data_parse_number(text, strlen(text), out);
}

static void test_parse_number_accepts(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        double value;
    } cases[] = {
        {"1", 1.0},
        {"-2.5", -2.5},
        {"+.5", 0.5},
        {"760.", 760.0},
        {"0.429796848199937E-03", 0.429796848199937E-03},
        {" 3.5 ", 3.5},
        {"\t3.5\t", 3.5},
        {"1e5", 1e5},
        {"1E+5", 1e5},
        {"2.5e-3", 2.5e-3},
        {"007", 7.0},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double value = NAN;
        if (!parse_number(cases[i].text, &value))
            fprintf(stderr, "  refused: '%s'\n", cases[i].text);
        assert_true(parse_number(cases[i].text, &value));
        assert_true(value == cases[i].value);
    }
    double zero = 1.0;
    assert_true(parse_number("-0", &zero));
    assert_true(zero == 0.0 && signbit(zero));
}

static void test_parse_number_rejects(void **state)
{
    (void)state;
    static const char *const cases[] = {
        "",
        " ",
        "-",
        "+",
        ".",
        "-.",
        "1e",
        "1e+",
        "e5",
        "nan",
        "NaN",
        "inf",
        "-inf",
        "Infinity",
        "0x10",
        "1,5",
        "1.2.3",
        "1 000",
        "--1",
        "1-",
        "1e5.0",
        "abc",
        "1.5x",
        "\xC2\xA0"
        "1",
        "1e999",
        "-1e999",
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double value = 42.0;
        if (parse_number(cases[i], &value))
            fprintf(stderr, "  accepted: '%s'\n", cases[i]);
        assert_false(parse_number(cases[i], &value));
    }
}

/* Only length bytes are read: the text need not end in a NUL. */
static void test_parse_number_reads_only_length(void **state)
{
    (void)state;
    double value = 0;
    assert_true(data_parse_number("12345", 3, &value));
    assert_true(value == 123.0);
    assert_false(data_parse_number("1.5e", 4, &value));
    assert_true(data_parse_number("1.5e3", 5, &value));
    assert_true(value == 1500.0);
}

/* The syntax check hands the text to strtod, which rounds correctly; the
   result must equal strtod's to the last bit, including texts longer than
   the 64-byte copy on the stack. */
static void test_parse_number_equals_strtod(void **state)
{
    (void)state;
    static const char *const cases[] = {
        "0.1",
        "0.3",
        "3.141592653589793",
        "2.718281828459045235360287",
        "9007199254740993",
        "1.7976931348623157e308",
        "2.2250738585072014e-308",
        "4.9e-324",
        "1e-320",
        "123456789012345678901234567890",
        "0.000000000000000000000000000000000000000000000000000000000000000000000001234",
        "-8.0e-1",
        "1.00000000000000011102230246251565404236316680908203125",
        "0.429796848199937E-03",
        "-0."
        "0000000000000000000000000000000000000000000000000000000000000000000000000000001",
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double value = NAN;
        assert_true(parse_number(cases[i], &value));
        double expected = strtod(cases[i], NULL);
        if (memcmp(&value, &expected, sizeof value) != 0)
            fprintf(stderr, "  '%s': %.17g, strtod %.17g\n", cases[i], value, expected);
        assert_memory_equal(&value, &expected, sizeof value);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_quoted_fields),
        cmocka_unit_test(test_doubled_quotes_inside_quotes),
        cmocka_unit_test(test_delimiter_and_line_break_inside_quotes),
        cmocka_unit_test(test_crlf_line_endings),
        cmocka_unit_test(test_final_record_without_line_break),
        cmocka_unit_test(test_utf8_byte_order_mark),
        cmocka_unit_test(test_blank_lines_are_skipped),
        cmocka_unit_test(test_all_numbers_make_a_numeric_column),
        cmocka_unit_test(test_one_non_number_makes_a_category),
        cmocka_unit_test(test_declared_category_of_numbers),
        cmocka_unit_test(test_levels_sorted_by_byte_order_with_counts),
        cmocka_unit_test(test_declared_reference_honoured),
        cmocka_unit_test(test_reference_on_a_column_of_numbers),
        cmocka_unit_test(test_reference_not_a_level),
        cmocka_unit_test(test_reference_not_a_level_lists_ten),
        cmocka_unit_test(test_blank_cells_are_missing),
        cmocka_unit_test(test_header_only_file),
        cmocka_unit_test(test_declared_numeric_with_a_non_number),
        cmocka_unit_test(test_non_number_after_a_quoted_line_break),
        cmocka_unit_test(test_number_overflowing_to_infinity),
        cmocka_unit_test(test_ragged_row),
        cmocka_unit_test(test_unterminated_quote),
        cmocka_unit_test(test_text_after_closing_quote),
        cmocka_unit_test(test_duplicate_header_name),
        cmocka_unit_test(test_empty_header_name),
        cmocka_unit_test(test_empty_file),
        cmocka_unit_test(test_declared_column_not_in_file),
        cmocka_unit_test(test_data_find),
        cmocka_unit_test(test_parse_number_accepts),
        cmocka_unit_test(test_parse_number_rejects),
        cmocka_unit_test(test_parse_number_reads_only_length),
        cmocka_unit_test(test_parse_number_equals_strtod),
    };
    return cmocka_run_group_tests_name("data", tests, NULL, NULL);
}

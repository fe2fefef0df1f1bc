/*
 * test_messages.c — the message collector's two classes: warnings kept
 * apart from errors (an error count of zero with warnings recorded), made
 * errors by --strict in the order they were recorded and before the
 * errors; and the "did you mean" distance, which counts a swap of two
 * neighbouring letters as one edit (Damerau's observation that swaps,
 * with single insertions, deletions and substitutions, make up most
 * typing slips) and offers nothing for a one-letter name.
 */
#include "testkit.h"

static void test_warnings_are_not_errors(void **state)
{
    (void)state;
    error_list list;
    error_list_init(&list);
    warning_at(&list, "s.yaml", (src_mark){3, 7}, "looks odd; %s", "check it");
    assert_false(error_list_any(&list));
    assert_int_equal(list.count, 0);
    assert_int_equal(list.n_warnings, 1);
    assert_string_equal(list.warnings[0], "s.yaml:3:7: warning: looks odd; check it");
    error_list_free(&list);
}

static void test_strict_makes_warnings_errors_first(void **state)
{
    (void)state;
    error_list list;
    error_list_init(&list);
    error_at(&list, "s.yaml", (src_mark){9, 1}, "broken; fix it");
    warning_at(&list, "s.yaml", (src_mark){2, 5}, "first; a");
    warning_at(&list, "d.csv", (src_mark){0, 0}, "second; b");
    error_list_strict(&list);
    assert_int_equal(list.n_warnings, 0);
    assert_int_equal(list.count, 3);
    assert_string_equal(
        list.messages[0],
        "s.yaml:2:5: error: first; a (a warning, made an error by --strict)");
    assert_string_equal(list.messages[1],
                        "d.csv: error: second; b (a warning, made an error by --strict)");
    assert_string_equal(list.messages[2], "s.yaml:9:1: error: broken; fix it");
    error_list_free(&list);
}

static void test_warnings_beyond_the_limit_are_counted(void **state)
{
    (void)state;
    error_list list;
    error_list_init(&list);
    for (int i = 0; i < ERROR_LIST_MAX + 7; i++)
        warning_at(&list, "s.yaml", (src_mark){1, 1}, "w%d", i);
    assert_int_equal(list.n_warnings, ERROR_LIST_MAX);
    assert_int_equal(list.warnings_suppressed, 7);
    error_list_strict(&list);
    assert_int_equal(list.count, ERROR_LIST_MAX);
    assert_int_equal(list.suppressed, 7);
    error_list_free(&list);
}

static void test_closest_name_counts_a_swap_as_one_edit(void **state)
{
    (void)state;
    const char *const ids[] = {"main", "reduced", "full"};
    assert_string_equal(closest_name("mian", ids, 3), "main");       /* a swap */
    assert_string_equal(closest_name("redcued", ids, 3), "reduced"); /* a swap */
    assert_string_equal(closest_name("MAIN", ids, 3), "main");       /* case only */
    assert_string_equal(closest_name("fll", ids, 3), "full");        /* one deletion */
    assert_null(closest_name("imna", ids, 3));                       /* too far */
    const char *const letters[] = {"x", "g"};
    assert_null(closest_name("z", letters, 2)); /* any one-letter name is one edit away */
    assert_string_equal(closest_name("X", letters, 2), "x");
}

static void test_offsets_and_marks_agree_for_every_line_break(void **state)
{
    (void)state;
    const char text[] = "ab\r\ncd\ref\ngh\xc3\xa9ij";
    size_t length = sizeof text - 1;
    /* 'e' is at line 3, column 1; 'i' after the two-byte é at line 4, column 4 */
    src_mark e = text_mark_of_offset(text, length, 7);
    assert_int_equal(e.line, 3);
    assert_int_equal(e.column, 1);
    src_mark i = text_mark_of_offset(text, length, 14);
    assert_int_equal(i.line, 4);
    assert_int_equal(i.column, 4);
    assert_int_equal(text_offset_of_mark(text, length, e), 7);
    assert_int_equal(text_offset_of_mark(text, length, i), 14);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_warnings_are_not_errors),
        cmocka_unit_test(test_strict_makes_warnings_errors_first),
        cmocka_unit_test(test_warnings_beyond_the_limit_are_counted),
        cmocka_unit_test(test_closest_name_counts_a_swap_as_one_edit),
        cmocka_unit_test(test_offsets_and_marks_agree_for_every_line_break),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

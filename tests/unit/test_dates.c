/*
 * test_dates.c — ISO 8601 dates and date-times (src/util/dates.c) and date
 * columns in the data stage: the day numbers against POSIX time as GNU
 * date prints it (`date -u -d 2024-03-01 +%s` is 1709251200, divided by
 * 86400 s), the Gregorian leap-year rule (ISO 8601-1:2019, 4.2.1: a year
 * divisible by 4, except centuries not divisible by 400), offsets, and a
 * date column's origin, unit, where filter and refusals.
 */
#include "datakit.h"

#include <math.h>

#include "../../src/util/dates.h"

static double days_of(const char *text)
{
    date_value v;
    assert_true(date_parse(text, strlen(text), &v));
    return v.days;
}

static void test_day_numbers(void **state)
{
    (void)state;
    /* POSIX seconds from GNU date -u -d TEXT +%s, over 86400. */
    assert_true(days_of("1970-01-01") == 0.0);
    assert_true(days_of("2000-03-01") == 951868800.0 / 86400);
    assert_true(days_of("2024-03-01") == 1709251200.0 / 86400);
    assert_true(days_of("1600-03-01") == -11670912000.0 / 86400);
    assert_true(fabs(days_of("2024-03-01T07:30:00Z") - 1709278200.0 / 86400) < 1e-9);
    assert_true(fabs(days_of("2024-03-01T08:30:00+01:00") - 1709278200.0 / 86400) < 1e-9);
    assert_true(fabs(days_of("2024-03-01 02:30-0500") - 1709278200.0 / 86400) < 1e-9);
    assert_true(fabs(days_of("1969-12-31T12:00Z") - -43200.0 / 86400) < 1e-12);
    assert_true(fabs(days_of("2024-03-01T07:30:00.5+00") - 1709278200.5 / 86400) < 1e-9);
}

static void test_calendar(void **state)
{
    (void)state;
    date_value v;
    /* ISO 8601 leap years: 2024 and 2000 are, 2023 and 1900 are not. */
    assert_true(date_parse("2024-02-29", 10, &v));
    assert_true(date_parse("2000-02-29", 10, &v));
    assert_false(date_parse("2023-02-29", 10, &v));
    assert_false(date_parse("1900-02-29", 10, &v));
    assert_false(date_parse("2024-04-31", 10, &v));
    assert_false(date_parse("2024-13-01", 10, &v));
    assert_false(date_parse("2024-00-10", 10, &v));
    const char *bad[] = {
        "2024-3-1",           "2024/03/01",           "20240301",
        "2024-03-01T24:00",   "2024-03-01T08:60",     "2024-03-01T08:30:60",
        "2024-03-01T08:30+1", "2024-03-01x",          "2024-03-01T",
        " 2024-03-01",        "2024-03-01T08:30:00.", NULL};
    for (size_t i = 0; bad[i]; i++)
        assert_false(date_parse(bad[i], strlen(bad[i]), &v));
    assert_true(date_parse("2024-03-01T08:30", 16, &v));
    assert_true(v.has_time);
    assert_false(v.has_offset);
    int minutes;
    assert_true(date_parse_zone("UTC", &minutes) && minutes == 0);
    assert_true(date_parse_zone("+05:30", &minutes) && minutes == 330);
    assert_true(date_parse_zone("-08:00", &minutes) && minutes == -480);
    assert_false(date_parse_zone("Europe/Berlin", &minutes));
}

static void test_format(void **state)
{
    (void)state;
    char out[32];
    date_format(1709251200.0 / 86400, out, sizeof out);
    assert_string_equal(out, "2024-03-01");
    date_format(-11670912000.0 / 86400, out, sizeof out);
    assert_string_equal(out, "1600-03-01");
    date_format(1709278200.0 / 86400, out, sizeof out);
    assert_string_equal(out, "2024-03-01T07:30:00Z");
}

#define DATE_SPEC(columns, extra)                                                          \
    "fitproof: 1\ndata:\n  path: x.csv\n" extra "  columns:\n" columns                     \
    "models: [{id: m, response: y, terms: [d]}]\n"

static void test_date_column(void **state)
{
    (void)state;
    loaded run;
    /* Origin: the earliest date (2024-02-27); days counted from it. */
    load_ok(&run, DATE_SPEC("    d: {kind: date}\n", ""),
            "d,y\n2024-03-01,1\n2024-02-27,2\n,3\n2024-03-02T12:00Z,4\n");
    const data_column *d = data_find(run.table, "d");
    assert_true(d->is_date);
    assert_true(d->origin_is_earliest);
    assert_true(d->date_origin == days_of("2024-02-27"));
    assert_string_equal(d->date_unit, "day");
    assert_true(d->numbers[0] == 3.0);
    assert_true(d->numbers[1] == 0.0);
    assert_true(isnan(d->numbers[2]));
    assert_true(d->numbers[3] == 4.5);
    assert_int_equal(d->n_missing, 1);
    unload(&run);
    /* A given origin and weeks; where compares dates. */
    load_ok(&run,
            DATE_SPEC("    d: {kind: date, unit: weeks, origin: 2024-01-01}\n",
                      "") "where: {column: d, at_least: 2024-01-15}\n",
            "d,y\n2024-01-08,1\n2024-01-15,2\n2024-01-29,3\n");
    d = data_find(run.table, "d");
    assert_int_equal(run.table->n_rows, 2);
    assert_int_equal(run.table->removed_lines[0], 2);
    assert_false(d->origin_is_earliest);
    assert_string_equal(d->date_unit, "week");
    assert_true(d->numbers[0] == 2.0);
    assert_true(d->numbers[1] == 4.0);
    unload(&run);
    /* A date-time without an offset, read in the spec's fixed zone. */
    load_ok(&run,
            DATE_SPEC("    d: {kind: date, unit: hour}\n", "  time_zone: \"+02:00\"\n"),
            "d,y\n2024-03-01T08:00,1\n2024-03-01T06:00Z,2\n2024-03-01T10:30,3\n");
    d = data_find(run.table, "d");
    assert_true(d->numbers[0] == d->numbers[1]); /* 08:00+02:00 is 06:00Z */
    assert_true(fabs(d->numbers[2] - (6.0 + 2.5)) < 1e-9);
    unload(&run);
}

static void test_date_refusals(void **state)
{
    (void)state;
    const char *const not_a_date[] = {
        "t/x.csv:3:1: error: '03/01/2024' in column 'd' is not a date; a date column holds "
        "ISO 8601 dates (2024-03-01) and date-times (2024-03-01T08:30:00+01:00)",
        NULL};
    assert_errors(DATE_SPEC("    d: {kind: date}\n", ""),
                  "d,y\n2024-03-01,1\n03/01/2024,2\n", not_a_date);
    const char *const no_offset[] = {
        "t/x.csv:2:1: error: '2024-03-01T08:00' in column 'd' is a date-time without an "
        "offset from UTC, so the moment it names is unknown; write the offset (Z, +01:00) "
        "or "
        "name the data's time zone with data.time_zone",
        NULL};
    assert_errors(DATE_SPEC("    d: {kind: date}\n", ""), "d,y\n2024-03-01T08:00,1\n",
                  no_offset);
    const char *const where_word[] = {
        "t/spec.yaml:7:30: error: column 'd' holds dates, so 'at_least' must compare it "
        "with a "
        "date written YYYY-MM-DD (or a date-time with its offset, 2024-03-01T08:00Z), not "
        "'2024-03-01T08:00'",
        NULL};
    assert_errors(DATE_SPEC("    d: {kind: date}\n",
                            "") "where: {column: d, at_least: 2024-03-01T08:00}\n",
                  "d,y\n2024-03-01,1\n", where_word);
}

static void test_date_spec_errors(void **state)
{
    (void)state;
    const char *yaml =
        DATE_SPEC("    d: {kind: date, unit: month}\n    y: {origin: 2024-01-01}\n",
                  "  time_zone: Europe/Berlin\n");
    error_list errors;
    error_list_init(&errors);
    spec *s = spec_parse(SPEC_PATH, yaml, strlen(yaml), &errors);
    assert_null(s);
    assert_int_equal(errors.count, 3);
    assert_string_equal(
        errors.messages[0],
        "t/spec.yaml:4:14: error: data.time_zone is a fixed offset from UTC, as "
        "in UTC, +01:00 or -05:00, found 'Europe/Berlin'; a named zone would "
        "make the result depend on the machine's time-zone rules");
    assert_string_equal(
        errors.messages[1],
        "t/spec.yaml:6:27: error: a date column counts days, hours or weeks "
        "from its origin; write unit: day, unit: hour or unit: week, not "
        "'month'");
    assert_string_equal(
        errors.messages[2],
        "t/spec.yaml:7:17: error: only a date column has an origin; declare "
        "'y' 'kind: date' or remove 'origin'");
    error_list_free(&errors);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_day_numbers),   cmocka_unit_test(test_calendar),
        cmocka_unit_test(test_format),        cmocka_unit_test(test_date_column),
        cmocka_unit_test(test_date_refusals), cmocka_unit_test(test_date_spec_errors),
    };
    return cmocka_run_group_tests_name("dates", tests, NULL, NULL);
}

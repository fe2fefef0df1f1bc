/*
 * datakit.h — helpers shared by the data-stage unit tests: parse a spec
 * held in the test, read CSV text held in the test against it, and assert
 * on the table or on the exact error messages. Data messages are located
 * in the CSV ("t/x.csv:line:column"); problems with the spec's
 * declarations are located in the spec ("t/spec.yaml:line:column").
 */
#ifndef FITPROOF_DATAKIT_H
#define FITPROOF_DATAKIT_H

#include "testkit.h"

#include <stdio.h>
#include <stdlib.h>

#define SPEC_PATH "t/spec.yaml"
#define CSV_PATH "t/x.csv"

/* A spec that declares no columns: every kind is inferred. */
static const char MINIMAL_SPEC[] =
    "fitproof: 1\ndata: {path: x.csv}\nmodels: [{id: m, response: y}]\n";

typedef struct {
    error_list errors;
    spec *spec;
    data_table *table;
} loaded;

static inline void print_errors(const error_list *errors)
{
    for (size_t i = 0; i < errors->count; i++)
        fprintf(stderr, "  got: %s\n", errors->messages[i]);
}

/* Parses yaml (which must be valid) and then the CSV text. */
static inline void load(loaded *run, const char *yaml, const char *csv)
{
    memset(run, 0, sizeof *run);
    error_list_init(&run->errors);
    run->spec = spec_parse(SPEC_PATH, yaml, strlen(yaml), &run->errors);
    if (!run->spec)
        print_errors(&run->errors);
    assert_non_null(run->spec);
    run->table = data_parse(CSV_PATH, csv, strlen(csv), run->spec, &run->errors);
}

static inline void unload(loaded *run)
{
    data_table_free(run->table);
    spec_free(run->spec);
    error_list_free(&run->errors);
}

/* Like load, but the table must be read without any error. */
static inline void load_ok(loaded *run, const char *yaml, const char *csv)
{
    load(run, yaml, csv);
    if (!run->table)
        print_errors(&run->errors);
    assert_non_null(run->table);
    assert_int_equal(run->errors.count, 0);
}

/* csv must be refused with exactly the messages in expected (NULL-ended). */
static inline void assert_errors(const char *yaml, const char *csv, const char *const *expected)
{
    loaded run;
    load(&run, yaml, csv);
    size_t n_expected = 0;
    while (expected[n_expected])
        n_expected++;
    if (run.errors.count != n_expected)
        print_errors(&run.errors);
    assert_null(run.table);
    assert_int_equal(run.errors.count, n_expected);
    for (size_t i = 0; i < n_expected; i++)
        assert_string_equal(run.errors.messages[i], expected[i]);
    unload(&run);
}

static inline void assert_one_error(const char *yaml, const char *csv, const char *expected)
{
    const char *const list[] = {expected, NULL};
    assert_errors(yaml, csv, list);
}

static inline const data_column *column(const loaded *run, const char *name)
{
    const data_column *found = data_find(run->table, name);
    assert_non_null(found);
    return found;
}

/* A category column's level of one row, by name ("" when missing). */
static inline const char *level_of(const data_column *c, size_t row)
{
    assert_int_equal(c->kind, DATA_CATEGORY);
    return c->codes[row] < 0 ? "" : c->levels[c->codes[row]];
}

static inline void assert_lines(const loaded *run, const unsigned *lines, size_t n)
{
    assert_int_equal(run->table->n_rows, n);
    for (size_t i = 0; i < n; i++)
        assert_int_equal(run->table->lines[i], lines[i]);
}

#endif

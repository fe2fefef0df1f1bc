/*
 * fuzz_csv.c — libFuzzer target for the CSV reader (src/data): any bytes,
 * read against one of a few fixed specs chosen by the first byte (kinds
 * inferred; declared kinds and levels; missing tokens; a decimal comma with
 * ';'; where and derive). The reader must either return a table whose
 * columns are consistent or record at least one error — never crash, leak
 * or read out of bounds — and reading with two threads (the split forced
 * on any input) must give the same table or the same errors. Run with
 * `make fuzz`.
 */
#include <assert.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/data/internal.h"

static const char *const SPECS[] = {
    "fitproof: 1\ndata: {path: x.csv}\nmodels: [{id: m, response: y}]\n",
    "fitproof: 1\ndata:\n  path: x.csv\n  columns:\n    a: {kind: numeric}\n"
    "    b: {levels: [x, y, z], reference: y}\n    c: {kind: category}\n"
    "models: [{id: m, response: a, terms: [c]}]\n",
    "fitproof: 1\ndata: {path: x.csv, missing: [NA, \"-\", \"-999\", nan]}\n"
    "models: [{id: m, response: y}]\n",
    "fitproof: 1\ndata: {path: x.csv, decimal: comma}\nmodels: [{id: m, response: y}]\n",
    "fitproof: 1\ndata: {path: x.csv}\n"
    "where: {any: [{column: a, at_least: 0}, {column: b, is_not: x}]}\n"
    "derive: [{name: la, from: a, transform: standardize}, {name: lb, from: la, transform: "
    "square}]\nmodels: [{id: m, response: a}]\n",
};
#define N_SPECS (sizeof SPECS / sizeof SPECS[0])

static spec *specs[N_SPECS];

static void check_table(const data_table *t)
{
    for (size_t j = 0; j < t->n_columns; j++) {
        const data_column *c = &t->columns[j];
        size_t missing = 0, counted = 0;
        for (size_t row = 0; row < t->n_rows; row++) {
            if (c->kind == DATA_NUMERIC) {
                missing += isnan(c->numbers[row]) != 0;
                assert(isnan(c->numbers[row]) || isfinite(c->numbers[row]));
            } else {
                assert(c->codes[row] >= -1 && c->codes[row] < (int32_t)c->n_levels);
                missing += c->codes[row] < 0;
            }
        }
        for (size_t i = 0; c->kind == DATA_CATEGORY && i < c->n_levels; i++)
            counted += c->level_counts[i];
        assert(missing == c->n_missing);
        assert(c->kind == DATA_NUMERIC || counted + missing == t->n_rows);
    }
    for (size_t row = 1; row < t->n_rows; row++)
        assert(t->lines[row] > t->lines[row - 1]);
    assert(t->n_rows + t->n_removed == t->rows_read);
}

static void assert_same(const data_table *a, const data_table *b)
{
    assert(a->n_rows == b->n_rows && a->n_columns == b->n_columns);
    assert(memcmp(a->lines, b->lines, a->n_rows * sizeof(uint32_t)) == 0);
    for (size_t j = 0; j < a->n_columns; j++) {
        const data_column *x = &a->columns[j], *y = &b->columns[j];
        assert(x->kind == y->kind && x->n_levels == y->n_levels && x->n_missing == y->n_missing);
        if (x->kind == DATA_NUMERIC)
            assert(memcmp(x->numbers, y->numbers, a->n_rows * sizeof(double)) == 0);
        else
            assert(memcmp(x->codes, y->codes, a->n_rows * sizeof(int32_t)) == 0);
        for (size_t i = 0; i < x->n_levels; i++)
            assert(strcmp(x->levels[i], y->levels[i]) == 0);
    }
}

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size)
{
    if (size == 0)
        return 0;
    size_t which = bytes[0] % N_SPECS;
    error_list errors, split_errors;
    error_list_init(&errors);
    error_list_init(&split_errors);
    if (!specs[which]) {
        specs[which] = spec_parse("f/spec.yaml", SPECS[which], strlen(SPECS[which]), &errors);
        assert(specs[which]);
    }
    const char *text = (const char *)bytes + 1;
    data_table *t = data_parse("f/x.csv", text, size - 1, specs[which], &errors);
    assert((t != NULL) == (errors.count == 0));
    if (t)
        check_table(t);
    data_set_split(32, 1);
    data_table *split = data_parse("f/x.csv", text, size - 1, specs[which], &split_errors);
    data_set_split((size_t)16 << 20, (size_t)1 << 20);
    assert(errors.count == split_errors.count);
    for (size_t i = 0; i < errors.count; i++)
        assert(strcmp(errors.messages[i], split_errors.messages[i]) == 0);
    if (t)
        assert_same(t, split);
    data_table_free(split);
    data_table_free(t);
    error_list_free(&split_errors);
    error_list_free(&errors);
    return 0;
}

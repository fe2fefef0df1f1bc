/*
 * test_spec.c — the spec stage on YAML held in the test: what a valid spec
 * becomes, and the exact located message for each kind of mistake. Messages
 * have the form "path:line:column: error: what is wrong; how to fix it", so
 * every error case pins the full text, which fixes the location as well.
 */
#include "testkit.h"

#include <errno.h>
#include <stdio.h>

#define SPEC_PATH "t/spec.yaml"

/* The smallest valid spec, for tests that vary one part of it. */
#define MINIMAL_DATA "data: {path: x.csv}\n"
#define MINIMAL_MODELS "models: [{id: m, response: y}]\n"

static spec *parse(error_list *errors, const char *yaml)
{
    error_list_init(errors);
    return spec_parse(SPEC_PATH, yaml, strlen(yaml), errors);
}

static void print_errors(const error_list *errors)
{
    for (size_t i = 0; i < errors->count; i++)
        fprintf(stderr, "  got: %s\n", errors->messages[i]);
}

/* yaml must be refused with exactly the messages in expected (NULL-ended). */
static void assert_errors(const char *yaml, const char *const *expected)
{
    error_list errors;
    spec *s = parse(&errors, yaml);
    size_t n_expected = 0;
    while (expected[n_expected])
        n_expected++;
    if (errors.count != n_expected)
        print_errors(&errors);
    assert_null(s);
    assert_int_equal(errors.count, n_expected);
    for (size_t i = 0; i < n_expected; i++)
        assert_string_equal(errors.messages[i], expected[i]);
    assert_int_equal(errors.suppressed, 0);
    error_list_free(&errors);
}

static void assert_one_error(const char *yaml, const char *expected)
{
    const char *const list[] = {expected, NULL};
    assert_errors(yaml, list);
}

static void assert_mark(src_mark at, unsigned line, unsigned column)
{
    assert_int_equal(at.line, line);
    assert_int_equal(at.column, column);
}

/* ---- valid specs -------------------------------------------------------- */

static const char FULL_SPEC[] =
    "fitproof: 1\n"
    "title: Cylinder strength\n"
    "data:\n"
    "  path: cylinders.csv\n"
    "  columns:\n"
    "    strength: {kind: numeric, unit: MPa, label: compressive strength}\n"
    "    mix: {kind: category, reference: B}\n"
    "    age_days: {unit: days}\n"
    "models:\n"
    "  - id: main\n"
    "    response: strength\n"
    "    terms: [age_days, mix, [age_days, mix], [age_days, mix, admixture], "
    "{polynomial: age_days, degree: 3}]\n"
    "  - id: no_intercept\n"
    "    response: strength\n"
    "    intercept: false\n";

static void test_full_spec_top_level_and_columns(void **state)
{
    (void)state;
    error_list errors;
    spec *s = parse(&errors, FULL_SPEC);
    if (!s)
        print_errors(&errors);
    assert_non_null(s);
    assert_int_equal(errors.count, 0);

    assert_string_equal(s->path, SPEC_PATH);
    assert_int_equal(s->source_length, strlen(FULL_SPEC));
    assert_memory_equal(s->source, FULL_SPEC, strlen(FULL_SPEC));
    assert_string_equal(s->title, "Cylinder strength");
    assert_string_equal(s->data.path, "cylinders.csv");
    /* data.path is relative to the spec's folder. */
    assert_string_equal(s->data.resolved, "t/cylinders.csv");
    assert_mark(s->data.path_at, 4, 9);

    assert_int_equal(s->data.n_columns, 3);
    const spec_column *strength = &s->data.columns[0];
    assert_string_equal(strength->name, "strength");
    assert_int_equal(strength->kind, SPEC_KIND_NUMERIC);
    assert_string_equal(strength->unit, "MPa");
    assert_string_equal(strength->label, "compressive strength");
    assert_null(strength->reference);
    assert_mark(strength->at, 6, 5);

    const spec_column *mix = &s->data.columns[1];
    assert_string_equal(mix->name, "mix");
    assert_int_equal(mix->kind, SPEC_KIND_CATEGORY);
    assert_null(mix->unit);
    assert_null(mix->label);
    assert_string_equal(mix->reference, "B");
    assert_mark(mix->reference_at, 7, 38);

    /* A column declared without a kind has its kind decided by the data. */
    const spec_column *age = &s->data.columns[2];
    assert_int_equal(age->kind, SPEC_KIND_INFER);
    assert_string_equal(age->unit, "days");
    spec_free(s);
    error_list_free(&errors);
}

static void test_full_spec_models_and_terms(void **state)
{
    (void)state;
    error_list errors;
    spec *s = parse(&errors, FULL_SPEC);
    assert_non_null(s);
    assert_int_equal(s->n_models, 2);

    const spec_model *main_model = &s->models[0];
    assert_string_equal(main_model->id, "main");
    assert_string_equal(main_model->response, "strength");
    assert_mark(main_model->at, 10, 5);
    assert_mark(main_model->response_at, 11, 15);
    /* intercept was not written: it defaults to true. */
    assert_true(main_model->intercept);
    assert_int_equal(main_model->n_terms, 5);

    const spec_term *terms = main_model->terms;
    assert_int_equal(terms[0].kind, SPEC_TERM_MAIN);
    assert_int_equal(terms[0].n_columns, 1);
    assert_string_equal(terms[0].columns[0], "age_days");
    assert_mark(terms[0].at, 12, 13);
    assert_mark(terms[0].column_at[0], 12, 13);

    assert_int_equal(terms[1].kind, SPEC_TERM_MAIN);
    assert_string_equal(terms[1].columns[0], "mix");
    assert_mark(terms[1].at, 12, 23);

    /* A nested list is an interaction of its columns. */
    assert_int_equal(terms[2].kind, SPEC_TERM_INTERACTION);
    assert_int_equal(terms[2].n_columns, 2);
    assert_string_equal(terms[2].columns[0], "age_days");
    assert_string_equal(terms[2].columns[1], "mix");
    assert_mark(terms[2].at, 12, 28);
    assert_mark(terms[2].column_at[1], 12, 39);

    assert_int_equal(terms[3].kind, SPEC_TERM_INTERACTION);
    assert_int_equal(terms[3].n_columns, 3);
    assert_string_equal(terms[3].columns[2], "admixture");
    assert_mark(terms[3].at, 12, 45);
    assert_mark(terms[3].column_at[2], 12, 61);

    assert_int_equal(terms[4].kind, SPEC_TERM_POLYNOMIAL);
    assert_int_equal(terms[4].n_columns, 1);
    assert_string_equal(terms[4].columns[0], "age_days");
    assert_int_equal(terms[4].degree, 3);
    assert_mark(terms[4].at, 12, 73);
    assert_mark(terms[4].column_at[0], 12, 86);

    const spec_model *second = &s->models[1];
    assert_string_equal(second->id, "no_intercept");
    assert_false(second->intercept);
    assert_int_equal(second->n_terms, 0);
    spec_free(s);
    error_list_free(&errors);
}

static void test_minimal_spec_defaults(void **state)
{
    (void)state;
    error_list errors;
    spec *s = parse(&errors, "fitproof: 1\n" MINIMAL_DATA MINIMAL_MODELS);
    assert_non_null(s);
    assert_null(s->title);
    assert_int_equal(s->data.n_columns, 0);
    assert_int_equal(s->n_models, 1);
    assert_true(s->models[0].intercept);
    assert_int_equal(s->models[0].n_terms, 0);
    spec_free(s);
    error_list_free(&errors);
}

static void test_intercept_true_written_out(void **state)
{
    (void)state;
    error_list errors;
    spec *s = parse(&errors, "fitproof: 1\n" MINIMAL_DATA
                             "models: [{id: m, response: y, intercept: true}]\n");
    assert_non_null(s);
    assert_true(s->models[0].intercept);
    spec_free(s);
    error_list_free(&errors);
}

static void test_absolute_data_path_kept(void **state)
{
    (void)state;
    error_list errors;
    spec *s = parse(&errors, "fitproof: 1\ndata: {path: /srv/x.csv}\n" MINIMAL_MODELS);
    assert_non_null(s);
    assert_string_equal(s->data.resolved, "/srv/x.csv");
    spec_free(s);
    error_list_free(&errors);
}

/* Errors recorded before the call are not this spec's: it still parses. */
static void test_earlier_errors_do_not_fail_a_valid_spec(void **state)
{
    (void)state;
    error_list errors;
    error_list_init(&errors);
    src_mark whole = {0, 0};
    error_at(&errors, "other", whole, "an earlier problem");
    const char *yaml = "fitproof: 1\n" MINIMAL_DATA MINIMAL_MODELS;
    spec *s = spec_parse(SPEC_PATH, yaml, strlen(yaml), &errors);
    assert_non_null(s);
    assert_int_equal(errors.count, 1);
    spec_free(s);
    error_list_free(&errors);
}

static void test_find_column(void **state)
{
    (void)state;
    error_list errors;
    spec *s = parse(&errors, FULL_SPEC);
    assert_non_null(s);
    assert_ptr_equal(spec_find_column(s, "mix"), &s->data.columns[1]);
    assert_ptr_equal(spec_find_column(s, "age_days"), &s->data.columns[2]);
    assert_null(spec_find_column(s, "admixture")); /* used, not declared */
    assert_null(spec_find_column(s, "Mix"));       /* names are case-sensitive */
    assert_null(spec_find_column(s, ""));
    spec_free(s);
    error_list_free(&errors);
}

/* ---- unknown and repeated keys ------------------------------------------ */

static void test_unknown_top_level_key_suggests(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ntitel: X\n" MINIMAL_DATA MINIMAL_MODELS,
                     "t/spec.yaml:2:1: error: unknown key 'titel' in the spec; "
                     "did you mean 'title'?");
}

static void test_unknown_key_without_close_match_lists_keys(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ncolour: red\n" MINIMAL_DATA MINIMAL_MODELS,
                     "t/spec.yaml:2:1: error: unknown key 'colour' in the spec; the keys "
                     "allowed here are: fitproof, title, meta, data, derive, where, models, "
                     "checks, compare, predict, report");
}

static void test_unknown_keys_in_nested_mappings(void **state)
{
    (void)state;
    /* Short keys (up to 4 characters) get a suggestion for one edit only. */
    assert_one_error("fitproof: 1\n" MINIMAL_DATA "models: [{id: m, response: y, ib: 3}]\n",
                     "t/spec.yaml:3:31: error: unknown key 'ib' in a model; "
                     "did you mean 'id'?");
    assert_one_error("fitproof: 1\n" MINIMAL_DATA "models: [{id: m, response: y, xy: 3}]\n",
                     "t/spec.yaml:3:31: error: unknown key 'xy' in a model; the keys "
                     "allowed here are: id, response, terms, intercept, weights, coding, "
                     "standard_errors, order_by, variance_columns, lags");
    assert_one_error("fitproof: 1\ndata: {path: x.csv, colums: {}}\n" MINIMAL_MODELS,
                     "t/spec.yaml:2:21: error: unknown key 'colums' in data; "
                     "did you mean 'columns'?");
    assert_one_error(
        "fitproof: 1\ndata: {path: x.csv, columns: {g: {knd: category}}}\n" MINIMAL_MODELS,
        "t/spec.yaml:2:35: error: unknown key 'knd' in a column declaration; "
        "did you mean 'kind'?");
}

static void test_key_written_twice(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ntitle: a\ntitle: b\n" MINIMAL_DATA MINIMAL_MODELS,
                     "t/spec.yaml:3:1: error: key 'title' appears twice in the spec; "
                     "keep one");
}

static void test_column_declared_twice(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ndata: {path: x.csv, columns: {a: {}, a: {kind: "
                     "numeric}}}\n" MINIMAL_MODELS,
                     "t/spec.yaml:2:38: error: column 'a' is declared twice; merge the two "
                     "declarations");
}

/* ---- types and required parts ------------------------------------------- */

static void test_models_as_a_scalar(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\n" MINIMAL_DATA "models: m\n",
                     "t/spec.yaml:3:9: error: models must be a list, found a single value");
}

static void test_spec_that_is_not_a_mapping(void **state)
{
    (void)state;
    assert_one_error("- a\n- b\n",
                     "t/spec.yaml:1:1: error: the spec must be a mapping of keys, found a "
                     "list");
}

static void test_missing_version(void **state)
{
    (void)state;
    assert_one_error(MINIMAL_DATA MINIMAL_MODELS,
                     "t/spec.yaml:1:1: error: the spec must start with 'fitproof: 1' (the "
                     "spec language version)");
}

static void test_wrong_version(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 2\n" MINIMAL_DATA MINIMAL_MODELS,
        "t/spec.yaml:1:11: error: this fitproof reads spec language version 1, the file "
        "says '2'; write fitproof: 1");
}

static void test_version_not_a_whole_number(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1.0\n" MINIMAL_DATA MINIMAL_MODELS,
                     "t/spec.yaml:1:11: error: this fitproof reads spec language version 1, "
                     "the file says '1.0'; write fitproof: 1");
    /* Too large for a long: quoted as written, not as a clamped value. */
    assert_one_error("fitproof: 99999999999999999999\n" MINIMAL_DATA MINIMAL_MODELS,
                     "t/spec.yaml:1:11: error: this fitproof reads spec language version 1, "
                     "the file says '99999999999999999999'; write fitproof: 1");
}

static void test_missing_data_and_models(void **state)
{
    (void)state;
    const char *const expected[] = {
        "t/spec.yaml:1:1: error: the spec has no 'data' section; add data: {path: "
        "your.csv}",
        "t/spec.yaml:1:1: error: the spec has no 'models' section; describe at least one "
        "model",
        NULL};
    assert_errors("fitproof: 1\ntitle: T\n", expected);
}

static void test_data_without_path(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ndata: {columns: {}}\n" MINIMAL_MODELS,
                     "t/spec.yaml:2:7: error: data has no 'path'; name the data file, "
                     "relative to the spec");
    /* A stray top-level 'path' is an unknown key, not data's path. */
    const char *const stray[] = {
        "t/spec.yaml:2:1: error: unknown key 'path' in the spec; the keys allowed here "
        "are: fitproof, title, meta, data, derive, where, models, checks, compare, predict, "
        "report",
        "t/spec.yaml:3:7: error: data has no 'path'; name the data file, relative to the "
        "spec",
        NULL};
    assert_errors("fitproof: 1\npath: x.csv\ndata: {columns: {}}\n" MINIMAL_MODELS, stray);
}

/* A bad data or data.path is reported once, where it was written. */
static void test_bad_data_path_reported_once(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ndata: {path: \"\"}\n" MINIMAL_MODELS,
                     "t/spec.yaml:2:14: error: data.path must not be empty");
    assert_one_error("fitproof: 1\ndata: x.csv\n" MINIMAL_MODELS,
                     "t/spec.yaml:2:7: error: data must be a mapping of keys, found a "
                     "single value");
}

static void test_empty_models(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\n" MINIMAL_DATA "models: []\n",
        "t/spec.yaml:3:9: error: models is empty; describe at least one model");
}

static void test_model_without_id_or_response(void **state)
{
    (void)state;
    const char *const expected[] = {
        "t/spec.yaml:3:10: error: a model needs an 'id' (a short name such as main)",
        "t/spec.yaml:3:25: error: a model needs a 'response' (the column to explain)",
        NULL};
    assert_errors("fitproof: 1\n" MINIMAL_DATA "models: [{response: y}, {id: m}]\n",
                  expected);
}

static void test_duplicate_model_id(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\n" MINIMAL_DATA "models:\n"
        "  - id: m\n"
        "    response: y\n"
        "  - id: m\n"
        "    response: z\n",
        "t/spec.yaml:6:9: error: model id 'm' is used twice; give each model its "
        "own id");
}

/* ---- terms ---------------------------------------------------------------- */

#define TERMS_PREFIX "fitproof: 1\n" MINIMAL_DATA "models:\n  - id: m\n    response: y\n"

static void test_interaction_repeats_a_column(void **state)
{
    (void)state;
    assert_one_error(
        TERMS_PREFIX "    terms: [[a, b, a]]\n",
        "t/spec.yaml:6:20: error: column 'a' appears twice in one interaction; "
        "for a power of a column use {polynomial: a, degree: 2}");
}

static void test_interaction_of_four_columns(void **state)
{
    (void)state;
    assert_one_error(
        TERMS_PREFIX "    terms: [[a, b, c, d]]\n",
        "t/spec.yaml:6:13: error: an interaction combines two or three columns, "
        "found 4");
}

static void test_interaction_of_one_column(void **state)
{
    (void)state;
    assert_one_error(
        TERMS_PREFIX "    terms: [x, [a]]\n",
        "t/spec.yaml:6:16: error: an interaction combines two or three columns, "
        "found 1");
}

static void test_interaction_holding_a_list(void **state)
{
    (void)state;
    assert_one_error(TERMS_PREFIX "    terms: [[a, [b]]]\n",
                     "t/spec.yaml:6:17: error: an interaction lists column names, like "
                     "[age_days, admixture]");
}

static void test_empty_term(void **state)
{
    (void)state;
    assert_one_error(TERMS_PREFIX "    terms: [a, \"\"]\n",
                     "t/spec.yaml:6:16: error: a term must name a column");
}

static void test_polynomial_missing_degree(void **state)
{
    (void)state;
    assert_one_error(TERMS_PREFIX "    terms: [{polynomial: x}]\n",
                     "t/spec.yaml:6:13: error: a polynomial term needs both keys, like "
                     "{polynomial: age_days, degree: 2}");
    assert_one_error(TERMS_PREFIX "    terms: [{degree: 2}]\n",
                     "t/spec.yaml:6:13: error: a polynomial term needs both keys, like "
                     "{polynomial: age_days, degree: 2}");
}

/* Degrees outside 1..10 get one message: both keys were written. */
static void test_polynomial_degree_out_of_range(void **state)
{
    (void)state;
    assert_one_error(
        TERMS_PREFIX "    terms: [{polynomial: x, degree: 0}]\n",
        "t/spec.yaml:6:37: error: a polynomial's degree must be a whole number "
        "from 1 to 10, found '0'");
    assert_one_error(
        TERMS_PREFIX "    terms: [{polynomial: x, degree: 11}]\n",
        "t/spec.yaml:6:37: error: a polynomial's degree must be a whole number "
        "from 1 to 10, found '11'");
    assert_one_error(
        TERMS_PREFIX "    terms: [{polynomial: x, degree: two}]\n",
        "t/spec.yaml:6:37: error: a polynomial's degree must be a whole number "
        "from 1 to 10, found 'two'");
}

static void test_polynomial_degree_bounds_accepted(void **state)
{
    (void)state;
    error_list errors;
    spec *s =
        parse(&errors, TERMS_PREFIX
              "    terms: [{polynomial: x, degree: 1}, {degree: 10, polynomial: z}]\n");
    if (!s)
        print_errors(&errors);
    assert_non_null(s);
    assert_int_equal(s->models[0].n_terms, 2);
    assert_int_equal(s->models[0].terms[0].degree, 1);
    assert_int_equal(s->models[0].terms[1].degree, 10);
    assert_string_equal(s->models[0].terms[1].columns[0], "z");
    spec_free(s);
    error_list_free(&errors);
}

static void test_polynomial_misspelt_key(void **state)
{
    (void)state;
    assert_one_error(TERMS_PREFIX "    terms: [{polynomial: x, degre: 2}]\n",
                     "t/spec.yaml:6:29: error: unknown key 'degre' in a polynomial term; "
                     "did you mean 'degree'?");
}

static void test_terms_not_a_list(void **state)
{
    (void)state;
    assert_one_error(TERMS_PREFIX "    terms: a + b\n",
                     "t/spec.yaml:6:12: error: a model's terms must be a list, found a "
                     "single value");
}

/* ---- values ------------------------------------------------------------- */

static void test_intercept_yes_is_not_a_boolean(void **state)
{
    (void)state;
    assert_one_error(
        TERMS_PREFIX "    intercept: yes\n",
        "t/spec.yaml:6:16: error: intercept must be true or false, found 'yes'");
}

static void test_unknown_column_kind(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\n"
        "data:\n"
        "  path: x.csv\n"
        "  columns:\n"
        "    g: {kind: ordinal}\n" MINIMAL_MODELS,
        "t/spec.yaml:5:15: error: unknown column kind 'ordinal'; use numeric or "
        "category");
}

static void test_reference_on_numeric_column(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\n"
                     "data:\n"
                     "  path: x.csv\n"
                     "  columns:\n"
                     "    x: {kind: numeric, reference: a}\n" MINIMAL_MODELS,
                     "t/spec.yaml:5:35: error: column 'x' is numeric and cannot have a "
                     "reference level; declare it 'kind: category' or remove the key");
    /* The order of the keys does not matter. */
    assert_one_error("fitproof: 1\n"
                     "data:\n"
                     "  path: x.csv\n"
                     "  columns:\n"
                     "    x: {reference: a, kind: numeric}\n" MINIMAL_MODELS,
                     "t/spec.yaml:5:20: error: column 'x' is numeric and cannot have a "
                     "reference level; declare it 'kind: category' or remove the key");
}

static void test_column_declaration_not_a_mapping(void **state)
{
    (void)state;
    assert_one_error(
        "fitproof: 1\ndata: {path: x.csv, columns: {g: category}}\n" MINIMAL_MODELS,
        "t/spec.yaml:2:34: error: a column declaration must be a mapping of "
        "keys, found a single value");
}

/* ---- YAML itself ---------------------------------------------------------- */

static void test_alias_refused(void **state)
{
    (void)state;
    /* Both the anchor and the alias are shown where they are written. */
    const char *const expected[] = {
        "t/spec.yaml:2:8: error: YAML anchors (&name) are not allowed in a spec; write the "
        "value out in full",
        "t/spec.yaml:4:15: error: YAML aliases (*name) are not allowed in a spec; write the "
        "value out in full",
        NULL};
    assert_errors("fitproof: 1\n"
                  "title: &t Hello\n" MINIMAL_DATA "models: [{id: *t, response: y}]\n",
                  expected);
}

static void test_alias_of_a_mapping_refused(void **state)
{
    (void)state;
    const char *const expected[] = {
        "t/spec.yaml:2:7: error: YAML anchors (&name) are not allowed in a spec; write the "
        "value out in full",
        "t/spec.yaml:5:5: error: YAML aliases (*name) are not allowed in a spec; write the "
        "value out in full",
        NULL};
    assert_errors("fitproof: 1\n"
                  "data: &d {path: x.csv}\n"
                  "models:\n"
                  "  - {id: a, response: y}\n"
                  "  - *d\n",
                  expected);
}

static void test_invalid_yaml_located(void **state)
{
    (void)state;
    assert_one_error("fitproof: 1\ndata: {path: x.csv\n" MINIMAL_MODELS,
                     "t/spec.yaml:3:7: error: the file is not valid YAML: did not find "
                     "expected ',' or '}' while parsing a flow mapping");
    assert_one_error("fitproof: 1\n\tdata: 1\n",
                     "t/spec.yaml:2:1: error: the file is not valid YAML: found a tab "
                     "character that violates indentation while scanning a plain scalar");
}

static void test_empty_file(void **state)
{
    (void)state;
    const char *message = "t/spec.yaml:1:1: error: the spec is empty; start from 'fitproof "
                          "scaffold DATA.csv'";
    assert_one_error("", message);
    assert_one_error("# only a comment\n", message);
}

static void test_several_errors_at_once(void **state)
{
    (void)state;
    const char *const expected[] = {
        "t/spec.yaml:1:1: error: unknown key 'titel' in the spec; did you mean 'title'?",
        "t/spec.yaml:2:11: error: this fitproof reads spec language version 1, the file "
        "says '3'; write fitproof: 1",
        "t/spec.yaml:3:21: error: unknown key 'colums' in data; did you mean 'columns'?",
        "t/spec.yaml:6:16: error: intercept must be true or false, found 'no'",
        "t/spec.yaml:8:16: error: an interaction combines two or three columns, found 4",
        NULL};
    assert_errors("titel: 1\n"
                  "fitproof: 3\n"
                  "data: {path: x.csv, colums: {}}\n"
                  "models:\n"
                  "  - id: m\n"
                  "    intercept: no\n"
                  "    response: y\n"
                  "    terms: [a, [a, b, c, d]]\n",
                  expected);
}

static void test_spec_load_missing_file(void **state)
{
    (void)state;
    error_list errors;
    error_list_init(&errors);
    assert_null(spec_load("t/no-such-spec.yaml", &errors));
    assert_int_equal(errors.count, 1);
    char expected[256];
    snprintf(expected, sizeof expected,
             "t/no-such-spec.yaml: error: cannot read the spec: %s", strerror(ENOENT));
    assert_string_equal(errors.messages[0], expected);
    error_list_free(&errors);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_full_spec_top_level_and_columns),
        cmocka_unit_test(test_full_spec_models_and_terms),
        cmocka_unit_test(test_minimal_spec_defaults),
        cmocka_unit_test(test_intercept_true_written_out),
        cmocka_unit_test(test_absolute_data_path_kept),
        cmocka_unit_test(test_earlier_errors_do_not_fail_a_valid_spec),
        cmocka_unit_test(test_find_column),
        cmocka_unit_test(test_unknown_top_level_key_suggests),
        cmocka_unit_test(test_unknown_key_without_close_match_lists_keys),
        cmocka_unit_test(test_unknown_keys_in_nested_mappings),
        cmocka_unit_test(test_key_written_twice),
        cmocka_unit_test(test_column_declared_twice),
        cmocka_unit_test(test_models_as_a_scalar),
        cmocka_unit_test(test_spec_that_is_not_a_mapping),
        cmocka_unit_test(test_missing_version),
        cmocka_unit_test(test_wrong_version),
        cmocka_unit_test(test_version_not_a_whole_number),
        cmocka_unit_test(test_missing_data_and_models),
        cmocka_unit_test(test_data_without_path),
        cmocka_unit_test(test_bad_data_path_reported_once),
        cmocka_unit_test(test_empty_models),
        cmocka_unit_test(test_model_without_id_or_response),
        cmocka_unit_test(test_duplicate_model_id),
        cmocka_unit_test(test_interaction_repeats_a_column),
        cmocka_unit_test(test_interaction_of_four_columns),
        cmocka_unit_test(test_interaction_of_one_column),
        cmocka_unit_test(test_interaction_holding_a_list),
        cmocka_unit_test(test_empty_term),
        cmocka_unit_test(test_polynomial_missing_degree),
        cmocka_unit_test(test_polynomial_degree_out_of_range),
        cmocka_unit_test(test_polynomial_degree_bounds_accepted),
        cmocka_unit_test(test_polynomial_misspelt_key),
        cmocka_unit_test(test_terms_not_a_list),
        cmocka_unit_test(test_intercept_yes_is_not_a_boolean),
        cmocka_unit_test(test_unknown_column_kind),
        cmocka_unit_test(test_reference_on_numeric_column),
        cmocka_unit_test(test_column_declaration_not_a_mapping),
        cmocka_unit_test(test_alias_refused),
        cmocka_unit_test(test_alias_of_a_mapping_refused),
        cmocka_unit_test(test_invalid_yaml_located),
        cmocka_unit_test(test_empty_file),
        cmocka_unit_test(test_several_errors_at_once),
        cmocka_unit_test(test_spec_load_missing_file),
    };
    return cmocka_run_group_tests_name("spec", tests, NULL, NULL);
}

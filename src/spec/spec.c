/*
 * spec.c — reads the YAML spec with libyaml's document loader and turns it
 * into a spec struct, recording every problem with its line and column.
 * Validation keeps going after an error so the user sees them all at once.
 * YAML aliases are refused: a spec is short and hand-written, and aliases
 * are the route to inputs that expand enormously.
 */
#include "spec.h"

#include <errno.h>
#include <limits.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <yaml.h>

typedef struct {
    const char *path;
    yaml_document_t *doc;
    error_list *errors;
    unsigned char *visited; /* per node, to detect aliases */
    size_t n_nodes;
} loader;

static src_mark node_mark(const yaml_node_t *node)
{
    src_mark at = {(unsigned)node->start_mark.line + 1,
                   (unsigned)node->start_mark.column + 1};
    return at;
}

/* Every node goes through here once; a second visit means an alias. */
static yaml_node_t *node_get(loader *ld, int index)
{
    yaml_node_t *node = yaml_document_get_node(ld->doc, index);
    if (!node)
        return NULL;
    size_t slot = (size_t)(index - 1);
    if (slot < ld->n_nodes) {
        if (ld->visited[slot]) {
            error_at(ld->errors, ld->path, node_mark(node),
                       "YAML aliases and anchors are not supported in a spec; "
                       "write the value out in full");
            return NULL;
        }
        ld->visited[slot] = 1;
    }
    return node;
}

static const char *node_kind_name(const yaml_node_t *node)
{
    switch (node->type) {
    case YAML_SCALAR_NODE: return "a single value";
    case YAML_SEQUENCE_NODE: return "a list";
    case YAML_MAPPING_NODE: return "a mapping of keys";
    default: return "nothing";
    }
}

static const char *scalar_text(const yaml_node_t *node)
{
    return (const char *)node->data.scalar.value;
}

static bool expect_type(loader *ld, const yaml_node_t *node, yaml_node_type_t type,
                        const char *what)
{
    if (node->type == type)
        return true;
    static const char *const wanted[] = {"", "a single value", "a list",
                                         "a mapping of keys"};
    error_at(ld->errors, ld->path, node_mark(node),
               "%s must be %s, found %s", what, wanted[type], node_kind_name(node));
    return false;
}

static char *expect_string(loader *ld, const yaml_node_t *node, const char *what)
{
    if (!expect_type(ld, node, YAML_SCALAR_NODE, what))
        return NULL;
    if (scalar_text(node)[0] == '\0') {
        error_at(ld->errors, ld->path, node_mark(node), "%s must not be empty", what);
        return NULL;
    }
    return xstrdup(scalar_text(node));
}

static bool expect_bool(loader *ld, const yaml_node_t *node, const char *what, bool *out)
{
    if (!expect_type(ld, node, YAML_SCALAR_NODE, what))
        return false;
    const char *text = scalar_text(node);
    if (strcmp(text, "true") == 0) {
        *out = true;
        return true;
    }
    if (strcmp(text, "false") == 0) {
        *out = false;
        return true;
    }
    error_at(ld->errors, ld->path, node_mark(node),
               "%s must be true or false, found '%s'", what, text);
    return false;
}

static bool expect_int(loader *ld, const yaml_node_t *node, const char *what,
                       long low, long high, long *out)
{
    if (!expect_type(ld, node, YAML_SCALAR_NODE, what))
        return false;
    const char *text = scalar_text(node);
    char *end;
    errno = 0;
    long value = strtol(text, &end, 10);
    /* strtol clamps an overflow to LONG_MAX, which would pass the range
       check and be quoted back as a number the file does not contain. */
    if (*text == '\0' || *end != '\0' || errno == ERANGE || value < low || value > high) {
        error_at(ld->errors, ld->path, node_mark(node),
                   "%s must be a whole number from %ld to %ld, found '%s'", what,
                   low, high, text);
        return false;
    }
    *out = value;
    return true;
}

static void report_unknown_key(loader *ld, const yaml_node_t *key, const char *where,
                               const char *const *allowed)
{
    const char *text = scalar_text(key);
    size_t n_allowed = 0;
    while (allowed[n_allowed])
        n_allowed++;
    const char *close = closest_name(text, allowed, n_allowed);
    if (close) {
        error_at(ld->errors, ld->path, node_mark(key),
                   "unknown key '%s' in %s; did you mean '%s'?", text, where, close);
        return;
    }
    buf list;
    buf_init(&list);
    for (size_t i = 0; allowed[i]; i++)
        buf_printf(&list, "%s%s", i ? ", " : "", allowed[i]);
    error_at(ld->errors, ld->path, node_mark(key),
               "unknown key '%s' in %s; the keys allowed here are: %s", text, where,
               list.data);
    buf_free(&list);
}

/*
 * Walks a mapping: for each pair whose key is in allowed, calls handle(key,
 * value); unknown and duplicate keys become errors. handle receives the index
 * of the key in allowed.
 */
typedef void (*pair_handler)(loader *ld, size_t key_index, yaml_node_t *key,
                             yaml_node_t *value, void *target);

static void walk_mapping(loader *ld, yaml_node_t *map, const char *where,
                         const char *const *allowed, pair_handler handle, void *target)
{
    size_t n_allowed = 0;
    while (allowed[n_allowed])
        n_allowed++;
    unsigned char seen[32] = {0};
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        yaml_node_t *key = node_get(ld, pair->key);
        yaml_node_t *value = node_get(ld, pair->value);
        if (!key || !value)
            continue;
        if (key->type != YAML_SCALAR_NODE) {
            error_at(ld->errors, ld->path, node_mark(key),
                       "keys in %s must be plain names", where);
            continue;
        }
        size_t index = 0;
        while (index < n_allowed && strcmp(allowed[index], scalar_text(key)) != 0)
            index++;
        if (index == n_allowed) {
            report_unknown_key(ld, key, where, allowed);
            continue;
        }
        if (seen[index]) {
            error_at(ld->errors, ld->path, node_mark(key),
                       "key '%s' appears twice in %s; keep one", scalar_text(key), where);
            continue;
        }
        seen[index] = 1;
        handle(ld, index, key, value, target);
    }
}

/* ---- data.columns ------------------------------------------------------ */

static const char *const column_keys[] = {"kind", "unit", "label", "reference", NULL};

static void column_pair(loader *ld, size_t key_index, yaml_node_t *key,
                        yaml_node_t *value, void *target)
{
    spec_column *column = target;
    (void)key;
    switch (key_index) {
    case 0: {
        char *kind = expect_string(ld, value, "a column's kind");
        if (!kind)
            return;
        if (strcmp(kind, "numeric") == 0)
            column->kind = SPEC_KIND_NUMERIC;
        else if (strcmp(kind, "category") == 0)
            column->kind = SPEC_KIND_CATEGORY;
        else
            error_at(ld->errors, ld->path, node_mark(value),
                       "unknown column kind '%s'; use numeric or category", kind);
        free(kind);
        break;
    }
    case 1: column->unit = expect_string(ld, value, "a column's unit"); break;
    case 2: column->label = expect_string(ld, value, "a column's label"); break;
    case 3:
        column->reference = expect_string(ld, value, "a reference level");
        column->reference_at = node_mark(value);
        break;
    }
}

static void parse_columns(loader *ld, yaml_node_t *map, spec *s)
{
    if (!expect_type(ld, map, YAML_MAPPING_NODE, "data.columns"))
        return;
    size_t count = (size_t)(map->data.mapping.pairs.top - map->data.mapping.pairs.start);
    s->columns = xcalloc(count, sizeof *s->columns);
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        yaml_node_t *key = node_get(ld, pair->key);
        yaml_node_t *value = node_get(ld, pair->value);
        if (!key || !value || !expect_type(ld, key, YAML_SCALAR_NODE, "a column name"))
            continue;
        if (spec_find_column(s, scalar_text(key))) {
            error_at(ld->errors, ld->path, node_mark(key),
                       "column '%s' is declared twice; merge the two declarations",
                       scalar_text(key));
            continue;
        }
        spec_column *column = &s->columns[s->n_columns++];
        column->name = xstrdup(scalar_text(key));
        column->at = node_mark(key);
        if (expect_type(ld, value, YAML_MAPPING_NODE, "a column declaration"))
            walk_mapping(ld, value, "a column declaration", column_keys, column_pair,
                         column);
        if (column->reference && column->kind == SPEC_KIND_NUMERIC)
            error_at(ld->errors, ld->path, column->reference_at,
                       "column '%s' is numeric and cannot have a reference level; "
                       "declare it 'kind: category' or remove 'reference'",
                       column->name);
    }
}

/* ---- data --------------------------------------------------------------- */

static const char *const data_keys[] = {"path", "columns", NULL};

static void data_pair(loader *ld, size_t key_index, yaml_node_t *key, yaml_node_t *value,
                      void *target)
{
    spec *s = target;
    (void)key;
    if (key_index == 0) {
        s->data_path = expect_string(ld, value, "data.path");
        s->data_path_at = node_mark(value);
    } else {
        parse_columns(ld, value, s);
    }
}

/* ---- models ------------------------------------------------------------- */

static void term_add_column(spec_term *term, const char *name, src_mark at)
{
    term->columns = xrealloc(term->columns, (term->n_columns + 1) * sizeof(char *));
    term->column_at =
        xrealloc(term->column_at, (term->n_columns + 1) * sizeof(src_mark));
    term->columns[term->n_columns] = xstrdup(name);
    term->column_at[term->n_columns] = at;
    term->n_columns++;
}

static const char *const polynomial_keys[] = {"polynomial", "degree", NULL};

static void polynomial_pair(loader *ld, size_t key_index, yaml_node_t *key,
                            yaml_node_t *value, void *target)
{
    spec_term *term = target;
    (void)key;
    if (key_index == 0) {
        char *name = expect_string(ld, value, "a polynomial's column");
        if (name) {
            term_add_column(term, name, node_mark(value));
            free(name);
        }
    } else {
        long degree;
        if (expect_int(ld, value, "a polynomial's degree", 1, 10, &degree))
            term->degree = (int)degree;
    }
}

static bool parse_term(loader *ld, yaml_node_t *node, spec_term *term)
{
    term->at = node_mark(node);
    if (node->type == YAML_SCALAR_NODE) {
        if (scalar_text(node)[0] == '\0') {
            error_at(ld->errors, ld->path, node_mark(node),
                       "a term must name a column");
            return false;
        }
        term->kind = SPEC_TERM_MAIN;
        term_add_column(term, scalar_text(node), node_mark(node));
        return true;
    }
    if (node->type == YAML_SEQUENCE_NODE) {
        term->kind = SPEC_TERM_INTERACTION;
        for (yaml_node_item_t *item = node->data.sequence.items.start;
             item < node->data.sequence.items.top; item++) {
            yaml_node_t *part = node_get(ld, *item);
            if (!part)
                return false;
            if (part->type != YAML_SCALAR_NODE || scalar_text(part)[0] == '\0') {
                error_at(ld->errors, ld->path, node_mark(part),
                           "an interaction lists column names, like [age_days, admixture]");
                return false;
            }
            for (size_t i = 0; i < term->n_columns; i++)
                if (strcmp(term->columns[i], scalar_text(part)) == 0) {
                    error_at(ld->errors, ld->path, node_mark(part),
                               "column '%s' appears twice in one interaction; for a "
                               "power of a column use {polynomial: %s, degree: 2}",
                               scalar_text(part), scalar_text(part));
                    return false;
                }
            term_add_column(term, scalar_text(part), node_mark(part));
        }
        if (term->n_columns < 2 || term->n_columns > 3) {
            error_at(ld->errors, ld->path, node_mark(node),
                       "an interaction combines two or three columns, found %zu",
                       term->n_columns);
            return false;
        }
        return true;
    }
    term->kind = SPEC_TERM_POLYNOMIAL;
    term->degree = 0;
    size_t errors_before = ld->errors->count;
    walk_mapping(ld, node, "a polynomial term", polynomial_keys, polynomial_pair, term);
    /* A bad degree or a misspelt key was reported already; saying "needs
       both keys" as well would be wrong when both were written. */
    if (ld->errors->count > errors_before)
        return false;
    if (term->n_columns != 1 || term->degree == 0) {
        error_at(ld->errors, ld->path, node_mark(node),
                   "a polynomial term needs both keys, like {polynomial: age_days, "
                   "degree: 2}");
        return false;
    }
    return true;
}

static void spec_term_clear(spec_term *term)
{
    for (size_t i = 0; i < term->n_columns; i++)
        free(term->columns[i]);
    free(term->columns);
    free(term->column_at);
}

static void parse_terms(loader *ld, yaml_node_t *list, spec_model *model)
{
    if (!expect_type(ld, list, YAML_SEQUENCE_NODE, "a model's terms"))
        return;
    size_t count = (size_t)(list->data.sequence.items.top - list->data.sequence.items.start);
    model->terms = xcalloc(count, sizeof *model->terms);
    for (yaml_node_item_t *item = list->data.sequence.items.start;
         item < list->data.sequence.items.top; item++) {
        yaml_node_t *node = node_get(ld, *item);
        if (!node)
            continue;
        spec_term *term = &model->terms[model->n_terms];
        memset(term, 0, sizeof *term);
        if (parse_term(ld, node, term))
            model->n_terms++;
        else
            spec_term_clear(term);
    }
}

static const char *const model_keys[] = {"id", "response", "terms", "intercept", NULL};

static void model_pair(loader *ld, size_t key_index, yaml_node_t *key, yaml_node_t *value,
                       void *target)
{
    spec_model *model = target;
    (void)key;
    switch (key_index) {
    case 0: model->id = expect_string(ld, value, "a model's id"); break;
    case 1:
        model->response = expect_string(ld, value, "a model's response");
        model->response_at = node_mark(value);
        break;
    case 2: parse_terms(ld, value, model); break;
    case 3: expect_bool(ld, value, "intercept", &model->intercept); break;
    }
}

static void parse_models(loader *ld, yaml_node_t *list, spec *s)
{
    if (!expect_type(ld, list, YAML_SEQUENCE_NODE, "models"))
        return;
    size_t count = (size_t)(list->data.sequence.items.top - list->data.sequence.items.start);
    s->models = xcalloc(count, sizeof *s->models);
    for (yaml_node_item_t *item = list->data.sequence.items.start;
         item < list->data.sequence.items.top; item++) {
        yaml_node_t *node = node_get(ld, *item);
        if (!node || !expect_type(ld, node, YAML_MAPPING_NODE, "each model"))
            continue;
        spec_model *model = &s->models[s->n_models++];
        model->intercept = true;
        model->at = node_mark(node);
        walk_mapping(ld, node, "a model", model_keys, model_pair, model);
        if (!model->id)
            error_at(ld->errors, ld->path, model->at,
                       "a model needs an 'id' (a short name such as main)");
        if (!model->response)
            error_at(ld->errors, ld->path, model->at,
                       "a model needs a 'response' (the column to explain)");
        for (size_t other = 0; model->id && other + 1 < s->n_models; other++)
            if (s->models[other].id && strcmp(s->models[other].id, model->id) == 0)
                error_at(ld->errors, ld->path, model->at,
                           "model id '%s' is used twice; give each model its own id",
                           model->id);
    }
    if (s->n_models == 0)
        error_at(ld->errors, ld->path, node_mark(list),
                   "models is empty; describe at least one model");
}

/* ---- top level ---------------------------------------------------------- */

static const char *const top_keys[] = {"fitproof", "title", "data", "models", NULL};

static void top_pair(loader *ld, size_t key_index, yaml_node_t *key, yaml_node_t *value,
                     void *target)
{
    spec *s = target;
    (void)key;
    switch (key_index) {
    case 0: {
        long version;
        if (expect_int(ld, value, "fitproof", 0, LONG_MAX, &version) && version != 1)
            error_at(ld->errors, ld->path, node_mark(value),
                       "this fitproof reads spec version 1, the file says %ld", version);
        break;
    }
    case 1: s->title = expect_string(ld, value, "title"); break;
    case 2:
        if (expect_type(ld, value, YAML_MAPPING_NODE, "data"))
            walk_mapping(ld, value, "data", data_keys, data_pair, s);
        break;
    case 3: parse_models(ld, value, s); break;
    }
}

/* The value under key name in map, or NULL when the key is absent. */
static yaml_node_t *mapping_value(const loader *ld, yaml_node_t *map, const char *name)
{
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        yaml_node_t *key = yaml_document_get_node(ld->doc, pair->key);
        if (key && key->type == YAML_SCALAR_NODE && strcmp(scalar_text(key), name) == 0)
            return yaml_document_get_node(ld->doc, pair->value);
    }
    return NULL;
}

static bool mapping_has_key(const loader *ld, yaml_node_t *map, const char *name)
{
    return mapping_value(ld, map, name) != NULL;
}

static void check_required(loader *ld, yaml_node_t *root)
{
    src_mark top = {1, 1};
    if (!mapping_has_key(ld, root, "fitproof"))
        error_at(ld->errors, ld->path, top,
                   "the spec must start with 'fitproof: 1' (the spec language version)");
    yaml_node_t *data = mapping_value(ld, root, "data");
    if (!data)
        error_at(ld->errors, ld->path, top,
                   "the spec has no 'data' section; add data: {path: your.csv}");
    /* Only a data mapping without the key: a bad data or data.path value
       has been reported where it was written. */
    else if (data->type == YAML_MAPPING_NODE && !mapping_has_key(ld, data, "path"))
        error_at(ld->errors, ld->path, top,
                   "data has no 'path'; name the data file, relative to the spec");
    if (!mapping_has_key(ld, root, "models"))
        error_at(ld->errors, ld->path, top,
                   "the spec has no 'models' section; describe at least one model");
}

static void resolve_paths(spec *s)
{
    if (!s->data_path)
        return;
    char *dir = path_dirname(s->path);
    s->data_resolved = path_join(dir, s->data_path);
    free(dir);
}

spec *spec_parse(const char *path, const char *text, size_t length, error_list *errors)
{
    size_t errors_before = errors->count;
    yaml_parser_t parser;
    yaml_document_t doc;
    yaml_parser_initialize(&parser);
    yaml_parser_set_input_string(&parser, (const unsigned char *)text, length);
    if (!yaml_parser_load(&parser, &doc)) {
        src_mark at = {(unsigned)parser.problem_mark.line + 1,
                       (unsigned)parser.problem_mark.column + 1};
        error_at(errors, path, at, "the file is not valid YAML: %s%s%s",
                   parser.problem ? parser.problem : "unreadable",
                   parser.context ? " " : "", parser.context ? parser.context : "");
        yaml_parser_delete(&parser);
        return NULL;
    }
    yaml_parser_delete(&parser);

    spec *s = xcalloc(1, sizeof *s);
    s->path = xstrdup(path);
    s->source = xstrndup(text, length);
    s->source_length = length;

    loader ld = {path, &doc, errors, NULL, 0};
    ld.n_nodes = (size_t)(doc.nodes.top - doc.nodes.start);
    ld.visited = xcalloc(ld.n_nodes ? ld.n_nodes : 1, 1);
    yaml_node_t *root = node_get(&ld, 1);
    src_mark top = {1, 1};
    if (!root || (root->type == YAML_SCALAR_NODE && scalar_text(root)[0] == '\0'))
        error_at(errors, path, top,
                   "the spec is empty; start from 'fitproof scaffold DATA.csv'");
    else if (expect_type(&ld, root, YAML_MAPPING_NODE, "the spec")) {
        walk_mapping(&ld, root, "the spec", top_keys, top_pair, s);
        check_required(&ld, root);
    }
    free(ld.visited);
    yaml_document_delete(&doc);
    resolve_paths(s);
    if (errors->count > errors_before || errors->suppressed) {
        spec_free(s);
        return NULL;
    }
    return s;
}

spec *spec_load(const char *path, error_list *errors)
{
    size_t length;
    const char *why;
    char *text = file_read_all(path, &length, &why);
    if (!text) {
        src_mark whole = {0, 0};
        error_at(errors, path, whole, "cannot read the spec: %s", why);
        return NULL;
    }
    spec *s = spec_parse(path, text, length, errors);
    free(text);
    return s;
}

const spec_column *spec_find_column(const spec *s, const char *name)
{
    for (size_t i = 0; i < s->n_columns; i++)
        if (s->columns[i].name && strcmp(s->columns[i].name, name) == 0)
            return &s->columns[i];
    return NULL;
}

void spec_free(spec *s)
{
    if (!s)
        return;
    for (size_t i = 0; i < s->n_columns; i++) {
        free(s->columns[i].name);
        free(s->columns[i].unit);
        free(s->columns[i].label);
        free(s->columns[i].reference);
    }
    free(s->columns);
    for (size_t m = 0; m < s->n_models; m++) {
        spec_model *model = &s->models[m];
        for (size_t t = 0; t < model->n_terms; t++)
            spec_term_clear(&model->terms[t]);
        free(model->terms);
        free(model->id);
        free(model->response);
    }
    free(s->models);
    free(s->path);
    free(s->source);
    free(s->title);
    free(s->data_path);
    free(s->data_resolved);
    free(s);
}

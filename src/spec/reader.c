/*
 * reader.c — typed, located access to a libyaml document for the spec
 * parser. Every accessor records a message naming what was expected and
 * what was found, at the node's line and column, and the parse goes on.
 */
#include "reader.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

src_mark reader_mark(const node *n)
{
    src_mark at = {(unsigned)n->start_mark.line + 1, (unsigned)n->start_mark.column + 1};
    return at;
}

node *reader_node(reader *rd, int index)
{
    return yaml_document_get_node(rd->doc, index);
}

const char *reader_text(const node *n)
{
    return n->type == YAML_SCALAR_NODE ? (const char *)n->data.scalar.value : "";
}

size_t reader_count(const node *n)
{
    if (n->type == YAML_SEQUENCE_NODE)
        return (size_t)(n->data.sequence.items.top - n->data.sequence.items.start);
    if (n->type == YAML_MAPPING_NODE)
        return (size_t)(n->data.mapping.pairs.top - n->data.mapping.pairs.start);
    return 0;
}

node *reader_item(reader *rd, const node *sequence, size_t i)
{
    return reader_node(rd, sequence->data.sequence.items.start[i]);
}

static const char *shape_name(const node *n)
{
    switch (n->type) {
    case YAML_SCALAR_NODE: return "a single value";
    case YAML_SEQUENCE_NODE: return "a list";
    case YAML_MAPPING_NODE: return "a mapping of keys";
    default: return "nothing";
    }
}

bool reader_expect(reader *rd, const node *n, yaml_node_type_t type, const char *what)
{
    if (n->type == type)
        return true;
    static const char *const wanted[] = {"", "a single value", "a list",
                                         "a mapping of keys"};
    error_at(rd->errors, rd->path, reader_mark(n), "%s must be %s, found %s", what,
             wanted[type], shape_name(n));
    return false;
}

char *reader_string(reader *rd, const node *n, const char *what)
{
    if (!reader_expect(rd, n, YAML_SCALAR_NODE, what))
        return NULL;
    if (reader_text(n)[0] == '\0') {
        error_at(rd->errors, rd->path, reader_mark(n), "%s must not be empty", what);
        return NULL;
    }
    return xstrdup(reader_text(n));
}

bool reader_bool(reader *rd, const node *n, const char *what, bool *out)
{
    if (!reader_expect(rd, n, YAML_SCALAR_NODE, what))
        return false;
    const char *text = reader_text(n);
    if (strcmp(text, "true") == 0 || strcmp(text, "false") == 0) {
        *out = text[0] == 't';
        return true;
    }
    error_at(rd->errors, rd->path, reader_mark(n), "%s must be true or false, found '%s'",
             what, text);
    return false;
}

bool reader_int(reader *rd, const node *n, const char *what, long low, long high, long *out)
{
    if (!reader_expect(rd, n, YAML_SCALAR_NODE, what))
        return false;
    const char *text = reader_text(n);
    char *end;
    errno = 0;
    long value = strtol(text, &end, 10);
    /* strtol clamps an overflow to LONG_MAX, which would pass the range
       check and be quoted back as a number the file does not contain. */
    if (*text == '\0' || *end != '\0' || errno == ERANGE || value < low || value > high) {
        error_at(rd->errors, rd->path, reader_mark(n),
                 "%s must be a whole number from %ld to %ld, found '%s'", what, low, high,
                 text);
        return false;
    }
    *out = value;
    return true;
}

bool reader_decimal(const char *text, double *out)
{
    const char *p = text;
    if (*p == '+' || *p == '-')
        p++;
    size_t digits = strspn(p, "0123456789");
    p += digits;
    if (*p == '.') {
        p++;
        size_t more = strspn(p, "0123456789");
        digits += more;
        p += more;
    }
    if (digits == 0)
        return false;
    if (*p == 'e' || *p == 'E') {
        p++;
        if (*p == '+' || *p == '-')
            p++;
        size_t exponent = strspn(p, "0123456789");
        if (exponent == 0)
            return false;
        p += exponent;
    }
    if (*p != '\0')
        return false;
    *out = strtod(text, NULL);
    return isfinite(*out);
}

bool reader_real(reader *rd, const node *n, const char *what, double low, double high,
                 bool open, double *out)
{
    if (!reader_expect(rd, n, YAML_SCALAR_NODE, what))
        return false;
    double value;
    bool ok = reader_decimal(reader_text(n), &value);
    if (ok)
        ok = open ? (value > low && value < high) : (value >= low && value <= high);
    if (!ok) {
        char low_text[32], high_text[32];
        fmt_roundtrip(low_text, sizeof low_text, low);
        fmt_roundtrip(high_text, sizeof high_text, high);
        error_at(rd->errors, rd->path, reader_mark(n),
                 "%s must be a number %s %s and %s, found '%s'", what,
                 open ? "strictly between" : "from", low_text, high_text, reader_text(n));
        return false;
    }
    *out = value;
    return true;
}

int reader_choice(reader *rd, const node *n, const char *what, const char *const *choices)
{
    if (!reader_expect(rd, n, YAML_SCALAR_NODE, what))
        return -1;
    const char *text = reader_text(n);
    size_t count = 0;
    for (; choices[count]; count++)
        if (strcmp(choices[count], text) == 0)
            return (int)count;
    buf list;
    buf_init(&list);
    for (size_t i = 0; i < count; i++)
        buf_printf(&list, "%s%s", i ? (i + 1 == count ? " or " : ", ") : "", choices[i]);
    const char *close = closest_name(text, choices, count);
    if (close)
        error_at(rd->errors, rd->path, reader_mark(n),
                 "unknown %s '%s'; did you mean '%s'?", what, text, close);
    else
        error_at(rd->errors, rd->path, reader_mark(n), "unknown %s '%s'; use %s", what,
                 text, list.data);
    buf_free(&list);
    return -1;
}

bool reader_string_list(reader *rd, const node *n, const char *what, bool single_ok,
                        char ***out, size_t *count, src_mark **marks)
{
    *out = NULL;
    *count = 0;
    if (marks)
        *marks = NULL;
    if (single_ok && n->type == YAML_SCALAR_NODE) {
        char *one = reader_string(rd, n, what);
        if (!one)
            return false;
        *out = xmalloc(sizeof(char *));
        (*out)[0] = one;
        *count = 1;
        if (marks) {
            *marks = xmalloc(sizeof(src_mark));
            (*marks)[0] = reader_mark(n);
        }
        return true;
    }
    if (!reader_expect(rd, n, YAML_SEQUENCE_NODE, what))
        return false;
    size_t total = reader_count(n);
    *out = xcalloc(total ? total : 1, sizeof(char *));
    if (marks)
        *marks = xcalloc(total ? total : 1, sizeof(src_mark));
    bool ok = true;
    for (size_t i = 0; i < total; i++) {
        node *item = reader_item(rd, n, i);
        char *text = reader_string(rd, item, what);
        if (!text) {
            ok = false;
            continue;
        }
        if (marks)
            (*marks)[*count] = reader_mark(item);
        (*out)[(*count)++] = text;
    }
    return ok;
}

static void report_unknown_key(reader *rd, const node *key, const char *where,
                               const char *const *allowed, size_t n_allowed)
{
    const char *text = reader_text(key);
    const char *close = closest_name(text, allowed, n_allowed);
    if (close) {
        error_at(rd->errors, rd->path, reader_mark(key),
                 "unknown key '%s' in %s; did you mean '%s'?", text, where, close);
        return;
    }
    buf list;
    buf_init(&list);
    for (size_t i = 0; i < n_allowed; i++)
        buf_printf(&list, "%s%s", i ? ", " : "", allowed[i]);
    error_at(rd->errors, rd->path, reader_mark(key),
             "unknown key '%s' in %s; the keys allowed here are: %s", text, where,
             list.data);
    buf_free(&list);
}

void reader_walk(reader *rd, node *map, const char *where, const char *const *allowed,
                 reader_pair_fn handle, void *target)
{
    size_t n_allowed = 0;
    while (allowed[n_allowed])
        n_allowed++;
    unsigned char seen[64] = {0};
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        node *key = reader_node(rd, pair->key);
        node *value = reader_node(rd, pair->value);
        if (!key || !value)
            continue;
        if (key->type != YAML_SCALAR_NODE) {
            error_at(rd->errors, rd->path, reader_mark(key),
                     "keys in %s must be plain names", where);
            continue;
        }
        size_t index = 0;
        while (index < n_allowed && strcmp(allowed[index], reader_text(key)) != 0)
            index++;
        if (index == n_allowed) {
            report_unknown_key(rd, key, where, allowed, n_allowed);
            continue;
        }
        if (seen[index]) {
            error_at(rd->errors, rd->path, reader_mark(key),
                     "key '%s' appears twice in %s; keep one", reader_text(key), where);
            continue;
        }
        seen[index] = 1;
        handle(rd, index, key, value, target);
    }
}

node *reader_value(reader *rd, const node *map, const char *name)
{
    if (map->type != YAML_MAPPING_NODE)
        return NULL;
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        node *key = reader_node(rd, pair->key);
        if (key && key->type == YAML_SCALAR_NODE && strcmp(reader_text(key), name) == 0)
            return reader_node(rd, pair->value);
    }
    return NULL;
}

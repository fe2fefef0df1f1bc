/*
 * reader.h — private to the spec stage: walking a libyaml document with
 * typed accessors that record located errors and keep going. Not part of
 * fitproof's interface; spec.h is.
 */
#ifndef FITPROOF_SPEC_READER_H
#define FITPROOF_SPEC_READER_H

#include <yaml.h>

#include "spec.h"

typedef struct {
    const char *path;
    yaml_document_t *doc;
    error_list *errors;
} reader;

typedef yaml_node_t node;

src_mark reader_mark(const node *n);
node *reader_node(reader *rd, int index);
const char *reader_text(const node *n);
/* Number of items of a sequence node, pairs of a mapping node. */
size_t reader_count(const node *n);
node *reader_item(reader *rd, const node *sequence, size_t i);

/* Typed accessors: each records "WHAT must be …" at the node and returns
   false (or NULL) when the node is not of that shape. */
bool reader_expect(reader *rd, const node *n, yaml_node_type_t type, const char *what);
char *reader_string(reader *rd, const node *n, const char *what);
bool reader_bool(reader *rd, const node *n, const char *what, bool *out);
bool reader_int(reader *rd, const node *n, const char *what, long low, long high,
                long *out);
/* Parses text as a plain finite decimal number (sign, digits, point,
   exponent; nothing else). */
bool reader_decimal(const char *text, double *out);
/* A decimal number strictly between low and high when open, else within. */
bool reader_real(reader *rd, const node *n, const char *what, double low, double high,
                 bool open, double *out);
/* One of the names in choices (NULL-terminated); returns its index or -1. */
int reader_choice(reader *rd, const node *n, const char *what, const char *const *choices);
/* A list of non-empty strings (a single string is accepted as a list of
   one when single_ok). Caller owns *out. */
bool reader_string_list(reader *rd, const node *n, const char *what, bool single_ok,
                        char ***out, size_t *count, src_mark **marks);

/*
 * Walks a mapping: for each key found in allowed (NULL-terminated), calls
 * handle with the key's index; unknown keys (with a "did you mean" hint)
 * and repeated keys become errors.
 */
typedef void (*reader_pair_fn)(reader *rd, size_t key_index, node *key, node *value,
                               void *target);
void reader_walk(reader *rd, node *map, const char *where, const char *const *allowed,
                 reader_pair_fn handle, void *target);
/* The value under key name in map, or NULL (no error recorded). */
node *reader_value(reader *rd, const node *map, const char *name);

/* Helpers for the parts of spec.c. */
void spec_parse_checks(reader *rd, node *list, spec *s);
void spec_parse_compare(reader *rd, node *list, spec *s);
void spec_parse_predict(reader *rd, node *list, spec *s);
void spec_parse_report(reader *rd, node *map, spec *s);
void spec_resolve_references(reader *rd, spec *s);
void spec_free_outputs(spec *s);
/* meta's document-control keys (document.c). */
/* The index of a document-control key (date, revision, …), or -1. */
int spec_document_key(const char *key);
void spec_parse_document_key(reader *rd, node *key, node *value, spec *s);
void spec_free_document(spec_document *d);

#endif

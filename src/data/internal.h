/*
 * internal.h — private to the data stage (the files of src/data): the CSV scanner,
 * level sets, the mapped data file and the steps that run after reading
 * (where, derive). Not part of fitproof's interface; data.h is.
 */
#ifndef FITPROOF_DATA_INTERNAL_H
#define FITPROOF_DATA_INTERNAL_H

#include <stdint.h>

#include "data.h"
#include "number.h"

/* ---- the data file (file.c) ---------------------------------------------- */

typedef struct {
    const char *bytes;  /* the file's bytes, a private copy */
    size_t length;
    char *copy;         /* owns bytes */
} data_file;

/* Reads the regular file at path into memory. The copy, not the file, is
   what is hashed and parsed, so the digest always describes the bytes
   analysed, and a file truncated or rewritten while it is read is an
   error rather than a crash (SIGBUS on a mapping) or a digest of other
   bytes. Returns false and sets *why (static text). */
bool data_file_open(const char *path, data_file *f, const char **why);
void data_file_close(data_file *f);
/* Hands back the whole pages inside [bytes, bytes + length) of an array
   about to be freed whose contents are no longer needed. */
void data_drop_pages(void *bytes, size_t length);
/* Asks for transparent huge pages over the 2 MiB-aligned part of a large
   array: a hundredth of the page faults while it is first filled. */
void data_advise_huge(void *bytes, size_t length);
/* Hex SHA-256 of length bytes at bytes into out (65 bytes, NUL-ended). */
void data_sha256_hex(const char *bytes, size_t length, char out[65]);

/* ---- UTF-8 (csv.c) ---------------------------------------------------- */

/* Below threshold bytes of rows, one thread reads them all; otherwise the
   first prefix bytes are read before a helper thread starts. For tests. */
void data_set_split(size_t threshold, size_t prefix);

/* The first byte of [p, end) that is not part of valid UTF-8, or NULL. */
const char *data_utf8_invalid(const char *p, const char *end);

/* ---- the scanner (csv.c) ---------------------------------------------- */

typedef struct {
    size_t offset;    /* into the text, or into scratch when in_scratch */
    size_t length;
    size_t line;      /* where the field starts */
    size_t column;    /* 1-based byte column where the field starts */
    const char *raw;  /* the field's bytes as written (quotes included) */
    const char *raw_end;
    bool in_scratch;
} field_span;

typedef struct {
    const char *path;
    const char *text;
    const char *p;
    const char *end;
    const char *line_start;
    size_t line;
    size_t record_line;  /* where the record last read starts */
    const char *record_start;
    char delimiter;
    buf scratch;         /* unescaped quoted fields of the current record */
    field_span *fields;
    size_t n_fields;
    size_t capacity;
    error_list *errors;
} csv_scanner;

void csv_start(csv_scanner *sc, const char *path, const char *text, size_t length,
               char delimiter, error_list *errors);
void csv_finish(csv_scanner *sc);
src_mark csv_mark(size_t line, size_t column);
/* Consumes one line break at sc->p if there is one. */
bool csv_take_line_break(csv_scanner *sc);
/* Skips blank lines; returns false at the end of the text. */
bool csv_skip_blank_lines(csv_scanner *sc);
/* Reads one record into sc->fields. Returns 1 when a record was read, 0 at
   the end of the text, -1 after recording an error. */
int csv_scan_record(csv_scanner *sc);
/* Reads the quoted field at sc->p into *span (scratch when it has doubled
   quotes). Returns false after recording an error. */
bool csv_scan_quoted(csv_scanner *sc, field_span *span);
const char *csv_field_text(const csv_scanner *sc, const field_span *span);
/* The end of the unquoted field at p: the next delimiter, CR, LF or end. */
const char *csv_field_end(const char *p, const char *end, char delimiter);
/* Records an invalid-UTF-8 error at bad, inside a field written at
   raw (which starts at line, column). */
void csv_utf8_error(const csv_scanner *sc, const char *raw, size_t line, size_t column,
                    const char *bad);
/* Appends text for a message: at most 40 bytes, cut at a character
   boundary, line breaks shown as \n. */
void csv_quote_value(buf *out, const char *text, size_t length);

/* ---- reading the rows (read.c) ----------------------------------------- */

/* Reads every record after the header (sc is just past it) into the
   columns of t, whose names are set: kinds, values, and levels in their
   final order (declared, else byte order). False after recording errors. */
bool data_read_body(csv_scanner *sc, data_table *t, const spec *s, unsigned flags,
                    data_file *file, error_list *errors);

/* ---- level sets (levels.c) ------------------------------------------- */

/* Distinct texts of a category column, in order of first appearance. */
typedef struct {
    buf names;            /* NUL-terminated texts, back to back */
    size_t *offsets;
    size_t count;
    size_t offsets_capacity;
    uint32_t *slots;      /* open addressing: entry index + 1, 0 = empty */
    uint64_t *slot_hashes;
    size_t n_slots;
} level_set;

void level_set_free(level_set *set);
/* The entry of text, added when new (then *added is set). */
uint32_t level_set_intern(level_set *set, const char *text, size_t length, bool *added);
const char *level_set_name(const level_set *set, uint32_t entry);
size_t level_set_length(const level_set *set, uint32_t entry);
/* The entry of text, or -1. */
int64_t level_set_find(const level_set *set, const char *text, size_t length);

/* ---- after reading (rows.c) ------------------------------------------ */

/* Checks the where filter against the file's columns (names, kinds,
   values); returns false after recording errors located in the spec. */
bool data_check_where(const data_table *t, const spec *s, error_list *errors);
/* Keeps the rows the where filter accepts, recording the others' lines. */
void data_apply_where(data_table *t, const spec *s);
/* Checks derived names and sources that need only the header. */
bool data_check_derive_names(const data_table *t, const spec *s, error_list *errors);
/* Computes the derived columns in spec order; false after errors. */
bool data_apply_derive(data_table *t, const spec *s, error_list *errors);
/* "; did you mean 'x'?" or "; the columns are 'a', 'b', …" for name. */

#endif

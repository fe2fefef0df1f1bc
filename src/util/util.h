/*
 * util.h — the small shared toolkit every stage uses: an aborting allocator,
 * a growable byte buffer, a located-error collector, and file helpers.
 * Nothing here knows about statistics or about the spec.
 */
#ifndef FITPROOF_UTIL_H
#define FITPROOF_UTIL_H

#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>

/* Exit statuses of the fitproof command. */
enum {
    EXIT_OK = 0,          /* everything built, every check passed */
    EXIT_CHECK_FAILED = 1,/* report written, a declared check failed */
    EXIT_USER_ERROR = 2,  /* usage, spec or data error; nothing written */
    EXIT_INTERNAL = 3     /* a bug or an environment failure (disk full) */
};

/* Allocation that aborts on out-of-memory: callers never test for NULL. */
void *xmalloc(size_t size);
void *xcalloc(size_t count, size_t size);
void *xrealloc(void *ptr, size_t size);
char *xstrdup(const char *text);
char *xstrndup(const char *text, size_t length);
/* Grows *items (of *capacity elements of item_size) to hold at least need. */
void xgrow(void **items, size_t *capacity, size_t need, size_t item_size);

/* A growable NUL-terminated byte buffer. */
typedef struct {
    char *data;
    size_t length;
    size_t capacity;
} buf;

void buf_init(buf *b);
void buf_free(buf *b);
void buf_reset(buf *b);
void buf_put(buf *b, const char *bytes, size_t length);
void buf_puts(buf *b, const char *text);
void buf_putc(buf *b, char c);
void buf_printf(buf *b, const char *format, ...)
    __attribute__((format(printf, 2, 3)));
void buf_vprintf(buf *b, const char *format, va_list args);
/* Appends text escaped for XML and HTML text and attribute values:
   & < > " ' and line breaks and tabs become character references; invalid
   UTF-8 and other control bytes become U+FFFD, so the result is always
   well-formed. */
void buf_put_xml(buf *b, const char *text);
/* Hands the bytes to the caller (caller frees) and leaves b empty. */
char *buf_detach(buf *b);

/* A position in a source file, 1-based; line 0 means "the whole file". */
typedef struct {
    unsigned line;
    unsigned column;
} src_mark;

/*
 * A collector of located error messages. Parsing and validation keep going
 * after an error and report everything at once, up to ERROR_LIST_MAX.
 */
#define ERROR_LIST_MAX 50

typedef struct {
    char **messages;
    size_t count;
    size_t capacity;
    size_t suppressed;
} error_list;

void error_list_init(error_list *d);
void error_list_free(error_list *d);
/* Records "path:line:column: error: <formatted>" (path alone when line 0). */
void error_at(error_list *d, const char *path, src_mark at, const char *format, ...)
    __attribute__((format(printf, 4, 5)));
bool error_list_any(const error_list *d);
/* Writes every message, one per line, to stderr. */
void error_list_print(const error_list *d);

/* Reads a whole regular file of at most max_bytes, NUL-terminated; returns
   NULL and sets *error_text (static) on failure: a folder, device, FIFO or
   socket is refused without reading (a FIFO with no writer does not block),
   and so is a file larger than max_bytes or one whose size or modification
   time changed while it was read. Caller frees the returned bytes. */
char *file_read_limited(const char *path, size_t max_bytes, size_t *length,
                        const char **error_text);
/* file_read_limited with FILE_READ_MAX, for report folder files and pages. */
#define FILE_READ_MAX ((size_t)1 << 30)
char *file_read_all(const char *path, size_t *length, const char **error_text);
/* Test hook: called after each chunk file_read_limited reads (bytes so far);
   NULL in the program. */
extern void (*file_read_hook)(const char *path, size_t done);

/* Directory part of a path ("." when none); caller frees. */
char *path_dirname(const char *path);
/* Last component without its final extension; caller frees. */
char *path_stem(const char *path);
/* dir/name, or name alone when it is absolute; caller frees. */
char *path_join(const char *dir, const char *name);

/* path expressed relative to the folder dir (which need not exist yet,
   but its parent must), as in "../data/x.csv"; NULL when either cannot be
   resolved. Caller frees. */
char *path_relative(const char *dir, const char *path);

/* The candidate that differs from name in case only, else the one closest
   by edit distance if it is close enough to be a likely typo (one edit for
   names up to 4 characters, two beyond); NULL otherwise. For "did you
   mean" hints. */
const char *closest_name(const char *name, const char *const *candidates, size_t count);

/* Appends "; did you mean 'X'?" when closest_name finds a close candidate,
   else "; WHAT 'a', 'b', …" listing up to twelve of them. */
void hint_closest(buf *out, const char *name, const char *const *candidates, size_t count,
                  const char *what);

/* Number formatting that ignores the process locale. */
/* Shortest %.*g (up to 17 digits) that reads back to the same double. */
void fmt_roundtrip(char *out, size_t size, double value);

#endif

/*
 * util.c — allocation, buffers, located errors and file helpers shared by
 * all stages. fitproof never calls setlocale(), so the C library's number
 * formatting stays in the "C" locale whatever the user's environment says.
 */
#include "util.h"

#define _XOPEN_SOURCE 700
#include <ctype.h>
#include <errno.h>
#include <limits.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

void (*file_read_hook)(const char *path, size_t done) = NULL;

static void out_of_memory(void)
{
    fputs("fitproof: error: out of memory\n", stderr);
    exit(EXIT_INTERNAL);
}

void *xmalloc(size_t size)
{
    void *p = malloc(size ? size : 1);
    if (!p)
        out_of_memory();
    return p;
}

void *xcalloc(size_t count, size_t size)
{
    void *p = calloc(count ? count : 1, size ? size : 1);
    if (!p)
        out_of_memory();
    return p;
}

void *xrealloc(void *ptr, size_t size)
{
    void *p = realloc(ptr, size ? size : 1);
    if (!p)
        out_of_memory();
    return p;
}

char *xstrdup(const char *text)
{
    return xstrndup(text, strlen(text));
}

char *xstrndup(const char *text, size_t length)
{
    char *copy = xmalloc(length + 1);
    memcpy(copy, text, length);
    copy[length] = '\0';
    return copy;
}

void xgrow(void **items, size_t *capacity, size_t need, size_t item_size)
{
    if (need <= *capacity)
        return;
    size_t grown = *capacity ? *capacity : 8;
    while (grown < need) {
        if (grown > SIZE_MAX / 2 / item_size)
            out_of_memory();
        grown *= 2;
    }
    *items = xrealloc(*items, grown * item_size);
    *capacity = grown;
}

void buf_init(buf *b)
{
    b->data = NULL;
    b->length = 0;
    b->capacity = 0;
}

void buf_free(buf *b)
{
    free(b->data);
    buf_init(b);
}

void buf_reset(buf *b)
{
    b->length = 0;
    if (b->data)
        b->data[0] = '\0';
}

static void buf_reserve(buf *b, size_t extra)
{
    xgrow((void **)&b->data, &b->capacity, b->length + extra + 1, 1);
}

void buf_put(buf *b, const char *bytes, size_t length)
{
    buf_reserve(b, length);
    memcpy(b->data + b->length, bytes, length);
    b->length += length;
    b->data[b->length] = '\0';
}

void buf_puts(buf *b, const char *text)
{
    buf_put(b, text, strlen(text));
}

void buf_putc(buf *b, char c)
{
    buf_put(b, &c, 1);
}

void buf_vprintf(buf *b, const char *format, va_list args)
{
    va_list again;
    va_copy(again, args);
    int need = vsnprintf(NULL, 0, format, args);
    if (need < 0) {
        va_end(again);
        return;
    }
    buf_reserve(b, (size_t)need);
    vsnprintf(b->data + b->length, (size_t)need + 1, format, again);
    va_end(again);
    b->length += (size_t)need;
}

void buf_printf(buf *b, const char *format, ...)
{
    va_list args;
    va_start(args, format);
    buf_vprintf(b, format, args);
    va_end(args);
}

/* Length of the valid UTF-8 sequence at p (1..4), or 0 when invalid. */
static size_t utf8_sequence(const unsigned char *p)
{
    if (p[0] < 0x80)
        return 1;
    size_t length = p[0] >= 0xc2 && p[0] <= 0xdf   ? 2
                    : p[0] >= 0xe0 && p[0] <= 0xef ? 3
                    : p[0] >= 0xf0 && p[0] <= 0xf4 ? 4
                                                   : 0;
    for (size_t i = 1; i < length; i++)
        if ((p[i] & 0xc0) != 0x80)
            return 0;
    if (length == 3 && ((p[0] == 0xe0 && p[1] < 0xa0) || (p[0] == 0xed && p[1] >= 0xa0)))
        return 0; /* overlong, or a UTF-16 surrogate */
    if (length == 3 && p[0] == 0xef && p[1] == 0xbf && p[2] >= 0xbe)
        return 0; /* U+FFFE and U+FFFF are not XML characters */
    if (length == 4 && ((p[0] == 0xf0 && p[1] < 0x90) || (p[0] == 0xf4 && p[1] >= 0x90)))
        return 0;
    return length;
}

void buf_put_xml(buf *b, const char *text)
{
    const unsigned char *p = (const unsigned char *)text;
    while (*p) {
        size_t length = utf8_sequence(p);
        if (length == 0 || (*p < 0x20 && *p != '\t' && *p != '\n' && *p != '\r')) {
            buf_puts(b, "\xef\xbf\xbd");
            p++;
            continue;
        }
        switch (*p) {
        case '&': buf_puts(b, "&amp;"); break;
        case '<': buf_puts(b, "&lt;"); break;
        case '>': buf_puts(b, "&gt;"); break;
        case '"': buf_puts(b, "&quot;"); break;
        case '\'': buf_puts(b, "&#39;"); break;
        case '\n': buf_puts(b, "&#10;"); break;
        case '\r': buf_puts(b, "&#13;"); break;
        case '\t': buf_puts(b, "&#9;"); break;
        default: buf_put(b, (const char *)p, length);
        }
        p += length;
    }
}

char *buf_detach(buf *b)
{
    char *data = b->data ? b->data : xstrdup("");
    buf_init(b);
    return data;
}

void error_list_init(error_list *d)
{
    d->messages = NULL;
    d->count = 0;
    d->capacity = 0;
    d->suppressed = 0;
}

void error_list_free(error_list *d)
{
    for (size_t i = 0; i < d->count; i++)
        free(d->messages[i]);
    free(d->messages);
    error_list_init(d);
}

void error_at(error_list *d, const char *path, src_mark at, const char *format, ...)
{
    if (d->count >= ERROR_LIST_MAX) {
        d->suppressed++;
        return;
    }
    buf message;
    buf_init(&message);
    if (at.line > 0)
        buf_printf(&message, "%s:%u:%u: error: ", path, at.line, at.column);
    else
        buf_printf(&message, "%s: error: ", path);
    va_list args;
    va_start(args, format);
    buf_vprintf(&message, format, args);
    va_end(args);
    xgrow((void **)&d->messages, &d->capacity, d->count + 1, sizeof(char *));
    d->messages[d->count++] = buf_detach(&message);
}

bool error_list_any(const error_list *d)
{
    return d->count > 0;
}

void error_list_print(const error_list *d)
{
    for (size_t i = 0; i < d->count; i++)
        fprintf(stderr, "%s\n", d->messages[i]);
    if (d->suppressed)
        fprintf(stderr, "fitproof: %zu further errors not shown\n", d->suppressed);
}

/* Bytes read per read(2) call; the test hook runs after each. */
#define FILE_READ_CHUNK ((size_t)1 << 20)

static bool same_file_state(const struct stat *a, const struct stat *b)
{
    return a->st_size == b->st_size && a->st_mtim.tv_sec == b->st_mtim.tv_sec &&
           a->st_mtim.tv_nsec == b->st_mtim.tv_nsec && a->st_ino == b->st_ino &&
           a->st_dev == b->st_dev;
}

char *file_read_limited(const char *path, size_t max_bytes, size_t *length,
                        const char **error_text)
{
    static char too_large[96];
    /* O_NONBLOCK: opening a FIFO with no writer must not wait forever. */
    int fd = open(path, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
    if (fd < 0) {
        *error_text = strerror(errno);
        return NULL;
    }
    struct stat before;
    if (fstat(fd, &before) != 0) {
        *error_text = strerror(errno);
        close(fd);
        return NULL;
    }
    if (S_ISDIR(before.st_mode) || !S_ISREG(before.st_mode)) {
        *error_text = S_ISDIR(before.st_mode)
                          ? "it is a folder, not a file"
                          : "it is not a regular file (a device, a pipe or a socket); "
                            "copy its content into a file";
        close(fd);
        return NULL;
    }
    if ((uintmax_t)before.st_size > (uintmax_t)max_bytes) {
        snprintf(too_large, sizeof too_large,
                 "it is larger than the limit of %zu bytes for this kind of file", max_bytes);
        *error_text = too_large;
        close(fd);
        return NULL;
    }
    fcntl(fd, F_SETFL, fcntl(fd, F_GETFL) & ~O_NONBLOCK);
    size_t expected = (size_t)before.st_size;
    /* One byte more than the size, to see a file that grew. */
    char *bytes = xmalloc(expected + 2);
    size_t done = 0;
    bool failed = false;
    while (done < expected + 1) {
        size_t want = expected + 1 - done;
        ssize_t got = read(fd, bytes + done, want < FILE_READ_CHUNK ? want : FILE_READ_CHUNK);
        if (got < 0 && errno == EINTR)
            continue;
        if (got < 0) {
            failed = true;
            break;
        }
        if (got == 0)
            break;
        done += (size_t)got;
        if (file_read_hook)
            file_read_hook(path, done);
    }
    struct stat after;
    bool changed = fstat(fd, &after) != 0 || !same_file_state(&before, &after) ||
                   done != expected;
    close(fd);
    if (failed || changed) {
        free(bytes);
        *error_text = failed ? "read failed"
                             : "the file changed while it was read; read it again when "
                               "nothing is writing to it";
        return NULL;
    }
    bytes[done] = '\0';
    *length = done;
    return bytes;
}

char *file_read_all(const char *path, size_t *length, const char **error_text)
{
    return file_read_limited(path, FILE_READ_MAX, length, error_text);
}

char *path_dirname(const char *path)
{
    const char *slash = strrchr(path, '/');
    if (!slash)
        return xstrdup(".");
    if (slash == path)
        return xstrdup("/");
    return xstrndup(path, (size_t)(slash - path));
}

char *path_stem(const char *path)
{
    const char *slash = strrchr(path, '/');
    const char *base = slash ? slash + 1 : path;
    const char *dot = strrchr(base, '.');
    size_t length = (dot && dot != base) ? (size_t)(dot - base) : strlen(base);
    return xstrndup(base, length);
}

char *path_join(const char *dir, const char *name)
{
    if (name[0] == '/' || strcmp(dir, ".") == 0)
        return xstrdup(name);
    buf joined;
    buf_init(&joined);
    buf_printf(&joined, "%s/%s", dir, name);
    return buf_detach(&joined);
}

void fmt_roundtrip(char *out, size_t size, double value)
{
    for (int digits = 15; digits <= 17; digits++) {
        snprintf(out, size, "%.*g", digits, value);
        if (strtod(out, NULL) == value)
            return;
    }
}

/* Levenshtein distance; SIZE_MAX for names too long to be worth it. */
static size_t edit_distance(const char *a, const char *b)
{
    size_t la = strlen(a), lb = strlen(b);
    if (la > 64 || lb > 64)
        return SIZE_MAX;
    size_t row[65];
    for (size_t j = 0; j <= lb; j++)
        row[j] = j;
    for (size_t i = 1; i <= la; i++) {
        size_t diagonal = row[0];
        row[0] = i;
        for (size_t j = 1; j <= lb; j++) {
            size_t above = row[j];
            size_t best = diagonal + (a[i - 1] != b[j - 1]);
            if (above + 1 < best)
                best = above + 1;
            if (row[j - 1] + 1 < best)
                best = row[j - 1] + 1;
            row[j] = best;
            diagonal = above;
        }
    }
    return row[lb];
}

const char *closest_name(const char *name, const char *const *candidates, size_t count)
{
    /* A difference of case alone is the likeliest slip of all. */
    for (size_t i = 0; i < count; i++) {
        size_t k = 0;
        while (name[k] && candidates[i][k] &&
               tolower((unsigned char)name[k]) == tolower((unsigned char)candidates[i][k]))
            k++;
        if (!name[k] && !candidates[i][k])
            return candidates[i];
    }
    const char *best = NULL;
    size_t best_distance = SIZE_MAX;
    for (size_t i = 0; i < count; i++) {
        size_t distance = edit_distance(name, candidates[i]);
        if (distance < best_distance) {
            best_distance = distance;
            best = candidates[i];
        }
    }
    size_t limit = strlen(name) <= 4 ? 1 : 2;
    return best_distance <= limit ? best : NULL;
}

void hint_closest(buf *out, const char *name, const char *const *candidates, size_t count,
                  const char *what)
{
    const char *close = closest_name(name, candidates, count);
    if (close) {
        buf_printf(out, "; did you mean '%s'?", close);
        return;
    }
    buf_printf(out, "; %s", what);
    for (size_t j = 0; j < count && j < 12; j++)
        buf_printf(out, "%s '%s'", j ? "," : "", candidates[j]);
    if (count > 12)
        buf_puts(out, ", …");
}

/* An absolute, symlink-free form of path; a path that does not exist yet
   is resolved through its parent folder. Caller frees. */
static char *absolute_path(const char *path)
{
    char *resolved = realpath(path, NULL);
    if (resolved)
        return resolved;
    char *parent = path_dirname(path);
    char *parent_resolved = realpath(parent, NULL);
    free(parent);
    if (!parent_resolved)
        return NULL;
    const char *slash = strrchr(path, '/');
    char *joined = path_join(parent_resolved, slash ? slash + 1 : path);
    free(parent_resolved);
    return joined;
}

char *path_relative(const char *dir, const char *path)
{
    char *from = absolute_path(dir), *to = absolute_path(path);
    if (!from || !to) {
        free(from);
        free(to);
        return NULL;
    }
    /* Length of the common leading folders. */
    size_t common = 0;
    for (size_t i = 0; from[i] && from[i] == to[i]; i++)
        if (from[i] == '/')
            common = i;
    size_t from_length = strlen(from);
    if (strncmp(from, to, from_length) == 0 && to[from_length] == '/')
        common = from_length;
    buf out;
    buf_init(&out);
    for (const char *p = from + common; *p; p++)
        if (*p == '/')
            buf_puts(&out, "../");
    buf_puts(&out, to + common + (to[common] == '/' ? 1 : 0));
    free(from);
    free(to);
    return buf_detach(&out);
}

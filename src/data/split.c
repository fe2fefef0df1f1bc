/*
 * split.c — reading a large file's rows with two threads. The main thread
 * reads a prefix alone, so that inferred text columns have become
 * categories; a helper thread then reads the second half of the rest while
 * the main thread reads the first half, and the halves are joined: numbers
 * appended, the helper's category texts added to the main thread's sets
 * and its codes translated, its line numbers shifted.
 *
 * The split point is only a guess at a record boundary (a line start: a
 * quoted field could span it). The guess is right exactly when the main
 * thread's last record ends there; otherwise, or when the helper met
 * anything that needs the whole file's context (an error, a word in a
 * column still read as numbers, a NaN word), its work is thrown away and
 * the main thread reads on alone. Either way the table is the one a single
 * thread would build, byte for byte.
 */
#include <stdlib.h>
#include <string.h>
#include <threads.h>

#include "loader.h"

static size_t split_threshold = (size_t)16 << 20;
static size_t split_prefix = (size_t)1 << 20;

void data_set_split(size_t threshold, size_t prefix)
{
    split_threshold = threshold;
    split_prefix = prefix;
}

typedef struct {
    loader ld;
    csv_scanner sc;
    data_table t; /* the helper's columns; names borrowed from the main table */
    error_list errors;
    bool ok;
} helper;

static int helper_run(void *arg)
{
    helper *h = arg;
    h->ok = loader_read_rows(&h->ld);
    return 0;
}

/* The start of a line near the middle of [p, end) that is not blank, or
   NULL. */
static const char *split_point(const char *p, const char *end)
{
    const char *nl = memchr(p + (end - p) / 2, '\n', (size_t)(end - p) - (size_t)(end - p) / 2);
    while (nl && nl + 1 < end && (nl[1] == '\n' || nl[1] == '\r'))
        nl = memchr(nl + 1, '\n', (size_t)(end - nl - 1));
    return nl && nl + 1 < end ? nl + 1 : NULL;
}

/* A helper for [from, end), its column kinds those the main thread has
   settled on so far. */
static void helper_start(helper *h, const loader *main, const char *from)
{
    memset(h, 0, sizeof *h);
    error_list_init(&h->errors);
    const csv_scanner *sc = main->sc;
    csv_start(&h->sc, sc->path, sc->text, (size_t)(sc->end - sc->text), sc->delimiter,
              &h->errors);
    h->sc.p = from;
    h->sc.line = 1;
    h->sc.line_start = from;
    h->t.n_columns = main->t->n_columns;
    h->t.columns = xcalloc(h->t.n_columns, sizeof *h->t.columns);
    for (size_t j = 0; j < h->t.n_columns; j++)
        h->t.columns[j].name = main->t->columns[j].name;
    loader_init(&h->ld, &h->sc, &h->t, main->s, main->flags, main->file, &h->errors);
    h->ld.helper = true;
    for (size_t j = 0; j < h->t.n_columns; j++) {
        column_state *st = &h->ld.states[j];
        if (st->numeric && !main->states[j].numeric) {
            free(st->column->numbers);
            st->column->numbers = NULL;
            st->column->codes = loader_alloc_rows(NULL, h->ld.capacity * sizeof(int32_t));
            st->numeric = false;
        }
    }
}

static void helper_free(helper *h)
{
    loader_free(&h->ld);
    for (size_t j = 0; j < h->t.n_columns; j++) {
        free(h->t.columns[j].numbers);
        free(h->t.columns[j].codes);
    }
    free(h->t.columns);
    free(h->t.lines);
    csv_finish(&h->sc);
    error_list_free(&h->errors);
}

/* ---- joining ------------------------------------------------------------------ */

/* Copies bytes from the helper's array, handing back its pages as it goes,
   so that the join needs little more memory than the two halves. */
static void move_rows(void *to, void *from, size_t bytes)
{
    const size_t step = (size_t)8 << 20;
    for (size_t done = 0; done < bytes; done += step) {
        size_t n = bytes - done < step ? bytes - done : step;
        memcpy((char *)to + done, (char *)from + done, n);
        data_drop_pages((char *)from + done, n);
    }
}

/* Adds the helper's texts of one category to the main set; returns the
   main code of each helper code. */
static int32_t *join_levels(column_state *main, const column_state *part)
{
    int32_t *map = xmalloc((part->n_levels ? part->n_levels : 1) * sizeof(int32_t));
    for (uint32_t e = 0; e < part->set.count; e++) {
        bool added;
        uint32_t mine = level_set_intern(&main->set, level_set_name(&part->set, e),
                                         level_set_length(&part->set, e), &added);
        int32_t code = part->entry_codes[e];
        if (added) {
            xgrow((void **)&main->entry_codes, &main->entry_capacity, mine + 1,
                  sizeof(int32_t));
            main->entry_codes[mine] = code < 0 ? -1 : (int32_t)main->n_levels++;
        }
        if (code >= 0)
            map[code] = main->entry_codes[mine];
    }
    return map;
}

static void join_column(column_state *main, column_state *part, size_t n1, size_t n2)
{
    data_column *to = main->column, *from = part->column;
    if (main->numeric) {
        to->numbers = loader_alloc_rows(to->numbers, (n1 + n2 ? n1 + n2 : 1) * sizeof(double));
        move_rows(to->numbers + n1, from->numbers, n2 * sizeof(double));
        free(from->numbers);
        from->numbers = NULL;
    } else {
        int32_t *map = join_levels(main, part);
        to->codes = loader_alloc_rows(to->codes, (n1 + n2 ? n1 + n2 : 1) * sizeof(int32_t));
        for (size_t i = 0; i < n2; i++) {
            int32_t code = from->codes[i];
            from->codes[i] = code < 0 ? -1 : map[code];
        }
        move_rows(to->codes + n1, from->codes, n2 * sizeof(int32_t));
        free(map);
        free(from->codes);
        from->codes = NULL;
    }
    to->n_missing += from->n_missing;
}

/* Appends the helper's rows; false (nothing changed) when the halves do not
   fit together. */
static bool join(loader *ld, helper *h, size_t line_offset)
{
    size_t n1 = ld->t->n_rows, n2 = h->t.n_rows;
    for (size_t j = 0; j < ld->n_columns; j++)
        if (ld->states[j].numeric != h->ld.states[j].numeric)
            return false; /* the main thread met a word after the helper started */
    if (n2 && line_offset + h->t.lines[n2 - 1] > UINT32_MAX)
        return false;
    data_table *t = ld->t;
    t->lines = loader_alloc_rows(t->lines, (n1 + n2 ? n1 + n2 : 1) * sizeof(uint32_t));
    for (size_t i = 0; i < n2; i++)
        h->t.lines[i] = (uint32_t)(h->t.lines[i] + line_offset);
    move_rows(t->lines + n1, h->t.lines, n2 * sizeof(uint32_t));
    for (size_t j = 0; j < ld->n_columns; j++)
        join_column(&ld->states[j], &h->ld.states[j], n1, n2);
    ld->capacity = n1 + n2;
    t->n_rows = t->rows_read = n1 + n2;
    ld->sc->p = h->sc.p;
    ld->sc->line = line_offset + h->sc.line;
    ld->sc->line_start = h->sc.line_start;
    return true;
}

/* ---- the driver ---------------------------------------------------------------- */

bool loader_read_rows_split(loader *ld)
{
    csv_scanner *sc = ld->sc;
    if ((size_t)(sc->end - sc->p) < split_threshold)
        return loader_read_rows(ld);
    ld->stop = sc->p + split_prefix;
    bool ok = loader_read_rows(ld);
    ld->stop = NULL;
    const char *middle = ok ? split_point(sc->p, sc->end) : NULL;
    if (!middle)
        return ok && loader_read_rows(ld);
    helper *h = xmalloc(sizeof *h);
    helper_start(h, ld, middle);
    thrd_t thread;
    bool started = thrd_create(&thread, helper_run, h) == thrd_success;
    ld->stop = started ? middle : NULL;
    ok = loader_read_rows(ld);
    ld->stop = NULL;
    if (started)
        thrd_join(thread, NULL);
    bool joined = started && ok && h->ok && sc->p == middle && join(ld, h, sc->line - 1);
    helper_free(h);
    free(h);
    return ok && (joined || loader_read_rows(ld));
}

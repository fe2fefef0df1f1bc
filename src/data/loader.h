/*
 * loader.h — private to the data stage's row reader (read.c, cells.c,
 * finish.c, split.c): the state of one reading of the rows, per column and
 * as a whole. A reading covers the whole body of the file, or one part of
 * it when two threads share the work (split.c).
 */
#ifndef FITPROOF_DATA_LOADER_H
#define FITPROOF_DATA_LOADER_H

#include "internal.h"

typedef enum { DEFER_NONE, DEFER_NONFINITE, DEFER_OVERFLOW, DEFER_BIG_INTEGER } defer_kind;

/* A cell's text and where it was written. */
typedef struct {
    const char *text;
    size_t length;
    const char *raw; /* as written, quotes included */
    const char *raw_end;
    size_t line;
    size_t column;
} cell;

#define MAX_PENDING 8
#define CACHE_SLOTS 64

/* A short category text (at most 16 bytes, as two words) and its code. */
typedef struct {
    uint64_t words[2];
    uint32_t length; /* 0: empty slot */
    int32_t code;
} cache_entry;

typedef struct {
    data_column *column;
    const spec_column *declared;
    bool numeric;
    bool inferred;
    size_t switch_row; /* SIZE_MAX, or the row where it became a category */
    /* the first problem of an inferred numeric column, reported if it stays numeric */
    defer_kind deferred;
    size_t deferred_line, deferred_column;
    char *deferred_text;
    level_set set;
    int32_t *entry_codes; /* per distinct text: its level code, or -1 when missing */
    size_t entry_capacity;
    size_t n_levels;
    /* DATA_LOAD_SCAFFOLD: missing-value words met while numeric */
    char *pending[MAX_PENDING];
    size_t n_pending;
    cache_entry cache[CACHE_SLOTS]; /* recently seen short texts */
} column_state;

typedef struct {
    csv_scanner *sc;
    data_table *t;
    const spec *s;
    column_state *states;
    size_t n_columns;
    size_t capacity;
    char mark;
    unsigned flags;
    bool fast_numbers;   /* no missing token is a number, and the delimiter
                            cannot be part of one */
    data_file *file;
    const char *stop;    /* a reading of the first part stops at this record start */
    bool helper;         /* reads the second part: gives up on anything unusual */
    bool gave_up;        /* the helper met something only a full reading handles */
    error_list *errors;
} loader;

/* ---- cells.c: one cell, the general route ------------------------------ */

/* Stores cell c of column j at row. False after recording an error (or,
   for the helper, when it gives up). */
bool loader_store_cell(loader *ld, size_t j, size_t row, const cell *c);
bool loader_store_category(loader *ld, column_state *st, size_t row, const cell *c);
/* An inferred column becomes a category from row on. */
void loader_switch_to_category(loader *ld, column_state *st, size_t row);
/* Room for a column's rows (old grown, or new when old is NULL). */
void *loader_alloc_rows(void *old, size_t bytes);

static inline size_t loader_cache_slot(uint64_t first, uint64_t second, uint32_t length)
{
    uint64_t h = (first ^ (second * 31) ^ length) * UINT64_C(0x9E3779B97F4A7C15);
    return (size_t)(h >> 58); /* CACHE_SLOTS = 2^6 */
}

/* ---- read.c: the rows -------------------------------------------------- */

/* Sets up ld for the text at sc->p (columns of t named, arrays sized). */
void loader_init(loader *ld, csv_scanner *sc, data_table *t, const spec *s, unsigned flags,
                 data_file *file, error_list *errors);
void loader_free(loader *ld);
/* Reads rows until the end of the text or ld->stop. */
bool loader_read_rows(loader *ld);

/* ---- split.c: two threads ---------------------------------------------- */

/* Reads the rows with a helper thread taking the second half of the text
   when the text is large; otherwise, or when the halves cannot be joined,
   as loader_read_rows alone would. */
bool loader_read_rows_split(loader *ld);

/* ---- finish.c: after the rows ------------------------------------------ */

bool loader_report_deferred(loader *ld);
bool loader_check_level_bound(loader *ld);
void loader_finish_levels(column_state *st, size_t n_rows);
void loader_scaffold_adjust(loader *ld);

#endif

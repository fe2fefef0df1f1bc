/*
 * design.c — turns a model's terms into design-matrix columns.
 *
 * Treatment coding: a category with levels L0 … Lk-1 and reference level Lr
 * contributes k-1 indicator columns 1[x = Li], i ≠ r. Sum (deviation)
 * coding contributes k-1 columns 1[x = Li] − 1[x = Lr], whose coefficients
 * are the level effects around the unweighted average of the k level
 * effects (the reference level's effect is minus their sum). A model
 * without intercept gives its first category main effect all k indicators
 * (one coefficient per level). An interaction contributes the products of
 * its components' columns, in the order the components are written. A
 * polynomial term contributes x, x², …, x^degree (raw powers; the solver
 * scales columns, so their very different magnitudes cost no accuracy).
 */
#include "design.h"
#include "../util/sort.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* The columns one component of a term contributes, before products. */
typedef struct {
    design_part *parts;
    size_t count;
} factor_list;

/* State while the coefficients are laid out. */
typedef struct {
    design *d;
    size_t capacity;
    const spec *s;
    const data_table *t;
    error_list *errors;
    bool all_levels_given; /* a category already took all its levels */
} builder;

static const data_column *lookup_column(const spec *s, const data_table *t,
                                        const char *name, src_mark at, error_list *errors)
{
    const data_column *column = data_find(t, name);
    if (!column) {
        buf hint;
        buf_init(&hint);
        data_suggest_column(&hint, t, name);
        error_at(errors, s->path, at, "column '%s' is not in the data file%s", name,
                 hint.data);
        buf_free(&hint);
    }
    return column;
}

static void factor_add(factor_list *list, design_part part)
{
    list->parts[list->count++] = part;
}

static bool category_usable(builder *b, const data_column *column, src_mark at)
{
    if (column->n_levels < 2) {
        error_at(b->errors, b->s->path, at,
                 "category '%s' has %zu level%s in the data; a category term needs "
                 "at least two",
                 column->name, column->n_levels, column->n_levels == 1 ? "" : "s");
        return false;
    }
    if (column->n_levels > DESIGN_MAX_LEVELS) {
        error_at(b->errors, b->s->path, at,
                 "category '%s' has %zu levels, more than the %d a category term may "
                 "have; merge rare levels or use a numeric column",
                 column->name, column->n_levels, DESIGN_MAX_LEVELS);
        return false;
    }
    return true;
}

/* The code standing for declared level j when no kept row has it: never a
   row's code (rows have codes ≥ 0, or −1 when missing). */
static int32_t absent_code(size_t j)
{
    return -2 - (int32_t)j;
}

static int32_t level_index(const data_column *column, const char *level)
{
    for (size_t k = 0; k < column->n_levels; k++)
        if (strcmp(column->levels[k], level) == 0)
            return (int32_t)k;
    return -1;
}

/* The levels of a category in coding order: the declared levels (spec
   data.columns.levels) in their order, a declared level that no row has
   included with an absent code (its column is then zero and its
   coefficient not estimable), then any level of the data not declared. */
static size_t coding_levels(const spec *s, const data_column *column, const char **names,
                            int32_t *codes)
{
    const spec_column *declared = spec_find_column(s, column->name);
    size_t count = 0;
    for (size_t j = 0; declared && j < declared->n_levels; j++) {
        int32_t code = level_index(column, declared->levels[j]);
        names[count] = code >= 0 ? column->levels[code] : declared->levels[j];
        codes[count++] = code >= 0 ? code : absent_code(j);
    }
    for (size_t k = 0; k < column->n_levels; k++) {
        bool listed = false;
        for (size_t j = 0; declared && j < declared->n_levels && !listed; j++)
            listed = strcmp(declared->levels[j], column->levels[k]) == 0;
        if (!listed) {
            names[count] = column->levels[k];
            codes[count++] = (int32_t)k;
        }
    }
    return count;
}

/* Which codes of a column the rows used have (codes[k] < 0: none). */
static bool *levels_with_rows(const design *d, const data_column *column)
{
    bool *has = xcalloc(column->n_levels + 1, sizeof(bool));
    for (size_t i = 0; i < d->n_used; i++)
        has[column->codes[design_table_row(d, i)]] = true;
    return has;
}

static void note_empty_level(design *d, const data_column *column, const char *level)
{
    for (size_t k = 0; k < d->n_empty_levels; k++)
        if (d->empty_levels[k].column == column && strcmp(d->empty_levels[k].level, level) == 0)
            return;
    d->empty_levels = xrealloc(d->empty_levels, (d->n_empty_levels + 1) * sizeof(design_level));
    d->empty_levels[d->n_empty_levels++] = (design_level){column, level};
}

/* The parts a category contributes. Treatment coding: every level but the
   reference, a level without rows giving a zero column (not estimable).
   Sum coding: the levels with rows only (an average over levels must not
   include one without rows), against the reference level, or the first
   level with rows when the reference has none. All levels: every level. */
static void category_factors(builder *b, const spec_term *term, const data_column *column,
                             factor_list *out, const char **names, int32_t *codes,
                             size_t count)
{
    const spec_model *m = b->d->model;
    bool all = !m->intercept && term->kind == SPEC_TERM_MAIN && !b->all_levels_given;
    if (all)
        b->all_levels_given = true;
    bool *has = levels_with_rows(b->d, column);
    int32_t omitted = (int32_t)column->reference;
    bool sum = m->coding == SPEC_CODING_SUM && !all;
    if (sum && !has[omitted])
        for (size_t level = count; level-- > 0;)
            if (codes[level] >= 0 && has[codes[level]])
                omitted = codes[level];
    for (size_t level = 0; level < count; level++) {
        bool rows = codes[level] >= 0 && has[codes[level]];
        if (!rows)
            note_empty_level(b->d, column, names[level]);
        design_part part = {column, names[level], codes[level], 1, DESIGN_TREATMENT, NULL, -1};
        if (all) {
            part.kind = DESIGN_ALL_LEVELS;
        } else if (codes[level] == (sum ? omitted : (int32_t)column->reference)) {
            continue;
        } else if (sum) {
            if (!rows)
                continue;
            part.kind = DESIGN_SUM;
            part.omitted = column->levels[omitted];
            part.omitted_code = omitted;
        }
        factor_add(out, part);
    }
    free(has);
}

static bool factors_of(builder *b, const spec_term *term, size_t which, factor_list *out)
{
    const data_column *column = lookup_column(b->s, b->t, term->columns[which],
                                              term->column_at[which], b->errors);
    out->count = 0;
    out->parts = NULL;
    if (!column)
        return false;
    if (term->kind == SPEC_TERM_POLYNOMIAL) {
        if (column->kind != DATA_NUMERIC) {
            error_at(b->errors, b->s->path, term->column_at[which],
                     "a polynomial needs a numeric column, but '%s' is a category",
                     column->name);
            return false;
        }
        out->parts = xmalloc((size_t)term->degree * sizeof(design_part));
        for (int k = 1; k <= term->degree; k++)
            factor_add(out, (design_part){column, NULL, -1, k, DESIGN_NUMERIC, NULL, -1});
        return true;
    }
    if (column->kind == DATA_NUMERIC) {
        out->parts = xmalloc(sizeof(design_part));
        factor_add(out, (design_part){column, NULL, -1, 1, DESIGN_NUMERIC, NULL, -1});
        return true;
    }
    if (!category_usable(b, column, term->column_at[which]))
        return false;
    const spec_column *declared = spec_find_column(b->s, column->name);
    size_t most = column->n_levels + (declared ? declared->n_levels : 0);
    const char **names = xmalloc(most * sizeof(char *));
    int32_t *codes = xmalloc(most * sizeof(int32_t));
    size_t count = coding_levels(b->s, column, names, codes);
    out->parts = xmalloc(count * sizeof(design_part));
    category_factors(b, term, column, out, names, codes, count);
    free(names);
    free(codes);
    return true;
}

static void part_label(buf *label, const design_part *part)
{
    switch (part->kind) {
    case DESIGN_NUMERIC:
        if (part->power > 1)
            buf_printf(label, "%s^%d", part->column->name, part->power);
        else
            buf_puts(label, part->column->name);
        break;
    case DESIGN_TREATMENT:
    case DESIGN_ALL_LEVELS:
        buf_printf(label, "%s = %s", part->column->name, part->level);
        break;
    case DESIGN_SUM:
        buf_printf(label, "%s: %s vs average of levels", part->column->name, part->level);
        break;
    }
}

static void add_coef(builder *b, size_t term, const design_part *parts, size_t n_parts)
{
    design *d = b->d;
    xgrow((void **)&d->coefs, &b->capacity, d->n_coefs + 1, sizeof(design_coef));
    design_coef *coef = &d->coefs[d->n_coefs++];
    coef->term = term;
    coef->n_parts = n_parts;
    coef->parts = xmalloc((n_parts ? n_parts : 1) * sizeof(design_part));
    buf label;
    buf_init(&label);
    if (n_parts == 0)
        buf_puts(&label, "baseline value");
    for (size_t i = 0; i < n_parts; i++) {
        coef->parts[i] = parts[i];
        if (i)
            buf_puts(&label, " × ");
        part_label(&label, &parts[i]);
    }
    coef->label = buf_detach(&label);
}

/* Lays out the coefficients of one term: the product of its factor lists,
   the last component varying fastest. */
static void add_products(builder *b, size_t term_index, factor_list *lists, size_t n_lists)
{
    const spec_term *term = &b->d->model->terms[term_index];
    if (term->kind == SPEC_TERM_POLYNOMIAL) {
        for (size_t k = 0; k < lists[0].count; k++)
            add_coef(b, term_index, &lists[0].parts[k], 1);
        return;
    }
    size_t index[3] = {0, 0, 0};
    for (;;) {
        design_part parts[3];
        for (size_t i = 0; i < n_lists; i++)
            parts[i] = lists[i].parts[index[i]];
        add_coef(b, term_index, parts, n_lists);
        size_t i = n_lists;
        for (;;) {
            i--;
            if (++index[i] < lists[i].count)
                break;
            index[i] = 0;
            if (i == 0)
                return;
        }
    }
}

static char *term_label(const spec_term *term)
{
    buf label;
    buf_init(&label);
    for (size_t i = 0; i < term->n_columns; i++)
        buf_printf(&label, "%s%s", i ? " × " : "", term->columns[i]);
    if (term->kind == SPEC_TERM_POLYNOMIAL && term->degree > 1)
        buf_printf(&label, " up to %s^%d", term->columns[0], term->degree);
    return buf_detach(&label);
}

static bool add_term(builder *b, size_t term_index)
{
    design *d = b->d;
    const spec_term *term = &d->model->terms[term_index];
    factor_list lists[3];
    bool ok = true;
    for (size_t i = 0; i < term->n_columns; i++)
        ok = factors_of(b, term, i, &lists[i]) && ok;
    design_term *entry = &d->terms[d->n_terms++];
    entry->label = term_label(term);
    entry->first_coef = d->n_coefs;
    entry->n_columns = term->n_columns;
    for (size_t i = 0; i < term->n_columns; i++)
        entry->columns[i] = lists[i].count ? lists[i].parts[0].column : NULL;
    if (ok)
        add_products(b, term_index, lists, term->n_columns);
    entry->n_coefs = d->n_coefs - entry->first_coef;
    for (size_t i = 0; i < term->n_columns; i++)
        free(lists[i].parts);
    return ok;
}

/* ---- entries -------------------------------------------------------------- */

static long double part_value(const design_part *part, double number, int32_t code)
{
    switch (part->kind) {
    case DESIGN_NUMERIC: {
        long double x = number, value = x;
        for (int k = 1; k < part->power; k++)
            value *= x;
        return value;
    }
    case DESIGN_TREATMENT:
    case DESIGN_ALL_LEVELS:
        return code == part->code;
    case DESIGN_SUM:
        return (long double)(code == part->code) - (long double)(code == part->omitted_code);
    }
    return 0.0L;
}

static long double row_part_value(const design_part *part, size_t row)
{
    if (part->kind == DESIGN_NUMERIC)
        return part_value(part, part->column->numbers[row], -1);
    return part_value(part, 0.0, part->column->codes[row]);
}

long double design_entry(const design *d, size_t i, size_t c)
{
    size_t row = design_table_row(d, i);
    long double value = 1.0L;
    for (size_t k = 0; k < d->coefs[c].n_parts; k++)
        value *= row_part_value(&d->coefs[c].parts[k], row);
    return value;
}

void design_row(const design *d, size_t i, long double *out)
{
    size_t row = design_table_row(d, i);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        long double value = 1.0L;
        for (size_t k = 0; k < coef->n_parts; k++)
            value *= row_part_value(&coef->parts[k], row);
        out[c] = value;
    }
}

/* One factor over a block of rows, stored into out (first) or multiplied
   into it. */
static void block_part(const design *d, const design_part *part, size_t first, size_t count,
                       long double *out, bool multiply)
{
    static const long double sign[3] = {-1.0L, 0.0L, 1.0L};
    if (part->kind != DESIGN_NUMERIC) {
        const int32_t *codes = part->column->codes;
        for (size_t i = 0; i < count; i++) {
            int32_t code = codes[design_table_row(d, first + i)];
            long double value = sign[1 + (code == part->code) - (code == part->omitted_code)];
            out[i] = multiply ? out[i] * value : value;
        }
        return;
    }
    const double *x = part->column->numbers;
    for (size_t i = 0; i < count; i++) {
        long double v = x[design_table_row(d, first + i)], value = v;
        for (int k = 1; k < part->power; k++)
            value *= v;
        out[i] = multiply ? out[i] * value : value;
    }
}

void design_block(const design *d, size_t first, size_t count, long double *out,
                  size_t stride)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        long double *column = out + c * stride;
        const design_coef *coef = &d->coefs[c];
        if (coef->n_parts == 0)
            for (size_t i = 0; i < count; i++)
                column[i] = 1.0L;
        for (size_t k = 0; k < coef->n_parts; k++)
            block_part(d, &coef->parts[k], first, count, column, k > 0);
    }
}

/* One factor of a coefficient over a block of rows: out = value for the
   first factor, out *= value for the others. ROW(i) is the table row of
   block row i. */
#define PART_DOUBLE(ROW)                                                                   \
    do {                                                                                   \
        if (part->kind != DESIGN_NUMERIC) {                                                \
            const int32_t *codes = part->column->codes;                                    \
            int32_t level = part->code, omitted = part->omitted_code;                      \
            for (size_t i = 0; i < count; i++) {                                           \
                int32_t code = codes[ROW(i)];                                              \
                double value = (double)((code == level) - (code == omitted));              \
                out[i] = multiply ? out[i] * value : value;                                \
            }                                                                              \
        } else if (part->power == 1 && multiply) {                                         \
            for (size_t i = 0; i < count; i++)                                             \
                out[i] *= x[ROW(i)];                                                       \
        } else if (part->power == 1) {                                                     \
            for (size_t i = 0; i < count; i++)                                             \
                out[i] = x[ROW(i)];                                                        \
        } else {                                                                           \
            for (size_t i = 0; i < count; i++) {                                           \
                double v = x[ROW(i)], value = v;                                           \
                for (int k = 1; k < part->power; k++)                                      \
                    value *= v;                                                            \
                out[i] = multiply ? out[i] * value : value;                                \
            }                                                                              \
        }                                                                                  \
    } while (0)

static void block_part_double(const design *d, const design_part *part, size_t first,
                              size_t count, double *out, bool multiply)
{
    const double *x = part->column->numbers;
    if (d->n_dropped == 0) {
        /* Every row is used: row i of the design is row i of the table. */
#define DIRECT(i) (first + (i))
        PART_DOUBLE(DIRECT);
#undef DIRECT
        return;
    }
    const size_t *rows = d->used_rows + first;
#define LISTED(i) rows[i]
    PART_DOUBLE(LISTED);
#undef LISTED
}

void design_block_double(const design *d, size_t first, size_t count, double *out,
                         size_t stride)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        double *column = out + c * stride;
        const design_coef *coef = &d->coefs[c];
        if (coef->n_parts == 0)
            for (size_t i = 0; i < count; i++)
                column[i] = 1.0;
        for (size_t k = 0; k < coef->n_parts; k++)
            block_part_double(d, &coef->parts[k], first, count, column, k > 0);
    }
}

double design_get(const design *d, size_t i, size_t c)
{
    return d->x ? gsl_matrix_get(d->x, i, c) : (double)design_entry(d, i, c);
}

/* ---- rows ----------------------------------------------------------------- */

static bool row_is_missing(const data_column *column, size_t row)
{
    return column->kind == DATA_NUMERIC ? isnan(column->numbers[row])
                                        : column->codes[row] < 0;
}

static void note_used_column(design *d, const data_column *column)
{
    if (!column)
        return;
    for (size_t k = 0; k < d->n_missing; k++)
        if (d->missing[k].column == column)
            return;
    d->missing[d->n_missing++] = (design_missing){column, 0};
}

/* The columns a row needs, each once: response, term columns, weights
   (a column the data lack is skipped here and reported with its term). */
static void collect_used_columns(design *d, const data_table *t)
{
    const spec_model *m = d->model;
    size_t most = 2;
    for (size_t i = 0; i < m->n_terms; i++)
        most += m->terms[i].n_columns;
    d->missing = xcalloc(most, sizeof(design_missing));
    note_used_column(d, d->response);
    for (size_t i = 0; i < m->n_terms; i++)
        for (size_t k = 0; k < m->terms[i].n_columns; k++)
            note_used_column(d, data_find(t, m->terms[i].columns[k]));
    note_used_column(d, d->weight);
}

static void select_rows(design *d, const data_table *t)
{
    size_t *used = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(size_t));
    d->dropped_lines = xmalloc((t->n_rows ? t->n_rows : 1) * sizeof(uint32_t));
    for (size_t row = 0; row < t->n_rows; row++) {
        bool complete = true;
        for (size_t k = 0; k < d->n_missing; k++)
            if (row_is_missing(d->missing[k].column, row)) {
                d->missing[k].rows++;
                complete = false;
            }
        if (complete)
            used[d->n_used++] = row;
        else
            d->dropped_lines[d->n_dropped++] = t->lines[row];
    }
    if (d->n_dropped == 0) {
        free(used); /* every row, in order: design_table_row needs no list */
        d->used_rows = NULL;
    } else {
        d->used_rows = xrealloc(used, (d->n_used + 1) * sizeof(size_t));
    }
    d->dropped_lines = xrealloc(d->dropped_lines, (d->n_dropped + 1) * sizeof(uint32_t));
}

/* Weights must be positive numbers; a zero or negative weight is a data
   error, reported with the lines that carry it. */
static bool check_weights(design *d, const spec *s, const data_table *t, error_list *errors)
{
    size_t bad = 0;
    buf others;
    buf_init(&others);
    double first = 0.0;
    uint32_t first_line = 0;
    for (size_t i = 0; i < d->n_used; i++) {
        double w = d->weight->numbers[design_table_row(d, i)];
        if (isfinite(w) && w > 0)
            continue;
        uint32_t line = t->lines[design_table_row(d, i)];
        if (bad == 0) {
            first = w;
            first_line = line;
        } else if (bad <= 5) {
            buf_printf(&others, "%s%s", bad > 1 ? ", " : "",
                       bad == 5 ? "…" : "");
            if (bad < 5)
                buf_printf(&others, "%u", line);
        }
        bad++;
    }
    if (bad) {
        char value[32];
        fmt_roundtrip(value, sizeof value, first);
        buf more;
        buf_init(&more);
        if (bad > 1)
            buf_printf(&more, " and not positive on %zu more line%s (%s)", bad - 1,
                       bad > 2 ? "s" : "", others.data);
        error_at(errors, s->path, d->model->weights_at,
                 "weights must be positive, but weight column '%s' is %s on line %u of %s%s; "
                 "fix the value%s or remove the row%s",
                 d->weight->name, value, first_line, t->path, more.data ? more.data : "",
                 bad > 1 ? "s" : "",
                 bad > 1 ? "s" : "");
        buf_free(&more);
    }
    buf_free(&others);
    return bad == 0;
}

typedef struct {
    double key;
    size_t row;
} order_entry;

static int compare_order(const void *a, const void *b)
{
    const order_entry *x = a, *y = b;
    if (x->key != y->key)
        return x->key < y->key ? -1 : 1;
    return (x->row > y->row) - (x->row < y->row); /* ties keep file order */
}

/* The design rows in order_by order, or NULL (no order_by, or a column that
   is absent or missing on a used row: diagnostics_validate reports that). */
static size_t *row_order(const design *d, const data_table *t)
{
    const data_column *column = d->model->order_by ? data_find(t, d->model->order_by) : NULL;
    if (!column)
        return NULL;
    size_t n = d->n_used;
    order_entry *entries = xmalloc((n ? n : 1) * sizeof(order_entry));
    for (size_t i = 0; i < n; i++) {
        size_t row = design_table_row(d, i);
        entries[i].key = column->kind == DATA_NUMERIC ? column->numbers[row]
                                                      : (double)column->codes[row];
        entries[i].row = i;
        if (isnan(entries[i].key) || (column->kind != DATA_NUMERIC && column->codes[row] < 0)) {
            free(entries);
            return NULL;
        }
    }
    bool sorted = true; /* a file already in order (a run number, a date) */
    for (size_t i = 1; i < n && sorted; i++)
        sorted = entries[i - 1].key <= entries[i].key;
    if (!sorted)
        qsort(entries, n, sizeof(order_entry), compare_order);
    size_t *order = xmalloc((n ? n : 1) * sizeof(size_t));
    for (size_t i = 0; i < n; i++)
        order[i] = entries[i].row;
    free(entries);
    return order;
}

/* A response with one value on every row used leaves nothing to explain:
   R², F and every test divide by its zero spread, and what comes out is
   rounding noise dressed as results. Refused, at the response. */
static bool check_response_varies(const design *d, const spec *s, const data_table *t,
                                  error_list *errors)
{
    double first = d->response->numbers[design_table_row(d, 0)];
    for (size_t i = 1; i < d->n_used; i++)
        if (d->response->numbers[design_table_row(d, i)] != first)
            return true;
    char value[32];
    fmt_roundtrip(value, sizeof value, first);
    error_at(errors, s->path, d->model->response_at,
             "the response '%s' of model '%s' is %s on every one of the %zu rows it uses "
             "in %s, so there is nothing to explain; choose a response that varies, or "
             "check the data and the row filter",
             d->response->name, d->model->id, value, d->n_used, t->path);
    return false;
}

static void fill_vectors(design *d)
{
    size_t n = d->n_used, p = d->n_coefs;
    if (d->n_dropped == 0 && n > 0) {
        /* Every row used, in file order: the column is the response. */
        d->y_column = gsl_vector_view_array(d->response->numbers, n);
        d->y = &d->y_column.vector;
    } else {
        d->y = gsl_vector_alloc(n);
        for (size_t i = 0; i < n; i++)
            gsl_vector_set(d->y, i, d->response->numbers[design_table_row(d, i)]);
    }
    if (d->weight) {
        d->weights = gsl_vector_alloc(n);
        for (size_t i = 0; i < n; i++)
            gsl_vector_set(d->weights, i, d->weight->numbers[design_table_row(d, i)]);
    }
    if (p == 0 || n > DESIGN_DENSE_MAX / p)
        return;
    d->x = gsl_matrix_alloc(n, p);
    long double *row = xmalloc(p * sizeof(long double));
    for (size_t i = 0; i < n; i++) {
        design_row(d, i, row);
        for (size_t c = 0; c < p; c++)
            gsl_matrix_set(d->x, i, c, (double)row[c]);
    }
    free(row);
}

/* Level counts over the rows used, for each category among the predictors
   (in the order design.missing lists the columns). */
static void count_levels(design *d)
{
    d->counts = xcalloc(d->n_missing ? d->n_missing : 1, sizeof(design_counts));
    for (size_t k = 0; k < d->n_missing; k++) {
        const data_column *column = d->missing[k].column;
        if (column == d->response || column == d->weight || column->kind != DATA_CATEGORY)
            continue;
        design_counts *c = &d->counts[d->n_counts++];
        c->column = column;
        c->rows = xcalloc(column->n_levels ? column->n_levels : 1, sizeof(size_t));
        for (size_t i = 0; i < d->n_used; i++) {
            int32_t code = column->codes[design_table_row(d, i)];
            if (code >= 0 && (size_t)code < column->n_levels)
                c->rows[code]++;
        }
    }
}

/* The median of values[0..n), n > 0, by selection (they are rearranged). */
static double median_of(double *values, size_t n)
{
    double lower, upper;
    sort_select(values, n, n % 2 ? n / 2 : n / 2 - 1, &lower, &upper);
    return n % 2 ? lower : 0.5 * (lower + upper);
}

static void find_ranges(design *d, const spec *s)
{
    d->ranges = xcalloc(d->n_missing ? d->n_missing : 1, sizeof(design_range));
    for (size_t k = 0; k < d->n_missing; k++) {
        const data_column *column = d->missing[k].column;
        if (column == d->response || column == d->weight || column->kind != DATA_NUMERIC)
            continue;
        design_range range;
        memset(&range, 0, sizeof range);
        range.column = column;
        range.min = INFINITY;
        range.max = -INFINITY;
        double *values = xmalloc(d->n_used * sizeof(double));
        for (size_t i = 0; i < d->n_used; i++) {
            double v = column->numbers[design_table_row(d, i)];
            values[i] = v;
            range.min = v < range.min ? v : range.min;
            range.max = v > range.max ? v : range.max;
        }
        range.median = median_of(values, d->n_used);
        free(values);
        const spec_column *declared = spec_find_column(s, column->name);
        if (declared && declared->n_at_values > 0) {
            range.at_from_spec = true;
            for (size_t k = 0; k < declared->n_at_values && k < DESIGN_MAX_AT; k++)
                range.at[range.n_at++] = declared->at_values[k];
        } else {
            range.at[range.n_at++] = range.median;
        }
        d->ranges[d->n_ranges++] = range;
    }
}

/* ---- checks --------------------------------------------------------------- */

static bool check_response(design *d, const spec *s, const data_table *t, error_list *errors)
{
    const spec_model *m = d->model;
    d->response = lookup_column(s, t, m->response, m->response_at, errors);
    if (!d->response)
        return false;
    if (d->response->kind != DATA_NUMERIC) {
        buf why;
        buf_init(&why);
        data_explain_category(&why, t, d->response, s, "choose a numeric column");
        error_at(errors, s->path, m->response_at,
                 "the response '%s' must be numeric, but the data make it a category%s",
                 m->response, why.data);
        buf_free(&why);
        return false;
    }
    for (size_t i = 0; i < m->n_terms; i++)
        for (size_t k = 0; k < m->terms[i].n_columns; k++)
            if (strcmp(m->terms[i].columns[k], m->response) == 0) {
                error_at(errors, s->path, m->terms[i].column_at[k],
                         "the response '%s' cannot also be a term of its own model",
                         m->response);
                return false;
            }
    return true;
}

static bool check_weight_column(design *d, const spec *s, const data_table *t,
                                error_list *errors)
{
    const spec_model *m = d->model;
    if (!m->weights)
        return true;
    d->weight = lookup_column(s, t, m->weights, m->weights_at, errors);
    if (!d->weight)
        return false;
    if (d->weight->kind != DATA_NUMERIC) {
        buf why;
        buf_init(&why);
        data_explain_category(&why, t, d->weight, s, "name a column of positive numbers");
        error_at(errors, s->path, m->weights_at,
                 "the weights column '%s' must be numeric, but the data make it a "
                 "category%s",
                 m->weights, why.data);
        buf_free(&why);
        d->weight = NULL;
        return false;
    }
    if (d->weight == d->response) {
        error_at(errors, s->path, m->weights_at,
                 "the response '%s' cannot also be the weights of its own model",
                 m->weights);
        d->weight = NULL;
        return false;
    }
    return true;
}

design *design_new(const spec *s, const spec_model *m, const data_table *t, error_list *errors)
{
    size_t errors_before = errors->count;
    design *d = xcalloc(1, sizeof *d);
    d->model = m;
    builder b = {d, 0, s, t, errors, false};
    bool ok = check_response(d, s, t, errors);
    ok = check_weight_column(d, s, t, errors) && ok;
    /* Rows first: how a category is coded depends on the levels they have. */
    collect_used_columns(d, t);
    select_rows(d, t);
    if (m->intercept)
        add_coef(&b, SIZE_MAX, NULL, 0);
    d->terms = xcalloc(m->n_terms ? m->n_terms : 1, sizeof(design_term));
    for (size_t i = 0; i < m->n_terms; i++)
        ok = add_term(&b, i) && ok;
    if (ok && d->n_coefs == 0)
        error_at(errors, s->path, m->at, "model '%s' has no intercept and no terms; add a term",
                 m->id);
    if (!ok || errors->count > errors_before) {
        design_free(d);
        return NULL;
    }
    if (d->n_used == 0) {
        error_at(errors, s->path, m->at,
                 "model '%s' has no complete rows: every row misses a value in a "
                 "column it uses",
                 m->id);
        design_free(d);
        return NULL;
    }
    if (d->weight && !check_weights(d, s, t, errors)) {
        design_free(d);
        return NULL;
    }
    if (!check_response_varies(d, s, t, errors)) {
        design_free(d);
        return NULL;
    }
    fill_vectors(d);
    find_ranges(d, s);
    d->order = row_order(d, t);
    count_levels(d);
    return d;
}

void design_free(design *d)
{
    if (!d)
        return;
    for (size_t c = 0; c < d->n_coefs; c++) {
        free(d->coefs[c].label);
        free(d->coefs[c].parts);
    }
    for (size_t i = 0; i < d->n_terms; i++)
        free(d->terms[i].label);
    free(d->terms);
    free(d->coefs);
    free(d->missing);
    free(d->ranges);
    free(d->empty_levels);
    free(d->order);
    for (size_t k = 0; k < d->n_counts; k++)
        free(d->counts[k].rows);
    free(d->counts);
    gsl_matrix_free(d->x);
    if (d->y != &d->y_column.vector)
        gsl_vector_free(d->y);
    gsl_vector_free(d->weights);
    free(d->dropped_lines);
    free(d->used_rows);
    free(d);
}

/* ---- prediction rows ------------------------------------------------------ */

/* One predictor's requested value while a prediction row is read. */
typedef struct {
    const data_column *column;
    bool given;
    double number;
    int32_t code;
} point_value;

static void list_predictors(buf *out, const point_value *values, size_t count)
{
    for (size_t k = 0; k < count; k++)
        buf_printf(out, "%s'%s'", k ? ", " : "", values[k].column->name);
}

static point_value *find_value(point_value *values, size_t count, const char *name)
{
    for (size_t k = 0; k < count; k++)
        if (strcmp(values[k].column->name, name) == 0)
            return &values[k];
    return NULL;
}

static void unknown_predictor(const design *d, const spec *s, const point_value *values,
                              size_t count, const char *name, src_mark at, error_list *errors)
{
    buf hint;
    buf_init(&hint);
    const char **names = xmalloc((count ? count : 1) * sizeof(char *));
    for (size_t k = 0; k < count; k++)
        names[k] = values[k].column->name;
    const char *close = closest_name(name, names, count);
    free(names);
    if (close) {
        buf_printf(&hint, "did you mean '%s'?", close);
    } else {
        buf_puts(&hint, "its predictors are ");
        list_predictors(&hint, values, count);
    }
    error_at(errors, s->path, at, "'%s' is not a predictor of model '%s'; %s", name,
             d->model->id, hint.data);
    buf_free(&hint);
}

static bool read_level(const spec *s, point_value *v, const char *text, src_mark at,
                       error_list *errors)
{
    const data_column *column = v->column;
    const char **names = NULL;
    int32_t *codes = NULL;
    const spec_column *declared = spec_find_column(s, column->name);
    size_t most = column->n_levels + (declared ? declared->n_levels : 0);
    names = xmalloc((most + 1) * sizeof(char *));
    codes = xmalloc((most + 1) * sizeof(int32_t));
    size_t count = coding_levels(s, column, names, codes);
    bool found = false;
    for (size_t k = 0; k < count && !found; k++)
        if (strcmp(names[k], text) == 0) {
            v->code = codes[k];
            found = true;
        }
    if (!found) {
        buf hint;
        buf_init(&hint);
        hint_closest(&hint, text, names, count, "its levels are");
        error_at(errors, s->path, at, "'%s' is not a level of '%s'%s", text, column->name,
                 hint.data);
        buf_free(&hint);
    }
    free(names);
    free(codes);
    return found;
}

static bool read_value(const spec *s, point_value *v, const char *text, src_mark at,
                       error_list *errors)
{
    if (v->column->kind == DATA_CATEGORY)
        return read_level(s, v, text, at, errors);
    if (v->column->is_date && data_date_value(v->column, s, text, &v->number))
        return true;
    if (v->column->is_date) {
        error_at(errors, s->path, at,
                 "'%s' holds dates, but '%s' is not a date written YYYY-MM-DD (or a date-time "
                 "with its offset)",
                 v->column->name, text);
        return false;
    }
    if (data_parse_number(text, strlen(text), &v->number))
        return true;
    error_at(errors, s->path, at, "'%s' is numeric, but '%s' is not a number", v->column->name,
             text);
    return false;
}

static point_value *predictor_values(const design *d, size_t *count)
{
    point_value *values = xcalloc(d->n_missing ? d->n_missing : 1, sizeof *values);
    *count = 0;
    for (size_t k = 0; k < d->n_missing; k++) {
        const data_column *column = d->missing[k].column;
        if (column != d->response && column != d->weight)
            values[(*count)++] = (point_value){column, false, NAN, -1};
    }
    return values;
}

static bool read_point_values(const design *d, const spec *s, const spec_predict_row *row,
                              point_value *values, size_t count, error_list *errors)
{
    bool ok = true;
    for (size_t i = 0; i < row->n_values; i++) {
        point_value *v = find_value(values, count, row->columns[i]);
        if (!v) {
            unknown_predictor(d, s, values, count, row->columns[i], row->at[i], errors);
            ok = false;
        } else if (v->given) {
            error_at(errors, s->path, row->at[i],
                     "'%s' is given twice in this prediction row; keep one value",
                     row->columns[i]);
            ok = false;
        } else {
            v->given = true;
            ok = read_value(s, v, row->values[i], row->at[i], errors) && ok;
        }
    }
    for (size_t k = 0; k < count; k++)
        if (!values[k].given) {
            error_at(errors, s->path, row->row_at,
                     "this prediction row gives no value for '%s'; model '%s' needs every "
                     "one of its predictors",
                     values[k].column->name, d->model->id);
            ok = false;
        }
    return ok;
}

static void point_entries(const design *d, design_point *p, const point_value *values,
                          size_t count)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        long double value = 1.0L;
        for (size_t k = 0; k < d->coefs[c].n_parts; k++) {
            const design_part *part = &d->coefs[c].parts[k];
            const point_value *v = NULL;
            for (size_t j = 0; j < count && !v; j++)
                if (values[j].column == part->column)
                    v = &values[j];
            value *= part_value(part, v->number, v->code);
        }
        p->x[c] = value;
    }
    p->outside = xcalloc(d->n_ranges ? d->n_ranges : 1, sizeof(design_outside));
    for (size_t r = 0; r < d->n_ranges; r++) {
        const design_range *range = &d->ranges[r];
        for (size_t j = 0; j < count; j++)
            if (values[j].column == range->column &&
                (values[j].number < range->min || values[j].number > range->max))
                p->outside[p->n_outside++] = (design_outside){range, values[j].number};
    }
}

design_point *design_point_new(const design *d, const spec *s, const spec_predict_row *row,
                               error_list *errors)
{
    size_t count;
    point_value *values = predictor_values(d, &count);
    if (!read_point_values(d, s, row, values, count, errors)) {
        free(values);
        return NULL;
    }
    design_point *p = xcalloc(1, sizeof *p);
    p->row = row;
    p->x = xmalloc((d->n_coefs ? d->n_coefs : 1) * sizeof(long double));
    point_entries(d, p, values, count);
    free(values);
    return p;
}

void design_point_free(design_point *p)
{
    if (!p)
        return;
    free(p->x);
    free(p->outside);
    free(p);
}

bool design_column_sum_coded(const design *d, const data_column *column)
{
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t i = 0; i < d->coefs[c].n_parts; i++)
            if (d->coefs[c].parts[i].column == column &&
                d->coefs[c].parts[i].kind == DESIGN_SUM)
                return true;
    return false;
}

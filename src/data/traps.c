/*
 * traps.c — type traps: a column whose kind is inferred, that holds
 * numbers except for a few texts ('NA', '-', '1_000', '0x10', '1,5'),
 * would quietly become a category and build a model nobody meant. When a
 * model, the where filter or a derived column uses such a column, it is an
 * error at its first text cell, naming the texts, counting their cells and
 * saying the fix (list the texts as missing, correct them, or declare the
 * column a category). Columns nothing uses are left as they are.
 *
 * Common practice, no source: "a few" is at most DATA_TRAP_TEXTS distinct
 * texts, and numbers must fill more cells than the texts do.
 */
#include <stdlib.h>
#include <string.h>

#include "internal.h"

#define DATA_TRAP_TEXTS 5

static bool filter_names(const spec_filter *f, const char *name)
{
    if (f->kind == SPEC_FILTER_COMPARE)
        return strcmp(f->column, name) == 0;
    for (size_t i = 0; i < f->n_children; i++)
        if (filter_names(&f->children[i], name))
            return true;
    return false;
}

static bool model_names(const spec_model *m, const char *name)
{
    if (m->broken)
        return false;
    if (strcmp(m->response, name) == 0 || (m->weights && strcmp(m->weights, name) == 0) ||
        (m->order_by && strcmp(m->order_by, name) == 0))
        return true;
    for (size_t i = 0; i < m->n_terms; i++)
        for (size_t k = 0; k < m->terms[i].n_columns; k++)
            if (strcmp(m->terms[i].columns[k], name) == 0)
                return true;
    for (size_t i = 0; i < m->n_variance_columns; i++)
        if (strcmp(m->variance_columns[i], name) == 0)
            return true;
    return false;
}

/* Whether a model, the where filter or a derived column reads the column. */
static bool spec_uses(const spec *s, const char *name)
{
    if (s->where && filter_names(s->where, name))
        return true;
    for (size_t i = 0; i < s->n_derive; i++)
        if (strcmp(s->derive[i].from, name) == 0)
            return true;
    for (size_t m = 0; m < s->n_models; m++)
        if (model_names(&s->models[m], name))
            return true;
    return false;
}

static bool level_is_number(const char *text, char mark)
{
    size_t length = strlen(text);
    while (length && (*text == ' ' || *text == '\t'))
        text++, length--;
    while (length && (text[length - 1] == ' ' || text[length - 1] == '\t'))
        length--;
    double value;
    unsigned flags;
    return length &&
           number_scan(text, text + length, mark, &value, &flags) == text + length;
}

/* Digits, a comma, digits: a number written with a decimal comma. */
static bool decimal_comma_text(const char *text)
{
    const char *comma = strchr(text, ',');
    if (!comma || comma == text || !number_is_digit(comma[1]) || strchr(comma + 1, ','))
        return false;
    for (const char *p = text; *p; p++)
        if (p != comma && !number_is_digit(*p) && !(p == text && *p == '-'))
            return false;
    return true;
}

/* A text as a YAML flow scalar: plain when it is letters, digits, '/',
   '#' inside or '_', else double-quoted. */
static void put_yaml_text(buf *out, const char *text)
{
    bool plain = *text && strchr("#/", *text) == NULL;
    for (const char *p = text; *p && plain; p++)
        plain = (*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') ||
                number_is_digit(*p) || *p == '_' || *p == '/' || *p == '#';
    if (plain) {
        buf_puts(out, text);
        return;
    }
    buf_putc(out, '"');
    for (const char *p = text; *p; p++) {
        if (*p == '"' || *p == '\\')
            buf_putc(out, '\\');
        buf_putc(out, *p);
    }
    buf_putc(out, '"');
}

/* 'a', 'b' and 'c' */
static void put_texts(buf *out, const data_column *c, const size_t *which, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        buf_puts(out, i == 0 ? "" : i + 1 == n ? " and " : ", ");
        buf_putc(out, '\'');
        csv_quote_value(out, c->levels[which[i]], strlen(c->levels[which[i]]));
        buf_putc(out, '\'');
    }
}

/* How to fix the texts: missing words go under data.missing, numbers in
   another notation are corrected, and the column may be a category. */
static void put_fix(buf *out, const data_column *c, const size_t *texts, size_t n,
                    const spec *s)
{
    size_t missing[DATA_TRAP_TEXTS], others[DATA_TRAP_TEXTS], n_missing = 0, n_others = 0;
    bool comma = false;
    for (size_t i = 0; i < n; i++) {
        const char *text = c->levels[texts[i]];
        if (data_missing_word(text, strlen(text)))
            missing[n_missing++] = texts[i];
        else
            others[n_others++] = texts[i];
        comma = comma || decimal_comma_text(text);
    }
    if (n_missing) {
        buf_puts(out, "if ");
        put_texts(out, c, missing, n_missing);
        buf_printf(out, " mean%s no value, add missing: [", n_missing == 1 ? "s" : "");
        for (size_t i = 0; i < n_missing; i++) {
            buf_puts(out, i ? ", " : "");
            put_yaml_text(out, c->levels[missing[i]]);
        }
        buf_puts(out, "] under data; ");
    }
    if (n_others) {
        buf_puts(out, "correct ");
        put_texts(out, c, others, n_others);
        if (comma && s->data.delimiter && s->data.delimiter != ',' &&
            !s->data.decimal_comma)
            buf_puts(out,
                     " (the file writes decimal commas: add decimal: comma under data)");
        else if (comma && !s->data.decimal_comma)
            buf_puts(out, " (write the decimal mark as a point)");
        buf_puts(out, "; ");
    }
    buf_puts(out, "or, if the column is a category, declare it 'kind: category'");
}

/* A column whose every text is a number written with a decimal comma
   (the spec reads decimal points). */
static bool comma_column(const data_column *c, char mark)
{
    bool any = false;
    for (size_t i = 0; i < c->n_levels; i++) {
        if (level_is_number(c->levels[i], mark))
            continue;
        if (!decimal_comma_text(c->levels[i]))
            return false;
        any = true;
    }
    return any;
}

static void comma_error(const data_table *t, const data_column *c, const spec *s,
                        error_list *errors)
{
    buf shown;
    buf_init(&shown);
    csv_quote_value(&shown, c->first_text, strlen(c->first_text));
    error_at(
        errors, t->path,
        (src_mark){(unsigned)c->first_text_line, (unsigned)c->first_text_column},
        "column '%s' holds numbers written with a decimal comma ('%s' here), so it would "
        "be read as a category; %s",
        c->name, shown.data,
        s->data.delimiter != ','
            ? "add decimal: comma under data"
            : "write the decimal marks as points, or save the file with another "
              "delimiter and add decimal: comma under data");
    buf_free(&shown);
}

/* The trap for one category column, if it is one: numbers in more cells
   than the few texts, or numbers with a decimal comma only. */
static bool check_column(const data_table *t, const data_column *c, const spec *s,
                         error_list *errors)
{
    char mark = s->data.decimal_comma ? ',' : '.';
    if (!s->data.decimal_comma && c->first_text && comma_column(c, mark)) {
        comma_error(t, c, s, errors);
        return false;
    }
    size_t *cells = xcalloc(c->n_levels ? c->n_levels : 1, sizeof(size_t));
    for (size_t row = 0; row < t->n_rows; row++)
        if (c->codes[row] >= 0)
            cells[c->codes[row]]++;
    size_t texts[DATA_TRAP_TEXTS], n_texts = 0, text_cells = 0, number_cells = 0;
    bool few = true;
    for (size_t i = 0; i < c->n_levels && few; i++) {
        if (level_is_number(c->levels[i], mark)) {
            number_cells += cells[i];
            continue;
        }
        few = n_texts < DATA_TRAP_TEXTS;
        if (few)
            texts[n_texts++] = i;
        text_cells += cells[i];
    }
    free(cells);
    if (!few || n_texts == 0 || number_cells <= text_cells)
        return true;
    for (size_t i = 1; i < n_texts && c->first_text; i++) /* the first cell's text first */
        if (strcmp(c->levels[texts[i]], c->first_text) == 0) {
            size_t first = texts[i];
            memmove(texts + 1, texts, i * sizeof *texts);
            texts[0] = first;
        }
    buf shown, fix;
    buf_init(&shown);
    buf_init(&fix);
    put_texts(&shown, c, texts, n_texts);
    put_fix(&fix, c, texts, n_texts, s);
    error_at(errors, t->path,
             (src_mark){(unsigned)c->first_text_line, (unsigned)c->first_text_column},
             "column '%s' holds numbers but also %s (%zu cell%s), so it would be read as a "
             "category; %s",
             c->name, shown.data, text_cells,
             text_cells == 1 ? ", this one" : "s, the first of them here", fix.data);
    buf_free(&shown);
    buf_free(&fix);
    return false;
}

bool data_check_type_traps(const data_table *t, const spec *s, error_list *errors)
{
    bool ok = true;
    for (size_t j = 0; j < t->n_file_columns; j++) {
        const data_column *c = &t->columns[j];
        const spec_column *declared = spec_find_column(s, c->name);
        if (c->kind != DATA_CATEGORY || c->first_text_line == 0 ||
            (declared && declared->kind != SPEC_KIND_INFER) || !spec_uses(s, c->name))
            continue;
        ok = check_column(t, c, s, errors) && ok;
    }
    return ok;
}

void data_explain_category(buf *out, const data_table *t, const data_column *c,
                           const spec *s, const char *what_else)
{
    if (!c->first_text) {
        buf_printf(out, "; %s", what_else);
        return;
    }
    buf_puts(out, ": '");
    csv_quote_value(out, c->first_text, strlen(c->first_text));
    buf_printf(out, "' on line %zu of %s is not a number; ", c->first_text_line, t->path);
    if (decimal_comma_text(c->first_text) && !s->data.decimal_comma && s->data.delimiter &&
        s->data.delimiter != ',')
        buf_puts(out, "the file writes decimal commas: add decimal: comma under data, or ");
    else
        buf_puts(out, "correct the values, or ");
    buf_puts(out, what_else);
}

/*
 * residuals_csv.c — residuals_<model>.csv: one row per row of the fit, in
 * data-file order, with the per-row diagnostics. CSV as RFC 4180 has it
 * (CRLF line ends; a field with a comma, quote, CR or LF is quoted, quotes
 * doubled). A text cell a spreadsheet would run as a formula — one that
 * starts with =, +, -, @, a tab or a carriage return and is not a plain
 * number — gets a leading apostrophe (OWASP, "CSV Injection"). Numbers
 * keep the shortest form that reads back exactly; a value that is not
 * finite is an empty cell.
 */
#include <math.h>
#include <string.h>

#include "render.h"

static void text_cell(buf *out, const char *text)
{
    double number;
    bool formula_like = text[0] && strchr("=+-@\t\r", text[0]) &&
                        !data_parse_number(text, strlen(text), &number);
    bool quote = strpbrk(text, ",\"\r\n") != NULL;
    if (quote)
        buf_putc(out, '"');
    if (formula_like)
        buf_putc(out, '\'');
    for (const char *c = text; *c; c++) {
        if (*c == '"')
            buf_putc(out, '"');
        buf_putc(out, *c);
    }
    if (quote)
        buf_putc(out, '"');
}

static void number_cell(buf *out, double value)
{
    if (!isfinite(value))
        return;
    char text[32];
    fmt_roundtrip(text, sizeof text, value);
    buf_puts(out, text);
}

static void flags_cell(buf *out, unsigned flags)
{
    buf ids;
    buf_init(&ids);
    for (size_t k = 0; k < DIAG_N_RULES; k++)
        if (flags & (1u << k))
            buf_printf(&ids, "%s%s", ids.length ? " " : "", diag_rules[k].id);
    text_cell(out, ids.data ? ids.data : "");
    buf_free(&ids);
}

/* The order_by value of table row `row`: a number, or a level's name. */
static void order_value_cell(buf *out, const data_column *column, size_t row)
{
    if (column->kind == DATA_NUMERIC)
        number_cell(out, column->numbers[row]);
    else
        text_cell(out, column->levels[column->codes[row]]);
}

static void header(buf *out, bool weighted, const data_column *order_column)
{
    buf_puts(out, "line,fitted,residual,");
    if (weighted)
        buf_puts(out, "weight,pearson_residual,");
    buf_puts(out, "standardized_residual,studentized_residual,leverage,cooks_distance,"
                  "dffits,flags");
    if (order_column) {
        buf_puts(out, ",order_position,");
        text_cell(out, order_column->name);
    }
    buf_puts(out, "\r\n");
}

void render_residuals_csv(const analysis_model *am, const data_table *t, buf *out)
{
    const diagnostics *g = am->diagnostics;
    const diag_influence *inf = &g->influence;
    const design *d = am->design;
    const data_column *order_column = g->order_by ? data_find(t, g->order_by) : NULL;
    size_t *position = xmalloc((inf->n ? inf->n : 1) * sizeof(size_t));
    for (size_t k = 0; k < inf->n; k++)
        position[g->order[k]] = k + 1;
    header(out, g->weighted, order_column);
    for (size_t i = 0; i < inf->n; i++) {
        buf_printf(out, "%u,", (unsigned)inf->lines[i]);
        number_cell(out, gsl_vector_get(am->fit->fitted, i));
        buf_putc(out, ',');
        number_cell(out, gsl_vector_get(am->fit->residuals, i));
        buf_putc(out, ',');
        if (g->weighted) {
            number_cell(out, gsl_vector_get(d->weights, i));
            buf_putc(out, ',');
            number_cell(out, diag_influence_residual(inf, i));
            buf_putc(out, ',');
        }
        diag_row_measures m = diag_influence_row(inf, i);
        const double values[] = {m.standardized, m.studentized, inf->leverage[i], m.cooks,
                                 m.dffits};
        for (size_t k = 0; k < sizeof values / sizeof values[0]; k++) {
            number_cell(out, values[k]);
            buf_putc(out, ',');
        }
        flags_cell(out, inf->flags[i]);
        if (order_column) {
            buf_printf(out, ",%zu,", position[i]);
            order_value_cell(out, order_column, design_table_row(d, i));
        }
        buf_puts(out, "\r\n");
    }
    free(position);
}

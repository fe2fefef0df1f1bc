/*
 * coefficients.c — each coefficient's estimate with its confidence
 * interval. Coefficients are in different units (per day, per unit of a
 * ratio, per category level) and can differ in size by orders of
 * magnitude, so one shared axis would shrink most intervals to dots. Each
 * coefficient therefore gets its own row and its own axis segment, always
 * including zero, and the numbers are written beside it; only the position
 * of zero within a row, not lengths across rows, is to be compared.
 */
#include "plot.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define ROW_HEIGHT 46.0
#define LABEL_FONT 12.0
#define NUMBER_FONT 11.0
#define SCALE_FONT 9.5
#define LABEL_MAX_WIDTH 320.0
#define SEGMENT_MIN 260.0

/* text cut with an ellipsis to fit width at size. */
static void fit_text(char *out, size_t size, const char *text, double font, double width)
{
    snprintf(out, size, "%s", text);
    size_t length = strlen(out);
    while (length > 0 && svg_text_width(out, font) > width) {
        do
            length--;
        while (length > 0 && (out[length] & 0xc0) == 0x80);
        if (length + 4 > size)
            continue;
        memcpy(out + length, "\xe2\x80\xa6", 4);
    }
}

/* The unit of row c's numbers: the response's; with a logged response a
   percentage, and the intercept in the response's original unit. */
static const char *row_unit(const figures_input *in, size_t c, bool *attached)
{
    bool intercept = c == in->coef_intercept;
    *attached = in->coef_percent && !intercept;
    if (in->coef_percent)
        return intercept ? in->original.unit : "%";
    return in->response.unit;
}

static void put_with_unit(buf *b, const figures_input *in, double value, const char *unit,
                          bool attached)
{
    put_number(b, in, value);
    if (unit)
        buf_printf(b, "%s%s", attached ? "" : " ", unit);
}

static void interval_text(buf *b, const figures_input *in, size_t c)
{
    if (!isfinite(in->estimate[c])) {
        buf_puts(b, "not estimable");
        return;
    }
    bool attached;
    const char *unit = row_unit(in, c, &attached);
    put_with_unit(b, in, in->estimate[c], unit, attached);
    if (isfinite(in->ci_low[c]) && isfinite(in->ci_high[c])) {
        buf_puts(b, " (");
        put_with_unit(b, in, in->ci_low[c], attached ? unit : NULL, attached);
        buf_puts(b, " to ");
        put_with_unit(b, in, in->ci_high[c], unit, attached);
        buf_puts(b, ")");
    }
}

static void draw_row(figure *fig, size_t c, double y, double x0, double x1)
{
    const figures_input *in = fig->in;
    svg_doc *d = &fig->doc;
    buf *b = &d->body;
    double est = in->estimate[c], lo = in->ci_low[c], hi = in->ci_high[c];
    if (!isfinite(est)) {
        svg_text(d, (x0 + x1) / 2, y + 4, NUMBER_FONT, "middle", "fill=\"#555555\"",
                 "aliased with other columns: no estimate");
        return;
    }
    bool interval = isfinite(lo) && isfinite(hi);
    double a = fmin(interval ? lo : est, 0.0), z = fmax(interval ? hi : est, 0.0);
    plot_panel p;
    memset(&p, 0, sizeof p);
    figures_ticks_make(a, z, 4, &p.x);
    p.left = x0;
    p.width = x1 - x0;
    /* Scale: a baseline with ticks and small labels under the interval. */
    double base = y + 10;
    svg_path(b, "<path fill=\"none\" stroke=\"#999999\" d=\"M@ @H@", x0, base, x1);
    for (size_t k = 0; k < p.x.count; k++)
        svg_path(b, "M@ @v3", panel_x(&p, p.x.values[k]), base);
    buf_puts(b, "\"/>\n<g fill=\"#555555\">\n");
    for (size_t k = 0; k < p.x.count; k++)
        svg_text(d, panel_x(&p, p.x.values[k]), base + 13, SCALE_FONT, "middle", NULL,
                 p.x.labels[k]);
    buf_puts(b, "</g>\n");
    /* Zero, dashed, across the row. */
    double zero = panel_x(&p, 0.0);
    svg_path(b, "<path stroke=\"#222222\" stroke-dasharray=\"4 3\" d=\"M@ @V@\"/>\n", zero,
             y - 14, base);
    if (interval) {
        double l = panel_x(&p, lo), h = panel_x(&p, hi);
        buf_printf(b, "<path fill=\"none\" stroke=\"%s\" stroke-width=\"2.2\" d=\"",
                   plot_colour[0]);
        svg_path(b, "M@ @H@M@ @v10M@ @v10\"/>\n", l, y, h, l, y - 5, h, y - 5);
    }
    bool excludes = interval && (lo > 0.0 || hi < 0.0);
    svg_path(b, "<circle cx=\"@\" cy=\"@\"", panel_x(&p, est), y);
    buf_printf(b, " r=\"4.2\" fill=\"%s\" stroke=\"%s\" stroke-width=\"1.5\"/>\n",
               excludes ? plot_colour[0] : "#ffffff", plot_colour[0]);
}

void figure_coefficient_intervals(figure *fig)
{
    const figures_input *in = fig->in;
    svg_doc *d = &fig->doc;
    char level[32];
    percent_text(level, sizeof level, in->level);
    buf_puts(
        &fig->title,
        "How precisely is each coefficient estimated, and is zero inside its interval?");
    plot_key key = {.count = 0};
    char text[96];
    snprintf(text, sizeof text, "%s%% confidence interval", level);
    key_line(&key, plot_colour[0], 2.2, "", text);
    /* The key lists the kinds of dot the rows show, no others. */
    bool any_excluding = false, any_including = false;
    for (size_t c = 0; c < in->n_coefs; c++) {
        if (!isfinite(in->estimate[c]))
            continue;
        bool interval = isfinite(in->ci_low[c]) && isfinite(in->ci_high[c]);
        bool excludes = interval && (in->ci_low[c] > 0.0 || in->ci_high[c] < 0.0);
        any_excluding = any_excluding || excludes;
        any_including = any_including || !excludes;
    }
    if (any_excluding)
        key_dot(&key, true, "estimate, interval excludes zero");
    if (any_including)
        key_dot(&key, false, "estimate, interval includes zero");
    key_line(&key, PLOT_INK, 1.0, "4 3", "zero, on each row's own scale");
    double top = canvas_header(d, fig->title.data, &key) + 18;

    /* Columns: labels, the interval, the numbers. */
    double label_width = 0.0, number_width = 0.0;
    buf numbers;
    buf_init(&numbers);
    for (size_t c = 0; c < in->n_coefs; c++) {
        label_width = fmax(label_width, svg_text_width(in->coef_labels[c], LABEL_FONT));
        buf_reset(&numbers);
        interval_text(&numbers, in, c);
        number_width = fmax(number_width, svg_text_width(numbers.data, NUMBER_FONT));
    }
    label_width = fmin(label_width, LABEL_MAX_WIDTH);
    number_width = fmin(number_width, 240.0);
    /* Wider than the others when long labels would squeeze the intervals. */
    d->width = fmax(d->width, 16 + label_width + 16 + SEGMENT_MIN + 16 + number_width + 16);
    double x0 = 16 + label_width + 16, x1 = d->width - 16 - number_width - 16;
    d->height = top + ROW_HEIGHT * (double)in->n_coefs + 8;

    buf *b = &d->body;
    size_t excluding = 0;
    for (size_t c = 0; c < in->n_coefs; c++) {
        double row_top = top + ROW_HEIGHT * (double)c, y = row_top + 18;
        if (c % 2 == 0) {
            svg_path(b,
                     "<rect x=\"8\" y=\"@\" width=\"@\" height=\"@\" fill=\"#f4f4f4\"/>\n",
                     row_top - 4, d->width - 16, ROW_HEIGHT);
        }
        char label[160];
        fit_text(label, sizeof label, in->coef_labels[c], LABEL_FONT, label_width);
        svg_text(d, 16 + label_width, y + 4, LABEL_FONT, "end", "fill=\"#111111\"", label);
        draw_row(fig, c, y, x0, x1);
        buf_reset(&numbers);
        interval_text(&numbers, in, c);
        svg_text(d, d->width - 16, y + 4, NUMBER_FONT, "end", "fill=\"#222222\"",
                 numbers.data);
        bool interval = isfinite(in->ci_low[c]) && isfinite(in->ci_high[c]);
        excluding += interval && (in->ci_low[c] > 0.0 || in->ci_high[c] < 0.0);
    }
    buf_free(&numbers);

    buf_printf(
        &fig->caption,
        "One row per coefficient: its estimate (dot) and %s%% confidence interval "
        "(bar), with the numbers on the right. Each row has its own scale, because "
        "the coefficients are in different units and can differ in size by orders of "
        "magnitude; on a shared axis most intervals would shrink to dots. Read each "
        "interval against the dashed zero line of its own row: a filled dot marks an "
        "interval that excludes zero, an open dot one that includes it, so that no "
        "association is consistent with the data. Lengths are comparable within a row, not "
        "across rows. The intervals are not adjusted for looking at several at once.",
        level);
    bool stepped = false;
    for (size_t c = 0; c < in->n_coefs; c++)
        stepped = stepped || strstr(in->coef_labels[c], ", per ") != NULL;
    if (stepped)
        buf_puts(&fig->caption,
                 " A numeric predictor's row is per the step the report's sentences use "
                 "(\"per 0.05\"), so its numbers are the change that step brings.");
    if (in->coef_conditional)
        buf_puts(&fig->caption,
                 " The model includes interactions or powers: the row of a column that "
                 "also enters one is its coefficient with the other columns of that term "
                 "at zero (numeric) or at their reference level (category), which may lie "
                 "outside the data; the sentences read it at values that occur instead.");
    if (in->coef_percent)
        buf_printf(&fig->caption,
                   " The model is fitted to the logarithm of %s; each row shows the "
                   "percentage change in %s itself that its coefficient stands for "
                   "(100 \xc3\x97 (e^b \xe2\x88\x92 1)), and the baseline value as %s "
                   "itself, so zero change is 0%%.",
                   in->original.label ? in->original.label : in->original.name,
                   in->original.label ? in->original.label : in->original.name,
                   in->original.label ? in->original.label : in->original.name);
    buf_printf(
        &fig->alt,
        "Coefficient plot of %zu coefficients with %s%% confidence intervals, each on "
        "its own scale; %zu interval%s exclude%s zero.",
        in->n_coefs, level, excluding, excluding == 1 ? "" : "s",
        excluding == 1 ? "s" : "");
}

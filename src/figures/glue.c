/*
 * glue.c — fills the figures' input from the spec, the data table, one
 * model's design and its fit: rows, residuals, influence measures, the
 * coefficient intervals, and the model's fitted curve along each numeric
 * predictor for each level of a grouping category.
 *
 * The influence measures (leverage, flagged rows, the data-file lines) are
 * the diagnostics stage's, borrowed; the standardized and studentized
 * residuals and Cook's distance are its per-row function, called back.
 */
#include "figures.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define CURVE_POINTS 80

struct figures_storage {
    char **texts; /* strings made here: coefficient labels, axis words */
    size_t n_texts;
    const char **coef_labels;
    double *estimate, *ci_low, *ci_high;
    int32_t *group;
    const char **fixed_names, **fixed_levels;
    figures_predictor *predictors;
    double **arrays; /* the predictors' values and curves */
    size_t n_arrays;
};

static const char *storage_text(figures_storage *st, buf *text)
{
    st->texts = xrealloc(st->texts, (st->n_texts + 1) * sizeof *st->texts);
    return st->texts[st->n_texts++] = buf_detach(text);
}

static double *storage_array(figures_storage *st, size_t count)
{
    st->arrays = xrealloc(st->arrays, (st->n_arrays + 1) * sizeof *st->arrays);
    return st->arrays[st->n_arrays++] = xmalloc((count ? count : 1) * sizeof(double));
}

/* A numeric column's values on the design's rows: the column's own array
   when the design uses every row of the table in order (no copy of n
   values), else a copy in storage. */
static const double *row_values(figures_storage *st, const design *d,
                                const data_column *column)
{
    if (d->n_dropped == 0)
        return column->numbers;
    double *values = storage_array(st, d->n_used);
    for (size_t i = 0; i < d->n_used; i++)
        values[i] = column->numbers[design_table_row(d, i)];
    return values;
}

/* The value of one design column at a setting of the model's columns: each
   numeric column at numbers[k], each category at level codes[k]. Follows
   the coding documented in design.h (treatment indicators). */
typedef struct {
    const data_column **columns;
    double *numbers;
    int32_t *codes;
    size_t count;
} setting;

static double column_value(const design_coef *coef, const setting *at)
{
    double value = 1.0;
    for (size_t k = 0; k < coef->n_parts; k++) {
        const design_part *part = &coef->parts[k];
        size_t j = 0;
        while (j < at->count && at->columns[j] != part->column)
            j++;
        if (part->level)
            value *= at->codes[j] == part->code ? 1.0 : 0.0;
        else
            value *= pow(at->numbers[j], part->power);
    }
    return value;
}

static double predict(const design *d, const fit_result *f, const setting *at)
{
    double sum = 0.0;
    for (size_t c = 0; c < d->n_coefs; c++)
        if (f->coefs[c].estimable)
            sum += f->coefs[c].estimate * column_value(&d->coefs[c], at);
    return sum;
}

/* The category that colours response_by_predictor: the first one in an
   interaction with a numeric column, else the first category in the model. */
static const data_column *grouping_column(const design *d)
{
    const data_column *first = NULL;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const data_column *category = NULL;
        bool numeric = false;
        for (size_t k = 0; k < d->coefs[c].n_parts; k++) {
            const design_part *part = &d->coefs[c].parts[k];
            if (part->level && !category)
                category = part->column;
            numeric = numeric || !part->level;
        }
        if (category && numeric)
            return category;
        if (category && !first)
            first = category;
    }
    return first;
}

/* Which kinds of term the captions must speak of: main effects that a
   higher term makes conditional, interactions of the grouping category
   with a numeric predictor, numeric × numeric products and powers. */
static void term_kinds(figures_input *in, const design *d)
{
    const data_column *grouping = grouping_column(d);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        size_t numeric = 0;
        bool group = false;
        for (size_t k = 0; k < coef->n_parts; k++) {
            const design_part *part = &coef->parts[k];
            numeric += part->level ? 0 : (size_t)part->power;
            group = group || part->column == grouping;
        }
        in->group_interacts = in->group_interacts || (group && numeric > 0);
        in->numeric_interacts = in->numeric_interacts || numeric > 1;
        if (coef->n_parts < 2 && numeric < 2)
            continue;
        /* A product or a power: its lower terms are read at zero. */
        for (size_t j = 0; j < d->n_coefs; j++)
            for (size_t k = 0; k < coef->n_parts; k++)
                in->coef_conditional =
                    in->coef_conditional ||
                    (j != c && d->coefs[j].n_parts == 1 &&
                     d->coefs[j].parts[0].column == coef->parts[k].column &&
                     d->coefs[j].parts[0].power == 1);
    }
}

/* Every column the model uses, in order of first appearance. */
static void model_columns(const design *d, setting *at)
{
    size_t capacity = 0;
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t k = 0; k < d->coefs[c].n_parts; k++) {
            const data_column *column = d->coefs[c].parts[k].column;
            bool seen = false;
            for (size_t j = 0; j < at->count; j++)
                seen = seen || at->columns[j] == column;
            if (seen)
                continue;
            xgrow((void **)&at->columns, &capacity, at->count + 1, sizeof *at->columns);
            at->columns[at->count++] = column;
        }
    at->numbers = xcalloc(at->count ? at->count : 1, sizeof *at->numbers);
    at->codes = xcalloc(at->count ? at->count : 1, sizeof *at->codes);
}

/* A column's name, label and unit; a derived column without a label of its
   own is named from its source, so that its axes have words and a unit
   ("log of delivery cost (log EUR)"). */
static figures_quantity quantity_of(const spec *s, figures_storage *st, const char *name)
{
    const spec_column *declared = spec_find_column(s, name);
    figures_quantity q = {name, declared ? declared->label : NULL,
                          declared ? declared->unit : NULL};
    const spec_derive *derive = spec_find_derive(s, name);
    if (q.label || !derive || !st)
        return q;
    figures_quantity from = quantity_of(s, st, derive->from);
    static const char *const before[] = {"log of ",      "log10 of ", "square root of ",
                                         "square of ",   "1 / ",      "",
                                         "standardized "};
    static const char *const after[] = {"", "", "", "", "", " (centred)", ""};
    buf text;
    buf_init(&text);
    buf_printf(&text, "%s%s%s", before[derive->transform],
               from.label ? from.label : from.name, after[derive->transform]);
    q.label = storage_text(st, &text);
    if (from.unit && derive->transform == SPEC_DERIVE_CENTER) {
        q.unit = from.unit;
    } else if (from.unit && (derive->transform == SPEC_DERIVE_LOG ||
                             derive->transform == SPEC_DERIVE_LOG10)) {
        buf_init(&text);
        buf_printf(&text, "%s %s", derive->transform == SPEC_DERIVE_LOG ? "log" : "log10",
                   from.unit);
        q.unit = storage_text(st, &text);
    }
    return q;
}

/* The range of predictor j (setting slot) within each level of the
   grouping column (slot g; one range over every row when there is none),
   in one pass over the rows. */
static void level_ranges(const design *d, const setting *at, size_t j, size_t g,
                         size_t n_curves, double *lo, double *hi)
{
    const data_column *column = at->columns[j];
    const int32_t *codes = g < at->count ? at->columns[g]->codes : NULL;
    for (size_t level = 0; level < n_curves; level++) {
        lo[level] = INFINITY;
        hi[level] = -INFINITY;
    }
    for (size_t i = 0; i < d->n_used; i++) {
        size_t row = design_table_row(d, i);
        int32_t level = codes ? codes[row] : 0;
        if (level < 0 || (size_t)level >= n_curves)
            continue;
        lo[level] = fmin(lo[level], column->numbers[row]);
        hi[level] = fmax(hi[level], column->numbers[row]);
    }
    for (size_t level = 1; !codes && level < n_curves; level++) {
        lo[level] = lo[0]; /* no grouping slot: every curve spans every row */
        hi[level] = hi[0];
    }
}

/* The fitted curve of predictor j (setting slot) for level `level` of the
   grouping column (slot g, or none), over the range lo … hi of the
   predictor in that level's rows. */
static void fitted_curve(const design *d, const fit_result *f, setting *at, size_t j,
                         size_t g, int32_t level, double lo, double hi, double *cx,
                         double *cy)
{
    double saved = at->numbers[j];
    if (g < at->count)
        at->codes[g] = level;
    for (size_t k = 0; k < CURVE_POINTS; k++) {
        if (lo > hi) {
            cx[k] = cy[k] = NAN;
            continue;
        }
        at->numbers[j] = lo + (hi - lo) * (double)k / (CURVE_POINTS - 1);
        cx[k] = at->numbers[j];
        cy[k] = predict(d, f, at);
    }
    at->numbers[j] = saved;
}

static void fill_predictors(figures_input *in, const spec *s, const design *d,
                            const fit_result *f)
{
    figures_storage *st = in->storage;
    setting at = {NULL, NULL, NULL, 0};
    model_columns(d, &at);
    const data_column *grouping = grouping_column(d);
    size_t g = at.count, n_fixed = 0, n_numeric = 0;
    for (size_t j = 0; j < at.count; j++) {
        const data_column *column = at.columns[j];
        if (column->kind == DATA_CATEGORY) {
            at.codes[j] = (int32_t)column->reference;
            if (column == grouping)
                g = j;
            continue;
        }
        double sum = 0.0;
        for (size_t i = 0; i < d->n_used; i++)
            sum += column->numbers[design_table_row(d, i)];
        at.numbers[j] = sum / (double)d->n_used;
        n_numeric++;
    }
    st->fixed_names = xcalloc(at.count + 1, sizeof(char *));
    st->fixed_levels = xcalloc(at.count + 1, sizeof(char *));
    st->predictors = xcalloc(n_numeric + 1, sizeof *st->predictors);
    size_t n_curves = grouping ? grouping->n_levels : 1;
    for (size_t j = 0; j < at.count; j++) {
        const data_column *column = at.columns[j];
        if (column->kind == DATA_CATEGORY) {
            if (j != g) {
                st->fixed_names[n_fixed] = column->name;
                st->fixed_levels[n_fixed++] = column->levels[column->reference];
            }
            continue;
        }
        figures_predictor *p = &st->predictors[in->n_predictors++];
        p->column = quantity_of(s, st, column->name);
        p->values = row_values(st, d, column);
        p->mean = at.numbers[j];
        p->n_grid = CURVE_POINTS;
        double *cx = storage_array(st, n_curves * CURVE_POINTS);
        double *cy = storage_array(st, n_curves * CURVE_POINTS);
        double *lo = xmalloc(2 * n_curves * sizeof *lo), *hi = lo + n_curves;
        level_ranges(d, &at, j, g, n_curves, lo, hi);
        for (size_t level = 0; level < n_curves; level++)
            fitted_curve(d, f, &at, j, g, (int32_t)level, lo[level], hi[level],
                         cx + level * CURVE_POINTS, cy + level * CURVE_POINTS);
        free(lo);
        p->curve_x = cx;
        p->curve_y = cy;
    }
    in->predictors = st->predictors;
    in->fixed_names = st->fixed_names;
    in->fixed_levels = st->fixed_levels;
    in->n_fixed = n_fixed;
    if (grouping) {
        in->group_name = grouping->name;
        in->group_levels = (const char *const *)grouping->levels;
        in->n_levels = grouping->n_levels;
        st->group = xmalloc(d->n_used * sizeof *st->group);
        for (size_t i = 0; i < d->n_used; i++)
            st->group[i] = grouping->codes[design_table_row(d, i)];
        in->group = st->group;
    }
    free(at.columns);
    free(at.numbers);
    free(at.codes);
}

/* The step sentences speak of for a numeric column (its spec step, else
   1) and its words: "press speed, per 100 tablets/min". */
static double coefficient_step(const spec *s, figures_storage *st, const design_coef *coef,
                               buf *label)
{
    const design_part *part = coef->n_parts == 1 ? &coef->parts[0] : NULL;
    if (!part || part->level || part->power != 1)
        return 1.0;
    const spec_column *declared = spec_find_column(s, part->column->name);
    double step = declared && declared->step > 0 ? declared->step : 1.0;
    figures_quantity q = quantity_of(s, st, part->column->name);
    char number[64];
    figures_format_number(number, sizeof number, step, 6);
    /* The shortest form: 6 significant digits and no trailing zeros. */
    char *dot = strchr(number, '.');
    if (dot) {
        char *end = number + strlen(number);
        while (end > dot && (end[-1] == '0' || end[-1] == '.'))
            *--end = '\0';
    }
    /* The unit words of the sentences: a step of a percentage is in
       percentage points. */
    bool percent = q.unit && strcmp(q.unit, "%") == 0;
    const char *unit = percent  ? (step == 1.0 ? "percentage point" : "percentage points")
                       : q.unit ? q.unit
                       : step == 1.0 ? "unit"
                                     : "units";
    buf_printf(label, "%s, per %s %s", q.label ? q.label : q.name, number, unit);
    return step;
}

static void fill_coefficients(figures_input *in, const spec *s, const design *d,
                              const fit_result *f)
{
    figures_storage *st = in->storage;
    size_t p = d->n_coefs;
    st->coef_labels = xmalloc((p ? p : 1) * sizeof(char *));
    st->estimate = xmalloc((p ? p : 1) * sizeof(double));
    st->ci_low = xmalloc((p ? p : 1) * sizeof(double));
    st->ci_high = xmalloc((p ? p : 1) * sizeof(double));
    const spec_derive *logged = spec_find_derive(s, d->model->response);
    int log_kind = logged && (logged->transform == SPEC_DERIVE_LOG ||
                              logged->transform == SPEC_DERIVE_LOG10)
                       ? (int)logged->transform
                       : -1;
    for (size_t c = 0; c < p; c++) {
        buf label;
        buf_init(&label);
        double step = coefficient_step(s, st, &d->coefs[c], &label);
        st->coef_labels[c] = label.length ? storage_text(st, &label) : d->coefs[c].label;
        buf_free(&label);
        bool ok = f->coefs[c].estimable;
        double values[3] = {f->coefs[c].estimate, f->coefs[c].ci_low, f->coefs[c].ci_high};
        for (int k = 0; k < 3; k++) {
            double v = values[k] * step;
            /* A logged response reads on its own scale: a coefficient as the
               percentage change it multiplies the response by, the
               intercept as the response itself. */
            if (log_kind >= 0) {
                double factor = log_kind == SPEC_DERIVE_LOG ? exp(v) : pow(10.0, v);
                v = d->coefs[c].n_parts == 0 ? factor : 100.0 * (factor - 1.0);
            }
            values[k] = ok ? v : NAN;
        }
        st->estimate[c] = values[0];
        st->ci_low[c] = values[1];
        st->ci_high[c] = values[2];
    }
    in->coef_percent = log_kind >= 0;
    in->coef_intercept = SIZE_MAX;
    for (size_t c = 0; c < p; c++)
        if (d->coefs[c].n_parts == 0)
            in->coef_intercept = c;
    in->n_coefs = p;
    in->coef_labels = st->coef_labels;
    term_kinds(in, d);
    in->estimate = st->estimate;
    in->ci_low = st->ci_low;
    in->ci_high = st->ci_high;
}

/* A logged response: the name and unit of the quantity it is the log of,
   for the figures' second axes on that scale. */
static void fill_original_scale(figures_input *in, const spec *s, const design *d)
{
    const spec_derive *logged = spec_find_derive(s, d->model->response);
    if (!logged ||
        (logged->transform != SPEC_DERIVE_LOG && logged->transform != SPEC_DERIVE_LOG10))
        return;
    in->log_base = logged->transform == SPEC_DERIVE_LOG ? exp(1.0) : 10.0;
    in->original = quantity_of(s, in->storage, logged->from);
}

/* The run order and the order_by column's value of each row, when the
   model gives order_by. */
static void fill_order(figures_input *in, const spec *s, const data_table *t,
                       const design *d, const diagnostics *g)
{
    const data_column *column = g->order_by ? data_find(t, g->order_by) : NULL;
    if (!column)
        return;
    in->order = g->order;
    in->order_by = quantity_of(s, in->storage, column->name);
    if (column->kind != DATA_NUMERIC)
        return; /* a category orders by level: the figure shows positions */
    in->order_values = row_values(in->storage, d, column);
}

static figures_row_measures row_measures(const void *influence, size_t i)
{
    diag_row_measures m = diag_influence_row(influence, i);
    return (figures_row_measures){m.standardized, m.studentized, m.cooks};
}

figures_input *figures_input_new(const spec *s, const data_table *t, const design *d,
                                 const fit_result *f, const diagnostics *g,
                                 size_t model_index)
{
    figures_input *in = xcalloc(1, sizeof *in);
    figures_storage *st = in->storage = xcalloc(1, sizeof *st);
    size_t n = d->n_used;
    in->model_id = d->model->id;
    in->model_index = model_index;
    in->n = n;
    in->lines = g->influence.lines;
    in->observed = d->y->data;
    in->fitted = f->fitted->data;
    in->residuals = f->residuals->data;
    in->leverage = g->influence.leverage;
    in->measures = row_measures;
    in->measures_source = &g->influence;
    in->flagged = g->influence.flags;
    in->leverage_bound = g->influence.threshold[0];
    in->outlier_bound = g->influence.threshold[1];
    in->large_bound = g->influence.threshold[2];
    fill_order(in, s, t, d, g);
    in->sigma = f->sigma;
    in->n_params = f->rank;
    in->level = f->level;
    in->digits = s->report.significant_digits > 0 ? s->report.significant_digits : 4;
    in->response = quantity_of(s, st, d->model->response);
    fill_original_scale(in, s, d);
    fill_coefficients(in, s, d, f);
    fill_predictors(in, s, d, f);
    return in;
}

void figures_input_free(figures_input *in)
{
    if (!in)
        return;
    figures_storage *st = in->storage;
    if (st) {
        for (size_t k = 0; k < st->n_texts; k++)
            free(st->texts[k]);
        free(st->texts);
        free(st->coef_labels);
        free(st->estimate);
        free(st->ci_low);
        free(st->ci_high);
        free(st->group);
        free(st->fixed_names);
        free(st->fixed_levels);
        free(st->predictors);
        for (size_t k = 0; k < st->n_arrays; k++)
            free(st->arrays[k]);
        free(st->arrays);
        free(st);
    }
    free(in);
}

/*
 * readings.c — coefficients read at representative values. A coefficient
 * whose columns also enter a higher term has no single reading; it is read
 * at settings that occur (every level of a category partner; for a numeric
 * partner the spec's `at` values, else the median of the fitted rows). Each
 * reading is a linear combination Σ w_c β_c of the coefficients, its
 * standard error √(wᵀVw) under the covariance V the report leads with and
 * its t interval on the residual degrees of freedom (fit_combination; the
 * usual Wald inference for a linear function of the estimates, e.g.
 * Seber & Lee, Linear Regression Analysis, 2nd ed., §4.3). With f(x) the
 * fitted surface, column c a product of factors, the weights are the
 * operator of the reading applied to column c at the setting:
 *   slope of x:          ∂/∂x   (k x^(k−1) × the other factors for x^k);
 *   level L of g:        Δ_g    (column at L − column at the reference; sum
 *                                coding: − the unweighted average over the
 *                                levels the design uses);
 *   a product's own:     the composition of the operators of its parts
 *                        (∂²/∂x∂z, Δ_g ∂/∂x, Δ_g Δ_h, …);
 *   a level's value:     the column itself with g at L (no intercept).
 * Computation only: the narrator words these numbers and results.json
 * copies them.
 */
#include "fit.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "../util/util.h"

#define MAX_LEVELS 64

/* The columns a reading depends on besides its own, and the values each
   takes. */
typedef struct {
    const data_column *column;
    const design_range *range;
    int32_t codes[MAX_LEVELS]; /* category: the levels read */
    size_t n_values;
} partner;

typedef struct {
    partner partners[FIT_READING_MAX_AT];
    size_t n;
} partners;

/* What the reading does to the column of one category or numeric: the
   columns of S, each with its operator. */
typedef struct {
    const data_column *column;
    int32_t level;   /* category: Δ at this level; numeric: -1 (∂/∂x) */
    bool against_average; /* sum coding: Δ against the average of the levels */
} operation;

typedef struct {
    operation ops[4];
    size_t n;
} operations;

static const design_range *range_of(const design *d, const data_column *column)
{
    for (size_t k = 0; k < d->n_ranges; k++)
        if (d->ranges[k].column == column)
            return &d->ranges[k];
    return NULL;
}

static bool coef_has(const design_coef *coef, const data_column *column)
{
    for (size_t i = 0; i < coef->n_parts; i++)
        if (coef->parts[i].column == column)
            return true;
    return false;
}

/* The levels of a category that the design uses and that have rows: the
   reference (or the omitted level of sum coding) first, then level order. */
static size_t category_levels(const design *d, const data_column *column, int32_t *codes)
{
    bool seen[MAX_LEVELS] = {false};
    int32_t first = -1;
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t i = 0; i < d->coefs[c].n_parts; i++) {
            const design_part *part = &d->coefs[c].parts[i];
            if (part->column != column || part->code < 0 || part->code >= MAX_LEVELS)
                continue;
            seen[part->code] = true;
            if (part->kind == DESIGN_SUM && part->omitted_code >= 0 &&
                part->omitted_code < MAX_LEVELS) {
                seen[part->omitted_code] = true;
                if (first < 0)
                    first = part->omitted_code;
            } else if (part->kind == DESIGN_TREATMENT && column->reference < MAX_LEVELS) {
                seen[column->reference] = true;
                if (first < 0)
                    first = (int32_t)column->reference;
            } else if (part->kind == DESIGN_ALL_LEVELS && first < 0 &&
                       column->reference < MAX_LEVELS) {
                first = (int32_t)column->reference;
            }
        }
    /* Levels without rows are not settings that occur. */
    for (size_t k = 0; k < d->n_empty_levels; k++)
        for (int32_t c = 0; c < MAX_LEVELS && c < (int32_t)column->n_levels; c++)
            if (d->empty_levels[k].column == column &&
                strcmp(column->levels[c], d->empty_levels[k].level) == 0)
                seen[c] = false;
    size_t n = 0;
    if (first >= 0 && seen[first])
        codes[n++] = first;
    for (int32_t k = 0; k < MAX_LEVELS; k++)
        if (seen[k] && k != first)
            codes[n++] = k;
    return n;
}

/* Adds column to ps with every value it is read at (one value, single,
   when not -2: a category held at that level or averaged). */
static void add_partner(const design *d, partners *ps, const data_column *column,
                        int32_t single)
{
    for (size_t k = 0; k < ps->n; k++)
        if (ps->partners[k].column == column)
            return;
    if (ps->n == FIT_READING_MAX_AT)
        return;
    partner *p = &ps->partners[ps->n];
    memset(p, 0, sizeof *p);
    p->column = column;
    if (column->kind == DATA_CATEGORY && single != -2) {
        p->codes[0] = single;
        p->n_values = 1;
    } else if (column->kind == DATA_CATEGORY) {
        p->n_values = category_levels(d, column, p->codes);
    } else {
        p->range = range_of(d, column);
        p->n_values = p->range ? p->range->n_at : 0;
    }
    if (p->n_values > 0)
        ps->n++;
}

static bool in_operations(const operations *ops, const data_column *column)
{
    for (size_t k = 0; k < ops->n; k++)
        if (ops->ops[k].column == column)
            return true;
    return false;
}

static bool has_all(const design_coef *coef, const operations *ops)
{
    for (size_t k = 0; k < ops->n; k++)
        if (!coef_has(coef, ops->ops[k].column))
            return false;
    return true;
}

/* The columns the reading under ops depends on: every other column of a
   coefficient that holds all of the ops' columns, and an op's own numeric
   column when it appears there with a power (a polynomial). */
static void find_partners(const design *d, const operations *ops, partners *ps)
{
    ps->n = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        if (!has_all(coef, ops))
            continue;
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            if (!in_operations(ops, part->column) || part->power > 1)
                add_partner(d, ps, part->column, -2);
        }
    }
}

/* Which value of each partner a setting takes. */
typedef struct {
    const partners *ps;
    size_t index[FIT_READING_MAX_AT];
} setting;

static const partner *partner_of(const setting *s, const data_column *column, size_t *k)
{
    for (size_t j = 0; j < s->ps->n; j++)
        if (s->ps->partners[j].column == column) {
            *k = j;
            return &s->ps->partners[j];
        }
    return NULL;
}

/* A category part at level code (-1: averaged over the levels). */
static double level_value(const design_part *part, int32_t code)
{
    if (code == -1)
        return part->kind == DESIGN_SUM ? 0.0 : NAN; /* only sum columns average */
    double v = code == part->code;
    if (part->kind == DESIGN_SUM)
        v -= code == part->omitted_code;
    return v;
}

/* One factor of a column at the setting, columns outside it at zero (a
   numeric) or at the reference (a category; averaged under sum coding). */
static double factor_value(const design_part *part, const setting *s)
{
    size_t k;
    const partner *p = partner_of(s, part->column, &k);
    if (part->column->kind == DATA_CATEGORY) {
        int32_t code = p ? p->codes[s->index[k]]
                         : (part->kind == DESIGN_SUM ? -1 : (int32_t)part->column->reference);
        return level_value(part, code);
    }
    double x = p ? p->range->at[s->index[k]] : 0.0;
    return pow(x, part->power);
}

/* The op applied to one factor at the setting. */
static double operated(const design_part *part, const operation *op, const setting *s)
{
    if (part->column->kind != DATA_CATEGORY) {
        if (part->power == 1)
            return 1.0;
        size_t k;
        const partner *p = partner_of(s, part->column, &k);
        double x = p ? p->range->at[s->index[k]] : 0.0;
        return part->power * pow(x, part->power - 1);
    }
    double at = level_value(part, op->level);
    /* A sum-coded column, 1[L] − 1[omitted], averages to zero over the
       levels the design uses (both L and the omitted level among them). */
    if (op->against_average && part->kind == DESIGN_SUM)
        return at;
    return at - level_value(part, (int32_t)part->column->reference);
}

/* w_c for the reading under ops at setting s (ops empty: the fitted value). */
static void weights(const design *d, const fit_result *f, const operations *ops,
                    const setting *s, double *w)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        w[c] = 0.0;
        if (!has_all(coef, ops) || !f->coefs[c].estimable)
            continue; /* an aliased column is not part of the fitted surface */
        double value = 1.0;
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            const operation *op = NULL;
            for (size_t k = 0; k < ops->n; k++)
                if (ops->ops[k].column == part->column)
                    op = &ops->ops[k];
            value *= op ? operated(part, op, s) : factor_value(part, s);
        }
        w[c] = value;
    }
}

static bool next_setting(setting *s)
{
    for (size_t k = s->ps->n; k-- > 0;) {
        if (++s->index[k] < s->ps->partners[k].n_values)
            return true;
        s->index[k] = 0;
    }
    return false;
}

typedef struct {
    fit_reading *items;
    size_t n, capacity;
} reading_list;

/* One reading per setting of ps (the first FIT_READING_MAX). */
static void read_at(reading_list *out, const design *d, const fit_result *f, size_t coef,
                    fit_reading_kind kind, const data_column *target, int32_t level,
                    const operations *ops, const partners *ps)
{
    size_t total = 1;
    for (size_t k = 0; k < ps->n; k++)
        total *= ps->partners[k].n_values;
    double *w = xmalloc((d->n_coefs ? d->n_coefs : 1) * sizeof(double));
    setting s;
    memset(&s, 0, sizeof s);
    s.ps = ps;
    size_t index = 0;
    do {
        weights(d, f, ops, &s, w);
        xgrow((void **)&out->items, &out->capacity, out->n + 1, sizeof(fit_reading));
        fit_reading *r = &out->items[out->n++];
        memset(r, 0, sizeof *r);
        r->coef = coef;
        r->kind = kind;
        r->target = target;
        r->level = level;
        r->index = index++;
        r->of = total;
        r->n_at = ps->n;
        for (size_t k = 0; k < ps->n; k++) {
            const partner *p = &ps->partners[k];
            fit_setting *at = &r->at[k];
            at->column = p->column;
            at->range = p->range;
            at->code = p->range ? -1 : p->codes[s.index[k]];
            at->value = p->range ? p->range->at[s.index[k]] : NAN;
        }
        r->inference = fit_combination(f, w, &r->estimate);
    } while (index < FIT_READING_MAX && next_setting(&s));
    free(w);
}

static operation operation_of(const design_part *part)
{
    return (operation){part->column, part->level ? part->code : -1,
                       part->kind == DESIGN_SUM};
}

/* No intercept: level L's fitted value with every numeric predictor at its
   representative values, categories that share a term with L's column at
   each of their levels, and the other categories at their reference
   (averaged under sum coding). */
static void level_values(reading_list *out, const design *d, const fit_result *f,
                         size_t c, const design_part *level)
{
    partners ps = {.n = 0};
    operations none = {.n = 0};
    operations own = {.ops = {{level->column, level->code, false}}, .n = 1};
    partners shared;
    find_partners(d, &own, &shared);
    for (size_t k = 0; k < d->n_ranges; k++)
        add_partner(d, &ps, d->ranges[k].column, -2);
    for (size_t c2 = 0; c2 < d->n_coefs; c2++)
        for (size_t i = 0; i < d->coefs[c2].n_parts; i++) {
            const data_column *column = d->coefs[c2].parts[i].column;
            if (column->kind != DATA_CATEGORY || column == level->column)
                continue;
            bool partner = false;
            for (size_t k = 0; k < shared.n; k++)
                partner = partner || shared.partners[k].column == column;
            int32_t held = partner                             ? -2
                           : design_column_sum_coded(d, column) ? -1
                                                                : (int32_t)column->reference;
            add_partner(d, &ps, column, held);
        }
    /* The level's own column, held at L, is the last entry of the setting. */
    if (ps.n < FIT_READING_MAX_AT) {
        partner *p = &ps.partners[ps.n++];
        memset(p, 0, sizeof *p);
        p->column = level->column;
        p->codes[0] = level->code;
        p->n_values = 1;
    }
    read_at(out, d, f, c, FIT_READING_LEVEL_VALUE, level->column, level->code, &none, &ps);
    /* The setting names the other columns only. */
    for (size_t k = out->n; k-- > 0 && out->items[k].coef == c &&
                            out->items[k].kind == FIT_READING_LEVEL_VALUE;)
        if (out->items[k].n_at > 0 &&
            out->items[k].at[out->items[k].n_at - 1].column == level->column)
            out->items[k].n_at--;
}

/* Sum coding, read on the intercept: each sum-coded category that shares no
   term with another column gets the departure of its omitted level. */
static void omitted_levels(reading_list *out, const design *d, const fit_result *f,
                           size_t intercept)
{
    const data_column *done[16];
    size_t n_done = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        if (coef->n_parts != 1 || coef->parts[0].kind != DESIGN_SUM)
            continue;
        const design_part *part = &coef->parts[0];
        bool seen = false;
        for (size_t k = 0; k < n_done; k++)
            seen = seen || done[k] == part->column;
        operations ops = {.ops = {{part->column, part->omitted_code, true}}, .n = 1};
        partners ps;
        find_partners(d, &ops, &ps);
        if (seen || n_done == 16 || ps.n > 0 || part->omitted_code < 0)
            continue;
        done[n_done++] = part->column;
        read_at(out, d, f, intercept, FIT_READING_OMITTED, part->column, part->omitted_code,
                &ops, &ps);
    }
}

fit_readings *fit_readings_new(const design *d, const fit_result *f)
{
    reading_list out = {NULL, 0, 0};
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        if (!f->coefs[c].estimable)
            continue;
        if (coef->n_parts == 0) {
            omitted_levels(&out, d, f, c);
            continue;
        }
        bool powered = false;
        operations ops = {.n = 0};
        for (size_t i = 0; i < coef->n_parts && ops.n < 4; i++) {
            powered = powered || coef->parts[i].power > 1;
            ops.ops[ops.n++] = operation_of(&coef->parts[i]);
        }
        if (powered)
            continue; /* a power is read with the lower ones, on the linear term */
        partners ps;
        find_partners(d, &ops, &ps);
        const design_part *first = &coef->parts[0];
        if (coef->n_parts == 1 && first->kind == DESIGN_ALL_LEVELS) {
            level_values(&out, d, f, c, first);
            if (first->code != (int32_t)first->column->reference)
                read_at(&out, d, f, c, FIT_READING_DIFFERENCE, first->column, first->code,
                        &ops, &ps);
        } else if (ps.n == 0) {
            continue; /* the coefficient is its own reading */
        } else if (coef->n_parts == 1) {
            read_at(&out, d, f, c, first->level ? FIT_READING_DIFFERENCE : FIT_READING_SLOPE,
                    first->column, first->level ? first->code : -1, &ops, &ps);
        } else {
            read_at(&out, d, f, c, FIT_READING_INTERACTION, first->column, -1, &ops, &ps);
        }
    }
    fit_readings *r = xmalloc(sizeof *r);
    r->items = out.items;
    r->n = out.n;
    return r;
}

void fit_readings_free(fit_readings *r)
{
    if (!r)
        return;
    free(r->items);
    free(r);
}

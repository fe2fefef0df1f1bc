/*
 * sentences.c — one plain-language sentence per coefficient. The reading
 * depends on the coefficient's kind:
 *   intercept         the fitted response at zero / the reference levels (the
 *                     unweighted mean of the level means under sum coding),
 *                     said to be no prediction when zero lies outside the data;
 *   numeric x         change in the response per step of x, the others held;
 *   category level    difference from the reference level (sum coding: from
 *                     the unweighted average of levels), adjusted for the
 *                     other terms;
 *   a coefficient whose columns also enter a higher term (a main effect
 *                     under an interaction or a polynomial, a two-way product
 *                     under a three-way one): read at values that occur
 *                     (every level of a category partner, the column's `at`
 *                     values or the median of the fitted rows), each reading
 *                     computed by the fit stage (src/fit/readings.c) as a
 *                     combination of coefficients with its interval;
 *   no intercept      each level's fitted value at those values, and its
 *                     difference from the reference level;
 *   numeric × level   how much the slope differs from the reference level;
 *   numeric × numeric how the slope of one changes per step of the other;
 *   level × level     how a gap differs between levels of another category;
 *   three-way         how one of those two-way contrasts changes with the
 *                     third column;
 *   power k >= 2      curvature, read with the lower powers.
 * Wording rules: association, never cause ("goes with"); a change is a
 * positive amount with a direction word, and so are its interval's bounds;
 * a logged response reads as median percentage changes on the original
 * scale (the natural or base-10 logarithm named), a logged predictor "per
 * 10% increase" (an elasticity when both are logged). When the interval
 * contains zero the sentence says the data cannot tell the difference from
 * none, never that it is zero.
 */
#include "parts.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    const story *st;
    const analysis_model *am;
    const design_coef *coef;
    const fit_coef *fc;
    const char *response;
    spec_transform response_log; /* LOG or LOG10, or -1 when not logged */
} reading;

static bool is_log(spec_transform t)
{
    return t == SPEC_DERIVE_LOG || t == SPEC_DERIVE_LOG10;
}

static int log_transform_of(const story *st, const char *column)
{
    const spec_derive *derive = story_derivation(st, column);
    return derive && is_log(derive->transform) ? (int)derive->transform : -1;
}

/* Undoes a log: the multiplier on the original scale for a change d. */
static double unlog(int transform, double d)
{
    return transform == SPEC_DERIVE_LOG10 ? pow(10.0, d) : exp(d);
}

static const design_part *find_category_part(const design_coef *coef)
{
    for (size_t i = 0; i < coef->n_parts; i++)
        if (coef->parts[i].level)
            return &coef->parts[i];
    return NULL;
}

/* text with its first letter in capitals (ASCII), then tail. */
static void capitalised(buf *out, const char *text, const char *tail)
{
    buf_printf(out, "%c%s%s",
               text[0] >= 'a' && text[0] <= 'z' ? text[0] - 'a' + 'A' : text[0], text + 1,
               tail);
}

static const char *reference_of(const data_column *column)
{
    return column->levels[column->reference];
}

static void words(buf *out, const reading *r, const char *column)
{
    story_words(r->st, out, column);
}

static bool logged_response(const reading *r)
{
    return (int)r->response_log >= 0;
}

/* The size of a change d on the model's scale, without its sign: "3.209"
   in the response's units, or for a logged response the percentage
   change on the original scale, "12.5%". */
static void size_of(buf *out, const reading *r, double d)
{
    char number[NARRATE_NUMBER_SIZE];
    if (logged_response(r))
        story_percent(number, fabs(unlog(r->response_log, d) - 1.0));
    else
        story_number(r->st, number, fabs(d));
    buf_puts(out, number);
}

/* " MPa" or "" (a percentage carries its own sign of unit). */
static void unit_of(buf *out, const reading *r)
{
    const char *unit = logged_response(r) ? NULL : story_unit(r->st, r->response);
    if (unit)
        buf_printf(out, " %s", unit);
}

/* "3.209 MPa lower": a change always as a positive amount with the word
   for its direction; suffix (" per 1 day", or "") follows the unit. */
static void directed(buf *out, const reading *r, double d, const char *suffix,
                     const char *up, const char *down)
{
    size_of(out, r, d);
    unit_of(out, r);
    buf_printf(out, "%s %s", suffix, d >= 0 ? up : down);
}

/* " (95% confidence interval 2.950 to 3.468 MPa lower; p < 0.001)": the
   bounds as positive amounts in the direction words, or "from 0.5 kg lower
   to 0.9 kg higher" when the interval spans zero. */
static void directed_interval(buf *out, const reading *r, double low, double high, double p,
                              const char *suffix, const char *up, const char *down)
{
    if (isnan(low) || isnan(high))
        return; /* no inference (a saturated fit) */
    char pv[NARRATE_NUMBER_SIZE];
    narrate_p_value(pv, p);
    buf_printf(out, " (%g%% confidence interval ", r->st->level * 100);
    if (low >= 0) {
        size_of(out, r, low);
        buf_puts(out, " to ");
        directed(out, r, high, suffix, up, down);
    } else if (high <= 0) {
        size_of(out, r, high);
        buf_puts(out, " to ");
        directed(out, r, low, suffix, up, down);
    } else {
        buf_puts(out, "from ");
        directed(out, r, low, suffix, up, down);
        buf_puts(out, " to ");
        directed(out, r, high, suffix, up, down);
    }
    buf_printf(out, "; p %s%s)", pv[0] == '<' ? "" : "= ", pv);
}

/* " (95% confidence interval lo to hi; p = 0.012)" for a value that is not
   a change (the intercept), bounds as given. */
static void plain_interval(buf *out, const reading *r, double low, double high, double p)
{
    if (isnan(low) || isnan(high))
        return; /* no inference (a saturated fit) */
    char pv[NARRATE_NUMBER_SIZE], a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE];
    narrate_p_value(pv, p);
    story_number(r->st, a, low);
    story_number(r->st, b, high);
    buf_printf(out, " (%g%% confidence interval %s to %s; p %s%s)", r->st->level * 100, a,
               b, pv[0] == '<' ? "" : "= ", pv);
}

static void uncertainty(buf *out, const reading *r, double p)
{
    if (!isnan(p) && !(p < r->st->alpha))
        buf_puts(out,
                 " The interval includes zero, so the data cannot tell this difference "
                 "from none; that is not evidence that it is zero.");
}

/* A change d (already scaled to the step the sentence names) of the
   response, its interval and p: "a compressive strength 3.209 MPa lower on
   average (95% …)" or, logged, "a median delivery cost 12.5% higher (…)". */
static void response_change(buf *out, const reading *r, double d, double low, double high,
                            double p)
{
    const spec_derive *derive = story_derivation(r->st, r->response);
    buf_puts(out, logged_response(r) ? "a median " : "a ");
    words(out, r, logged_response(r) ? derive->from : r->response);
    buf_putc(out, ' ');
    directed(out, r, d, "", "higher", "lower");
    if (!logged_response(r))
        buf_puts(out, " on average");
    else if (unlog(r->response_log, d) >= 2.0) {
        /* Beyond doubling a factor reads better than a percentage. */
        char factor[NARRATE_NUMBER_SIZE];
        story_number(r->st, factor, unlog(r->response_log, d));
        buf_printf(out, ", %s times as high,", factor);
    }
    directed_interval(out, r, low, high, p, "", "higher", "lower");
}

/* ". Zero lies outside the data for curing age (3 to 90 day), so this
   value anchors the equation …": a value read with every numeric predictor
   at zero is a point no row comes near when zero is outside a range, and
   the sentence says so instead of offering it as a prediction. */
static void zero_note(buf *out, const reading *r)
{
    const design *d = r->am->design;
    size_t outside = 0;
    for (size_t k = 0; k < d->n_ranges; k++)
        outside += d->ranges[k].min > 0 || d->ranges[k].max < 0;
    if (outside) {
        buf_puts(out, ". Zero lies outside the data for ");
        size_t shown = 0;
        for (size_t k = 0; k < d->n_ranges; k++) {
            const design_range *g = &d->ranges[k];
            if (!(g->min > 0 || g->max < 0))
                continue;
            char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE];
            story_value(r->st, a, g->min);
            story_value(r->st, b, g->max);
            buf_puts(out, shown == 0 ? "" : (shown + 1 == outside ? " and " : ", "));
            const char *unit = story_unit(r->st, g->column->name);
            words(out, r, g->column->name);
            buf_printf(out, " (%s to %s%s%s)", a, b, unit ? " " : "", unit ? unit : "");
            shown++;
        }
        buf_puts(out,
                 ", so this value anchors the equation and is not a prediction for any "
                 "row like those observed.");
    } else {
        buf_puts(out,
                 ". This anchors the equation; it is a prediction only where such values "
                 "occur in the data.");
    }
}

static void say_intercept(buf *out, const reading *r)
{
    const design *d = r->am->design;
    const data_column *categories[16];
    size_t n = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_part *part = find_category_part(&d->coefs[c]);
        bool seen = !part;
        for (size_t k = 0; !seen && k < n; k++)
            seen = categories[k] == part->column;
        if (!seen && n < 16)
            categories[n++] = part->column;
    }
    /* Sum-coded categories are averaged over, not held at a level. */
    const data_column *averaged[16];
    size_t n_averaged = 0, n_held = 0;
    const data_column *held[16];
    for (size_t k = 0; k < n; k++) {
        bool sum = false;
        for (size_t c = 0; c < d->n_coefs; c++) {
            const design_part *part = find_category_part(&d->coefs[c]);
            sum =
                sum || (part && part->column == categories[k] && part->kind == DESIGN_SUM);
        }
        if (sum)
            averaged[n_averaged++] = categories[k];
        else
            held[n_held++] = categories[k];
    }
    bool sum_coded = n_averaged > 0;
    buf_puts(out, d->n_ranges ? "With every numeric predictor at zero" : "");
    for (size_t k = 0; k < n_held; k++) {
        if (d->n_ranges || k > 0)
            buf_puts(out, k == 0 ? (n_held == 1 ? " and " : ", ")
                                 : (k + 1 == n_held ? " and " : ", "));
        else
            buf_puts(out, "With ");
        words(out, r, held[k]->name);
        buf_printf(out, " at its reference level '%s'", reference_of(held[k]));
    }
    buf_puts(out, d->n_ranges || n_held ? ", the model's fitted " : "The model's fitted ");
    if (sum_coded) {
        buf_puts(out, "value, averaged with equal weight over the levels of ");
        for (size_t k = 0; k < n_averaged; k++) {
            buf_puts(out, k == 0 ? "" : (k + 1 == n_averaged ? " and " : ", "));
            words(out, r, averaged[k]->name);
        }
        buf_puts(out, " (the unweighted mean of the level means), of ");
    }
    if (logged_response(r)) {
        /* Speak of the original scale: the back-transformed value is the
           median of the response there. */
        const spec_derive *derive = story_derivation(r->st, r->response);
        char value[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE],
            high[NARRATE_NUMBER_SIZE];
        if (!sum_coded)
            buf_puts(out, "value of ");
        words(out, r, r->response);
        story_number(r->st, value, r->fc->estimate);
        buf_printf(out, " is %s", value);
        plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
        buf_puts(out, "; on the original scale that is a median ");
        words(out, r, derive->from);
        buf_puts(out, " of ");
        story_amount(r->st, out, derive->from, unlog(r->response_log, r->fc->estimate));
        story_number(r->st, low, unlog(r->response_log, r->fc->ci_low));
        story_number(r->st, high, unlog(r->response_log, r->fc->ci_high));
        buf_printf(out, " (%g%% confidence interval %s to %s)", r->st->level * 100, low,
                   high);
    } else {
        words(out, r, r->response);
        buf_puts(out, " is ");
        story_amount(r->st, out, r->response, r->fc->estimate);
        plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
    }
    zero_note(out, r);
}

/* "each increase of 1 day in curing age" or, for a logged predictor,
   "each 10% increase in distance"; returns the change in the predictor's
   model scale that the phrase stands for. */
static double step(buf *out, const reading *r, const char *column)
{
    int logged = log_transform_of(r->st, column);
    const spec_derive *derive = story_derivation(r->st, column);
    if (logged >= 0) {
        buf_puts(out, "each 10% increase in ");
        story_words(r->st, out, derive->from);
        return logged == SPEC_DERIVE_LOG10 ? log10(1.1) : log(1.1);
    }
    if (derive && derive->transform == SPEC_DERIVE_STANDARDIZE) {
        buf_puts(out, "each increase of one standard deviation in ");
        story_words(r->st, out, derive->from);
        return 1.0;
    }
    buf_puts(out, "each increase of ");
    double amount = story_step(r->st, out, column);
    buf_puts(out, " in ");
    words(out, r, column);
    return amount;
}

static void say_numeric(buf *out, const reading *r, const design_part *x)
{
    const char *name = x->column->name;
    buf_puts(out, "Holding the other terms constant, ");
    double scale = step(out, r, name);
    buf_puts(out, " goes with ");
    response_change(out, r, r->fc->estimate * scale, r->fc->ci_low * scale,
                    r->fc->ci_high * scale, r->fc->p);
    if (log_transform_of(r->st, name) >= 0 && logged_response(r)) {
        char number[NARRATE_NUMBER_SIZE];
        story_number(r->st, number, r->fc->estimate);
        buf_printf(out,
                   "; with both logged, the coefficient %s is an elasticity: the "
                   "percentage change of the median per 1%% change, approximately",
                   number);
    }
    buf_puts(out, ".");
    uncertainty(out, r, r->fc->p);
}

static void say_level(buf *out, const reading *r, const design_part *level)
{
    capitalised(out, story_rows(r->st), " with ");
    words(out, r, level->column->name);
    buf_printf(out, " '%s' have ", level->level);
    response_change(out, r, r->fc->estimate, r->fc->ci_low, r->fc->ci_high, r->fc->p);
    buf_puts(out, " compared with ");
    if (level->kind == DESIGN_SUM) {
        buf_puts(out, "the unweighted average over all levels of ");
        words(out, r, level->column->name);
    } else {
        buf_printf(out, "those with the reference level '%s'", reference_of(level->column));
    }
    buf_puts(out, ", adjusted for the other terms.");
    uncertainty(out, r, r->fc->p);
}

static void say_power(buf *out, const reading *r, const design_part *x)
{
    char number[NARRATE_NUMBER_SIZE];
    story_number(r->st, number, r->fc->estimate);
    buf_printf(out, "The power-%d term of ", x->power);
    words(out, r, x->column->name);
    buf_printf(out,
               " bends the fitted curve: its coefficient %s has no per-unit reading on "
               "its own, because the slope of a polynomial changes along the curve; "
               "read it together with the lower powers",
               number);
    plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
    buf_puts(out, ".");
    if (!isnan(r->fc->p) && !(r->fc->p < r->st->alpha))
        buf_puts(out, " The interval includes zero, so the data cannot tell this curvature "
                      "from none; that is not evidence that the relationship is straight.");
}

/* The per-step phrase of a numeric column: " per 1 day" (the step goes to
 *scale). */
static void per_step(buf *out, const reading *r, const char *column, double *scale)
{
    buf per;
    buf_init(&per);
    *scale *= story_step(r->st, &per, column);
    buf_printf(out, " per %s", per.data);
    buf_free(&per);
}

/* " per 1 day of curing age" into out, " per 1 day" into suffix (the unit
   of the amounts that follow); for a logged column " per 10% increase in
   distance" (the amounts are then percentages, without suffix). */
static void per_phrase(buf *out, buf *suffix, const reading *r, const char *column,
                       double *scale)
{
    int logged = log_transform_of(r->st, column);
    if (logged >= 0) {
        buf_puts(out, " per 10% increase in ");
        words(out, r, story_derivation(r->st, column)->from);
        buf_puts(suffix, " per 10% increase");
        *scale *= logged == SPEC_DERIVE_LOG10 ? log10(1.1) : log(1.1);
        return;
    }
    per_step(suffix, r, column, scale);
    buf_printf(out, "%s of ", suffix->data);
    words(out, r, column);
}

/* A difference of slopes or gaps: "0.01056 MPa per 1 day larger (95% …)". */
static void difference(buf *out, const reading *r, double scale, const char *suffix)
{
    const fit_coef *fc = r->fc;
    directed(out, r, fc->estimate * scale, suffix, "larger", "smaller");
    directed_interval(out, r, fc->ci_low * scale, fc->ci_high * scale, fc->p, suffix,
                      "larger", "smaller");
}

/* A product of two columns without a higher term: its coefficient is its
   reading. */
static void say_interaction_plain(buf *out, const reading *r)
{
    const design_coef *coef = r->coef;
    const design_part *numeric[3], *levels[3];
    size_t n_numeric = 0, n_levels = 0;
    for (size_t i = 0; i < coef->n_parts; i++) {
        if (coef->parts[i].level)
            levels[n_levels++] = &coef->parts[i];
        else
            numeric[n_numeric++] = &coef->parts[i];
    }
    buf suffix;
    buf_init(&suffix);
    double scale = 1.0;
    if (coef->n_parts == 2 && n_numeric == 1) {
        buf_puts(out, "The change in ");
        words(out, r,
              logged_response(r) ? story_derivation(r->st, r->response)->from
                                 : r->response);
        per_phrase(out, &suffix, r, numeric[0]->column->name, &scale);
        buf_printf(out, " is ");
        difference(out, r, scale, logged_response(r) ? "" : suffix.data);
        buf_printf(out, " for %s with ", story_rows(r->st));
        words(out, r, levels[0]->column->name);
        if (levels[0]->kind == DESIGN_SUM)
            buf_printf(out, " '%s' than its unweighted average over all levels",
                       levels[0]->level);
        else
            buf_printf(out, " '%s' than for those with the reference level '%s'",
                       levels[0]->level, reference_of(levels[0]->column));
        if (logged_response(r))
            buf_puts(out, " (as a percentage change of the median)");
    } else if (coef->n_parts == 2 && n_numeric == 2) {
        buf_puts(out, "The change in ");
        words(out, r,
              logged_response(r) ? story_derivation(r->st, r->response)->from
                                 : r->response);
        per_phrase(out, &suffix, r, numeric[0]->column->name, &scale);
        buf_puts(out, " is ");
        buf other;
        buf_init(&other);
        scale *= story_step(r->st, &other, numeric[1]->column->name);
        difference(out, r, scale, logged_response(r) ? "" : suffix.data);
        buf_printf(out, " for each increase of %s in ", other.data);
        words(out, r, numeric[1]->column->name);
        buf_free(&other);
    } else {
        buf_puts(out, "The gap in ");
        words(out, r,
              logged_response(r) ? story_derivation(r->st, r->response)->from
                                 : r->response);
        buf_puts(out, " between ");
        words(out, r, levels[0]->column->name);
        buf_printf(out, " '%s' and its reference level '%s' is ", levels[0]->level,
                   reference_of(levels[0]->column));
        difference(out, r, 1.0, "");
        buf_printf(out, " for %s with ", story_rows(r->st));
        words(out, r, levels[1]->column->name);
        buf_printf(out, " '%s' than for those with its reference level '%s'",
                   levels[1]->level, reference_of(levels[1]->column));
    }
    buf_free(&suffix);
    buf_puts(out, ".");
    uncertainty(out, r, r->fc->p);
}

/* ---- readings at representative values ---------------------------------
   A coefficient whose columns also enter a higher term is read at settings
   that occur; the fit stage computes each reading (src/fit/readings.c) and
   these functions word them. */

/* The readings of coefficient c of one kind (contiguous), or NULL. */
static const fit_reading *readings_of(const reading *r, fit_reading_kind kind, size_t *n)
{
    const fit_readings *all = r->am->readings;
    size_t c = (size_t)(r->coef - r->am->design->coefs);
    *n = 0;
    const fit_reading *first = NULL;
    for (size_t k = 0; all && k < all->n; k++)
        if (all->items[k].coef == c && all->items[k].kind == kind) {
            if (!first)
                first = &all->items[k];
            (*n)++;
        }
    return first;
}

/* " where admixture is 'none' and curing age is 28 day (the median of the
   fitted rows)". */
static void setting_words(buf *out, const reading *r, const fit_reading *reading)
{
    for (size_t k = 0; k < reading->n_at; k++) {
        const fit_setting *at = &reading->at[k];
        buf_puts(out, k == 0 ? " where " : (k + 1 == reading->n_at ? " and " : ", "));
        if (at->column->kind == DATA_CATEGORY) {
            words(out, r, at->column->name);
            if (at->code < 0)
                buf_puts(out, " is averaged over its levels");
            else
                buf_printf(out, " is '%s'", at->column->levels[at->code]);
            continue;
        }
        char value[NARRATE_NUMBER_SIZE];
        double v = at->value;
        const char *name = at->column->name;
        int logged = log_transform_of(r->st, name);
        if (logged >= 0) {
            /* A logged column is read where its source takes the value. */
            name = story_derivation(r->st, name)->from;
            v = unlog(logged, v);
        }
        const char *unit = story_unit(r->st, name);
        story_value(r->st, value, v);
        words(out, r, name);
        buf_printf(out, " is %s%s%s", value, unit ? " " : "", unit ? unit : "");
        if (!at->range->at_from_spec)
            buf_puts(out, " (the median of the fitted rows)");
        else if (at->value < at->range->min || at->value > at->range->max)
            buf_puts(out, " (outside the data)");
    }
}

/* What the raw coefficient is: the reading with the setting's numeric
   columns at zero and its categories at the reference level. */
static void raw_coefficient_note(buf *out, const reading *r, const fit_reading *first,
                                 const char *what)
{
    char number[NARRATE_NUMBER_SIZE];
    story_number(r->st, number, r->fc->estimate);
    buf_printf(out, " The coefficient in the table, %s, is %s", number, what);
    for (size_t k = 0; k < first->n_at; k++) {
        const fit_setting *at = &first->at[k];
        buf_puts(out, k == 0 ? " with " : " and ");
        int logged = log_transform_of(r->st, at->column->name);
        words(out, r,
              logged >= 0 ? story_derivation(r->st, at->column->name)->from
                          : at->column->name);
        if (at->column->kind == DATA_CATEGORY) {
            if (design_column_sum_coded(r->am->design, at->column))
                buf_puts(out, " averaged over its levels");
            else
                buf_printf(out, " at its reference level '%s'", reference_of(at->column));
        } else if (logged >= 0) {
            /* zero on the log scale is 1 on the original one */
            const char *from = story_derivation(r->st, at->column->name)->from;
            const char *unit = story_unit(r->st, from);
            buf_printf(out, " at 1%s%s (its logarithm zero)", unit ? " " : "",
                       unit ? unit : "");
        } else {
            buf_puts(out, " at zero");
            if (at->range->min > 0 || at->range->max < 0) {
                char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE];
                story_value(r->st, a, at->range->min);
                story_value(r->st, b, at->range->max);
                const char *unit = story_unit(r->st, at->column->name);
                buf_printf(out, ", outside the data (%s to %s%s%s)", a, b, unit ? " " : "",
                           unit ? unit : "");
            }
        }
    }
    buf_puts(out, ".");
}

/* The readings at every setting: "0.1468 MPa higher on average (…) where
   admixture is 'none'; and 0.1573 MPa higher … where admixture is
   'plasticizer'". suffix follows the unit (" per 1 day"); first_full opens
   with "a compressive strength". Returns whether any reading could not be
   told from zero. */
static bool readings_at(buf *out, const reading *r, const fit_reading *first, size_t n,
                        double scale, const char *suffix, const char *up,
                        const char *down, bool first_full, bool average)
{
    bool unclear = false;
    for (size_t k = 0; k < n; k++) {
        const fit_reading *reading = &first[k];
        double value = reading->estimate * scale;
        const fit_inference *in = &reading->inference;
        if (k > 0)
            buf_puts(out, k + 1 == n ? "; and " : "; ");
        if (k == 0 && first_full) {
            const spec_derive *derive = story_derivation(r->st, r->response);
            buf_puts(out, logged_response(r) ? "a median " : "a ");
            words(out, r, logged_response(r) ? derive->from : r->response);
            buf_putc(out, ' ');
        }
        directed(out, r, value, suffix, up, down);
        if (average && !logged_response(r))
            buf_puts(out, " on average");
        directed_interval(out, r, in->ci_low * scale, in->ci_high * scale, in->p, suffix, up,
                          down);
        setting_words(out, r, reading);
        unclear = unclear || (!isnan(in->p) && !(in->p < r->st->alpha));
    }
    if (n > 0 && first->of > n)
        buf_printf(out, " (the first %zu of %zu combinations)", n, first->of);
    return unclear;
}

static void say_numeric_at(buf *out, const reading *r, const design_part *x,
                           const fit_reading *first, size_t n)
{
    const char *name = x->column->name;
    buf_puts(out, "Adjusted for the other terms, ");
    double scale = step(out, r, name);
    buf_puts(out, " goes with ");
    bool unclear = readings_at(out, r, first, n, scale, "", "higher", "lower", true, true);
    bool power = false, others = false;
    for (size_t k = 0; k < first->n_at; k++) {
        power = power || first->at[k].column == x->column;
        others = others || first->at[k].column != x->column;
    }
    buf_printf(out,
               ". The slope depends on where it is read because the model includes %s ",
               power ? (others ? "powers and interactions of" : "powers of")
                     : "interactions of");
    words(out, r, name);
    buf_puts(out, ".");
    buf per;
    buf_init(&per);
    buf_puts(&per, "the slope per unit of ");
    words(&per, r, name);
    raw_coefficient_note(out, r, first, per.data);
    buf_free(&per);
    if (unclear)
        buf_puts(out,
                 " Where an interval includes zero the data cannot tell that change from "
                 "none; that is not evidence that it is zero.");
}

static void say_level_at(buf *out, const reading *r, const design_part *level,
                         const fit_reading *first, size_t n)
{
    bool sum = level->kind == DESIGN_SUM;
    buf_printf(out, "Adjusted for the other terms, %s with ", story_rows(r->st));
    words(out, r, level->column->name);
    buf_printf(out, " '%s' have ", level->level);
    bool unclear = readings_at(out, r, first, n, 1.0, "", "higher", "lower", true, true);
    const char *each = n > 1 ? "each " : "";
    if (sum) {
        buf_printf(out, ", %scompared with the unweighted average over all levels of ",
                   each);
        words(out, r, level->column->name);
    } else {
        buf_printf(out, ", %scompared with those with the reference level '%s'", each,
                   reference_of(level->column));
    }
    buf_puts(out, ". The difference depends on where it is read because the model includes "
                  "interactions of ");
    words(out, r, level->column->name);
    buf_puts(out, ".");
    raw_coefficient_note(out, r, first, "the difference");
    if (unclear)
        buf_puts(out,
                 " Where an interval includes zero the data cannot tell that difference "
                 "from none; that is not evidence that it is zero.");
}

/* A model without intercept gives every level of its first category a
   coefficient of its own: the level's fitted value with the numeric
   predictors at zero. It is read at their representative values instead,
   and a level other than the reference also as its difference from the
   reference, adjusted for the other terms. */
static void say_level_value(buf *out, const reading *r, const design_part *level)
{
    size_t n_values, n_changes;
    const fit_reading *values = readings_of(r, FIT_READING_LEVEL_VALUE, &n_values);
    const fit_reading *changes = readings_of(r, FIT_READING_DIFFERENCE, &n_changes);
    capitalised(out, story_rows(r->st), " with ");
    words(out, r, level->column->name);
    buf_printf(out, " '%s' have a fitted ", level->level);
    const spec_derive *derive = logged_response(r) ? story_derivation(r->st, r->response)
                                                   : NULL;
    if (derive)
        buf_puts(out, "value");
    else
        words(out, r, r->response);
    buf_puts(out, " of ");
    for (size_t k = 0; k < n_values; k++) {
        const fit_reading *v = &values[k];
        if (k > 0)
            buf_puts(out, k + 1 == n_values ? "; and " : "; ");
        if (derive) {
            char value[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE],
                high[NARRATE_NUMBER_SIZE];
            story_number(r->st, value, v->estimate);
            buf_printf(out, "%s for ", value);
            words(out, r, r->response);
            plain_interval(out, r, v->inference.ci_low, v->inference.ci_high, v->inference.p);
            /* The back-transformed value is the median on the original scale. */
            buf_puts(out, ", on the original scale a median ");
            words(out, r, derive->from);
            buf_puts(out, " of ");
            story_amount(r->st, out, derive->from, unlog(r->response_log, v->estimate));
            if (!isnan(v->inference.ci_low)) {
                story_number(r->st, low, unlog(r->response_log, v->inference.ci_low));
                story_number(r->st, high, unlog(r->response_log, v->inference.ci_high));
                buf_printf(out, " (%g%% confidence interval %s to %s)", r->st->level * 100,
                           low, high);
            }
        } else {
            story_amount(r->st, out, r->response, v->estimate);
            plain_interval(out, r, v->inference.ci_low, v->inference.ci_high,
                           v->inference.p);
        }
        setting_words(out, r, v);
    }
    if (values && values->of > n_values)
        buf_printf(out, " (the first %zu of %zu combinations)", n_values, values->of);
    buf_puts(out, " (the model has no intercept, so each level has its own).");
    if (changes) {
        buf_puts(out, " Adjusted for the other terms, they have ");
        bool unclear =
            readings_at(out, r, changes, n_changes, 1.0, "", "higher", "lower", true, true);
        buf_printf(out, ", %scompared with those with the reference level '%s'.",
                   n_changes > 1 ? "each " : "", reference_of(level->column));
        if (unclear)
            buf_puts(out, " Where an interval includes zero the data cannot tell that "
                          "difference from none; that is not evidence that it is zero.");
    }
    if (values && values->n_at > 0) {
        bool numeric = false;
        for (size_t k = 0; k < values->n_at; k++)
            numeric = numeric || values->at[k].column->kind != DATA_CATEGORY;
        if (numeric)
            raw_coefficient_note(out, r, values, "the fitted value");
    }
}

/* Under sum coding the omitted level has no coefficient: its departure
   from the unweighted mean of the level means, said after the intercept
   (for categories without interactions, where the departure does not
   depend on other columns). */
static void say_omitted_levels(buf *out, const reading *r)
{
    const fit_readings *all = r->am->readings;
    size_t c = (size_t)(r->coef - r->am->design->coefs);
    for (size_t k = 0; all && k < all->n; k++) {
        const fit_reading *o = &all->items[k];
        if (o->coef != c || o->kind != FIT_READING_OMITTED)
            continue;
        buf_printf(out, " Level '%s' of ", o->target->levels[o->level]);
        words(out, r, o->target->name);
        buf_puts(out, ", which has no coefficient of its own, lies ");
        directed(out, r, o->estimate, "", "above", "below");
        buf_puts(out, " that mean");
        directed_interval(out, r, o->inference.ci_low, o->inference.ci_high, o->inference.p,
                          "", "above", "below");
        buf_puts(out, ", adjusted for the other terms.");
    }
}

/* The response as the change sentences name it (its source when logged). */
static const char *response_word(const reading *r)
{
    return logged_response(r) ? story_derivation(r->st, r->response)->from : r->response;
}

/* "rows with treatment 'trt'" then join then "those with the reference
   level 'ctl'" (sum coding: "the unweighted average over its levels"). */
static void level_contrast(buf *out, const reading *r, const design_part *g, const char *join,
                           bool its)
{
    buf_printf(out, "%s with ", story_rows(r->st));
    words(out, r, g->column->name);
    buf_printf(out, " '%s'%s", g->level, join);
    if (g->kind == DESIGN_SUM)
        buf_puts(out, "the unweighted average over its levels");
    else
        buf_printf(out, "those with %s reference level '%s'", its ? "its" : "the",
                   reference_of(g->column));
}

/* The quantity two parts (numerics first) stand for, without its leading
   article: "change in yield per 1 mm of rainfall for each increase of 1 h in
   shade", "change in yield per 1 mm of rainfall, for plots with treatment
   'trt' against those with the reference level 'ctl',", "gap in yield
   between treatment 'trt' and its reference level 'ctl', for plots with h
   'lo' against those with its reference level 'hi',". The amounts' unit
   suffix goes to suffix, the steps to scale. */
static void two_part_quantity(buf *out, buf *suffix, const reading *r, const design_part *p,
                              const design_part *q, double *scale)
{
    if (!p->level) {
        buf_puts(out, "change in ");
        words(out, r, response_word(r));
        per_phrase(out, suffix, r, p->column->name, scale);
        if (!q->level) {
            buf other;
            buf_init(&other);
            *scale *= story_step(r->st, &other, q->column->name);
            buf_printf(out, " for each increase of %s in ", other.data);
            words(out, r, q->column->name);
            buf_free(&other);
        } else {
            buf_puts(out, ", for ");
            level_contrast(out, r, q, " against ", false);
            buf_puts(out, ",");
        }
    } else {
        buf_puts(out, "gap in ");
        words(out, r, response_word(r));
        buf_puts(out, " between ");
        words(out, r, p->column->name);
        if (p->kind == DESIGN_SUM)
            buf_printf(out, " '%s' and its unweighted average over all levels, for ",
                       p->level);
        else
            buf_printf(out, " '%s' and its reference level '%s', for ", p->level,
                       reference_of(p->column));
        level_contrast(out, r, q, " against ", true);
        buf_puts(out, ",");
    }
    if (logged_response(r))
        buf_reset(suffix); /* the amounts are percentages of the median */
}

/* The parts of a product, numeric columns first. */
static size_t ordered_parts(const design_coef *coef, const design_part **parts)
{
    size_t n = 0;
    for (int pass = 0; pass < 2; pass++)
        for (size_t i = 0; i < coef->n_parts && n < 3; i++)
            if ((coef->parts[i].level != NULL) == (pass == 1))
                parts[n++] = &coef->parts[i];
    return n;
}

/* "The <quantity of the first two parts>" of a product (numerics first);
   suffix (caller frees) and scale say how its amounts are worded. */
static void open_two_way(buf *out, buf *suffix, const reading *r, const design_part **parts,
                         double *scale)
{
    ordered_parts(r->coef, parts);
    buf_init(suffix);
    buf_puts(suffix, "");
    buf_puts(out, "The ");
    two_part_quantity(out, suffix, r, parts[0], parts[1], scale);
}

/* A two-way product inside a higher term: its contrast depends on the
   higher term's other columns and is read at their settings. */
static void say_interaction_at(buf *out, const reading *r, const fit_reading *first,
                               size_t n)
{
    const design_part *parts[3];
    buf suffix;
    double scale = 1.0;
    open_two_way(out, &suffix, r, parts, &scale);
    buf_puts(out, " is ");
    bool unclear =
        readings_at(out, r, first, n, scale, suffix.data, "larger", "smaller", false, false);
    buf_puts(out, ". It depends on where it is read because the model includes a higher "
                  "interaction of ");
    words(out, r, parts[0]->column->name);
    buf_puts(out, " and ");
    words(out, r, parts[1]->column->name);
    buf_puts(out, " with ");
    for (size_t k = 0; k < first->n_at; k++) {
        buf_puts(out, k == 0 ? "" : (k + 1 == first->n_at ? " and " : ", "));
        words(out, r, first->at[k].column->name);
    }
    buf_puts(out, ".");
    raw_coefficient_note(out, r, first, "this difference");
    if (unclear)
        buf_puts(out,
                 " Where an interval includes zero the data cannot tell that difference "
                 "from none; that is not evidence that it is zero.");
    buf_free(&suffix);
}

/* A three-way product: how the two-way contrast of its first two columns
   (numerics first) changes with the third. */
static void say_three_way(buf *out, const reading *r)
{
    const design_part *parts[3];
    buf suffix;
    double scale = 1.0;
    open_two_way(out, &suffix, r, parts, &scale);
    /* "…, for plots … against …," closes with the interaction's name. */
    bool comma = out->length > 0 && out->data[out->length - 1] == ',';
    if (comma)
        out->data[--out->length] = '\0';
    buf_puts(out, " (the ");
    words(out, r, parts[0]->column->name);
    buf_puts(out, " × ");
    words(out, r, parts[1]->column->name);
    buf_puts(out, comma ? " interaction), is " : " interaction) is ");
    const design_part *third = parts[2];
    buf tail;
    buf_init(&tail);
    if (!third->level) {
        buf other;
        buf_init(&other);
        scale *= story_step(r->st, &other, third->column->name);
        buf_printf(&tail, " for each increase of %s in ", other.data);
        words(&tail, r, third->column->name);
        buf_free(&other);
    } else {
        buf_puts(&tail, " for ");
        level_contrast(&tail, r, third, " than for ", false);
    }
    const fit_coef *fc = r->fc;
    directed(out, r, fc->estimate * scale, suffix.data, "larger", "smaller");
    directed_interval(out, r, fc->ci_low * scale, fc->ci_high * scale, fc->p, suffix.data,
                      "larger", "smaller");
    buf_puts(out, tail.data);
    buf_puts(out, ". It is the same at every value of the other columns, as the model has no "
                  "higher term.");
    buf_free(&tail);
    buf_free(&suffix);
    uncertainty(out, r, fc->p);
}

static void say_interaction(buf *out, const reading *r)
{
    size_t n;
    const fit_reading *first = readings_of(r, FIT_READING_INTERACTION, &n);
    if (first && r->coef->n_parts == 2)
        say_interaction_at(out, r, first, n);
    else if (r->coef->n_parts == 2)
        say_interaction_plain(out, r);
    else if (r->coef->n_parts == 3 && !first)
        say_three_way(out, r);
    else {
        /* Four columns or more: the coefficient as it stands. */
        buf_puts(out, "This interaction coefficient of ");
        for (size_t i = 0; i < r->coef->n_parts; i++) {
            buf_puts(out, i == 0 ? "" : (i + 1 == r->coef->n_parts ? " and " : ", "));
            words(out, r, r->coef->parts[i].column->name);
        }
        buf_puts(out, " has no reading of its own; read it with the lower terms");
        plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
        buf_puts(out, ".");
    }
}

/* Names the combination of other columns an aliased column equals, each
   multiplier rounded to the report's digits (terms that round to zero are
   dropped: they are rounding noise of the factorisation). */
static void say_not_estimable(buf *out, const reading *r)
{
    const design *d = r->am->design;
    const double *alias = r->fc->alias;
    buf_puts(out, "Not estimable: in the rows used, this column ");
    bool any = false;
    double largest = 0.0;
    for (size_t j = 0; alias && j < d->n_coefs; j++)
        largest = fmax(largest, fabs(alias[j]));
    double below = largest * pow(10.0, -r->st->significant_digits);
    for (size_t j = 0; alias && j < d->n_coefs; j++) {
        char number[NARRATE_NUMBER_SIZE];
        story_value(r->st, number, fabs(alias[j]));
        if (!(fabs(alias[j]) > below) || strtod(number, NULL) == 0.0)
            continue;
        bool one = strtod(number, NULL) == 1.0;
        buf_printf(out, "%s",
                   any ? (alias[j] < 0 ? " − " : " + ")
                       : (alias[j] < 0 ? "equals − " : "equals "));
        if (!one)
            buf_printf(out, "%s × ", number);
        buf_puts(out, d->coefs[j].label);
        any = true;
    }
    if (!any)
        buf_puts(out, "is zero everywhere (a level with no rows, for example)");
    buf_puts(out,
             ", so the data cannot separate it from the columns before it; it is left "
             "out of the fit, and the equation and every other reading are those of the "
             "model without it.");
}

char *story_coefficient_sentence(const story *st, const analysis_model *am, size_t c)
{
    const design *d = am->design;
    /* Sentences quote the standard errors the report leads with. */
    fit_coef lead = am->fit->coefs[c];
    if (lead.estimable) {
        fit_inference inference = fit_lead_inference(am->fit, c);
        lead.std_error = inference.std_error;
        lead.t = inference.t;
        lead.p = inference.p;
        lead.ci_low = inference.ci_low;
        lead.ci_high = inference.ci_high;
    }
    reading r = {st,
                 am,
                 &d->coefs[c],
                 &lead,
                 d->response->name,
                 (spec_transform)log_transform_of(st, d->response->name)};
    buf out;
    buf_init(&out);
    const design_coef *coef = r.coef;
    if (!r.fc->estimable)
        say_not_estimable(&out, &r);
    else if (coef->n_parts == 0) {
        say_intercept(&out, &r);
        say_omitted_levels(&out, &r);
    }
    else if (coef->n_parts == 1 && coef->parts[0].kind == DESIGN_ALL_LEVELS)
        say_level_value(&out, &r, &coef->parts[0]);
    else if (coef->n_parts == 1 && coef->parts[0].level) {
        size_t n;
        const fit_reading *first = readings_of(&r, FIT_READING_DIFFERENCE, &n);
        if (first)
            say_level_at(&out, &r, &coef->parts[0], first, n);
        else
            say_level(&out, &r, &coef->parts[0]);
    } else if (coef->n_parts == 1 && coef->parts[0].power > 1)
        say_power(&out, &r, &coef->parts[0]);
    else if (coef->n_parts == 1) {
        size_t n;
        const fit_reading *first = readings_of(&r, FIT_READING_SLOPE, &n);
        if (first)
            say_numeric_at(&out, &r, &coef->parts[0], first, n);
        else
            say_numeric(&out, &r, &coef->parts[0]);
    } else
        say_interaction(&out, &r);
    return buf_detach(&out);
}

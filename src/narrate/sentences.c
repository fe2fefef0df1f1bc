/*
 * sentences.c — one plain-language sentence per coefficient. The reading
 * depends on the coefficient's kind:
 *   intercept         the expected response at zero / the reference levels;
 *   numeric x         change in the response per unit of x, others fixed
 *                     (at zero or the reference level of anything x
 *                     interacts with);
 *   category level    difference from the reference level;
 *   numeric × level   how much the slope differs from the reference level;
 *   numeric × numeric how the slope of one changes per unit of the other;
 *   level × level     how a gap differs between levels of another category;
 *   power k >= 2      curvature, read with the lower powers.
 * A log-transformed response turns differences into percentages (the
 * model is multiplicative on the original scale), and a log-transformed
 * predictor turns "per unit" into "per 10% increase" (an elasticity when
 * both are logged). When the interval contains zero the sentence says the
 * data cannot tell the effect from zero, never that the effect is zero.
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

/* Opens the sentence of a main effect of column `name`. When the model
   also has interactions with it, the effect is read with the other columns
   of those interactions at zero (numeric) or at their reference level
   (category), and the opening says so: "With admixture at its reference
   level 'none' and the other terms held constant, ". */
static void open_main_effect(buf *out, const story *st, const design *d, const char *name,
                             bool quiet)
{
    const char *seen[8];
    size_t n_seen = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        bool involves = false;
        for (size_t i = 0; coef->n_parts > 1 && i < coef->n_parts; i++)
            involves = involves || strcmp(coef->parts[i].column->name, name) == 0;
        for (size_t i = 0; involves && i < coef->n_parts; i++) {
            const data_column *other = coef->parts[i].column;
            bool known = strcmp(other->name, name) == 0;
            for (size_t k = 0; k < n_seen; k++)
                known = known || strcmp(seen[k], other->name) == 0;
            if (known || n_seen == 8)
                continue;
            seen[n_seen++] = other->name;
            buf_puts(out, n_seen == 1 ? "With " : " and ");
            if (coef->parts[i].kind == DESIGN_SUM) {
                buf_puts(out, "an average over the levels of ");
                story_words(st, out, other->name);
                continue;
            }
            story_words(st, out, other->name);
            if (other->kind == DATA_CATEGORY)
                buf_printf(out, " at its reference level '%s'",
                           other->levels[other->reference]);
            else
                buf_puts(out, " at zero");
        }
    }
    if (n_seen || !quiet)
        buf_puts(out, n_seen ? " and the other terms held constant, "
                             : "Holding the other terms constant, ");
}

/* text with its first letter in capitals (ASCII), then tail. */
static void capitalised(buf *out, const char *text, const char *tail)
{
    buf_printf(out, "%c%s%s", text[0] >= 'a' && text[0] <= 'z' ? text[0] - 'a' + 'A' : text[0],
               text + 1, tail);
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
    buf_printf(out, " (%g%% confidence interval %s to %s; p %s%s)", r->st->level * 100, a, b,
               pv[0] == '<' ? "" : "= ", pv);
}

static void uncertainty(buf *out, const reading *r, double p)
{
    if (!isnan(p) && !(p < r->st->alpha))
        buf_puts(out, " The interval includes zero, so the data cannot tell this difference "
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
    directed_interval(out, r, low, high, p, "", "higher", "lower");
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
            sum = sum || (part && part->column == categories[k] && part->kind == DESIGN_SUM);
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
        char value[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
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
        buf_printf(out, " (%g%% confidence interval %s to %s)", r->st->level * 100, low, high);
    } else {
        words(out, r, r->response);
        buf_puts(out, " is ");
        story_amount(r->st, out, r->response, r->fc->estimate);
        plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
    }
    /* Zero outside a predictor's range: the intercept is then a point no
       row comes near, and the sentence says so instead of offering it as
       a prediction. */
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
        buf_puts(out, ", so this value anchors the equation and is not a prediction for any "
                      "row like those observed.");
    } else {
        buf_puts(out, ". This anchors the equation; it is a prediction only where such values "
                      "occur in the data.");
    }
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
    open_main_effect(out, r->st, r->am->design, name, false);
    double scale = step(out, r, name);
    buf_puts(out, " goes with ");
    response_change(out, r, r->fc->estimate * scale, r->fc->ci_low * scale,
                    r->fc->ci_high * scale, r->fc->p);
    if (log_transform_of(r->st, name) >= 0 && logged_response(r)) {
        char number[NARRATE_NUMBER_SIZE];
        story_number(r->st, number, r->fc->estimate);
        buf_printf(out, "; with both logged, the coefficient %s is an elasticity: the "
                        "percentage change of the median per 1%% change, approximately",
                   number);
    }
    buf_puts(out, ".");
    uncertainty(out, r, r->fc->p);
}

static void say_level(buf *out, const reading *r, const design_part *level)
{
    if (level->kind == DESIGN_ALL_LEVELS) {
        const design *d = r->am->design;
        if (d->n_ranges)
            buf_printf(out, "With every numeric predictor at zero, %s with ", story_rows(r->st));
        else
            capitalised(out, story_rows(r->st), " with ");
        words(out, r, level->column->name);
        buf_printf(out, " '%s' have a fitted ", level->level);
        if (logged_response(r)) {
            const spec_derive *derive = story_derivation(r->st, r->response);
            char value[NARRATE_NUMBER_SIZE];
            story_number(r->st, value, r->fc->estimate);
            words(out, r, r->response);
            buf_printf(out, " of %s", value);
            buf_puts(out, " (the model has no intercept, so each level has its own)");
            plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
            buf_puts(out, "; on the original scale that is a median ");
            words(out, r, derive->from);
            buf_puts(out, " of ");
            story_amount(r->st, out, derive->from, unlog(r->response_log, r->fc->estimate));
        } else {
            words(out, r, r->response);
            buf_puts(out, " of ");
            story_amount(r->st, out, r->response, r->fc->estimate);
            buf_puts(out, " (the model has no intercept, so each level has its own)");
            plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
        }
        buf_puts(out, ".");
        return;
    }
    size_t opened = out->length;
    open_main_effect(out, r->st, r->am->design, level->column->name, true);
    if (out->length == opened)
        capitalised(out, story_rows(r->st), " with ");
    else
        buf_printf(out, "%s with ", story_rows(r->st));
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
    buf_printf(out, " bends the fitted curve: its coefficient %s has no per-unit reading on "
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

/* A difference of slopes or gaps: "0.01056 MPa per 1 day larger (95% …)". */
static void difference(buf *out, const reading *r, double scale, const char *suffix)
{
    const fit_coef *fc = r->fc;
    directed(out, r, fc->estimate * scale, suffix, "larger", "smaller");
    directed_interval(out, r, fc->ci_low * scale, fc->ci_high * scale, fc->p, suffix,
                      "larger", "smaller");
}

static void say_interaction(buf *out, const reading *r)
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
        words(out, r, logged_response(r) ? story_derivation(r->st, r->response)->from
                                         : r->response);
        per_step(&suffix, r, numeric[0]->column->name, &scale);
        buf_printf(out, "%s of ", suffix.data);
        words(out, r, numeric[0]->column->name);
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
        words(out, r, logged_response(r) ? story_derivation(r->st, r->response)->from
                                         : r->response);
        per_step(&suffix, r, numeric[0]->column->name, &scale);
        buf_printf(out, "%s of ", suffix.data);
        words(out, r, numeric[0]->column->name);
        buf_puts(out, " is ");
        buf other;
        buf_init(&other);
        scale *= story_step(r->st, &other, numeric[1]->column->name);
        difference(out, r, scale, logged_response(r) ? "" : suffix.data);
        buf_printf(out, " for each increase of %s in ", other.data);
        words(out, r, numeric[1]->column->name);
        buf_free(&other);
    } else if (coef->n_parts == 2) {
        buf_puts(out, "The gap in ");
        words(out, r, logged_response(r) ? story_derivation(r->st, r->response)->from
                                         : r->response);
        buf_puts(out, " between ");
        words(out, r, levels[0]->column->name);
        buf_printf(out, " '%s' and its reference level '%s' is ", levels[0]->level,
                   reference_of(levels[0]->column));
        difference(out, r, 1.0, "");
        buf_printf(out, " for %s with ", story_rows(r->st));
        words(out, r, levels[1]->column->name);
        buf_printf(out, " '%s' than for those with its reference level '%s'", levels[1]->level,
                   reference_of(levels[1]->column));
    } else {
        buf_puts(out, "This three-way interaction coefficient is added, times the product of");
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            buf_puts(out, i ? ", " : " ");
            if (part->level)
                buf_puts(out, "[");
            words(out, r, part->column->name);
            if (part->level)
                buf_printf(out, " is '%s']", part->level);
        }
        buf_puts(out, ", to the fitted value on top of the two-way terms");
        plain_interval(out, r, r->fc->ci_low, r->fc->ci_high, r->fc->p);
    }
    buf_free(&suffix);
    buf_puts(out, ".");
    uncertainty(out, r, r->fc->p);
}


/* ---- readings at representative values ---------------------------------
   A main effect whose column also enters an interaction or a polynomial has
   no single reading: its slope (numeric) or its difference from the
   reference (category) depends on the other columns of those terms. It is
   read instead at settings that occur: every level of a category partner,
   and for a numeric partner (or the column itself in a polynomial) the
   analyst's `at` values or the median of the fitted rows. Each reading is a
   combination Σ w_c β_c of the coefficients, with its interval from the
   covariance (fit_combination):
     slope of x:      w_c = ∂(column c)/∂x at the setting
                      (k x^(k−1) × the other factors for a factor x^k);
     level L vs ref:  w_c = column c at L − column c at the reference level
                      (sum coding: minus the unweighted average over levels).
*/

#define MAX_PARTNERS 4
#define MAX_SETTINGS 12

typedef struct {
    const data_column *column;
    const design_range *range; /* numeric partners */
    int32_t codes[64];         /* category partners: levels with a column, in level order */
    size_t n_values;
} partner;

typedef struct {
    partner partners[MAX_PARTNERS];
    size_t n;
} partners;

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

/* The levels of a category that the design uses: the reference (or the
   omitted level of sum coding) and every level with a coefficient. */
static void category_levels(const design *d, partner *p)
{
    bool seen[64] = {false};
    const data_column *column = p->column;
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t i = 0; i < d->coefs[c].n_parts; i++) {
            const design_part *part = &d->coefs[c].parts[i];
            if (part->column != column || part->code < 0 || part->code >= 64)
                continue;
            seen[part->code] = true;
            if (part->kind == DESIGN_SUM && part->omitted_code >= 0 && part->omitted_code < 64)
                seen[part->omitted_code] = true;
            else if (part->kind == DESIGN_TREATMENT && column->reference < 64)
                seen[column->reference] = true;
        }
    p->n_values = 0;
    for (int32_t k = 0; k < 64; k++)
        if (seen[k])
            p->codes[p->n_values++] = k;
}

static void add_partner(const design *d, partners *ps, const data_column *column)
{
    for (size_t k = 0; k < ps->n; k++)
        if (ps->partners[k].column == column)
            return;
    if (ps->n == MAX_PARTNERS)
        return;
    partner *p = &ps->partners[ps->n];
    memset(p, 0, sizeof *p);
    p->column = column;
    if (column->kind == DATA_CATEGORY) {
        category_levels(d, p);
    } else {
        p->range = range_of(d, column);
        p->n_values = p->range ? p->range->n_at : 0;
    }
    if (p->n_values > 0)
        ps->n++;
}

/* The columns the reading of target depends on; none for a plain main
   effect. The target itself is a partner when it has powers. */
static void find_partners(const design *d, const data_column *target, partners *ps)
{
    ps->n = 0;
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        if (!coef_has(coef, target))
            continue;
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            if (part->column != target)
                add_partner(d, ps, part->column);
            else if (part->power > 1)
                add_partner(d, ps, target);
        }
    }
}

/* The value of one factor at a setting: values[k] for numeric partner k,
   codes[k] for a category partner. */
typedef struct {
    const partners *ps;
    size_t index[MAX_PARTNERS]; /* which value of each partner */
} setting;

static double partner_number(const setting *s, const data_column *column, bool *found)
{
    for (size_t k = 0; k < s->ps->n; k++) {
        const partner *p = &s->ps->partners[k];
        if (p->column == column && column->kind != DATA_CATEGORY) {
            *found = true;
            return p->range->at[s->index[k]];
        }
    }
    *found = false;
    return 0.0;
}

static int32_t partner_code(const setting *s, const data_column *column)
{
    for (size_t k = 0; k < s->ps->n; k++)
        if (s->ps->partners[k].column == column)
            return s->ps->partners[k].codes[s->index[k]];
    return column->reference < INT32_MAX ? (int32_t)column->reference : 0;
}

static double part_value(const design_part *part, const setting *s, int32_t code_override,
                         const data_column *override_column)
{
    if (part->column->kind == DATA_CATEGORY) {
        int32_t code = part->column == override_column ? code_override
                                                       : partner_code(s, part->column);
        double v = code == part->code;
        if (part->kind == DESIGN_SUM)
            v -= code == part->omitted_code;
        return v;
    }
    bool found;
    double x = partner_number(s, part->column, &found);
    return pow(x, part->power);
}

/* w_c for the slope of numeric target x at setting s. */
static void slope_weights(const design *d, const data_column *x, const setting *s, double *w)
{
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        w[c] = 0.0;
        if (!coef_has(coef, x))
            continue;
        double value = 1.0;
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            if (part->column == x) {
                bool found;
                double at = partner_number(s, x, &found);
                value *= part->power == 1 ? 1.0 : part->power * pow(at, part->power - 1);
            } else {
                value *= part_value(part, s, -1, NULL);
            }
        }
        w[c] = value;
    }
}

/* w_c for level code L of category g against its reference (or, in sum
   coding, against the unweighted average of the levels the design uses). */
static void level_weights(const design *d, const data_column *g, int32_t level, bool sum,
                          const setting *s, double *w)
{
    partner levels;
    memset(&levels, 0, sizeof levels);
    levels.column = g;
    category_levels(d, &levels);
    for (size_t c = 0; c < d->n_coefs; c++) {
        const design_coef *coef = &d->coefs[c];
        w[c] = 0.0;
        if (!coef_has(coef, g))
            continue;
        double at_level = 1.0;
        for (size_t i = 0; i < coef->n_parts; i++)
            at_level *= part_value(&coef->parts[i], s, level, g);
        double base = 0.0;
        if (sum) {
            for (size_t k = 0; k < levels.n_values; k++) {
                double v = 1.0;
                for (size_t i = 0; i < coef->n_parts; i++)
                    v *= part_value(&coef->parts[i], s, levels.codes[k], g);
                base += v / (double)levels.n_values;
            }
        } else {
            base = 1.0;
            for (size_t i = 0; i < coef->n_parts; i++)
                base *= part_value(&coef->parts[i], s, (int32_t)g->reference, g);
        }
        w[c] = at_level - base;
    }
}

/* " with admixture 'none' at curing age 28 day (the median of the fitted
   rows)"; the target's own partner entry (a polynomial) reads "near". */
static void setting_words(buf *out, const reading *r, const setting *s,
                          const data_column *target)
{
    for (size_t k = 0; k < s->ps->n; k++) {
        const partner *p = &s->ps->partners[k];
        buf_puts(out, k == 0 ? " where " : " and ");
        words(out, r, p->column->name);
        if (p->column->kind == DATA_CATEGORY) {
            buf_printf(out, " is '%s'", p->column->levels[p->codes[s->index[k]]]);
            continue;
        }
        char value[NARRATE_NUMBER_SIZE];
        story_value(r->st, value, p->range->at[s->index[k]]);
        const char *unit = story_unit(r->st, p->column->name);
        buf_printf(out, " is %s%s%s", value, unit ? " " : "", unit ? unit : "");
        (void)target;
        if (!p->range->at_from_spec)
            buf_puts(out, " (the median of the fitted rows)");
        else if (p->range->at[s->index[k]] < p->range->min ||
                 p->range->at[s->index[k]] > p->range->max)
            buf_puts(out, " (outside the data)");
    }
}

/* Steps through every setting; false after the last. */
static bool next_setting(setting *s)
{
    for (size_t k = s->ps->n; k-- > 0;) {
        if (++s->index[k] < s->ps->partners[k].n_values)
            return true;
        s->index[k] = 0;
    }
    return false;
}

static size_t count_settings(const partners *ps)
{
    size_t count = 1;
    for (size_t k = 0; k < ps->n; k++)
        count *= ps->partners[k].n_values;
    return count;
}

/* What the raw coefficient is: the reading at zero for numeric partners and
   the reference level for categories. */
static void raw_coefficient_note(buf *out, const reading *r, const partners *ps,
                                 const char *what)
{
    char number[NARRATE_NUMBER_SIZE];
    story_number(r->st, number, r->fc->estimate);
    buf_printf(out, " The coefficient in the table, %s, is %s", number, what);
    for (size_t k = 0; k < ps->n; k++) {
        const partner *p = &ps->partners[k];
        buf_puts(out, k == 0 ? " with " : " and ");
        words(out, r, p->column->name);
        if (p->column->kind == DATA_CATEGORY) {
            bool sum = false;
            const design *d = r->am->design;
            for (size_t c = 0; c < d->n_coefs; c++)
                for (size_t i = 0; i < d->coefs[c].n_parts; i++)
                    sum = sum || (d->coefs[c].parts[i].column == p->column &&
                                  d->coefs[c].parts[i].kind == DESIGN_SUM);
            if (sum)
                buf_puts(out, " averaged over its levels");
            else
                buf_printf(out, " at its reference level '%s'", reference_of(p->column));
        } else {
            buf_puts(out, " at zero");
            if (p->range && (p->range->min > 0 || p->range->max < 0)) {
                char a[NARRATE_NUMBER_SIZE], b[NARRATE_NUMBER_SIZE];
                story_value(r->st, a, p->range->min);
                story_value(r->st, b, p->range->max);
                const char *unit = story_unit(r->st, p->column->name);
                buf_printf(out, ", outside the data (%s to %s%s%s)", a, b, unit ? " " : "",
                           unit ? unit : "");
            }
        }
    }
    buf_puts(out, ".");
}

/* The readings at every setting: "0.1468 MPa higher on average (…) with
   admixture 'none'; 0.1573 MPa higher … with admixture 'plasticizer'".
   Returns whether any reading could not be told from zero. */
static bool readings_at(buf *out, const reading *r, const partners *ps, const data_column *target,
                        int32_t level, bool sum, double scale, const char *up, const char *down,
                        bool first_full)
{
    const design *d = r->am->design;
    double *w = xmalloc(d->n_coefs * sizeof(double));
    setting s;
    memset(&s, 0, sizeof s);
    s.ps = ps;
    size_t shown = 0, total = count_settings(ps);
    bool unclear = false;
    do {
        if (target->kind == DATA_CATEGORY)
            level_weights(d, target, level, sum, &s, w);
        else
            slope_weights(d, target, &s, w);
        for (size_t c = 0; c < d->n_coefs; c++)
            w[c] *= scale;
        double value;
        fit_inference in = fit_combination(r->am->fit, w, &value);
        if (shown > 0)
            buf_puts(out, shown + 1 == total || shown + 1 == MAX_SETTINGS ? "; and " : "; ");
        if (shown == 0 && first_full) {
            const spec_derive *derive = story_derivation(r->st, r->response);
            buf_puts(out, logged_response(r) ? "a median " : "a ");
            words(out, r, logged_response(r) ? derive->from : r->response);
            buf_putc(out, ' ');
        }
        directed(out, r, value, "", up, down);
        if (!logged_response(r))
            buf_puts(out, " on average");
        directed_interval(out, r, in.ci_low, in.ci_high, in.p, "", up, down);
        setting_words(out, r, &s, target);
        unclear = unclear || (!isnan(in.p) && !(in.p < r->st->alpha));
        shown++;
    } while (shown < MAX_SETTINGS && next_setting(&s));
    if (total > shown)
        buf_printf(out, " (the first %zu of %zu combinations)", shown, total);
    free(w);
    return unclear;
}

static void say_numeric_at(buf *out, const reading *r, const design_part *x, const partners *ps)
{
    const char *name = x->column->name;
    buf_puts(out, "Adjusted for the other terms, ");
    double scale = step(out, r, name);
    buf_puts(out, " goes with ");
    bool unclear =
        readings_at(out, r, ps, x->column, -1, false, scale, "higher", "lower", true);
    bool power = false;
    for (size_t k = 0; k < ps->n; k++)
        power = power || ps->partners[k].column == x->column;
    buf_printf(out, ". The slope depends on where it is read because the model includes %s ",
               power ? (ps->n == 1 ? "powers of" : "powers and interactions of")
                     : "interactions of");
    words(out, r, name);
    buf_puts(out, ".");
    buf per;
    buf_init(&per);
    buf_puts(&per, "the slope per unit of ");
    words(&per, r, name);
    raw_coefficient_note(out, r, ps, per.data);
    buf_free(&per);
    if (unclear)
        buf_puts(out, " Where an interval includes zero the data cannot tell that change from "
                      "none; that is not evidence that it is zero.");
}

static void say_level_at(buf *out, const reading *r, const design_part *level,
                         const partners *ps)
{
    bool sum = level->kind == DESIGN_SUM;
    buf_printf(out, "Adjusted for the other terms, %s with ", story_rows(r->st));
    words(out, r, level->column->name);
    buf_printf(out, " '%s' have ", level->level);
    bool unclear = readings_at(out, r, ps, level->column, level->code, sum, 1.0, "higher",
                               "lower", true);
    const char *each = count_settings(ps) > 1 ? "each " : "";
    if (sum) {
        buf_printf(out, ", %scompared with the unweighted average over all levels of ", each);
        words(out, r, level->column->name);
    } else {
        buf_printf(out, ", %scompared with those with the reference level '%s'", each,
                   reference_of(level->column));
    }
    buf_puts(out, ". The difference depends on where it is read because the model includes "
                  "interactions of ");
    words(out, r, level->column->name);
    buf_puts(out, ".");
    raw_coefficient_note(out, r, ps, "the difference");
    if (unclear)
        buf_puts(out, " Where an interval includes zero the data cannot tell that difference "
                      "from none; that is not evidence that it is zero.");
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
        buf_printf(out, "%s", any ? (alias[j] < 0 ? " − " : " + ")
                                  : (alias[j] < 0 ? "equals − " : "equals "));
        if (!one)
            buf_printf(out, "%s × ", number);
        buf_puts(out, d->coefs[j].label);
        any = true;
    }
    if (!any)
        buf_puts(out, "is zero everywhere (a level with no rows, for example)");
    buf_puts(out, ", so the data cannot separate it from the columns before it; it is left "
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
    reading r = {st, am, &d->coefs[c], &lead, d->response->name,
                 (spec_transform)log_transform_of(st, d->response->name)};
    buf out;
    buf_init(&out);
    const design_coef *coef = r.coef;
    if (!r.fc->estimable)
        say_not_estimable(&out, &r);
    else if (coef->n_parts == 0)
        say_intercept(&out, &r);
    else if (coef->n_parts == 1 && coef->parts[0].level) {
        partners ps;
        find_partners(d, coef->parts[0].column, &ps);
        if (ps.n > 0 && coef->parts[0].kind != DESIGN_ALL_LEVELS)
            say_level_at(&out, &r, &coef->parts[0], &ps);
        else
            say_level(&out, &r, &coef->parts[0]);
    } else if (coef->n_parts == 1 && coef->parts[0].power > 1)
        say_power(&out, &r, &coef->parts[0]);
    else if (coef->n_parts == 1) {
        partners ps;
        find_partners(d, coef->parts[0].column, &ps);
        if (ps.n > 0)
            say_numeric_at(&out, &r, &coef->parts[0], &ps);
        else
            say_numeric(&out, &r, &coef->parts[0]);
    }
    else
        say_interaction(&out, &r);
    return buf_detach(&out);
}

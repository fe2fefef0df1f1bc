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
static void open_main_effect(buf *out, const story *st, const design *d, const char *name)
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
    buf_puts(out, n_seen ? " and the other terms held constant, "
                         : "Holding the other terms constant, ");
}

static const char *reference_of(const data_column *column)
{
    return column->levels[column->reference];
}

static void words(buf *out, const reading *r, const char *column)
{
    story_words(r->st, out, column);
}

/* " (95% confidence interval lo to hi; p = 0.012)" with the bounds as
   given (already on the scale the sentence speaks of). */
static void interval_text(buf *out, const reading *r, const char *low, const char *high)
{
    char p[NARRATE_NUMBER_SIZE];
    narrate_p_value(p, r->fc->p);
    buf_printf(out, " (%g%% confidence interval %s to %s; p %s%s)", r->st->level * 100, low,
               high, p[0] == '<' ? "" : "= ", p);
}

static void interval(buf *out, const reading *r)
{
    char low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
    story_number(r->st, low, r->fc->ci_low);
    story_number(r->st, high, r->fc->ci_high);
    interval_text(out, r, low, high);
}

/* The interval as percentage changes of the response, for a change
   `scale` in the predictor's own (possibly logged) scale. */
static void percent_interval(buf *out, const reading *r, double scale)
{
    char low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
    story_percent(low, unlog(r->response_log, r->fc->ci_low * scale) - 1.0);
    story_percent(high, unlog(r->response_log, r->fc->ci_high * scale) - 1.0);
    interval_text(out, r, low, high);
}

static void uncertainty(buf *out, const reading *r)
{
    if (!(r->fc->p < r->st->alpha))
        buf_puts(out, " The interval includes zero, so the data cannot distinguish this "
                      "effect from no effect; that is not evidence that it is zero.");
}

/* "a compressive strength 3.2 MPa higher" or, for a logged response,
   "a cost 12.5% higher"; scale multiplies the estimate first. */
static void change(buf *out, const reading *r, double scale)
{
    double e = r->fc->estimate * scale;
    buf_puts(out, "a ");
    /* A logged response is spoken of on its original scale, in percent. */
    const spec_derive *derive = story_derivation(r->st, r->response);
    words(out, r, (int)r->response_log >= 0 ? derive->from : r->response);
    buf_putc(out, ' ');
    if ((int)r->response_log >= 0) {
        char percent[NARRATE_NUMBER_SIZE];
        double factor = unlog(r->response_log, e) - 1.0;
        story_percent(percent, fabs(factor));
        buf_printf(out, "%s %s", percent, factor >= 0 ? "higher" : "lower");
        return;
    }
    story_amount(r->st, out, r->response, fabs(e));
    buf_puts(out, e >= 0 ? " higher" : " lower");
}

static void close_sentence(buf *out, const reading *r, double scale)
{
    if ((int)r->response_log >= 0)
        percent_interval(out, r, scale);
    else if (scale == 1.0)
        interval(out, r);
    else {
        char low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
        story_number(r->st, low, r->fc->ci_low * scale);
        story_number(r->st, high, r->fc->ci_high * scale);
        interval_text(out, r, low, high);
    }
    buf_puts(out, ".");
    uncertainty(out, r);
}

/* A signed effect on the response: "+3.2 MPa" style without the sign
   words, or for a logged response the percentage change ("12.5%"). */
static void effect(buf *out, const reading *r, double e)
{
    if ((int)r->response_log >= 0) {
        char percent[NARRATE_NUMBER_SIZE];
        story_percent(percent, unlog(r->response_log, e) - 1.0);
        buf_puts(out, percent);
    } else {
        story_amount(r->st, out, r->response, e);
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
    buf_puts(out, "With every numeric predictor at zero");
    for (size_t k = 0; k < n; k++) {
        buf_puts(out, k == 0 ? (n == 1 ? " and " : ", ") : (k + 1 == n ? " and " : ", "));
        words(out, r, categories[k]->name);
        buf_printf(out, " at its reference level '%s'", reference_of(categories[k]));
    }
    buf_puts(out, ", the model's expected ");
    if ((int)r->response_log >= 0) {
        /* Speak of the original scale: the back-transformed value is the
           median of the response there. */
        const spec_derive *derive = story_derivation(r->st, r->response);
        char value[NARRATE_NUMBER_SIZE], low[NARRATE_NUMBER_SIZE], high[NARRATE_NUMBER_SIZE];
        buf_puts(out, "value of ");
        words(out, r, r->response);
        story_number(r->st, value, r->fc->estimate);
        story_number(r->st, low, r->fc->ci_low);
        story_number(r->st, high, r->fc->ci_high);
        buf_printf(out, " is %s", value);
        interval_text(out, r, low, high);
        buf_puts(out, "; on the original scale that is a median ");
        words(out, r, derive->from);
        buf_puts(out, " of ");
        story_amount(r->st, out, derive->from, unlog(r->response_log, r->fc->estimate));
    } else {
        words(out, r, r->response);
        buf_puts(out, " is ");
        story_amount(r->st, out, r->response, r->fc->estimate);
        interval(out, r);
    }
    buf_puts(out, ". This anchors the equation; it is a prediction only where such values "
                  "occur in the data.");
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
    open_main_effect(out, r->st, r->am->design, name);
    double scale = step(out, r, name);
    buf_puts(out, " goes with ");
    change(out, r, scale);
    buf_puts(out, " on average");
    if (log_transform_of(r->st, name) >= 0 && (int)r->response_log >= 0)
        buf_puts(out, " (an elasticity)");
    close_sentence(out, r, scale);
}

static void say_level(buf *out, const reading *r, const design_part *level)
{
    if (level->kind == DESIGN_ALL_LEVELS) {
        buf_printf(out, "With every numeric predictor at zero, %s with ", story_rows(r->st));
        words(out, r, level->column->name);
        buf_printf(out, " '%s' have an expected ", level->level);
        words(out, r, r->response);
        buf_puts(out, " of ");
        if ((int)r->response_log >= 0) {
            char value[NARRATE_NUMBER_SIZE];
            story_number(r->st, value, r->fc->estimate);
            buf_printf(out, "%s on the logarithmic scale", value);
        } else {
            story_amount(r->st, out, r->response, r->fc->estimate);
        }
        buf_puts(out, " (the model has no intercept, so each level has its own)");
        interval(out, r);
        buf_puts(out, ".");
        return;
    }
    open_main_effect(out, r->st, r->am->design, level->column->name);
    buf_printf(out, "%s with ", story_rows(r->st));
    words(out, r, level->column->name);
    buf_printf(out, " '%s' %s ", level->level,
               (int)r->response_log >= 0 ? "typically have" : "average");
    change(out, r, 1.0);
    if (level->kind == DESIGN_SUM) {
        buf_puts(out, " than the average over all levels of ");
        words(out, r, level->column->name);
    } else {
        buf_printf(out, " than those with the reference level '%s'",
                   reference_of(level->column));
    }
    close_sentence(out, r, 1.0);
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
    interval(out, r);
    buf_puts(out, ".");
    uncertainty(out, r);
}

/* "… is 1.056 MPa per 100 days larger" / "… 3.1% per 1 day larger" for a
   logged response, where the slope is a rate of percentage change.
   Returns the step the numbers were scaled by. */
static double slope_difference(buf *out, const reading *r, const char *numeric_column)
{
    buf per;
    buf_init(&per);
    double step = story_step(r->st, &per, numeric_column);
    double e = r->fc->estimate * step;
    if ((int)r->response_log >= 0) {
        char percent[NARRATE_NUMBER_SIZE];
        story_percent(percent, fabs(unlog(r->response_log, e) - 1.0));
        buf_printf(out, "%s per %s %s", percent, per.data, e >= 0 ? "larger" : "smaller");
    } else {
        story_amount(r->st, out, r->response, fabs(e));
        buf_printf(out, " per %s %s", per.data, e >= 0 ? "larger" : "smaller");
    }
    buf_free(&per);
    return step;
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
    double e = r->fc->estimate, scale = 1.0;
    if (coef->n_parts == 2 && n_numeric == 1) {
        buf_puts(out, "The effect of ");
        words(out, r, numeric[0]->column->name);
        buf_puts(out, " on ");
        words(out, r, r->response);
        buf_puts(out, " is ");
        scale = slope_difference(out, r, numeric[0]->column->name);
        buf_printf(out, " for %s with ", story_rows(r->st));
        words(out, r, levels[0]->column->name);
        if (levels[0]->kind == DESIGN_SUM)
            buf_printf(out, " '%s' than its average over all levels", levels[0]->level);
        else
            buf_printf(out, " '%s' than for those with the reference level '%s'",
                       levels[0]->level, reference_of(levels[0]->column));
    } else if (coef->n_parts == 2 && n_numeric == 2) {
        buf_puts(out, "The effect of ");
        words(out, r, numeric[0]->column->name);
        buf_puts(out, " on ");
        words(out, r, r->response);
        buf_puts(out, " changes by ");
        buf first, second;
        buf_init(&first);
        buf_init(&second);
        scale = story_step(r->st, &first, numeric[0]->column->name) *
                story_step(r->st, &second, numeric[1]->column->name);
        effect(out, r, e * scale);
        buf_printf(out, " per %s for each increase of %s in ", first.data, second.data);
        words(out, r, numeric[1]->column->name);
        buf_free(&first);
        buf_free(&second);
    } else if (coef->n_parts == 2) {
        buf_puts(out, "The gap in ");
        words(out, r, r->response);
        buf_puts(out, " between ");
        words(out, r, levels[0]->column->name);
        buf_printf(out, " '%s' and its reference level '%s' is ", levels[0]->level,
                   reference_of(levels[0]->column));
        if ((int)r->response_log >= 0) {
            char percent[NARRATE_NUMBER_SIZE];
            story_percent(percent, fabs(unlog(r->response_log, e) - 1.0));
            buf_printf(out, "%s %s", percent, e >= 0 ? "larger" : "smaller");
        } else {
            story_amount(r->st, out, r->response, fabs(e));
            buf_puts(out, e >= 0 ? " larger" : " smaller");
        }
        buf_printf(out, " for %s with ", story_rows(r->st));
        words(out, r, levels[1]->column->name);
        buf_printf(out, " '%s' than for those with its reference level '%s'", levels[1]->level,
                   reference_of(levels[1]->column));
    } else {
        buf_puts(out, "This three-way interaction adds ");
        effect(out, r, e);
        buf_puts(out, " times the product of");
        for (size_t i = 0; i < coef->n_parts; i++) {
            const design_part *part = &coef->parts[i];
            buf_puts(out, i ? ", " : " ");
            if (part->level)
                buf_puts(out, "[");
            words(out, r, part->column->name);
            if (part->level)
                buf_printf(out, " is '%s']", part->level);
        }
        buf_puts(out, " to the fitted value, on top of the two-way terms");
    }
    close_sentence(out, r, scale);
}

/* Names the combination of other columns an aliased column equals. */
static void say_not_estimable(buf *out, const reading *r)
{
    const design *d = r->am->design;
    const double *alias = r->fc->alias;
    buf_puts(out, "Not estimable: in the rows used, this column ");
    bool any = false;
    for (size_t j = 0; alias && j < d->n_coefs; j++) {
        if (alias[j] == 0.0)
            continue;
        char number[NARRATE_NUMBER_SIZE];
        narrate_number(number, fabs(alias[j]), 4);
        buf_printf(out, "%s%s%s × %s", any ? (alias[j] < 0 ? " − " : " + ")
                                          : (alias[j] < 0 ? "equals − " : "equals "),
                   "", number, d->coefs[j].label);
        any = true;
    }
    if (!any)
        buf_puts(out, "is zero everywhere (a level with no rows, for example)");
    buf_puts(out, ", so the data cannot separate its effect from the others'; it is left out "
                  "of the fit.");
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
    else if (coef->n_parts == 1 && coef->parts[0].level)
        say_level(&out, &r, &coef->parts[0]);
    else if (coef->n_parts == 1 && coef->parts[0].power > 1)
        say_power(&out, &r, &coef->parts[0]);
    else if (coef->n_parts == 1)
        say_numeric(&out, &r, &coef->parts[0]);
    else
        say_interaction(&out, &r);
    return buf_detach(&out);
}

/*
 * refs.c — values cited in the spec's narrative blocks. A reference is
 * written @{MODEL.QUANTITY}, @{MODEL.QUANTITY[COEFFICIENT]} or
 * @{check[NAME]}, optionally followed by :FORMAT (sig3, dp2, pct, pct0, p,
 * int); @@{ writes a literal @{. Each reference is replaced by the same
 * formatted number the report's tables show, so prose stays true when the
 * data change. A reference to something that does not exist is a located
 * spec error, found by lint as well as by build.
 */
#include "parts.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* What a reference asks for, once parsed. */
typedef struct {
    char model[128];
    char quantity[64];
    char key[256];   /* inside [...] */
    char format[16];
    bool has_key;
} reference;

static const char *const coefficient_quantities[] = {"estimate", "std_error", "t",
                                                     "p",        "ci_low",    "ci_high",
                                                     NULL};
static const char *const model_quantities[] = {
    "r_squared",       "adj_r_squared",   "sigma",          "f",
    "f_p",             "n_used",          "n_dropped",      "df_model",
    "df_residual",     "log_likelihood",  "aic",            "bic",
    "shapiro_w",       "shapiro_p",       "breusch_pagan",  "breusch_pagan_p",
    "durbin_watson",   "durbin_watson_p", "autocorrelation", "reset_f",
    "reset_p",         "max_vif",         "max_cooks_distance", NULL};

static bool among(const char *name, const char *const *names)
{
    for (size_t i = 0; names[i]; i++)
        if (strcmp(names[i], name) == 0)
            return true;
    return false;
}

/* Splits "main.estimate[wc_ratio]:dp2" into its parts; false when the text
   has no recognisable shape. */
static bool parse_reference(const char *text, size_t length, reference *ref)
{
    memset(ref, 0, sizeof *ref);
    const char *end = text + length;
    const char *open = memchr(text, '[', length);
    const char *close = open ? memchr(open, ']', (size_t)(end - open)) : NULL;
    if (open && !close)
        return false;
    const char *after = close ? close + 1 : text;
    const char *colon = memchr(after, ':', (size_t)(end - after));
    const char *target_end = open ? open : (colon ? colon : end);
    if (colon) {
        size_t n = (size_t)(end - colon - 1);
        if (n == 0 || n >= sizeof ref->format)
            return false;
        memcpy(ref->format, colon + 1, n);
    }
    if (close && close + 1 != (colon ? colon : end))
        return false;
    if (open) {
        size_t n = (size_t)(close - open - 1);
        if (n >= sizeof ref->key)
            return false;
        memcpy(ref->key, open + 1, n);
        ref->has_key = true;
    }
    const char *dot = memchr(text, '.', (size_t)(target_end - text));
    size_t model_length = dot ? (size_t)(dot - text) : 0;
    const char *quantity = dot ? dot + 1 : text;
    size_t quantity_length = (size_t)(target_end - quantity);
    if (model_length >= sizeof ref->model || quantity_length == 0 ||
        quantity_length >= sizeof ref->quantity)
        return false;
    memcpy(ref->model, text, model_length);
    memcpy(ref->quantity, quantity, quantity_length);
    return true;
}

/* Where, in the spec file, the reference starting at offset of the
   section's text was written: the reference is the k-th occurrence of its
   text in the section, so it is the k-th occurrence in the spec's source
   after the section's start, whatever the line breaks (LF, CR LF, CR) or
   the YAML style (plain, quoted over several lines, literal). When the
   text is not in the source as written (YAML escapes), the section's
   start. */
static src_mark locate(const story *st, const spec_section *section, size_t offset,
                       const char *ref_text, size_t ref_length)
{
    const char *markdown = section->markdown;
    size_t before = 0;
    for (const char *p = markdown; (p = strstr(p, "@{")) && (size_t)(p - markdown) < offset;
         p += 2)
        before += strncmp(p, ref_text, ref_length) == 0;
    const char *source = st->s->source;
    size_t length = st->s->source_length;
    size_t i = text_offset_of_mark(source, length, section->at);
    for (; i + ref_length <= length; i++) {
        if (memcmp(source + i, ref_text, ref_length) != 0)
            continue;
        if (before == 0)
            return text_mark_of_offset(source, length, i);
        before--;
    }
    return section->at;
}

static void format_value(const story *st, const reference *ref, double value, bool p_like,
                         bool whole, buf *out)
{
    char text[NARRATE_NUMBER_SIZE];
    const char *format = ref->format;
    int digits;
    /* Fixed-point forms are written straight into the growing buffer, so
       that a large value comes out whole at any number of decimals (a
       fixed-size field would cut 2.8e160 with 12 decimals mid-number). */
    bool fixed = strcmp(format, "int") == 0 || strncmp(format, "dp", 2) == 0 ||
                 (strncmp(format, "pct", 3) == 0) || (format[0] == '\0' && whole && !p_like);
    if (fixed && !isfinite(value)) {
        narrate_number(text, value, 4); /* n/a, ∞ */
    } else if (format[0] == '\0') {
        if (p_like)
            narrate_p_value(text, value);
        else if (whole) {
            buf_printf(out, "%.0f", value);
            return;
        } else
            story_number(st, text, value);
    } else if (strcmp(format, "p") == 0) {
        narrate_p_value(text, value);
    } else if (strcmp(format, "int") == 0) {
        buf_printf(out, "%.0f", value);
        return;
    } else if (strncmp(format, "pct", 3) == 0) {
        digits = format[3] ? atoi(format + 3) : 1;
        buf_printf(out, "%.*f%%", digits, value * 100.0);
        return;
    } else if (strncmp(format, "dp", 2) == 0) {
        buf_printf(out, "%.*f", atoi(format + 2), value);
        return;
    } else {
        narrate_number(text, value, atoi(format + 3));
    }
    buf_puts(out, text);
}

/* Checks the format name: sig2..sig12, dp0..dp12, pct, pct0..pct6, p, int. */
static bool format_known(const char *format)
{
    if (format[0] == '\0' || strcmp(format, "p") == 0 || strcmp(format, "int") == 0 ||
        strcmp(format, "pct") == 0)
        return true;
    struct { const char *prefix; int low, high; } forms[] = {
        {"sig", 2, 12}, {"dp", 0, 12}, {"pct", 0, 6}};
    for (size_t i = 0; i < 3; i++) {
        size_t n = strlen(forms[i].prefix);
        if (strncmp(format, forms[i].prefix, n) != 0 || format[n] == '\0')
            continue;
        char *end;
        long value = strtol(format + n, &end, 10);
        if (*end == '\0' && value >= forms[i].low && value <= forms[i].high)
            return true;
    }
    return false;
}

static const analysis_model *model_of(const story *st, const char *id)
{
    for (size_t m = 0; st->a && m < st->a->n_models; m++)
        if (st->a->models[m].model->id && strcmp(st->a->models[m].model->id, id) == 0)
            return &st->a->models[m];
    return NULL;
}

static long coefficient_index(const analysis_model *am, const char *label)
{
    for (size_t c = 0; c < am->design->n_coefs; c++)
        if (strcmp(am->design->coefs[c].label, label) == 0)
            return (long)c;
    return -1;
}

static double model_value(const analysis_model *am, const char *quantity)
{
    const fit_result *f = am->fit;
    const struct { const char *name; double value; } values[] = {
        {"r_squared", f->r_squared},     {"adj_r_squared", f->adj_r_squared},
        {"sigma", f->sigma},
        /* the overall test the report leads with: the Wald test under robust errors */
        {"f", f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_f : f->f},
        {"f_p", f->errors != SPEC_ERRORS_CLASSICAL ? f->wald_f_p : f->f_p},
        {"n_used", (double)am->design->n_used},
        {"n_dropped", (double)am->design->n_dropped},
        {"df_model", f->df_model},       {"df_residual", f->df_residual},
        {"log_likelihood", f->log_likelihood},
        {"aic", f->aic},                 {"bic", f->bic}};
    for (size_t i = 0; i < sizeof values / sizeof values[0]; i++)
        if (strcmp(values[i].name, quantity) == 0)
            return values[i].value;
    const diagnostics *g = am->diagnostics;
    if (!g)
        return NAN;
    const struct { const char *name; double value; } tests[] = {
        {"shapiro_w", g->shapiro.w},
        {"shapiro_p", g->shapiro.p},
        {"breusch_pagan", g->breusch_pagan.studentized.statistic},
        {"breusch_pagan_p", g->breusch_pagan.studentized.p},
        {"durbin_watson", g->durbin_watson.d},
        {"durbin_watson_p", g->durbin_watson.p_two_sided},
        {"autocorrelation", g->durbin_watson.autocorrelation},
        {"reset_f", g->reset.f},
        {"reset_p", g->reset.p},
        {"max_vif", g->collinearity.max_vif},
        {"max_cooks_distance", g->influence.max_cooks}};
    for (size_t i = 0; i < sizeof tests / sizeof tests[0]; i++)
        if (strcmp(tests[i].name, quantity) == 0)
            return tests[i].value;
    return NAN;
}

/* The figures the coefficient table shows: under the errors the model
   leads with. */
static double coefficient_value(const fit_result *f, size_t c, const char *quantity)
{
    const fit_coef *fc = &f->coefs[c];
    fit_inference lead = fc->estimable ? fit_lead_inference(f, c)
                                       : (fit_inference){NAN, NAN, NAN, NAN, NAN};
    const struct { const char *name; double value; } values[] = {
        {"estimate", fc->estimate}, {"std_error", lead.std_error}, {"t", lead.t},
        {"p", lead.p},              {"ci_low", lead.ci_low},       {"ci_high", lead.ci_high}};
    for (size_t i = 0; i < sizeof values / sizeof values[0]; i++)
        if (strcmp(values[i].name, quantity) == 0)
            return values[i].value;
    return NAN;
}

/* A spec check by name (its outcome is filled in by the checks stage). */
static const spec_check *check_named(const story *st, const char *name)
{
    for (size_t i = 0; i < st->s->n_checks; i++)
        if (st->s->checks[i].name && strcmp(st->s->checks[i].name, name) == 0)
            return &st->s->checks[i];
    return NULL;
}

/* Resolves one reference into out; returns an error message (static or
   in why) when it names something that does not exist. */
static bool resolve(const story *st, const reference *ref, buf *out, buf *why)
{
    if (!format_known(ref->format)) {
        buf_printf(why, "unknown number format '%s'; use sigN, dpN, pct, pctN, p or int",
                   ref->format);
        return false;
    }
    if (ref->model[0] == '\0' && strcmp(ref->quantity, "check") == 0 && ref->has_key) {
        const spec_check *check = check_named(st, ref->key);
        if (!check) {
            const char **names = xmalloc((st->s->n_checks + 1) * sizeof(char *));
            size_t n = 0;
            for (size_t i = 0; i < st->s->n_checks; i++)
                if (st->s->checks[i].name)
                    names[n++] = st->s->checks[i].name;
            const char *close = closest_name(ref->key, names, n);
            if (close)
                buf_printf(why, "no check is named '%s'; did you mean '%s'?", ref->key, close);
            else
                buf_printf(why, "no check is named '%s'; give the check that name with name:",
                           ref->key);
            free(names);
            return false;
        }
        size_t index = (size_t)(check - st->s->checks);
        if (st->a && index < st->a->n_checks)
            buf_puts(out, st->a->checks[index].passed ? "passed" : "failed");
        return true;
    }
    if (ref->model[0] == '\0') {
        buf_puts(why, "a reference names a model and a quantity, as in @{main.r_squared}");
        return false;
    }
    const spec_model *model = spec_find_model(st->s, ref->model);
    if (!model) {
        const char **ids = xmalloc((st->s->n_models + 1) * sizeof(char *));
        size_t n = 0;
        for (size_t i = 0; i < st->s->n_models; i++)
            if (st->s->models[i].id)
                ids[n++] = st->s->models[i].id;
        buf_printf(why, "no model has the id '%s'", ref->model);
        hint_closest(why, ref->model, ids, n, "the model ids are");
        free(ids);
        return false;
    }
    bool per_coefficient = among(ref->quantity, coefficient_quantities);
    if (!per_coefficient && !among(ref->quantity, model_quantities)) {
        const char *all[32];
        size_t n = 0;
        for (size_t i = 0; coefficient_quantities[i]; i++)
            all[n++] = coefficient_quantities[i];
        for (size_t i = 0; model_quantities[i]; i++)
            all[n++] = model_quantities[i];
        const char *close = closest_name(ref->quantity, all, n);
        buf_printf(why, "unknown quantity '%s'", ref->quantity);
        if (close)
            buf_printf(why, "; did you mean '%s'?", close);
        else
            buf_puts(why, "; see docs/spec.md for the quantities");
        return false;
    }
    if (per_coefficient != ref->has_key) {
        buf_printf(why, per_coefficient ? "'%s' belongs to a coefficient: write "
                                          "@{%s.%s[LABEL]} with the label from the table"
                                        : "'%s' belongs to the whole model: write @{%s.%s} "
                                          "without brackets",
                   ref->quantity, ref->model, ref->quantity);
        return false;
    }
    if (!model->order_by && (strcmp(ref->quantity, "durbin_watson") == 0 ||
                             strcmp(ref->quantity, "durbin_watson_p") == 0 ||
                             strcmp(ref->quantity, "autocorrelation") == 0)) {
        buf_printf(why, "'%s' needs a row order, and model '%s' gives none: without one the "
                        "Durbin–Watson statistic means nothing; add order_by: COLUMN to the "
                        "model or remove the reference",
                   ref->quantity, ref->model);
        return false;
    }
    const analysis_model *am = model_of(st, ref->model);
    if (!am || !am->design)
        return true; /* nothing more can be checked before the designs exist */
    long c = per_coefficient ? coefficient_index(am, ref->key) : -1;
    if (per_coefficient && c < 0) {
        const char **labels = xmalloc(am->design->n_coefs * sizeof(char *));
        for (size_t i = 0; i < am->design->n_coefs; i++)
            labels[i] = am->design->coefs[i].label;
        buf_printf(why, "model '%s' has no coefficient '%s'", ref->model, ref->key);
        hint_closest(why, ref->key, labels, am->design->n_coefs, "its coefficients are");
        free(labels);
        return false;
    }
    if (!am->fit)
        return true;
    size_t length = strlen(ref->quantity);
    bool p_like = strcmp(ref->quantity, "p") == 0 ||
                  (length > 2 && strcmp(ref->quantity + length - 2, "_p") == 0);
    bool whole = strncmp(ref->quantity, "n_", 2) == 0 || strncmp(ref->quantity, "df_", 3) == 0;
    double value = per_coefficient ? coefficient_value(am->fit, (size_t)c, ref->quantity)
                                   : model_value(am, ref->quantity);
    format_value(st, ref, value, p_like, whole, out);
    return true;
}

char *story_expand_references(const story *st, const spec_section *section,
                              error_list *errors)
{
    const char *text = section->markdown;
    buf out, why;
    buf_init(&out);
    buf_init(&why);
    size_t errors_before = errors->count;
    for (size_t i = 0; text[i];) {
        if (text[i] == '@' && text[i + 1] == '@' && text[i + 2] == '{') {
            buf_puts(&out, "@{");
            i += 3;
            continue;
        }
        if (!(text[i] == '@' && text[i + 1] == '{')) {
            buf_putc(&out, text[i++]);
            continue;
        }
        const char *start = text + i + 2;
        const char *end = strchr(start, '}');
        const char *bracket = strchr(start, '[');
        if (bracket && end && bracket < end) {
            const char *closing = strchr(bracket, ']');
            end = closing ? strchr(closing, '}') : NULL;
        }
        size_t ref_length = end ? (size_t)(end - text - i) + 1 : strlen(text + i);
        src_mark at = locate(st, section, i, text + i, ref_length);
        reference ref;
        buf_reset(&why);
        if (!end || !parse_reference(start, (size_t)(end - start), &ref)) {
            error_at(errors, st->s->path, at,
                     "narrative reference '%.*s' is not of the form @{model.quantity}, "
                     "@{model.quantity[coefficient]} or @{check[name]}, optionally with "
                     ":format",
                     (int)(ref_length > 60 ? 60 : ref_length), text + i);
        } else if (!resolve(st, &ref, &out, &why)) {
            error_at(errors, st->s->path, at, "narrative reference '%.*s': %s",
                     (int)ref_length, text + i, why.data);
        }
        i += ref_length;
    }
    buf_free(&why);
    if (errors->count > errors_before) {
        buf_free(&out);
        return NULL;
    }
    return buf_detach(&out);
}

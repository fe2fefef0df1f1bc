/*
 * json.c — results.json: every number the analysis computed, for other
 * programs. Keys are documented in docs/results.md and only ever added to.
 * Numbers are written with 17 significant digits so that they read back
 * to the same double; a value that is not finite (an exact fit's F) is
 * written as null.
 */
#include "render.h"
#include "json_parts.h"

#include <jansson.h>
#include <math.h>
#include <stdlib.h>

static json_t *number(double value)
{
    return isfinite(value) ? json_real(value) : json_null();
}

static void set(json_t *object, const char *key, json_t *value)
{
    json_object_set_new(object, key, value);
}

static json_t *coefficient_parts(const design_coef *coef)
{
    json_t *parts = json_array();
    for (size_t i = 0; i < coef->n_parts; i++) {
        const design_part *part = &coef->parts[i];
        json_t *entry = json_object();
        set(entry, "column", json_string(part->column->name));
        set(entry, "level", part->level ? json_string(part->level) : json_null());
        if (!part->level)
            set(entry, "power", json_integer(part->power));
        json_array_append_new(parts, entry);
    }
    return parts;
}

static json_t *coefficients(const analysis_model *am)
{
    json_t *list = json_array();
    for (size_t c = 0; c < am->design->n_coefs; c++) {
        const fit_coef *fc = &am->fit->coefs[c];
        json_t *entry = json_object();
        set(entry, "label", json_string(am->design->coefs[c].label));
        set(entry, "parts", coefficient_parts(&am->design->coefs[c]));
        set(entry, "estimable", json_boolean(fc->estimable));
        set(entry, "estimate", number(fc->estimate));
        set(entry, "std_error", number(fc->std_error));
        set(entry, "t", number(fc->t));
        set(entry, "p", number(fc->p));
        set(entry, "ci_low", number(fc->ci_low));
        set(entry, "ci_high", number(fc->ci_high));
        json_array_append_new(list, entry);
    }
    return list;
}

static json_t *fit_summary(const fit_result *f)
{
    json_t *fit = json_object();
    set(fit, "r_squared", number(f->r_squared));
    set(fit, "adj_r_squared", number(f->adj_r_squared));
    set(fit, "r_squared_centred", json_boolean(f->centred));
    set(fit, "sigma", number(f->sigma));
    set(fit, "df_model", number(f->df_model));
    set(fit, "df_residual", number(f->df_residual));
    set(fit, "f", number(f->f));
    set(fit, "f_p", number(f->f_p));
    set(fit, "rss", number(f->rss));
    set(fit, "tss", number(f->tss));
    set(fit, "rank", json_integer((json_int_t)f->rank));
    set(fit, "log_likelihood", number(f->log_likelihood));
    set(fit, "aic", number(f->aic));
    set(fit, "bic", number(f->bic));
    set(fit, "confidence_level", number(f->level));
    return fit;
}

static json_t *model(const analysis_model *am)
{
    json_t *entry = json_object();
    set(entry, "id", json_string(am->model->id));
    set(entry, "response", json_string(am->model->response));
    set(entry, "intercept", json_boolean(am->model->intercept));
    set(entry, "n_used", json_integer((json_int_t)am->design->n_used));
    set(entry, "n_dropped", json_integer((json_int_t)am->design->n_dropped));
    json_t *lines = json_array();
    for (size_t i = 0; i < am->design->n_dropped; i++)
        json_array_append_new(lines, json_integer(am->design->dropped_lines[i]));
    set(entry, "dropped_lines", lines);
    set(entry, "coefficients", coefficients(am));
    set(entry, "fit", fit_summary(am->fit));
    set(entry, "diagnostics", render_json_diagnostics(am)); /* json_diagnostics.c */
    return entry;
}

static json_t *data_summary(const analysis *a)
{
    const data_table *t = a->table;
    json_t *data = json_object();
    set(data, "path", json_string(a->spec->data.path));
    set(data, "sha256", json_string(t->sha256));
    set(data, "rows_read", json_integer((json_int_t)t->rows_read));
    set(data, "rows_removed", json_integer((json_int_t)t->n_removed));
    json_t *removed = json_array();
    for (size_t i = 0; i < t->n_removed; i++)
        json_array_append_new(removed, json_integer(t->removed_lines[i]));
    set(data, "removed_lines", removed);
    set(data, "rows_kept", json_integer((json_int_t)t->n_rows));
    json_t *columns = json_array();
    for (size_t j = 0; j < t->n_columns; j++) {
        const data_column *column = &t->columns[j];
        json_t *entry = json_object();
        set(entry, "name", json_string(column->name));
        set(entry, "kind", json_string(column->kind == DATA_NUMERIC ? "numeric" : "category"));
        set(entry, "missing", json_integer((json_int_t)column->n_missing));
        if (column->derive) {
            json_t *derived = json_object();
            set(derived, "from", json_string(column->derive->from));
            set(derived, "transform", json_string(spec_transform_name(column->derive->transform)));
            set(entry, "derived", derived);
        }
        if (column->kind == DATA_CATEGORY) {
            json_t *levels = json_array();
            for (size_t k = 0; k < column->n_levels; k++) {
                json_t *level = json_object();
                set(level, "level", json_string(column->levels[k]));
                set(level, "count", json_integer((json_int_t)column->level_counts[k]));
                json_array_append_new(levels, level);
            }
            set(entry, "levels", levels);
            set(entry, "reference", json_string(column->levels[column->reference]));
        }
        json_array_append_new(columns, entry);
    }
    set(data, "columns", columns);
    return data;
}

void render_results_json(const analysis *a, buf *out)
{
    json_t *root = json_object();
    set(root, "format", json_string("fitproof.results/1"));
    set(root, "title", a->spec->title ? json_string(a->spec->title) : json_null());
    set(root, "data", data_summary(a));
    json_t *models = json_array();
    for (size_t m = 0; m < a->n_models; m++)
        json_array_append_new(models, model(&a->models[m]));
    set(root, "models", models);
    set(root, "checks", render_json_checks(a)); /* json_diagnostics.c */
    char *text = json_dumps(root, JSON_INDENT(2) | JSON_REAL_PRECISION(17));
    buf_puts(out, text);
    buf_putc(out, '\n');
    free(text);
    json_decref(root);
}

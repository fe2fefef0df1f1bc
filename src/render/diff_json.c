/*
 * diff_json.c — the comparison of two report folders as JSON
 * ("fitproof.diff/1", docs/results.md): the same facts `fitproof diff`
 * prints, for programs. Copies numbers; computes nothing.
 */
#include "render.h"

#include <jansson.h>
#include <math.h>
#include <stdlib.h>

static json_t *number(double value)
{
    return isfinite(value) ? json_real(value) : json_null();
}

static json_t *text_or_null(const char *text)
{
    return text ? json_string(text) : json_null();
}

static const char *presence_word(compare_presence presence)
{
    return presence == COMPARE_BOTH ? "both" : presence == COMPARE_ONLY_OLD ? "old" : "new";
}

static json_t *estimate(bool estimable, const compare_estimate *e)
{
    if (!estimable)
        return json_null();
    return json_pack("{s:o,s:o,s:o,s:o,s:o}", "estimate", number(e->estimate), "std_error",
                     number(e->std_error), "ci_low", number(e->ci_low), "ci_high",
                     number(e->ci_high), "p", number(e->p));
}

static json_t *data_side(const compare_data_side *side)
{
    return json_pack("{s:s,s:s,s:I,s:I,s:b}", "path", side->path, "sha256", side->sha256,
                     "rows_read", (json_int_t)side->rows_read, "rows_kept",
                     (json_int_t)side->rows_kept, "found", side->readable);
}

static json_t *model_json(const compare_model *model)
{
    json_t *coefficients = json_array();
    for (size_t k = 0; k < model->n_coefficients; k++) {
        const compare_coefficient *c = &model->coefficients[k];
        json_array_append_new(
            coefficients,
            json_pack("{s:s,s:s,s:o,s:o,s:o,s:b,s:b}", "label", c->label, "in",
                      presence_word(c->presence), "old", estimate(c->old_estimable, &c->old_value),
                      "new", estimate(c->new_estimable, &c->new_value), "shift_in_se",
                      number(c->shift_in_se), "moved", c->moved, "sign_flipped",
                      c->sign_flipped));
    }
    json_t *verdicts = json_array();
    for (size_t k = 0; k < model->n_verdicts; k++)
        json_array_append_new(verdicts,
                              json_pack("{s:s,s:o,s:o}", "assumption", model->verdicts[k].assumption,
                                        "old", text_or_null(model->verdicts[k].old_verdict), "new",
                                        text_or_null(model->verdicts[k].new_verdict)));
    return json_pack("{s:s,s:s,s:I,s:I,s:o,s:o,s:o,s:o}", "id", model->id, "in",
                     presence_word(model->presence), "old_rows", (json_int_t)model->old_rows,
                     "new_rows", (json_int_t)model->new_rows, "old_r_squared",
                     number(model->old_r_squared), "new_r_squared", number(model->new_r_squared),
                     "coefficients", coefficients, "changed_verdicts", verdicts);
}

void render_diff_json(const compare_result *c, buf *out)
{
    json_t *models = json_array();
    for (size_t m = 0; m < c->n_models; m++)
        json_array_append_new(models, model_json(&c->models[m]));
    json_t *checks = json_array();
    for (size_t k = 0; k < c->n_checks; k++)
        json_array_append_new(
            checks, json_pack("{s:o,s:o,s:s,s:b,s:b}", "name", text_or_null(c->checks[k].name),
                              "model", text_or_null(c->checks[k].model), "in",
                              presence_word(c->checks[k].presence), "old_passed",
                              c->checks[k].old_passed, "new_passed", c->checks[k].new_passed));
    json_t *levels = json_array();
    for (size_t k = 0; k < c->n_levels; k++)
        json_array_append_new(levels,
                              json_pack("{s:s,s:s,s:s,s:I}", "column", c->levels[k].column,
                                        "level", c->levels[k].level, "in",
                                        presence_word(c->levels[k].presence), "rows",
                                        (json_int_t)c->levels[k].rows));
    json_t *spec_lines = json_array();
    for (size_t k = 0; k < c->n_spec_lines; k++)
        json_array_append_new(spec_lines,
                              json_pack("{s:s,s:I,s:s}", "in",
                                        c->spec_lines[k].sign == '-' ? "old" : "new", "line",
                                        (json_int_t)c->spec_lines[k].line, "text",
                                        c->spec_lines[k].text));
    json_t *rows = c->rows_compared
                       ? json_pack("{s:I,s:I,s:I}", "common", (json_int_t)c->rows_common,
                                   "only_old", (json_int_t)c->rows_only_old, "only_new",
                                   (json_int_t)c->rows_only_new)
                       : json_null();
    json_t *root = json_pack(
        "{s:s,s:b,s:{s:o,s:o},s:{s:o,s:o,s:b,s:o},s:o,s:o,s:o,s:{s:b,s:b,s:o}}", "format",
        "fitproof.diff/1", "needs_attention", compare_needs_attention(c), "fitproof_version",
        "old", text_or_null(c->old_version), "new", text_or_null(c->new_version), "data", "old",
        data_side(&c->old_data), "new", data_side(&c->new_data), "same", c->same_data, "rows",
        rows, "models", models, "checks", checks, "levels", levels, "spec", "same", c->same_spec,
        "lines_elided", c->spec_lines_elided, "lines", spec_lines);
    char *text = json_dumps(root, JSON_INDENT(2) | JSON_REAL_PRECISION(17));
    buf_puts(out, text);
    buf_putc(out, '\n');
    free(text);
    json_decref(root);
}

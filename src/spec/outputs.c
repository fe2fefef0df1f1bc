/*
 * outputs.c — the output-side sections of the spec: checks (what must hold
 * for the build to pass), compare (nested model pairs), predict (rows to
 * predict) and report (formats, levels, number format, section order with
 * narrative blocks, figures, template). References between sections (a
 * check naming a model) are resolved once everything is read.
 */
#include "reader.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

const char *const spec_figure_names[] = {
    "response_by_predictor", "residuals_by_fitted",   "quantile_plot",
    "spread_by_fitted",      "influence",             "residual_histogram",
    "coefficient_intervals", "observed_by_predicted", "residuals_in_order", NULL};

static const char *const section_names[] = {"summary",     "data",   "models",
                                            "comparisons", "predictions", "checks",
                                            "appendix",    NULL};

const char *spec_section_name(spec_section_kind k)
{
    return k == SPEC_SECTION_NARRATIVE ? "narrative" : section_names[k];
}

static void free_strings(char **items, size_t count)
{
    for (size_t i = 0; i < count; i++)
        free(items[i]);
    free(items);
}

static void model_must_exist(reader *rd, const spec *s, const char *id, src_mark at)
{
    if (!id || spec_find_model(s, id))
        return;
    const char **ids = xmalloc((s->n_models ? s->n_models : 1) * sizeof(char *));
    size_t n = 0;
    for (size_t i = 0; i < s->n_models; i++)
        if (s->models[i].id)
            ids[n++] = s->models[i].id;
    const char *close = closest_name(id, ids, n);
    if (close)
        error_at(rd->errors, rd->path, at, "no model has the id '%s'; did you mean '%s'?", id,
                 close);
    else {
        buf list;
        buf_init(&list);
        for (size_t i = 0; i < n; i++)
            buf_printf(&list, "%s'%s'", i ? ", " : "", ids[i]);
        error_at(rd->errors, rd->path, at, "no model has the id '%s'; the model ids are %s",
                 id, n ? list.data : "(none)");
        buf_free(&list);
    }
    free(ids);
}

/* ---- checks ------------------------------------------------------------- */

static const char *const check_keys[] = {"name",   "model",    "require",  "value",
                                         "coefficient", "metric", "at_least", "at_most",
                                         NULL};
/* In the order of spec_check_kind, with positive/negative both SIGN. */
static const char *const require_names[] = {
    "normal_residuals", "constant_variance",  "independent_errors", "linearity",
    "max_vif",          "max_cooks_distance", "positive",           "negative",
    "metric",           NULL};
static const char *const metric_names[] = {"r_squared", "adj_r_squared", "sigma", "f_p",
                                           "aic",       "bic",           "n_used", NULL};

static void check_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_check *check = target;
    (void)key;
    switch (key_index) {
    case 0: check->name = reader_string(rd, value, "a check's name"); break;
    case 1:
        check->model = reader_string(rd, value, "a check's model");
        check->model_at = reader_mark(value);
        break;
    case 2: {
        int kind = reader_choice(rd, value, "requirement", require_names);
        if (kind >= 0 && kind <= 5) {
            check->kind = (spec_check_kind)kind;
        } else if (kind == 6 || kind == 7) {
            check->kind = SPEC_CHECK_SIGN;
            check->sign = kind == 6 ? 1 : -1;
        } else if (kind == 8) {
            check->kind = SPEC_CHECK_METRIC;
        }
        if (kind < 0)
            check->kind = (spec_check_kind)-1;
        break;
    }
    case 3: reader_real(rd, value, "a check's value", 0, INFINITY, true, &check->bound); break;
    case 4:
        check->coefficient = reader_string(rd, value, "a check's coefficient");
        check->coefficient_at = reader_mark(value);
        break;
    case 5:
        if (reader_choice(rd, value, "metric", metric_names) >= 0)
            check->metric = xstrdup(reader_text(value));
        break;
    case 6:
        check->has_at_least =
            reader_real(rd, value, "at_least", -INFINITY, INFINITY, true, &check->at_least);
        break;
    case 7:
        check->has_at_most =
            reader_real(rd, value, "at_most", -INFINITY, INFINITY, true, &check->at_most);
        break;
    }
}

/* Each requirement needs its own keys, and only those. */
static void check_shape(reader *rd, node *item, spec_check *check)
{
    bool bounded = check->kind == SPEC_CHECK_VIF_BELOW || check->kind == SPEC_CHECK_COOKS_BELOW;
    bool has_value = reader_value(rd, item, "value") != NULL;
    if (bounded && !has_value)
        error_at(rd->errors, rd->path, check->at,
                 "a %s check needs a 'value' (the bound), as in {model: main, require: %s, "
                 "value: 5}",
                 require_names[check->kind], require_names[check->kind]);
    if (!bounded && has_value)
        error_at(rd->errors, rd->path, check->at, "'value' belongs to max_vif and "
                 "max_cooks_distance checks only");
    if (check->kind == SPEC_CHECK_SIGN && !reader_value(rd, item, "coefficient"))
        error_at(rd->errors, rd->path, check->at,
                 "a positive or negative check names a 'coefficient' (its label, as in "
                 "the report's table)");
    if (check->kind != SPEC_CHECK_SIGN && reader_value(rd, item, "coefficient"))
        error_at(rd->errors, rd->path, check->at,
                 "'coefficient' belongs to positive and negative checks only");
    bool about_metric = check->kind == SPEC_CHECK_METRIC;
    bool has_bounds = reader_value(rd, item, "at_least") || reader_value(rd, item, "at_most");
    if (about_metric && (!reader_value(rd, item, "metric") || !has_bounds))
        error_at(rd->errors, rd->path, check->at,
                 "a metric check names a 'metric' and 'at_least' and/or 'at_most'");
    if (!about_metric && (reader_value(rd, item, "metric") || has_bounds))
        error_at(rd->errors, rd->path, check->at,
                 "'metric', 'at_least' and 'at_most' belong to metric checks only");
    if (check->has_at_least && check->has_at_most && check->at_least > check->at_most)
        error_at(rd->errors, rd->path, check->at,
                 "at_least is above at_most, so the check can never pass");
}

static void name_check(spec_check *check)
{
    if (check->name || !check->model || (int)check->kind < 0)
        return;
    buf name;
    buf_init(&name);
    switch (check->kind) {
    case SPEC_CHECK_SIGN:
        buf_printf(&name, "%s: %s is %s", check->model, check->coefficient,
                   check->sign > 0 ? "positive" : "negative");
        break;
    case SPEC_CHECK_METRIC:
        buf_printf(&name, "%s: %s", check->model, check->metric ? check->metric : "?");
        if (check->has_at_least)
            buf_printf(&name, " at least %g", check->at_least);
        if (check->has_at_least && check->has_at_most)
            buf_puts(&name, " and");
        if (check->has_at_most)
            buf_printf(&name, " at most %g", check->at_most);
        break;
    case SPEC_CHECK_VIF_BELOW:
    case SPEC_CHECK_COOKS_BELOW:
        buf_printf(&name, "%s: %s below %g", check->model,
                   check->kind == SPEC_CHECK_VIF_BELOW ? "every VIF" : "every Cook's distance",
                   check->bound);
        break;
    default:
        buf_printf(&name, "%s: %s", check->model, require_names[check->kind]);
        break;
    }
    check->name = buf_detach(&name);
}

void spec_parse_checks(reader *rd, node *list, spec *s)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "checks"))
        return;
    s->checks = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_check));
    for (size_t i = 0; i < reader_count(list); i++) {
        node *item = reader_item(rd, list, i);
        if (!reader_expect(rd, item, YAML_MAPPING_NODE, "each check"))
            continue;
        spec_check *check = &s->checks[s->n_checks++];
        check->at = reader_mark(item);
        check->kind = (spec_check_kind)-1;
        size_t before = rd->errors->count;
        reader_walk(rd, item, "a check", check_keys, check_pair, check);
        if (!check->model && !reader_value(rd, item, "model"))
            error_at(rd->errors, rd->path, check->at, "a check names its 'model' (an id)");
        if ((int)check->kind < 0 && !reader_value(rd, item, "require"))
            error_at(rd->errors, rd->path, check->at,
                     "a check says what it requires, as in require: normal_residuals");
        if (rd->errors->count == before)
            check_shape(rd, item, check);
        name_check(check);
    }
}

/* ---- compare ------------------------------------------------------------ */

void spec_parse_compare(reader *rd, node *list, spec *s)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "compare"))
        return;
    s->compare = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_compare));
    for (size_t i = 0; i < reader_count(list); i++) {
        node *item = reader_item(rd, list, i);
        if (item->type != YAML_SEQUENCE_NODE || reader_count(item) != 2 ||
            reader_item(rd, item, 0)->type != YAML_SCALAR_NODE ||
            reader_item(rd, item, 1)->type != YAML_SCALAR_NODE) {
            error_at(rd->errors, rd->path, reader_mark(item),
                     "each comparison is a pair of model ids, smaller model first, as in "
                     "[reduced, main]");
            continue;
        }
        spec_compare *pair = &s->compare[s->n_compare++];
        pair->at = reader_mark(item);
        pair->small = xstrdup(reader_text(reader_item(rd, item, 0)));
        pair->big = xstrdup(reader_text(reader_item(rd, item, 1)));
        pair->small_at = reader_mark(reader_item(rd, item, 0));
        pair->big_at = reader_mark(reader_item(rd, item, 1));
        if (strcmp(pair->small, pair->big) == 0)
            error_at(rd->errors, rd->path, pair->at,
                     "a model cannot be compared with itself; name two different models");
    }
}

/* ---- predict ------------------------------------------------------------ */

static const char *const predict_keys[] = {"model", "rows", NULL};

static void parse_predict_row(reader *rd, node *map, spec_predict_row *row)
{
    row->row_at = reader_mark(map);
    if (!reader_expect(rd, map, YAML_MAPPING_NODE, "a prediction row"))
        return;
    size_t count = reader_count(map);
    row->columns = xcalloc(count ? count : 1, sizeof(char *));
    row->values = xcalloc(count ? count : 1, sizeof(char *));
    row->at = xcalloc(count ? count : 1, sizeof(src_mark));
    for (yaml_node_pair_t *pair = map->data.mapping.pairs.start;
         pair < map->data.mapping.pairs.top; pair++) {
        node *key = reader_node(rd, pair->key);
        node *value = reader_node(rd, pair->value);
        if (!reader_expect(rd, key, YAML_SCALAR_NODE, "a column name") ||
            !reader_expect(rd, value, YAML_SCALAR_NODE, "a prediction value"))
            continue;
        row->columns[row->n_values] = xstrdup(reader_text(key));
        row->values[row->n_values] = xstrdup(reader_text(value));
        row->at[row->n_values] = reader_mark(value);
        row->n_values++;
    }
}

static void predict_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_predict *predict = target;
    (void)key;
    if (key_index == 0) {
        predict->model = reader_string(rd, value, "a prediction's model");
        predict->model_at = reader_mark(value);
        return;
    }
    if (!reader_expect(rd, value, YAML_SEQUENCE_NODE, "rows"))
        return;
    predict->rows = xcalloc(reader_count(value) ? reader_count(value) : 1,
                            sizeof(spec_predict_row));
    for (size_t i = 0; i < reader_count(value); i++)
        parse_predict_row(rd, reader_item(rd, value, i), &predict->rows[predict->n_rows++]);
}

void spec_parse_predict(reader *rd, node *list, spec *s)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "predict"))
        return;
    s->predict = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_predict));
    for (size_t i = 0; i < reader_count(list); i++) {
        node *item = reader_item(rd, list, i);
        if (!reader_expect(rd, item, YAML_MAPPING_NODE, "each prediction set"))
            continue;
        spec_predict *predict = &s->predict[s->n_predict++];
        predict->at = reader_mark(item);
        reader_walk(rd, item, "a prediction set", predict_keys, predict_pair, predict);
        if (!predict->model || predict->n_rows == 0)
            error_at(rd->errors, rd->path, predict->at,
                     "a prediction set names a 'model' and lists 'rows' of predictor values");
    }
}

/* ---- report ------------------------------------------------------------- */

static const char *const report_keys[] = {
    "formats",  "confidence_level", "alpha",           "decimal_places", "significant_digits",
    "sections", "figures",          "residuals_table", "template",       "archive_data",
    NULL};
static const char *const format_names[] = {"markdown", "html", "json", "pdf", "docx", NULL};

static void parse_formats(reader *rd, node *value, spec_report *report)
{
    char **names;
    size_t count;
    src_mark *marks;
    if (!reader_string_list(rd, value, "report.formats", false, &names, &count, &marks)) {
        free_strings(names, count);
        free(marks);
        return;
    }
    report->formats = 0;
    for (size_t i = 0; i < count; i++) {
        size_t k = 0;
        while (format_names[k] && strcmp(format_names[k], names[i]) != 0)
            k++;
        if (format_names[k])
            report->formats |= 1u << k;
        else
            error_at(rd->errors, rd->path, marks[i],
                     "unknown report format '%s'; use markdown, html, json, pdf or docx",
                     names[i]);
    }
    free_strings(names, count);
    free(marks);
}

static void parse_sections(reader *rd, node *list, spec_report *report)
{
    if (!reader_expect(rd, list, YAML_SEQUENCE_NODE, "report.sections"))
        return;
    report->sections = xcalloc(reader_count(list) ? reader_count(list) : 1, sizeof(spec_section));
    bool seen[SPEC_SECTION_NARRATIVE] = {false};
    for (size_t i = 0; i < reader_count(list); i++) {
        node *item = reader_item(rd, list, i);
        spec_section *section = &report->sections[report->n_sections];
        section->at = reader_mark(item);
        if (item->type == YAML_MAPPING_NODE) {
            node *text = reader_value(rd, item, "text");
            if (reader_count(item) != 1 || !text || text->type != YAML_SCALAR_NODE) {
                error_at(rd->errors, rd->path, section->at,
                         "a narrative block is written {text: \"Markdown …\"} or with a "
                         "literal block under text: |");
                continue;
            }
            section->kind = SPEC_SECTION_NARRATIVE;
            section->markdown = xstrdup(reader_text(text));
            section->at = reader_mark(text);
            section->literal = text->data.scalar.style == YAML_LITERAL_SCALAR_STYLE;
            report->n_sections++;
            continue;
        }
        int kind = reader_choice(rd, item, "report section", section_names);
        if (kind < 0)
            continue;
        if (seen[kind]) {
            error_at(rd->errors, rd->path, section->at,
                     "section '%s' is listed twice; list each section once", section_names[kind]);
            continue;
        }
        seen[kind] = true;
        section->kind = (spec_section_kind)kind;
        report->n_sections++;
    }
}

static void parse_figures(reader *rd, node *value, spec_report *report)
{
    report->figures_given = true;
    report->figures_at = reader_mark(value);
    reader_string_list(rd, value, "report.figures", false, &report->figures,
                       &report->n_figures, &report->figure_at);
    size_t n_names = 0;
    while (spec_figure_names[n_names])
        n_names++;
    for (size_t i = 0; i < report->n_figures; i++) {
        bool known = false;
        for (size_t k = 0; k < n_names; k++)
            known = known || strcmp(spec_figure_names[k], report->figures[i]) == 0;
        if (known)
            continue;
        const char *close = closest_name(report->figures[i], spec_figure_names, n_names);
        if (close)
            error_at(rd->errors, rd->path, report->figure_at[i],
                     "unknown figure '%s'; did you mean '%s'?", report->figures[i], close);
        else {
            buf list;
            buf_init(&list);
            for (size_t k = 0; k < n_names; k++)
                buf_printf(&list, "%s%s", k ? ", " : "", spec_figure_names[k]);
            error_at(rd->errors, rd->path, report->figure_at[i],
                     "unknown figure '%s'; the figures are %s", report->figures[i], list.data);
            buf_free(&list);
        }
    }
}

static void report_pair(reader *rd, size_t key_index, node *key, node *value, void *target)
{
    spec_report *report = target;
    (void)key;
    long number;
    switch (key_index) {
    case 0:
        report->formats_at = reader_mark(value);
        parse_formats(rd, value, report);
        break;
    case 1:
        reader_real(rd, value, "confidence_level", 0, 1, true, &report->confidence_level);
        break;
    case 2: reader_real(rd, value, "alpha", 0, 1, true, &report->alpha); break;
    case 3:
        if (reader_int(rd, value, "decimal_places", 0, 12, &number))
            report->decimal_places = (int)number;
        break;
    case 4:
        if (reader_int(rd, value, "significant_digits", 2, 12, &number))
            report->significant_digits = (int)number;
        break;
    case 5: parse_sections(rd, value, report); break;
    case 6: parse_figures(rd, value, report); break;
    case 7: reader_bool(rd, value, "residuals_table", &report->residuals_table); break;
    case 8:
        report->template_path = reader_string(rd, value, "report.template");
        report->template_at = reader_mark(value);
        break;
    case 9:
        if (reader_bool(rd, value, "archive_data", &report->archive_data))
            report->archive_data_given = true;
        report->archive_data_at = reader_mark(value);
        break;
    }
}

void spec_parse_report(reader *rd, node *map, spec *s)
{
    if (reader_expect(rd, map, YAML_MAPPING_NODE, "report"))
        reader_walk(rd, map, "report", report_keys, report_pair, &s->report);
}

/* Called once every section is read: ids named in one section must exist
   in another, and the default section order is filled in. */
/* The figure of residuals along the run needs a model with order_by; asked
   for when no model has one, it would silently be missing. */
static void warn_unorderable_figure(reader *rd, const spec *s)
{
    bool ordered = false;
    for (size_t m = 0; m < s->n_models; m++)
        ordered = ordered || s->models[m].order_by;
    for (size_t i = 0; !ordered && i < s->report.n_figures; i++)
        if (strcmp(s->report.figures[i], "residuals_in_order") == 0)
            warning_at(rd->errors, rd->path, s->report.figure_at[i],
                       "residuals_in_order draws the residuals along the order of the rows, "
                       "and no model names one, so it is not drawn; add order_by to the model "
                       "or remove the figure");
}

void spec_resolve_references(reader *rd, spec *s)
{
    for (size_t i = 0; i < s->n_checks; i++)
        model_must_exist(rd, s, s->checks[i].model, s->checks[i].model_at);
    for (size_t i = 0; i < s->n_compare; i++) {
        model_must_exist(rd, s, s->compare[i].small, s->compare[i].small_at);
        model_must_exist(rd, s, s->compare[i].big, s->compare[i].big_at);
    }
    for (size_t i = 0; i < s->n_predict; i++)
        model_must_exist(rd, s, s->predict[i].model, s->predict[i].model_at);
    warn_unorderable_figure(rd, s);
    if (s->report.sections)
        return;
    s->report.n_sections = SPEC_SECTION_NARRATIVE;
    s->report.sections = xcalloc(s->report.n_sections, sizeof(spec_section));
    for (size_t k = 0; k < s->report.n_sections; k++)
        s->report.sections[k].kind = (spec_section_kind)k;
}

void spec_free_outputs(spec *s)
{
    for (size_t i = 0; i < s->n_checks; i++) {
        free(s->checks[i].name);
        free(s->checks[i].model);
        free(s->checks[i].coefficient);
        free(s->checks[i].metric);
    }
    free(s->checks);
    for (size_t i = 0; i < s->n_compare; i++) {
        free(s->compare[i].small);
        free(s->compare[i].big);
    }
    free(s->compare);
    for (size_t i = 0; i < s->n_predict; i++) {
        spec_predict *predict = &s->predict[i];
        for (size_t r = 0; r < predict->n_rows; r++) {
            free_strings(predict->rows[r].columns, predict->rows[r].n_values);
            free_strings(predict->rows[r].values, predict->rows[r].n_values);
            free(predict->rows[r].at);
        }
        free(predict->rows);
        free(predict->model);
    }
    free(s->predict);
    spec_report *report = &s->report;
    for (size_t i = 0; i < report->n_sections; i++)
        free(report->sections[i].markdown);
    free(report->sections);
    free_strings(report->figures, report->n_figures);
    free(report->figure_at);
    free(report->template_path);
    free(report->template_written);
}

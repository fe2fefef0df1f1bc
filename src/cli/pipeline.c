/*
 * pipeline.c — one run of the stages after the spec, into an in-memory set
 * of output files: data → analysis → narrate → render (Markdown, HTML,
 * JSON) → archived spec → optional pandoc exports → manifest. Each stage's
 * result is freed in reverse order.
 */
#include "cli.h"
#include "../util/stage.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../analysis/analysis.h"
#include "../export/export.h"
#include "../narrate/narrate.h"
#include "../render/render.h"

static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

static void add_buffer(output_set *set, const char *name, buf *bytes)
{
    size_t length = bytes->length;
    output_add(set, name, buf_detach(bytes), length);
}

/* The id with every byte outside [A-Za-z0-9._-] replaced by '_' (ids are
   free text, file names are not). Caller frees. */
static char *file_safe(const char *id)
{
    char *safe = xstrdup(id);
    for (char *c = safe; *c; c++)
        if (!((*c >= 'a' && *c <= 'z') || (*c >= 'A' && *c <= 'Z') || (*c >= '0' && *c <= '9') ||
              *c == '.' || *c == '_' || *c == '-'))
            *c = '_';
    return safe;
}

/* "residuals_<id>.csv"; when an earlier model's id makes the same name,
   the model's position is appended. Caller frees. */
static char *residuals_file_name(const analysis *a, size_t model)
{
    char *safe = file_safe(a->models[model].model->id);
    bool clash = false;
    for (size_t earlier = 0; earlier < model && !clash; earlier++) {
        char *other = file_safe(a->models[earlier].model->id);
        clash = strcmp(other, safe) == 0;
        free(other);
    }
    buf name;
    buf_init(&name);
    buf_printf(&name, "residuals_%s", safe);
    if (clash)
        buf_printf(&name, "_%zu", model + 1);
    buf_puts(&name, ".csv");
    free(safe);
    return buf_detach(&name);
}

static void add_residual_tables(const analysis *a, output_set *set)
{
    if (!a->spec->report.residuals_table)
        return;
    for (size_t m = 0; m < a->n_models; m++) {
        buf bytes;
        buf_init(&bytes);
        render_residuals_csv(&a->models[m], a->table, &bytes);
        char *name = residuals_file_name(a, m);
        add_buffer(set, name, &bytes);
        free(name);
    }
}

/* Draws each model's figures (the spec chooses which). */
static figures_set **draw_figures(const analysis *a)
{
    figures_set **sets = xcalloc(a->n_models ? a->n_models : 1, sizeof *sets);
    for (size_t m = 0; m < a->n_models; m++) {
        const analysis_model *am = &a->models[m];
        figures_input *in = figures_input_new(a->spec, a->table, am->design, am->fit,
                                              am->diagnostics, m);
        sets[m] = figures_draw(in, &a->spec->report);
        figures_input_free(in);
    }
    return sets;
}

/* The name of a SQL source's stored rows in the report folder. */
#define STORED_ROWS_NAME "data/rows.csv"

/* report.archive_data for a SQL source: the rows as received, in the
   canonical text form the data digest is of, with the kind each column's
   database type implied, so that verify rebuilds the report without the
   database. */
static void archive_rows(data_table *t, audit_manifest *m, output_set *set)
{
    output_add(set, STORED_ROWS_NAME, t->stored_text, t->stored_length);
    t->stored_text = NULL; /* the output set owns the bytes now */
    m->data_archived = xstrdup(STORED_ROWS_NAME);
    m->n_data_kinds = t->n_stored_kinds;
    m->data_kinds = xcalloc(t->n_stored_kinds ? t->n_stored_kinds : 1, sizeof(char *));
    static const char *const words[] = {[SPEC_KIND_INFER] = "",
                                        [SPEC_KIND_NUMERIC] = "numeric",
                                        [SPEC_KIND_CATEGORY] = "category",
                                        [SPEC_KIND_DATE] = "date"};
    for (size_t j = 0; j < t->n_stored_kinds; j++)
        m->data_kinds[j] = xstrdup(words[t->stored_kinds[j]]);
}

/* report.archive_data: the data file stored as data/NAME, so that the
   folder verifies wherever it is moved. The file is read again and must
   still have the digest of the bytes analysed. */
static bool archive_data(const spec *s, data_table *t, audit_manifest *m, output_set *set,
                         error_list *errors)
{
    if (t->stored_text) {
        archive_rows(t, m, set);
        return true;
    }
    bool file = s->data.source == SPEC_SOURCE_FILE || s->data.source == SPEC_SOURCE_XLSX;
    bool wanted = s->report.archive_data_given ? s->report.archive_data
                                               : t->file_bytes <= SPEC_ARCHIVE_DEFAULT_MAX;
    if (!file || !wanted)
        return true;
    size_t length;
    const char *why;
    char *bytes = file_read_limited(s->data.resolved, DATA_FILE_MAX, &length, &why);
    char digest[AUDIT_DIGEST_SIZE];
    if (bytes)
        audit_sha256(bytes, length, digest);
    src_mark whole = {0, 0};
    if (!bytes || strcmp(digest, t->sha256) != 0) {
        error_at(errors, s->data.resolved, whole,
                 "the data file changed while the report was built, so it cannot be stored "
                 "beside it; build again");
        free(bytes);
        return false;
    }
    buf name;
    buf_init(&name);
    buf_printf(&name, "data/%s", base_name(s->data.resolved));
    output_add(set, name.data, bytes, length);
    m->data_archived = buf_detach(&name);
    return true;
}

/* Moves the figures' SVG bytes into the output set; the sets keep the
   rest (titles, captions) until free_figures. */
static void add_figures(figures_set **sets, size_t n_models, output_set *set)
{
    for (size_t m = 0; m < n_models; m++)
        for (size_t k = 0; k < sets[m]->count; k++) {
            figures_figure *f = &sets[m]->items[k];
            output_add(set, f->file, f->svg, f->svg_length);
            f->svg = NULL; /* the output set owns the bytes now */
        }
}

static void free_figures(figures_set **sets, size_t n_models)
{
    for (size_t m = 0; m < n_models; m++)
        figures_set_free(sets[m]);
    free(sets);
}

/* Records every file of the set in the manifest, then adds the manifest. */
static void add_manifest(output_set *set, audit_manifest *m)
{
    for (size_t i = 0; i < output_count(set); i++) {
        const char *name, *bytes;
        size_t length;
        output_get(set, i, &name, &bytes, &length);
        audit_manifest_add(m, name, bytes, length);
    }
    char *manifest = audit_manifest_json(m);
    output_add(set, "manifest.json", manifest, strlen(manifest));
}

/* The spec's own HTML page template, or NULL for the built-in one. Reads
   it before anything is computed; a missing file is a located error. */
static bool load_template(const spec *s, char **text, error_list *errors)
{
    *text = NULL;
    if (!s->report.template_path)
        return true;
    size_t length;
    const char *why;
    *text = file_read_limited(s->report.template_path, PIPELINE_TEMPLATE_MAX, &length, &why);
    if (!*text) {
        error_at(errors, s->path, s->report.template_at,
                 "cannot read the page template '%s': %s; the path is relative to the "
                 "spec's folder",
                 s->report.template_path, why);
        return false;
    }
    if (!strstr(*text, "{{body}}")) {
        error_at(errors, s->path, s->report.template_at,
                 "the page template '%s' has no {{body}} placeholder, so the report would "
                 "not appear in it; see templates/report.html",
                 s->report.template_path);
        free(*text);
        *text = NULL;
        return false;
    }
    return true;
}

static void render_pages(const spec *s, const doc_node *report, const char *html_template,
                         output_set *set)
{
    buf body, page, title, spec_name;
    buf_init(&body);
    buf_init(&page);
    buf_init(&title);
    buf_init(&spec_name);
    const char *title_text = s->title ? s->title : "Regression report";
    if (s->report.formats & (SPEC_FORMAT_MARKDOWN | SPEC_FORMAT_PDF | SPEC_FORMAT_DOCX)) {
        render_markdown(report, &body);
        const render_var vars[] = {{"body", body.data},
                                   {"title", title_text},
                                   {"version", FITPROOF_VERSION},
                                   {"spec", base_name(s->path)}};
        render_template(template_report_md, vars, 4, &page);
        add_buffer(set, "report.md", &page);
    }
    if (s->report.formats & SPEC_FORMAT_HTML) {
        buf_reset(&body);
        render_html(report, &body);
        buf_put_xml(&title, title_text);
        buf_put_xml(&spec_name, base_name(s->path));
        /* The printed page's margins: the title and the document id above,
           the revision and the date below. */
        buf title_css, id_css, date_css, control;
        buf_init(&title_css);
        buf_init(&id_css);
        buf_init(&date_css);
        buf_init(&control);
        render_css_string(&title_css, title_text);
        for (size_t k = 0; k < s->n_meta; k++)
            if (strcmp(s->meta[k].key, "document_id") == 0)
                render_css_string(&id_css, s->meta[k].value);
        if (s->document.revision)
            buf_printf(&control, "revision %s", s->document.revision);
        if (s->document.date)
            buf_printf(&control, "%s%s", control.length ? " · " : "", s->document.date);
        if (control.length)
            render_css_string(&date_css, control.data);
        const render_var vars[] = {{"body", body.data},
                                   {"title", title.data},
                                   {"version", FITPROOF_VERSION},
                                   {"spec", spec_name.data},
                                   {"title_css", title_css.data ? title_css.data : ""},
                                   {"document_id_css", id_css.data ? id_css.data : ""},
                                   {"date_css", date_css.data ? date_css.data : ""}};
        render_template(html_template ? html_template : template_report_html, vars, 7,
                        &page);
        buf_free(&title_css);
        buf_free(&id_css);
        buf_free(&date_css);
        buf_free(&control);
        add_buffer(set, "report.html", &page);
    }
    buf_free(&body);
    buf_free(&page);
    buf_free(&title);
    buf_free(&spec_name);
}

static void fill_provenance(const spec *s, const data_table *t, const char *html_template,
                            const char *out_dir, const char *spec_folder, audit_manifest *m)
{
    m->fitproof_version = xstrdup(FITPROOF_VERSION);
    const char *date_source = cli_date_source_name(s->document.date_source);
    if (s->document.date && date_source) {
        m->report_date = xstrdup(s->document.date);
        m->report_date_source = xstrdup(date_source);
    }
    m->spec_file = xstrdup(base_name(s->path));
    if (spec_folder) {
        m->spec_folder = xstrdup(spec_folder);
    } else {
        char *spec_relative = path_relative(out_dir, s->path);
        m->spec_folder = spec_relative ? path_dirname(spec_relative) : path_dirname(s->path);
        free(spec_relative);
    }
    audit_sha256(s->source, s->source_length, m->spec_sha256);
    char *relative = s->data.resolved ? path_relative(out_dir, s->data.resolved) : NULL;
    m->data_path = relative                   ? relative
                   : s->data.resolved         ? xstrdup(s->data.resolved)
                                              : xstrdup(s->data.path);
    memcpy(m->data_sha256, t->sha256, AUDIT_DIGEST_SIZE);
    static const char *const sources[] = {NULL, "sqlite", "postgres", "xlsx"};
    if (sources[s->data.source])
        m->data_source = xstrdup(sources[s->data.source]);
    if (t->source_query) {
        m->data_query = xstrdup(t->source_query);
        m->data_server = xstrdup(t->source_version ? t->source_version : "");
    }
    if (t->source_sheet)
        m->data_sheet = xstrdup(t->source_sheet);
    if (html_template) {
        char *page = path_relative(out_dir, s->report.template_path);
        m->template_path = page ? page : xstrdup(s->report.template_path);
        audit_sha256(html_template, strlen(html_template), m->template_sha256);
    }
}

bool pipeline_before_computing(const spec *s, char **html_template, error_list *errors)
{
    bool exporters = export_check(s, errors);
    bool page = load_template(s, html_template, errors);
    if (exporters && page)
        return true;
    free(*html_template);
    *html_template = NULL;
    return false;
}

int pipeline_run(const spec *s, const char *out_dir, const char *spec_folder, output_set *set,
                 const analysis_check_fn on_failed_check, error_list *errors)
{
    char *html_template;
    data_table *t;
    stage_begin("check and load data");
    if (!pipeline_check(s, 0, &html_template, &t, errors))
        return EXIT_USER_ERROR;
    analysis *a = analysis_new(s, t, errors);
    if (!a) {
        data_table_free(t);
        free(html_template);
        return EXIT_USER_ERROR;
    }
    stage_begin("digests");
    audit_manifest *m = audit_manifest_new();
    fill_provenance(s, t, html_template, out_dir, spec_folder, m);
    stage_begin("figures");
    figures_set **figures = draw_figures(a);
    stage_begin("narrate");
    narrate_sources sources = {m->spec_sha256, m->data_sha256, FITPROOF_VERSION,
                               audit_gsl_version(), figures, errors->warnings,
                               errors->n_warnings};
    doc_node *report = narrate_report(a, &sources, errors);
    int status = EXIT_USER_ERROR;
    if (report) {
        stage_begin("render pages");
        render_pages(s, report, html_template, set);
        stage_begin("results.json, residual tables");
        buf bytes;
        buf_init(&bytes);
        if (s->report.formats & SPEC_FORMAT_JSON) {
            render_results_json(a, &bytes);
            add_buffer(set, "results.json", &bytes);
        }
        add_residual_tables(a, set);
        add_figures(figures, a->n_models, set);
        buf_put(&bytes, s->source, s->source_length);
        add_buffer(set, base_name(s->path), &bytes);
        stage_begin("export");
        status = archive_data(s, t, m, set, errors) ? export_run(s, set, errors) : EXIT_USER_ERROR;
        stage_begin("manifest");
        if (status == EXIT_OK)
            add_manifest(set, m);
        for (size_t k = 0; status == EXIT_OK && k < a->n_checks; k++)
            if (!a->checks[k].passed && on_failed_check)
                on_failed_check(a->checks[k].check->name);
        if (status == EXIT_OK && a->n_failed_checks > 0)
            status = EXIT_CHECK_FAILED;
    }
    stage_begin("free");
    free_figures(figures, a->n_models);
    doc_free(report);
    free(html_template);
    audit_manifest_free(m);
    analysis_free(a);
    data_table_free(t);
    return status;
}

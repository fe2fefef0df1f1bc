/*
 * main.c — the fitproof command: parses the command line and runs the
 * pipeline spec → data → design/fit (analysis) → narrate → render →
 * output, freeing each stage's result in reverse order.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../analysis/analysis.h"
#include "../narrate/narrate.h"
#include "../output/output.h"
#include "../render/render.h"

#ifndef FITPROOF_VERSION
#define FITPROOF_VERSION "0.0.0-dev"
#endif

static const char USAGE[] =
    "usage: fitproof build SPEC.yaml [-o DIR]\n"
    "       fitproof --help | --version\n"
    "\n"
    "Commands:\n"
    "  build   fit the models of SPEC.yaml and write the report folder\n"
    "\n"
    "Options of build:\n"
    "  -o DIR  write the report into DIR (default: SPEC's folder/SPEC-stem-report)\n"
    "\n"
    "Exit status: 0 built; 1 built, a declared check failed; 2 usage, spec or\n"
    "data error (nothing written); 3 internal error.\n";

typedef struct {
    const char *spec_path;
    const char *out_dir;
} build_options;

static int usage_error(const char *message)
{
    fprintf(stderr, "fitproof: error: %s; see 'fitproof --help'\n", message);
    return EXIT_USER_ERROR;
}

static int parse_build_options(int argc, char **argv, build_options *options)
{
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "-o") == 0) {
            if (i + 1 >= argc)
                return usage_error("-o needs a folder name");
            options->out_dir = argv[++i];
        } else if (strcmp(argv[i], "--help") == 0) {
            fputs(USAGE, stdout);
            exit(EXIT_OK);
        } else if (argv[i][0] == '-') {
            fprintf(stderr, "fitproof: error: unknown option '%s'; see 'fitproof --help'\n",
                    argv[i]);
            return EXIT_USER_ERROR;
        } else if (!options->spec_path) {
            options->spec_path = argv[i];
        } else {
            return usage_error("build takes one spec file");
        }
    }
    if (!options->spec_path)
        return usage_error("build needs a spec file, as in 'fitproof build spec.yaml'");
    return EXIT_OK;
}

static char *default_out_dir(const char *spec_path)
{
    char *dir = path_dirname(spec_path);
    char *stem = path_stem(spec_path);
    buf name;
    buf_init(&name);
    buf_printf(&name, "%s-report", stem);
    char *out = path_join(dir, name.data);
    buf_free(&name);
    free(stem);
    free(dir);
    return out;
}

static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

/* ---- residual tables (src/diagnostics) ---- */

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
        size_t length = bytes.length;
        output_add(set, name, buf_detach(&bytes), length);
        free(name);
    }
}

/* A failed check still leaves the report written: exit status 1. */
static int check_status(const analysis *a, int status)
{
    if (status != EXIT_OK || a->n_failed_checks == 0)
        return status;
    for (size_t k = 0; k < a->n_checks; k++)
        if (!a->checks[k].passed)
            fprintf(stderr, "fitproof: check failed: %s\n", a->checks[k].check->name);
    return EXIT_CHECK_FAILED;
}

/* Renders every output file of the analysis into set. */
static void render_outputs(const analysis *a, output_set *set)
{
    const spec *s = a->spec;
    doc_node *report = narrate_report(a);
    buf body, bytes;
    buf_init(&body);
    buf_init(&bytes);
    render_markdown(report, &body);
    const render_var vars[] = {{"body", body.data},
                               {"title", s->title ? s->title : ""},
                               {"version", FITPROOF_VERSION},
                               {"spec", base_name(s->path)}};
    render_template(template_report_md, vars, sizeof vars / sizeof vars[0], &bytes);
    size_t length = bytes.length;
    output_add(set, "report.md", buf_detach(&bytes), length);
    render_results_json(a, &bytes);
    length = bytes.length;
    output_add(set, "results.json", buf_detach(&bytes), length);
    output_add(set, base_name(s->path), xstrndup(s->source, s->source_length),
               s->source_length);
    add_residual_tables(a, set);
    buf_free(&body);
    doc_free(report);
}

static int build(const build_options *options)
{
    error_list errors;
    error_list_init(&errors);
    int status = EXIT_USER_ERROR;
    spec *s = spec_load(options->spec_path, &errors);
    data_table *t = s ? data_load(s, &errors) : NULL;
    analysis *a = t ? analysis_new(s, t, &errors) : NULL;
    if (a) {
        output_set *set = output_set_new();
        render_outputs(a, set);
        char *out_dir = options->out_dir ? xstrdup(options->out_dir)
                                         : default_out_dir(options->spec_path);
        status = output_commit(set, out_dir, &errors);
        if (status == EXIT_OK)
            fprintf(stderr, "fitproof: wrote %s/\n", out_dir);
        status = check_status(a, status);
        free(out_dir);
        output_set_free(set);
    }
    error_list_print(&errors);
    analysis_free(a);
    data_table_free(t);
    spec_free(s);
    error_list_free(&errors);
    return status;
}

int main(int argc, char **argv)
{
    fit_library_init();
    if (argc < 2)
        return usage_error("no command given");
    const char *command = argv[1];
    if (strcmp(command, "--help") == 0 || strcmp(command, "-h") == 0) {
        fputs(USAGE, stdout);
        return EXIT_OK;
    }
    if (strcmp(command, "--version") == 0) {
        printf("fitproof %s\n", FITPROOF_VERSION);
        return EXIT_OK;
    }
    if (strcmp(command, "build") == 0) {
        build_options options = {NULL, NULL};
        int status = parse_build_options(argc, argv, &options);
        return status == EXIT_OK ? build(&options) : status;
    }
    fprintf(stderr, "fitproof: error: unknown command '%s'; see 'fitproof --help'\n", command);
    return EXIT_USER_ERROR;
}

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
#include "commands.h"

#ifndef FITPROOF_VERSION
#define FITPROOF_VERSION "0.0.0-dev"
#endif

static const char USAGE[] =
    "usage: fitproof build SPEC.yaml [-o DIR]\n"
    "       fitproof lint SPEC.yaml\n"
    "       fitproof scaffold DATA.csv\n"
    "       fitproof COMMAND --help | fitproof --help | fitproof --version\n"
    "\n"
    "Commands:\n"
    "  build     fit the models of SPEC.yaml and write the report folder\n"
    "  lint      check SPEC.yaml and its data as build would, without fitting\n"
    "  scaffold  print a commented starting spec for DATA.csv\n"
    "\n"
    "Exit status: 0 built; 1 built, a declared check failed; 2 usage, spec or\n"
    "data error (nothing written); 3 internal error.\n";

static const char BUILD_HELP[] =
    "usage: fitproof build SPEC.yaml [-o DIR]\n"
    "\n"
    "Reads SPEC.yaml and the data file it names, fits its models and writes the\n"
    "report folder. Nothing is written when the spec or the data has an error.\n"
    "\n"
    "  -o DIR  write the report into DIR (default: SPEC's folder/SPEC-stem-report)\n"
    "\n"
    "Exit status: 0 built; 1 built, a declared check failed; 2 usage, spec or\n"
    "data error (nothing written); 3 internal error.\n";

static const char LINT_HELP[] =
    "usage: fitproof lint SPEC.yaml\n"
    "\n"
    "Checks SPEC.yaml, the data file it names and the design of every model,\n"
    "as build would, without fitting or writing anything. Prints one line on\n"
    "success; otherwise every error, located in the spec or the data file.\n"
    "\n"
    "Exit status: 0 ready to build; 2 usage, spec or data error.\n";

static const char SCAFFOLD_HELP[] =
    "usage: fitproof scaffold DATA.csv > SPEC.yaml\n"
    "\n"
    "Reads DATA.csv (or a .tsv file) and prints a starting spec: every column\n"
    "with the kind fitproof infers, category levels with their counts, and a\n"
    "suggested model. Comments explain each guess; check them before building.\n"
    "The data path in the spec is DATA.csv as given, relative to the folder\n"
    "where the spec is saved.\n"
    "\n"
    "Exit status: 0 printed; 2 usage or data error.\n";

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
            fputs(BUILD_HELP, stdout);
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

/* lint and scaffold: one file argument, or --help. */
static int run_one_file_command(int argc, char **argv)
{
    bool lint = strcmp(argv[1], "lint") == 0;
    const char *file = NULL;
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "--help") == 0) {
            fputs(lint ? LINT_HELP : SCAFFOLD_HELP, stdout);
            return EXIT_OK;
        }
        if (argv[i][0] == '-' && argv[i][1] != '\0') {
            fprintf(stderr, "fitproof: error: unknown option '%s'; see 'fitproof %s --help'\n",
                    argv[i], argv[1]);
            return EXIT_USER_ERROR;
        }
        if (file)
            return usage_error(lint ? "lint takes one spec file" : "scaffold takes one data file");
        file = argv[i];
    }
    if (!file)
        return usage_error(lint ? "lint needs a spec file, as in 'fitproof lint spec.yaml'"
                                : "scaffold needs a data file, as in 'fitproof scaffold data.csv'");
    return lint ? command_lint(file) : command_scaffold(file);
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
    if (strcmp(command, "lint") == 0 || strcmp(command, "scaffold") == 0)
        return run_one_file_command(argc, argv);
    fprintf(stderr, "fitproof: error: unknown command '%s'; see 'fitproof --help'\n", command);
    return EXIT_USER_ERROR;
}

/*
 * build.c — `fitproof build SPEC [-o DIR]`: runs the pipeline and writes
 * the report folder atomically. Exit 1 when a declared check failed (the
 * report is written all the same), 2 for a usage, spec or data error
 * (nothing written).
 */
#include "cli.h"
#include "../util/stage.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char BUILD_HELP[] =
    "usage: fitproof build SPEC.yaml [-o DIR] [--strict] [--date YYYY-MM-DD|now]\n"
    "                      [--timings]\n"
    "\n"
    "Fits the models of SPEC.yaml to its data and writes the report folder:\n"
    "report.md, report.html, results.json, figures, the archived spec and\n"
    "manifest.json (as report.formats selects).\n"
    "\n"
    "  -o DIR  the report folder (default: beside the spec, named SPEC-report);\n"
    "          an existing folder is replaced only if fitproof wrote it (its\n"
    "          manifest lists every file it holds), never one holding the spec\n"
    "          or its data; the new folder is swapped in at once\n"
    "  --strict  treat every warning as an error (nothing is written)\n"
    "  --date  the report's date, or now for today's (UTC); recorded in the\n"
    "          manifest so that verify rebuilds with it. Without it the date\n"
    "          is meta.date, else the SOURCE_DATE_EPOCH variable, else none\n"
    "  --timings  print the wall time of each stage (each figure on its own\n"
    "             line), and the peak resident memory so far, to stderr\n"
    "\n"
    "While a stage runs past a second, a progress line is shown on stderr when\n"
    "stderr is a terminal (never in logs or pipes).\n"
    "\n"
    "Exit status: 0 built; 1 built, a declared check failed; 2 usage, spec or\n"
    "data error (nothing written); 3 internal error or a failed write (the old\n"
    "report stays). Limits: docs/errors.md.\n";

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

/* The failed checks, said after the folder is written. */
static buf failed_checks;

static void note_failed_check(const char *name)
{
    buf_printf(&failed_checks, "fitproof: check failed: %s\n", name);
}

static int build(const char *spec_path, const char *out_option, bool strict,
                 const char *date_option, bool timings)
{
    stage_start(timings, true);
    stage_begin("read spec");
    error_list errors;
    error_list_init(&errors);
    errors.warnings_are_errors = strict; /* the build stops before computing */
    int status = EXIT_USER_ERROR;
    spec *s = spec_load_partial(spec_path, &errors);
    if (s && !cli_resolve_report_date(s, date_option)) {
        spec_free(s);
        stage_finish();
        error_list_print(&errors);
        error_list_free(&errors);
        return EXIT_USER_ERROR;
    }
    char *out_dir = out_option ? xstrdup(out_option) : default_out_dir(spec_path);
    const char *early_inputs[] = {spec_path, s ? s->data.resolved : NULL,
                                  s ? s->report.template_path : NULL};
    bool usable = output_check_target(out_dir, early_inputs, 3, &errors); /* before computing */
    if (s && usable) {
        output_set *set = output_set_new();
        buf_init(&failed_checks);
        status = pipeline_run(s, out_dir, NULL, set, note_failed_check, &errors);
        stage_begin("write folder");
        if (status == EXIT_OK || status == EXIT_CHECK_FAILED) {
            error_list_flush_warnings(&errors);
            /* A failed check still leaves the report written: exit 1. */
            const char *inputs[] = {s->path, s->data.resolved, s->report.template_path};
            int written = output_commit(set, out_dir, inputs, 3, &errors);
            if (written == EXIT_OK)
                fprintf(stderr, "fitproof: wrote %s/\n%s", out_dir,
                        failed_checks.data ? failed_checks.data : "");
            else
                status = written;
        }
        buf_free(&failed_checks);
        output_set_free(set);
    }
    free(out_dir);
    stage_finish();
    error_list_print(&errors);
    spec_free(s);
    error_list_free(&errors);
    return status;
}

int command_build(int argc, char **argv)
{
    const char *spec_path = NULL, *out_dir = NULL, *date = NULL;
    bool strict = false, timings = false;
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "--timings") == 0) {
            timings = true;
        } else if (strcmp(argv[i], "--strict") == 0) {
            strict = true;
        } else if (strcmp(argv[i], "-o") == 0) {
            if (i + 1 >= argc)
                return cli_usage_error("-o needs a folder name");
            out_dir = argv[++i];
        } else if (strcmp(argv[i], "--date") == 0) {
            if (i + 1 >= argc)
                return cli_usage_error("--date needs a date written YYYY-MM-DD, or now");
            date = argv[++i];
        } else if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
            fputs(BUILD_HELP, stdout);
            return EXIT_OK;
        } else if (argv[i][0] == '-') {
            fprintf(stderr, "fitproof: error: unknown option '%s'; see 'fitproof --help'\n",
                    argv[i]);
            return EXIT_USER_ERROR;
        } else if (!spec_path) {
            spec_path = argv[i];
        } else {
            return cli_usage_error("build takes one spec file");
        }
    }
    if (!spec_path)
        return cli_usage_error("build needs a spec file, as in 'fitproof build spec.yaml'");
    return build(spec_path, out_dir, strict, date, timings);
}

/*
 * cli.h — private to the command line: the commands main() dispatches to,
 * and the pipeline run they share. Not part of any stage's interface.
 */
#ifndef FITPROOF_CLI_H
#define FITPROOF_CLI_H

#include "../audit/audit.h"
#include "../output/output.h"
#include "../data/data.h"
#include "../spec/spec.h"

#ifndef FITPROOF_VERSION
#define FITPROOF_VERSION "0.0.0-dev"
#endif

/* A spec's own page template (report.template) may hold at most this many
   bytes. */
#define PIPELINE_TEMPLATE_MAX ((size_t)1 << 20)

/* Called with the name of each declared check that failed. */
typedef void (*analysis_check_fn)(const char *name);

/* Runs data → analysis → narrate → render for spec s and collects every
   output file, the archived spec and manifest.json in set. out_dir is where
   the folder will live (for the manifest's relative data path); spec_folder,
   when not NULL, is the manifest's spec folder (verify passes the one it
   read), else the spec's own folder relative to out_dir. Returns an
   exit status: EXIT_CHECK_FAILED when everything was made but a declared
   check failed (on_failed_check, if not NULL, hears of each). */
int pipeline_run(const spec *s, const char *out_dir, const char *spec_folder, output_set *set,
                 analysis_check_fn on_failed_check, error_list *errors);

/* What a build refuses before it reads the data: a requested export whose
   program is missing, an unreadable page template. Sets *html_template to
   the spec's page template (NULL for the built-in one; caller frees). */
bool pipeline_before_computing(const spec *s, char **html_template, error_list *errors);

/* Everything a build refuses before fitting, in one round (front.c): the
   parts of s without errors (s may come from spec_load_partial), the
   exporters and page template, the data (read with data_flags), every
   model's design, the checks, prediction rows and narrative references.
   On success sets *html_template and *table (caller frees both); false
   after recording errors. lint and build both call it, so that lint never
   says ready where build would refuse, and both say the same words. */
bool pipeline_check(const spec *s, unsigned data_flags, char **html_template,
                    data_table **table, error_list *errors);

/* Sets the report's date from --date (a YYYY-MM-DD date or "now") or the
   SOURCE_DATE_EPOCH variable, unless the spec gives meta.date. False after
   printing a usage error. */
bool cli_resolve_report_date(spec *s, const char *date_option);
/* The manifest's name for where a date came from, or NULL for no date. */
const char *cli_date_source_name(spec_date_source source);
/* For verify: gives the rebuild the date the manifest recorded. */
bool cli_repeat_recorded_date(spec *s, const audit_manifest *m);

int command_build(int argc, char **argv);
int command_verify(int argc, char **argv);
/* fitproof sign DIR --key KEY.pem [--signer NAME]. */
int command_sign(int argc, char **argv);
/* Checks DIR/manifest.sig with the public key (or certificate) file and
   prints the outcome as verify's indented lines; true when good. */
bool verify_signature(const char *dir, const char *public_key_path);
/* fitproof diff OLD NEW [-o FILE]: what changed between two report folders. */
int command_diff(int argc, char **argv);
/* fitproof lint SPEC: spec, data and every model's design, no fit;
   strict: warnings are errors. */
int command_lint(const char *spec_path, bool strict);
/* A database source for scaffold: --table or --query, optionally --key;
   connection set for --postgres (then data_path is NULL). */
typedef struct {
    const char *connection;
    const char *table;
    const char *query;
    const char *key;
    const char *sheet;      /* a spreadsheet's sheet, by name */
    const char *header_row; /* a spreadsheet's header row, from 1 */
} scaffold_database;

/* fitproof scaffold DATA: a commented starting spec on stdout. database is
   NULL for a text file. */
int command_scaffold(const char *data_path, const scaffold_database *database);

/* "fitproof: error: <message>; see 'fitproof --help'" and EXIT_USER_ERROR. */
int cli_usage_error(const char *message);

#endif

/*
 * lint.c — fitproof lint: runs what a build checks before it fits
 * (pipeline_check in front.c: spec, exporters and page template, data,
 * designs, checks, prediction rows, narrative references), in one round,
 * and stops, so that every error a build would report for the spec and
 * the data is reported, and nothing is computed or written.
 */
#include <stdio.h>
#include <stdlib.h>

#include "cli.h"

static void print_summary(const spec *s, const data_table *t, size_t warnings)
{
    size_t categories = 0;
    for (size_t j = 0; j < t->n_columns; j++)
        categories += t->columns[j].kind == DATA_CATEGORY;
    printf("fitproof: %s is ready to build: %zu row%s of %s", s->path, t->n_rows,
           t->n_rows == 1 ? "" : "s", s->data.path);
    if (s->where)
        printf(" (%zu of %zu removed by where)", t->n_removed, t->rows_read);
    printf(", %zu column%s (%zu numeric, %zu categor%s), %zu model%s", t->n_columns,
           t->n_columns == 1 ? "" : "s", t->n_columns - categories, categories,
           categories == 1 ? "y" : "ies", s->n_models, s->n_models == 1 ? "" : "s");
    if (warnings)
        printf("; %zu warning%s on standard error", warnings, warnings == 1 ? "" : "s");
    putchar('\n');
}

int command_lint(const char *spec_path, bool strict)
{
    error_list errors;
    error_list_init(&errors);
    errors.warnings_are_errors = strict;
    spec *s = spec_load_partial(spec_path, &errors);
    char *html_template = NULL;
    data_table *t = NULL;
    bool ok = s && pipeline_check(s, DATA_LOAD_NO_DIGEST | DATA_LOAD_NO_SUMMARY,
                                  &html_template, &t, &errors);
    free(html_template);
    if (ok)
        print_summary(s, t, errors.n_warnings + errors.warnings_suppressed);
    error_list_print(&errors);
    data_table_free(t);
    spec_free(s);
    error_list_free(&errors);
    return ok ? EXIT_OK : EXIT_USER_ERROR;
}

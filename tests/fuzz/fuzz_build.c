/*
 * fuzz_build.c — libFuzzer target for the whole build on small specs
 * (src/cli/pipeline.c and every stage behind it): any bytes as a spec
 * next to a fixed small data file. The run builds in memory (nothing is
 * written); a spec it accepts must give a report.html and figures with
 * no active markup (tests/fuzz/active.h) and a manifest listing every
 * file once. pandoc exports and the spec's own page template are turned
 * off (the template is the user's own page and may hold anything). Run
 * with `make fuzz`.
 */
#define _XOPEN_SOURCE 700 /* mkdtemp */
#include <assert.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../../src/cli/cli.h"
#include "../../src/fit/fit.h"
#include "active.h"

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size);

static char folder[64];
static char spec_path[96];

static void remove_folder(void)
{
    char path[128];
    snprintf(path, sizeof path, "%s/d.csv", folder);
    unlink(path);
    rmdir(folder);
}

/* Invented data: 24 rows, two numbers, a category and a date-like text. */
int LLVMFuzzerInitialize(int *argc, char ***argv)
{
    (void)argc;
    (void)argv;
    fit_library_init();
    strcpy(folder, "/tmp/fitproof-fuzz-build-XXXXXX");
    if (!mkdtemp(folder))
        abort();
    atexit(remove_folder);
    snprintf(spec_path, sizeof spec_path, "%s/s.yaml", folder);
    char path[128];
    snprintf(path, sizeof path, "%s/d.csv", folder);
    FILE *f = fopen(path, "w");
    fputs("x,y,g,w,label\n", f);
    for (int i = 0; i < 24; i++)
        fprintf(f, "%d,%.2f,%s,%d,<b>r%d</b>\n", i, 3.0 + 0.5 * i + ((i * 7) % 5) * 0.3,
                i % 3 == 0   ? "a"
                : i % 3 == 1 ? "b\"<c>"
                             : "&amp;",
                1 + i % 4, i);
    fclose(f);
    return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size)
{
    if (size > 65536)
        return 0;
    error_list errors;
    error_list_init(&errors);
    spec *s = spec_parse(spec_path, (const char *)bytes, size, &errors);
    if (s) {
        s->report.formats &= ~(unsigned)(SPEC_FORMAT_PDF | SPEC_FORMAT_DOCX);
        free(s->report.template_path);
        s->report.template_path = NULL;
        output_set *set = output_set_new();
        char out[128];
        snprintf(out, sizeof out, "%s/out", folder);
        int status = pipeline_run(s, out, NULL, set, NULL, &errors);
        if (status == EXIT_OK || status == EXIT_CHECK_FAILED) {
            for (size_t i = 0; i < output_count(set); i++) {
                const char *name, *content;
                size_t length;
                output_get(set, i, &name, &content, &length);
                size_t n = strlen(name);
                bool markup = (n > 5 && strcmp(name + n - 5, ".html") == 0) ||
                              (n > 4 && strcmp(name + n - 4, ".svg") == 0);
                const char *found = markup ? active_markup(content, length) : NULL;
                if (found) {
                    fprintf(stderr, "active markup: %s in %s\n", found, name);
                    abort();
                }
                for (size_t k = 0; k < i; k++) {
                    const char *other, *ignored;
                    size_t ignored_length;
                    output_get(set, k, &other, &ignored, &ignored_length);
                    assert(strcmp(other, name) != 0); /* every file once */
                }
            }
        }
        output_set_free(set);
    }
    spec_free(s);
    error_list_free(&errors);
    return 0;
}

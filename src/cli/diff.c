/*
 * diff.c — `fitproof diff OLD_DIR NEW_DIR [-o FILE]`: what changed between
 * two report folders, printed as text (Markdown) and, with -o, written as
 * Markdown, HTML or JSON by the file's extension. Exit 0 when the
 * conclusions are the same, 1 when something needs a reader's look, 2 for
 * a usage error or a folder that cannot be compared.
 */
#include "cli.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../narrate/narrate.h"
#include "../render/render.h"

static const char DIFF_HELP[] =
    "usage: fitproof diff OLD_DIR NEW_DIR [-o FILE]\n"
    "\n"
    "Compares two report folders (say last month's and this month's) and says\n"
    "what changed: the data rows, per model the coefficients that moved by more\n"
    "than their combined standard error, the assumptions whose outcome changed,\n"
    "the declared checks that changed their result, new or vanished category\n"
    "levels, and the spec's changed lines.\n"
    "\n"
    "  -o FILE  also write the comparison to FILE: .md (Markdown), .html (a\n"
    "           self-contained page) or .json (docs/results.md)\n"
    "\n"
    "Exit status: 0 the same conclusions; 1 something needs a look; 2 usage\n"
    "error, or a folder that is not a report (or was changed after it was\n"
    "written).\n";

typedef enum { DIFF_MARKDOWN, DIFF_HTML, DIFF_JSON } diff_format;

static bool ends_with(const char *text, const char *suffix)
{
    size_t n = strlen(text), m = strlen(suffix);
    return n >= m && strcmp(text + n - m, suffix) == 0;
}

static bool format_of(const char *path, diff_format *format)
{
    if (ends_with(path, ".md"))
        *format = DIFF_MARKDOWN;
    else if (ends_with(path, ".html"))
        *format = DIFF_HTML;
    else if (ends_with(path, ".json"))
        *format = DIFF_JSON;
    else
        return false;
    return true;
}

static void render_page(const compare_result *c, const doc_node *doc, diff_format format,
                        buf *out)
{
    if (format == DIFF_JSON) {
        render_diff_json(c, out);
        return;
    }
    buf body, title;
    buf_init(&body);
    buf_init(&title);
    const char *title_text = c->new_title ? c->new_title : "regression report";
    if (format == DIFF_MARKDOWN) {
        render_markdown(doc, out);
    } else {
        render_html(doc, &body);
        buf_puts(&title, "What changed: ");
        buf_put_xml(&title, title_text);
        const render_var vars[] = {{"body", body.data},
                                   {"title", title.data},
                                   {"version", FITPROOF_VERSION},
                                   {"spec", "diff"}};
        render_template(template_report_html, vars, 4, out);
    }
    buf_free(&body);
    buf_free(&title);
}

static int diff(const char *old_dir, const char *new_dir, const char *out_path)
{
    diff_format format = DIFF_MARKDOWN;
    if (out_path && !format_of(out_path, &format))
        return cli_usage_error("-o takes a file ending in .md, .html or .json");
    error_list errors;
    error_list_init(&errors);
    compare_result *c = compare_new(old_dir, new_dir, &errors);
    int status = EXIT_USER_ERROR;
    if (c) {
        doc_node *doc = narrate_diff(c);
        buf text;
        buf_init(&text);
        render_markdown(doc, &text);
        fputs(text.data ? text.data : "", stdout);
        status = compare_needs_attention(c) ? EXIT_CHECK_FAILED : EXIT_OK;
        if (out_path) {
            buf page;
            buf_init(&page);
            render_page(c, doc, format, &page);
            int written = output_write_file(out_path, page.data ? page.data : "", page.length,
                                            &errors);
            if (written != EXIT_OK)
                status = written;
            buf_free(&page);
        }
        buf_free(&text);
        doc_free(doc);
        compare_free(c);
    }
    error_list_print(&errors);
    error_list_free(&errors);
    return status;
}

int command_diff(int argc, char **argv)
{
    const char *dirs[2] = {NULL, NULL}, *out_path = NULL;
    size_t n_dirs = 0;
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "-o") == 0) {
            if (i + 1 >= argc)
                return cli_usage_error("-o needs a file name");
            out_path = argv[++i];
        } else if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
            fputs(DIFF_HELP, stdout);
            return EXIT_OK;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            fprintf(stderr, "fitproof: error: unknown option '%s'; see 'fitproof diff --help'\n",
                    argv[i]);
            return EXIT_USER_ERROR;
        } else if (n_dirs < 2) {
            dirs[n_dirs++] = argv[i];
        } else {
            return cli_usage_error("diff takes two report folders");
        }
    }
    if (n_dirs < 2)
        return cli_usage_error("diff needs two report folders, as in 'fitproof diff "
                               "old-report new-report'");
    return diff(dirs[0], dirs[1], out_path);
}

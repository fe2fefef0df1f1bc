/*
 * fuzz_narrative.c — libFuzzer target for the narrative and template path
 * (src/doc, src/render): the input, split at its first NUL byte, is a
 * user's Markdown block and a page template. The Markdown, a heading and
 * a table cell of the same text go through the HTML and Markdown
 * renderers and the page template; the HTML body must hold no active
 * markup (tests/fuzz/active.h), whatever the text. The template is the
 * user's own and may hold anything, so only the body is checked. Run with
 * `make fuzz`.
 */
#include <assert.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/render/render.h"
#include "active.h"

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size)
{
    char *text = malloc(size + 1);
    memcpy(text, bytes, size);
    text[size] = '\0';
    size_t first = strlen(text);
    const char *page = first < size ? text + first + 1 : "{{title}}\n{{body}}\n";

    doc_node *root = doc_new();
    doc_heading(root, 2, "user", text);
    doc_markdown(root, text);
    doc_node *paragraph = doc_paragraph(root);
    doc_text(paragraph, text);
    doc_strong(paragraph, text);
    doc_code_span(paragraph, text);
    static const doc_align align[] = {DOC_ALIGN_LEFT};
    doc_node *table = doc_table(root, 1, align);
    doc_cell(doc_row(table), text);

    buf html, markdown, out, title;
    buf_init(&html);
    buf_init(&markdown);
    buf_init(&out);
    buf_init(&title);
    render_html(root, &html);
    const char *found = active_markup(html.data ? html.data : "", html.length);
    if (found) {
        fprintf(stderr, "active markup: %s in\n%s\n", found, html.data);
        abort();
    }
    render_markdown(root, &markdown);
    buf_put_xml(&title, text);
    const render_var vars[] = {{"body", html.data ? html.data : ""},
                               {"title", title.data ? title.data : ""},
                               {"version", "0"},
                               {"spec", "s.yaml"}};
    render_template(page, vars, 4, &out);
    buf_reset(&out);
    render_template(template_report_html, vars, 4, &out);
    found = active_markup(out.data, out.length);
    if (found) {
        fprintf(stderr, "active markup: %s in the built-in page\n", found);
        abort();
    }
    buf_free(&html);
    buf_free(&markdown);
    buf_free(&out);
    buf_free(&title);
    doc_free(root);
    free(text);
    return 0;
}

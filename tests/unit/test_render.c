/*
 * test_render.c — the Markdown renderer on a small fixed document tree
 * (golden text), including hostile strings from data: Markdown control
 * characters, HTML, pipes and line breaks must come out as literal text.
 */
#include "testkit.h"

#include <stdlib.h>

#include "../../src/render/render.h"

static char *render(const doc_node *root)
{
    buf out;
    buf_init(&out);
    render_markdown(root, &out);
    return buf_detach(&out);
}

static void test_small_tree_golden(void **state)
{
    (void)state;
    doc_node *root = doc_new();
    doc_heading(root, 1, "top", "Title");
    doc_node *p = doc_paragraph(root);
    doc_text(p, "Plain, ");
    doc_strong(p, "strong");
    doc_text(p, " and ");
    doc_code_span(p, "a`b");
    doc_text(p, ".");
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT};
    doc_node *table = doc_table(root, 2, align);
    doc_node *row = doc_row(table);
    doc_cell(row, "Name");
    doc_cell(row, "Value");
    row = doc_row(table);
    doc_cell(row, "x");
    doc_cell(row, "1.5");
    doc_node *list = doc_list(root);
    doc_text(doc_item(list), "one");
    doc_text(doc_item(list), "two");
    doc_node *callout = doc_callout(root, "caution");
    doc_text(doc_paragraph(callout), "Careful.");
    doc_text(doc_paragraph(callout), "Twice.");
    doc_code(root, "text", "y = 1\n  + x");
    char *text = render(root);
    assert_string_equal(text, "# Title\n"
                              "\n"
                              "Plain, **strong** and ``a`b``.\n"
                              "\n"
                              "| Name | Value |\n"
                              "|:---|---:|\n"
                              "| x | 1.5 |\n"
                              "\n"
                              "- one\n"
                              "- two\n"
                              "\n"
                              "> Careful.\n"
                              ">\n"
                              "> Twice.\n"
                              "\n"
                              "```text\n"
                              "y = 1\n"
                              "  + x\n"
                              "```\n");
    free(text);
    doc_free(root);
}

static void test_hostile_strings_are_literal(void **state)
{
    (void)state;
    doc_node *root = doc_new();
    doc_node *p = doc_paragraph(root);
    doc_text(p, "<script>alert(1)</script> *bold* _it_ [link](x) a|b &amp; `c`\n# h");
    doc_node *table = doc_table(root, 1, NULL);
    doc_cell(doc_row(table), "head");
    doc_cell(doc_row(table), "x|y");
    char *text = render(root);
    assert_string_equal(text, "\\<script>alert(1)\\</script> \\*bold\\* \\_it\\_ "
                              "\\[link\\](x) a\\|b \\&amp; \\`c\\` # h\n"
                              "\n"
                              "| head |\n"
                              "|:---|\n"
                              "| x\\|y |\n");
    free(text);
    doc_free(root);
}

/* Comparison signs in p-values stay readable: "< 0.001" is not a tag. */
static void test_less_than_before_a_number_is_not_escaped(void **state)
{
    (void)state;
    doc_node *root = doc_new();
    doc_text(doc_paragraph(root), "p < 0.001 & done");
    char *text = render(root);
    assert_string_equal(text, "p < 0.001 & done\n");
    free(text);
    doc_free(root);
}

/* The same small tree as HTML: every text escaped, tables with numeric
   cells marked, the caution as a note, the narrative through cmark with raw
   HTML left out and images reduced to their text. */
static void test_html_golden(void **state)
{
    (void)state;
    doc_node *root = doc_new();
    doc_heading(root, 2, "data", "A & B");
    doc_contents(root);
    doc_node *p = doc_paragraph(root);
    doc_text(p, "x < y ");
    doc_strong(p, "\"q\"");
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT};
    doc_node *table = doc_table(root, 2, align);
    doc_node *row = doc_row(table);
    doc_cell(row, "Name");
    doc_cell(row, "Value");
    row = doc_row(table);
    doc_cell(row, "<b>");
    doc_cell(row, "1.5");
    doc_text(doc_paragraph(doc_callout(root, "caution")), "Careful.");
    doc_markdown(root, "*Hi* <script>x</script> ![alt](http://h/i.png)\n");
    buf out;
    buf_init(&out);
    render_html(root, &out);
    assert_string_equal(out.data,
                        "<h2 id=\"data\">A &amp; B</h2>\n"
                        "<div class=\"toc\" role=\"navigation\">\n"
                        "<p class=\"toc-title\">Contents</p>\n<ol>\n"
                        "<li><a href=\"#data\">A &amp; B</a></li>\n</ol>\n</div>\n"
                        "<p>x &lt; y <strong>&quot;q&quot;</strong></p>\n"
                        "<div class=\"table\"><table>\n"
                        "<thead><tr><th>Name</th><th class=\"num\">Value</th></tr></thead>\n"
                        "<tbody>\n"
                        "<tr><td>&lt;b&gt;</td><td class=\"num\">1.5</td></tr>\n"
                        "</tbody></table></div>\n"
                        "<div class=\"callout caution\" role=\"note\">\n"
                        "<p>Careful.</p>\n</div>\n"
                        "<div class=\"narrative\">\n"
                        "<p><em>Hi</em> <!-- raw HTML omitted -->x<!-- raw HTML omitted --> "
                        "alt</p>\n</div>\n");
    buf_free(&out);
    doc_free(root);
}

/* A table of five or more columns is "wide": each cell carries its
   column's name, so that a narrow screen can stack the rows. */
static void test_wide_table_labels_its_cells(void **state)
{
    (void)state;
    doc_node *root = doc_new();
    doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT, DOC_ALIGN_RIGHT,
                         DOC_ALIGN_LEFT};
    doc_node *table = doc_table(root, 5, align);
    doc_node *row = doc_row(table);
    const char *names[5] = {"Term", "A & B", "C", "D", "Note"};
    for (int k = 0; k < 5; k++)
        doc_cell(row, names[k]);
    row = doc_row(table);
    const char *cells[5] = {"x", "1", "2", "3", ""};
    for (int k = 0; k < 5; k++)
        doc_cell(row, cells[k]);
    buf out;
    buf_init(&out);
    render_html(root, &out);
    assert_non_null(strstr(out.data, "<div class=\"table wide\"><table>"));
    assert_non_null(strstr(out.data, "<tr><td data-label=\"Term\">x</td>"
                                     "<td class=\"num\" data-label=\"A &amp; B\">1</td>"));
    assert_non_null(strstr(out.data, "<td data-label=\"Note\"></td></tr>"));
    assert_null(strstr(out.data, "<th data-label"));
    buf_free(&out);
    doc_free(root);
}

/* The printed page's header is a CSS string in a <style> element: quotes
   and backslashes would end it, '<' could close the element. */
static void test_css_string_escapes(void **state)
{
    (void)state;
    buf out;
    buf_init(&out);
    render_css_string(&out, "A \"B\" \\ </style> & ü\n");
    assert_string_equal(out.data, "A \\22 B\\22  \\5c  \\3c /style\\3e  \\26  ü\\a ");
    buf_free(&out);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_small_tree_golden),
        cmocka_unit_test(test_hostile_strings_are_literal),
        cmocka_unit_test(test_less_than_before_a_number_is_not_escaped),
        cmocka_unit_test(test_html_golden),
        cmocka_unit_test(test_wide_table_labels_its_cells),
        cmocka_unit_test(test_css_string_escapes),
    };
    return cmocka_run_group_tests_name("render", tests, NULL, NULL);
}

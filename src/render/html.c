/*
 * html.c — the HTML renderer: the document tree as the body of one
 * self-contained page. Every text node is escaped; figures are embedded as
 * SVG data (a data: address, so the page stays valid for HTML 4 parsers and
 * needs no other file); the user's narrative Markdown goes through cmark
 * with raw HTML disabled, and images in it are dropped (kept as their
 * text), so the page makes no request of its own. Only elements every HTML
 * parser knows are used; roles carry the structure for assistive tools.
 */
#include "render.h"

#include <cmark.h>
#include <openssl/evp.h>
#include <stdlib.h>
#include <string.h>

static void inlines(buf *out, const doc_node *parent)
{
    for (const doc_node *n = parent->first; n; n = n->next) {
        const char *open = "", *close = "";
        switch (n->kind) {
        case DOC_STRONG: open = "<strong>"; close = "</strong>"; break;
        case DOC_EMPHASIS: open = "<em>"; close = "</em>"; break;
        case DOC_CODE_SPAN: open = "<code>"; close = "</code>"; break;
        case DOC_TEXT: break;
        default: continue;
        }
        buf_puts(out, open);
        buf_put_xml(out, n->text);
        buf_puts(out, close);
    }
}

/* The plain text of a cell's inlines, escaped for an attribute. */
static void cell_label(buf *out, const doc_node *cell)
{
    for (const doc_node *n = cell ? cell->first : NULL; n; n = n->next)
        if (n->text)
            buf_put_xml(out, n->text);
}

/* Tables of at least this many columns are marked "wide": on a narrow
   screen the page stacks each of their rows, every cell under its column's
   name (data-label), instead of scrolling the table out of sight. */
#define WIDE_COLUMNS 5

static void table(buf *out, const doc_node *t)
{
    bool wide = t->n_align >= WIDE_COLUMNS;
    buf_puts(out, wide ? "<div class=\"table wide\"><table>\n"
                       : "<div class=\"table\"><table>\n");
    const doc_node *head = t->first;
    for (const doc_node *row = t->first; row; row = row->next) {
        bool header = row == head;
        buf_puts(out, header ? "<thead><tr>" : "<tr>");
        size_t j = 0;
        const doc_node *title = head ? head->first : NULL;
        for (const doc_node *cell = row->first; cell; cell = cell->next, j++) {
            bool right = j < t->n_align && t->align[j] == DOC_ALIGN_RIGHT;
            buf_printf(out, "<%s%s", header ? "th" : "td", right ? " class=\"num\"" : "");
            if (wide && !header) {
                buf_puts(out, " data-label=\"");
                cell_label(out, title);
                buf_putc(out, '"');
            }
            buf_putc(out, '>');
            inlines(out, cell);
            buf_printf(out, "</%s>", header ? "th" : "td");
            title = title ? title->next : NULL;
        }
        buf_puts(out, header ? "</tr></thead>\n<tbody>\n" : "</tr>\n");
    }
    buf_puts(out, "</tbody></table></div>\n");
}

/* Replaces every image of a cmark tree by its alternative text, so that
   user Markdown cannot make the page fetch anything. */
static void drop_images(cmark_node *root)
{
    cmark_iter *iter = cmark_iter_new(root);
    cmark_node **images = NULL;
    size_t count = 0, capacity = 0;
    cmark_event_type event;
    while ((event = cmark_iter_next(iter)) != CMARK_EVENT_DONE) {
        cmark_node *node = cmark_iter_get_node(iter);
        if (event == CMARK_EVENT_ENTER && cmark_node_get_type(node) == CMARK_NODE_IMAGE) {
            xgrow((void **)&images, &capacity, count + 1, sizeof *images);
            images[count++] = node;
        }
    }
    cmark_iter_free(iter);
    for (size_t i = 0; i < count; i++) {
        cmark_node *image = images[i];
        cmark_node *child;
        while ((child = cmark_node_first_child(image)) != NULL)
            cmark_node_insert_before(image, child);
        cmark_node_free(image);
    }
    free(images);
}

static void narrative(buf *out, const char *markdown)
{
    int options = CMARK_OPT_DEFAULT | CMARK_OPT_VALIDATE_UTF8;
    cmark_node *document = cmark_parse_document(markdown, strlen(markdown), options);
    drop_images(document);
    char *html = cmark_render_html(document, options);
    buf_puts(out, "<div class=\"narrative\">\n");
    buf_puts(out, html);
    buf_puts(out, "</div>\n");
    free(html);
    cmark_node_free(document);
}

static void base64(buf *out, const char *bytes, size_t length)
{
    size_t room = 4 * ((length + 2) / 3) + 1;
    unsigned char *encoded = xmalloc(room);
    int written = EVP_EncodeBlock(encoded, (const unsigned char *)bytes, (int)length);
    buf_put(out, (const char *)encoded, (size_t)written);
    free(encoded);
}

static void figure(buf *out, const doc_node *n)
{
    buf_puts(out, "<div class=\"figure\" role=\"figure\">\n");
    if (n->content) {
        buf_puts(out, "<img src=\"data:image/svg+xml;base64,");
        base64(out, n->content, strlen(n->content));
        buf_puts(out, "\" alt=\"");
        buf_put_xml(out, n->text);
        buf_puts(out, "\">\n");
    } else {
        buf_puts(out, "<p>");
        buf_put_xml(out, n->text);
        buf_puts(out, "</p>\n");
    }
    if (n->first) {
        buf_puts(out, "<p class=\"caption\">");
        inlines(out, n);
        buf_puts(out, "</p>\n");
    }
    buf_puts(out, "</div>\n");
}

/* The table of contents: every anchored level-2 heading of the tree. */
static void contents(buf *out, const doc_node *n)
{
    const doc_node *root = n;
    while (root->parent)
        root = root->parent;
    buf_puts(out, "<div class=\"toc\" role=\"navigation\">\n<p class=\"toc-title\">"
                  "Contents</p>\n<ol>\n");
    for (const doc_node *h = root->first; h; h = h->next) {
        if (h->kind != DOC_HEADING || h->level != 2 || !h->info)
            continue;
        buf_puts(out, "<li><a href=\"#");
        buf_put_xml(out, h->info);
        buf_puts(out, "\">");
        inlines(out, h);
        buf_puts(out, "</a></li>\n");
    }
    buf_puts(out, "</ol>\n</div>\n");
}

static void blocks(buf *out, const doc_node *parent);

static void block(buf *out, const doc_node *n)
{
    switch (n->kind) {
    case DOC_HEADING:
        buf_printf(out, "<h%d", n->level);
        if (n->info) {
            buf_puts(out, " id=\"");
            buf_put_xml(out, n->info);
            buf_putc(out, '"');
        }
        buf_putc(out, '>');
        inlines(out, n);
        buf_printf(out, "</h%d>\n", n->level);
        break;
    case DOC_PARAGRAPH:
        buf_puts(out, "<p>");
        inlines(out, n);
        buf_puts(out, "</p>\n");
        break;
    case DOC_LIST:
        buf_puts(out, "<ul>\n");
        for (const doc_node *item = n->first; item; item = item->next) {
            buf_puts(out, "<li>");
            inlines(out, item);
            buf_puts(out, "</li>\n");
        }
        buf_puts(out, "</ul>\n");
        break;
    case DOC_TABLE: table(out, n); break;
    case DOC_CALLOUT:
        buf_puts(out, "<div class=\"callout ");
        buf_put_xml(out, n->text);
        buf_puts(out, "\" role=\"note\">\n");
        blocks(out, n);
        buf_puts(out, "</div>\n");
        break;
    case DOC_CODE:
        buf_puts(out, "<pre><code>");
        buf_put_xml(out, n->text);
        buf_puts(out, "</code></pre>\n");
        break;
    case DOC_FIGURE: figure(out, n); break;
    case DOC_MARKDOWN: narrative(out, n->text); break;
    case DOC_CONTENTS: contents(out, n); break;
    default: break;
    }
}

static void blocks(buf *out, const doc_node *parent)
{
    for (const doc_node *n = parent->first; n; n = n->next)
        block(out, n);
}

void render_html(const doc_node *root, buf *out)
{
    blocks(out, root);
}

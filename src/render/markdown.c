/*
 * markdown.c — the Markdown renderer: CommonMark plus pipe tables.
 * Every text node is escaped so that names and levels taken from the data
 * (which may contain *, _, |, <, [ …) come out as literal text.
 */
#include "render.h"

#include <ctype.h>
#include <string.h>

/* Backslash-escapes the ASCII punctuation that CommonMark could read as
   markup anywhere in a line (emphasis, code, links, table pipes), a '<'
   that could open raw HTML or an autolink, an '&' that could start an
   entity, and a leading '#'. Line breaks in text become spaces so a value
   cannot end its block. */
static void escape_text(buf *out, const char *text)
{
    for (const char *p = text; *p; p++) {
        char c = *p;
        if (c == '\n' || c == '\r') {
            buf_putc(out, ' ');
            continue;
        }
        bool opens_tag = c == '<' && (isalpha((unsigned char)p[1]) || (p[1] && strchr("/!?", p[1])));
        bool opens_entity = c == '&' && (isalnum((unsigned char)p[1]) || p[1] == '#');
        if (strchr("\\`*_[]|", c) || opens_tag || opens_entity || (c == '#' && p == text))
            buf_putc(out, '\\');
        buf_putc(out, c);
    }
}

static void code_span(buf *out, const char *text)
{
    /* A fence longer than any run of backticks inside. */
    size_t longest = 0, run = 0;
    for (const char *p = text; *p; p++) {
        run = *p == '`' ? run + 1 : 0;
        if (run > longest)
            longest = run;
    }
    for (size_t i = 0; i <= longest; i++)
        buf_putc(out, '`');
    buf_puts(out, text[0] == '`' || (text[0] && text[strlen(text) - 1] == '`') ? " " : "");
    for (const char *p = text; *p; p++)
        buf_putc(out, *p == '\n' ? ' ' : *p);
    buf_puts(out, text[0] == '`' || (text[0] && text[strlen(text) - 1] == '`') ? " " : "");
    for (size_t i = 0; i <= longest; i++)
        buf_putc(out, '`');
}

static void inlines(buf *out, const doc_node *parent)
{
    for (const doc_node *n = parent->first; n; n = n->next) {
        switch (n->kind) {
        case DOC_TEXT: escape_text(out, n->text); break;
        case DOC_STRONG:
            buf_puts(out, "**");
            escape_text(out, n->text);
            buf_puts(out, "**");
            break;
        case DOC_EMPHASIS:
            buf_puts(out, "*");
            escape_text(out, n->text);
            buf_puts(out, "*");
            break;
        case DOC_CODE_SPAN: code_span(out, n->text); break;
        default: break;
        }
    }
}

static void table(buf *out, const doc_node *t)
{
    bool header = true;
    for (const doc_node *row = t->first; row; row = row->next) {
        buf_puts(out, "|");
        for (const doc_node *cell = row->first; cell; cell = cell->next) {
            buf_putc(out, ' ');
            inlines(out, cell);
            buf_puts(out, " |");
        }
        buf_putc(out, '\n');
        if (header) {
            buf_puts(out, "|");
            for (size_t j = 0; j < t->n_align; j++)
                buf_puts(out, t->align[j] == DOC_ALIGN_RIGHT ? "---:|" : ":---|");
            buf_putc(out, '\n');
            header = false;
        }
    }
}

static void code_block(buf *out, const doc_node *code)
{
    size_t longest = 0, run = 0;
    for (const char *p = code->text; *p; p++) {
        run = *p == '`' ? run + 1 : 0;
        if (run > longest)
            longest = run;
    }
    size_t fence = longest < 3 ? 3 : longest + 1;
    for (size_t i = 0; i < fence; i++)
        buf_putc(out, '`');
    buf_printf(out, "%s\n%s\n", code->info ? code->info : "", code->text);
    for (size_t i = 0; i < fence; i++)
        buf_putc(out, '`');
    buf_putc(out, '\n');
}

static void blocks(buf *out, const doc_node *parent, const char *prefix);

static void block(buf *out, const doc_node *n, const char *prefix)
{
    switch (n->kind) {
    case DOC_HEADING:
        buf_puts(out, prefix);
        for (int i = 0; i < n->level; i++)
            buf_putc(out, '#');
        buf_putc(out, ' ');
        inlines(out, n);
        buf_putc(out, '\n');
        break;
    case DOC_PARAGRAPH:
        buf_puts(out, prefix);
        inlines(out, n);
        buf_putc(out, '\n');
        break;
    case DOC_LIST:
        for (const doc_node *item = n->first; item; item = item->next) {
            buf_printf(out, "%s- ", prefix);
            inlines(out, item);
            buf_putc(out, '\n');
        }
        break;
    case DOC_TABLE: table(out, n); break;
    case DOC_CALLOUT: blocks(out, n, "> "); break;
    case DOC_CODE: code_block(out, n); break;
    case DOC_FIGURE:
        buf_printf(out, "%s![", prefix);
        escape_text(out, n->text);
        buf_printf(out, "](%s)\n", n->info);
        if (n->first) {
            buf_printf(out, "%s\n%s*", prefix, prefix);
            inlines(out, n);
            buf_puts(out, "*\n");
        }
        break;
    case DOC_CONTENTS: {
        const doc_node *root = n;
        while (root->parent)
            root = root->parent;
        buf_printf(out, "%s**Contents**\n\n", prefix);
        int number = 0;
        for (const doc_node *h = root->first; h; h = h->next) {
            if (h->kind != DOC_HEADING || h->level != 2 || !h->info)
                continue;
            /* Plain entries: Markdown viewers disagree on heading anchors. */
            buf_printf(out, "%s%d. ", prefix, ++number);
            inlines(out, h);
            buf_putc(out, '\n');
        }
        break;
    }
    case DOC_MARKDOWN:
        /* The user's own Markdown, as written (values already filled in). */
        buf_puts(out, n->text);
        if (n->text[0] && n->text[strlen(n->text) - 1] != '\n')
            buf_putc(out, '\n');
        break;
    default: break;
    }
}

static void blocks(buf *out, const doc_node *parent, const char *prefix)
{
    for (const doc_node *n = parent->first; n; n = n->next) {
        if (n != parent->first)
            buf_printf(out, "%s\n", prefix[0] ? ">" : "");
        block(out, n, prefix);
    }
}

void render_markdown(const doc_node *root, buf *out)
{
    blocks(out, root, "");
}

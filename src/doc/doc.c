/*
 * doc.c — building and freeing the document tree.
 */
#include "doc.h"

#include <stdarg.h>
#include <stdlib.h>

#include "../util/util.h"

static doc_node *node_new(doc_kind kind)
{
    doc_node *node = xcalloc(1, sizeof *node);
    node->kind = kind;
    return node;
}

static doc_node *append(doc_node *parent, doc_node *child)
{
    child->parent = parent;
    if (parent->last)
        parent->last->next = child;
    else
        parent->first = child;
    parent->last = child;
    return child;
}

/* printf into a new string (C locale); caller frees. */
static char *format_text(const char *format, va_list args)
{
    buf text;
    buf_init(&text);
    buf_vprintf(&text, format, args);
    return buf_detach(&text);
}

static doc_node *append_text(doc_node *parent, doc_kind kind, const char *text)
{
    doc_node *node = append(parent, node_new(kind));
    node->text = xstrdup(text ? text : "");
    return node;
}

doc_node *doc_new(void)
{
    return node_new(DOC_DOCUMENT);
}

void doc_free(doc_node *node)
{
    while (node) {
        doc_node *next = node->next;
        doc_free(node->first);
        free(node->text);
        free(node->info);
        free(node->content);
        free(node->align);
        free(node);
        node = next;
    }
}

doc_node *doc_heading(doc_node *parent, int level, const char *anchor, const char *text)
{
    doc_node *heading = append(parent, node_new(DOC_HEADING));
    heading->level = level;
    heading->info = anchor ? xstrdup(anchor) : NULL;
    if (text)
        doc_text(heading, text);
    return heading;
}

doc_node *doc_paragraph(doc_node *parent)
{
    return append(parent, node_new(DOC_PARAGRAPH));
}

doc_node *doc_list(doc_node *parent)
{
    return append(parent, node_new(DOC_LIST));
}

doc_node *doc_item(doc_node *list)
{
    return append(list, node_new(DOC_ITEM));
}

doc_node *doc_table(doc_node *parent, size_t n_columns, const doc_align *align)
{
    doc_node *table = append(parent, node_new(DOC_TABLE));
    table->n_align = n_columns;
    table->align = xcalloc(n_columns ? n_columns : 1, sizeof(doc_align));
    for (size_t j = 0; align && j < n_columns; j++)
        table->align[j] = align[j];
    return table;
}

doc_node *doc_row(doc_node *table)
{
    return append(table, node_new(DOC_ROW));
}

doc_node *doc_cell(doc_node *row, const char *text)
{
    doc_node *cell = append(row, node_new(DOC_CELL));
    if (text)
        doc_text(cell, text);
    return cell;
}

doc_node *doc_cellf(doc_node *row, const char *format, ...)
{
    doc_node *cell = append(row, node_new(DOC_CELL));
    va_list args;
    va_start(args, format);
    doc_node *text = append(cell, node_new(DOC_TEXT));
    text->text = format_text(format, args);
    va_end(args);
    return cell;
}

doc_node *doc_table_titled(doc_node *parent, size_t n, const doc_align *align,
                           const char *const *titles)
{
    doc_node *table = doc_table(parent, n, align);
    doc_node *header = doc_row(table);
    for (size_t j = 0; j < n; j++)
        doc_cell(header, titles[j]);
    return table;
}

doc_node *doc_callout(doc_node *parent, const char *kind)
{
    return append_text(parent, DOC_CALLOUT, kind);
}

doc_node *doc_code(doc_node *parent, const char *language, const char *text)
{
    doc_node *code = append_text(parent, DOC_CODE, text);
    code->info = language ? xstrdup(language) : NULL;
    return code;
}

doc_node *doc_figure(doc_node *parent, const char *file, const char *title,
                     const char *svg)
{
    doc_node *figure = append_text(parent, DOC_FIGURE, title);
    figure->info = xstrdup(file);
    figure->content = svg ? xstrdup(svg) : NULL;
    return figure;
}

doc_node *doc_markdown(doc_node *parent, const char *markdown)
{
    return append_text(parent, DOC_MARKDOWN, markdown);
}

doc_node *doc_text(doc_node *parent, const char *text)
{
    return append_text(parent, DOC_TEXT, text);
}

doc_node *doc_textf(doc_node *parent, const char *format, ...)
{
    va_list args;
    va_start(args, format);
    doc_node *node = append(parent, node_new(DOC_TEXT));
    node->text = format_text(format, args);
    va_end(args);
    return node;
}

doc_node *doc_strong(doc_node *parent, const char *text)
{
    return append_text(parent, DOC_STRONG, text);
}

doc_node *doc_emphasis(doc_node *parent, const char *text)
{
    return append_text(parent, DOC_EMPHASIS, text);
}

doc_node *doc_code_span(doc_node *parent, const char *text)
{
    return append_text(parent, DOC_CODE_SPAN, text);
}

doc_node *doc_contents(doc_node *parent)
{
    return append(parent, node_new(DOC_CONTENTS));
}

/*
 * doc.h — the document tree: the seam between statistics and bytes.
 * Narration builds it from results; each renderer walks it to write one
 * format. Text in the tree is plain Unicode text: escaping for a format is
 * the renderer's job, never the builder's.
 *
 * Blocks: document, heading, paragraph, list (of items), table (of rows of
 * cells), callout, code, figure. Inlines: text, strong, emphasis, code span.
 */
#ifndef FITPROOF_DOC_H
#define FITPROOF_DOC_H

#include <stddef.h>

typedef enum {
    DOC_DOCUMENT,
    DOC_HEADING,   /* level 1..4, inline children, anchor id */
    DOC_PARAGRAPH, /* inline children */
    DOC_LIST,      /* DOC_ITEM children */
    DOC_ITEM,      /* inline children */
    DOC_TABLE,     /* DOC_ROW children; the first is the header */
    DOC_ROW,       /* DOC_CELL children */
    DOC_CELL,      /* inline children */
    DOC_CALLOUT,   /* block children; text names the kind ("caution", "note") */
    DOC_CODE,      /* text is the code; info names the language */
    DOC_FIGURE,    /* info is the file, text the title, content the SVG; inline
                      children are the caption */
    DOC_MARKDOWN,  /* text is Markdown written by the user (a narrative block) */
    DOC_CONTENTS,  /* a table of contents of the document's anchored level-2
                      headings, laid out by each renderer */
    DOC_TEXT,      /* inline: text */
    DOC_STRONG,    /* inline: text */
    DOC_EMPHASIS,  /* inline: text */
    DOC_CODE_SPAN  /* inline: text */
} doc_kind;

typedef enum { DOC_ALIGN_LEFT, DOC_ALIGN_RIGHT } doc_align;

typedef struct doc_node doc_node;
struct doc_node {
    doc_kind kind;
    int level;         /* headings */
    char *text;
    char *info;        /* anchor id of a heading, language of code, figure file */
    char *content;     /* a figure's SVG document, for formats that inline it */
    doc_align *align;  /* tables: one per column */
    size_t n_align;
    doc_node *parent;
    doc_node *first;
    doc_node *last;
    doc_node *next;
};

/* A new empty document; free the whole tree with doc_free. */
doc_node *doc_new(void);
void doc_free(doc_node *node);

/* Builders: each appends a new node to parent and returns it (the tree
   owns it). Strings are copied. */
doc_node *doc_heading(doc_node *parent, int level, const char *anchor, const char *text);
doc_node *doc_paragraph(doc_node *parent);
doc_node *doc_list(doc_node *parent);
doc_node *doc_item(doc_node *list);
doc_node *doc_table(doc_node *parent, size_t n_columns, const doc_align *align);
doc_node *doc_row(doc_node *table);
doc_node *doc_cell(doc_node *row, const char *text);
/* A cell whose text is formatted like printf (C locale). */
doc_node *doc_cellf(doc_node *row, const char *format, ...)
    __attribute__((format(printf, 2, 3)));
/* A table with its header row of n titles. */
doc_node *doc_table_titled(doc_node *parent, size_t n, const doc_align *align,
                           const char *const *titles);
doc_node *doc_callout(doc_node *parent, const char *kind);
doc_node *doc_code(doc_node *parent, const char *language, const char *text);
doc_node *doc_figure(doc_node *parent, const char *file, const char *title,
                     const char *svg);
doc_node *doc_markdown(doc_node *parent, const char *markdown);
doc_node *doc_contents(doc_node *parent);
/* Inline builders; doc_textf formats like printf (C locale). */
doc_node *doc_text(doc_node *parent, const char *text);
doc_node *doc_textf(doc_node *parent, const char *format, ...)
    __attribute__((format(printf, 2, 3)));
doc_node *doc_strong(doc_node *parent, const char *text);
doc_node *doc_emphasis(doc_node *parent, const char *text);
doc_node *doc_code_span(doc_node *parent, const char *text);

#endif

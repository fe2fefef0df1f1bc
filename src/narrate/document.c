/*
 * document.c — the parts of the report that make it a controlled
 * document: the facts under the title (the spec's meta, with readable
 * names, the date and the revision) and, when the spec names them, the
 * revision history and the approval block, whose signature and date cells
 * are left blank for the people who sign the printed copy.
 */
#include <ctype.h>
#include <string.h>

#include "parts.h"

/* Names for the meta keys most specs use; any other key is shown with its
   underscores as spaces and a capital first letter. */
static void meta_label(buf *out, const char *key)
{
    static const char *const known[][2] = {{"client", "Client"},
                                           {"project", "Project"},
                                           {"analyst", "Analyst"},
                                           {"document_id", "Document number"},
                                           {"site", "Site"},
                                           {"department", "Department"}};
    for (size_t i = 0; i < sizeof known / sizeof known[0]; i++)
        if (strcmp(known[i][0], key) == 0) {
            buf_puts(out, known[i][1]);
            return;
        }
    for (const char *c = key; *c; c++) {
        char shown = *c == '_' ? ' ' : *c;
        if (c == key)
            shown = (char)toupper((unsigned char)shown);
        buf_putc(out, shown);
    }
}

static void fact(doc_node *list, const char *label, const char *value)
{
    doc_node *item = doc_item(list);
    buf key;
    buf_init(&key);
    buf_printf(&key, "%s:", label);
    doc_strong(item, key.data);
    doc_text(item, " ");
    doc_text(item, value);
    buf_free(&key);
}

void story_add_title_facts(doc_node *root, const spec *s)
{
    const spec_document *d = &s->document;
    if (s->n_meta == 0 && !d->date && !d->revision)
        return;
    doc_node *list = doc_list(root);
    buf label;
    buf_init(&label);
    for (size_t i = 0; i < s->n_meta; i++) {
        buf_reset(&label);
        meta_label(&label, s->meta[i].key);
        fact(list, label.data, s->meta[i].value);
    }
    if (d->revision)
        fact(list, "Revision", d->revision);
    if (d->date)
        fact(list, "Date", d->date);
    buf_free(&label);
}

static void approval_rows(doc_node *table, const char *step, const spec_person *people,
                          size_t count)
{
    for (size_t i = 0; i < count; i++) {
        doc_node *row = doc_row(table);
        doc_cell(row, step);
        doc_cell(row, people[i].name);
        doc_cell(row, people[i].role ? people[i].role : "");
        doc_cell(row, "");
        doc_cell(row, "");
    }
}

void story_add_document_control(doc_node *root, const spec *s)
{
    const spec_document *d = &s->document;
    bool people = d->n_prepared + d->n_reviewed + d->n_approved > 0;
    if (d->n_history == 0 && !people)
        return;
    doc_heading(root, 2, "document-control", "Document control");
    if (d->n_history > 0) {
        static const doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_LEFT};
        static const char *const titles[] = {"Revision", "Date", "Change"};
        doc_node *table = doc_table_titled(root, 3, align, titles);
        for (size_t i = 0; i < d->n_history; i++) {
            doc_node *row = doc_row(table);
            doc_cell(row, d->history[i].revision);
            doc_cell(row, d->history[i].date ? d->history[i].date : "");
            doc_cell(row, d->history[i].change);
        }
    }
    if (!people)
        return;
    doc_text(doc_paragraph(root),
             "Signing below confirms the step named, for this revision of the report.");
    doc_node *block = doc_callout(root, "approval");
    static const doc_align align[] = {DOC_ALIGN_LEFT, DOC_ALIGN_LEFT, DOC_ALIGN_LEFT,
                                      DOC_ALIGN_LEFT, DOC_ALIGN_LEFT};
    static const char *const titles[] = {"Step", "Name", "Role", "Signature", "Date"};
    doc_node *table = doc_table_titled(block, 5, align, titles);
    approval_rows(table, "Prepared", d->prepared, d->n_prepared);
    approval_rows(table, "Reviewed", d->reviewed, d->n_reviewed);
    approval_rows(table, "Approved", d->approved, d->n_approved);
}

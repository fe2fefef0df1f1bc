/*
 * render.h — the renderers: each turns its input into the bytes of one
 * format and computes nothing. Markdown walks the document tree; JSON
 * writes the analysis as data for other programs (results.json); CSV
 * writes the per-row diagnostics (residuals_<model>.csv).
 */
#ifndef FITPROOF_RENDER_H
#define FITPROOF_RENDER_H

#include "../analysis/analysis.h"
#include "../compare/compare.h"
#include "../doc/doc.h"

/* CommonMark with pipe tables. Appends to out. */
void render_markdown(const doc_node *root, buf *out);

/* HTML for the body of a page: every text escaped, figures inlined as
   SVG, narrative Markdown rendered by cmark without raw HTML or images.
   Appends to out. */
void render_html(const doc_node *root, buf *out);

/* The "fitproof.results/2" document (docs/results.md). Appends to out. */
void render_results_json(const analysis *a, buf *out);

/* The comparison of two report folders, "fitproof.diff/1" (docs/results.md).
   Appends to out. */
void render_diff_json(const compare_result *c, buf *out);

/* residuals_<model>.csv: the per-row diagnostics of one model, RFC 4180
   CSV with formula-like text cells neutralized. t is the table the model
   was fitted on. Appends to out. */
void render_residuals_csv(const analysis_model *am, const data_table *t, buf *out);

/* The templates compiled into the binary (templates/, see its README). */
extern const char template_report_md[];
extern const char template_report_html[];

typedef struct {
    const char *name;  /* placeholder name, written {{name}} in a template */
    const char *value; /* inserted verbatim */
} render_var;

/* Copies template_text to out, replacing each {{name}} found in vars;
   unknown placeholders are copied unchanged. */
void render_template(const char *template_text, const render_var *vars, size_t n_vars,
                     buf *out);

/* Appends text escaped for the inside of a double-quoted CSS string in a
   <style> element (the page header of a printed report). */
void render_css_string(buf *out, const char *text);

#endif

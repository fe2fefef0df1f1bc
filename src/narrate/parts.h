/*
 * parts.h — private to the narrate stage: the context every part of the
 * report's wording shares (the analysis, the spec's number format and
 * levels), and the pieces the stage's files provide to each other.
 * Not part of fitproof's interface; narrate.h is.
 */
#ifndef FITPROOF_NARRATE_PARTS_H
#define FITPROOF_NARRATE_PARTS_H

#include "narrate.h"

typedef struct {
    const analysis *a;
    const spec *s;
    const narrate_sources *sources;
    int significant_digits;
    int decimal_places;   /* -1: use significant digits */
    double level;         /* confidence level */
    double alpha;
} story;

/* ---- words.c ------------------------------------------------------------ */

/* An estimate-like number in the report's format (significant digits or
   fixed decimals). out holds NARRATE_NUMBER_SIZE bytes. */
void story_number(const story *st, char *out, double value);
/* A data value: like story_number without trailing zeros. */
void story_value(const story *st, char *out, double value);
/* A percentage with one decimal ("23.4%"). */
void story_percent(char *out, double fraction);
/* "3.2 MPa": value in the report's format with the column's unit. */
void story_amount(const story *st, buf *out, const char *column, double value);
/* The words for a column in sentences: its label, or for a derived
   column "the logarithm of …", else its name. */
void story_words(const story *st, buf *out, const char *column);
/* The unit of a column, or NULL. Derived columns have the unit of their
   source only when the transform keeps it (center). */
const char *story_unit(const story *st, const char *column);
/* "100 km" or "1 percentage point": the step sentences use for a numeric
   column (its declared step, else 1) with its unit; returns the step. */
double story_step(const story *st, buf *out, const char *column);
/* The plural noun for a row ("cylinders", default "rows"). */
const char *story_rows(const story *st);
/* What a row's number in the report is: "line" or "row" (data.h). */
const char *story_position(const story *st);
/* "the data file" or "the query's result": where such numbers count. */
const char *story_position_source(const story *st);
/* How a column was derived, or NULL when it is read from the file. */
const spec_derive *story_derivation(const story *st, const char *column);

/* "HC3", "Newey–West" or "classical". */
const char *story_errors_short(spec_errors kind);
/* "the heteroscedasticity-consistent HC3 covariance (MacKinnon & White
   1985)", or the Newey–West one with its lags and where they come from. */
void story_errors_words(buf *out, const analysis_model *am, spec_errors kind);

/* ---- sentences.c -------------------------------------------------------- */

/* One plain-language sentence for coefficient c of a model. Caller frees. */
char *story_coefficient_sentence(const story *st, const analysis_model *am, size_t c);

/* ---- assumptions.c ---------------------------------------------------- */

/* Each influence flag rule in words, in diag_rules order. */
extern const char *const story_rule_words[DIAG_N_RULES];

/* The model's assumption tests, verdicts, remedies, collinearity and
   influential rows. */
void story_add_assumptions(doc_node *parent, const story *st, const analysis_model *am);
/* The spec's declared checks with their outcomes (a level-2 section). */
void story_add_checks(doc_node *root, const story *st);

/* ---- engine.c ----------------------------------------------------------- */

/* The F test of each term of the model, given the others and in order. */
void story_add_term_tests(doc_node *parent, const analysis_model *am);
/* The spec's model comparisons (a level-2 section). */
void story_add_comparisons(doc_node *root, const story *st);
/* The spec's predictions (a level-2 section). */
void story_add_predictions(doc_node *root, const story *st);

/* ---- refs.c ------------------------------------------------------------- */

/* The Markdown of a narrative section with every @{…} reference replaced
   by its formatted value. Returns NULL after recording located errors.
   With st->a == NULL (lint), only checks the references. Caller frees. */
char *story_expand_references(const story *st, const spec_section *section,
                              error_list *errors);

/* The facts under the title: meta with readable names, revision, date. */
void story_add_title_facts(doc_node *root, const spec *s);
/* Revision history and the approval block, when the spec names them. */
void story_add_document_control(doc_node *root, const spec *s);

#endif

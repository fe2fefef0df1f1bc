/*
 * compare.h — what changed between two report folders (`fitproof diff`):
 * reads each folder's results.json, manifest and archived spec, and lays
 * the differences side by side as numbers and flags: the data (digest,
 * row counts, rows added and removed), per model the coefficients that
 * moved by more than their combined standard error, the verdicts that
 * changed, the declared checks that flipped, the category levels that
 * appeared or vanished, and the spec's changed lines. Decides nothing
 * about words; narrate_diff turns the result into a document.
 */
#ifndef FITPROOF_COMPARE_H
#define FITPROOF_COMPARE_H

#include <stdbool.h>
#include <stddef.h>

#include "../audit/audit.h"

/* Whether something is in both runs, or only in one of them. */
typedef enum { COMPARE_BOTH, COMPARE_ONLY_OLD, COMPARE_ONLY_NEW } compare_presence;

typedef struct {
    double estimate, std_error, ci_low, ci_high, p;
} compare_estimate;

typedef struct {
    char *label;
    compare_presence presence;
    compare_estimate old_value, new_value; /* valid where present and estimable */
    bool old_estimable, new_estimable;
    /* (new − old) / sqrt(se_old² + se_new²), when both are estimable */
    double shift_in_se;
    bool moved;       /* |shift_in_se| > 1: the screening rule of the issue */
    bool sign_flipped;
} compare_coefficient;

typedef struct {
    char *assumption;   /* the code results.json uses ("normality", …) */
    char *old_verdict;  /* NULL when the run has none */
    char *new_verdict;
} compare_verdict;

typedef struct {
    char *id;
    compare_presence presence;
    char *old_response, *new_response;
    size_t old_rows, new_rows;          /* rows the model used */
    double old_r_squared, new_r_squared;
    compare_coefficient *coefficients;
    size_t n_coefficients;
    compare_verdict *verdicts;          /* only those that differ */
    size_t n_verdicts;
} compare_model;

typedef struct {
    char *name;
    char *model;
    compare_presence presence;
    bool old_passed, new_passed;
} compare_check;

typedef struct {
    char *column;
    char *level;
    compare_presence presence; /* only ONLY_OLD (vanished) or ONLY_NEW (appeared) */
    size_t rows;               /* rows of the level in the run that has it */
} compare_level;

/* One line of the spec difference: '-' only in the old spec, '+' only in
   the new; line is its number in its own file. */
typedef struct {
    char sign;
    size_t line;
    char *text;
} compare_spec_line;

typedef struct {
    char *path;
    char sha256[AUDIT_DIGEST_SIZE];
    size_t rows_read, rows_kept;
    bool readable; /* the data file was found and matches its digest */
} compare_data_side;

typedef struct {
    char *old_dir, *new_dir;
    char *old_title, *new_title;
    char *old_version, *new_version;  /* fitproof versions that built them */
    compare_data_side old_data, new_data;
    bool same_data;                   /* identical digests */
    bool rows_compared;               /* both files read: the counts below hold */
    size_t rows_common, rows_only_old, rows_only_new;
    compare_model *models;
    size_t n_models;
    compare_check *checks;
    size_t n_checks;
    compare_level *levels;
    size_t n_levels;
    bool same_spec;
    compare_spec_line *spec_lines;
    size_t n_spec_lines;
    bool spec_lines_elided;           /* the difference was too long to list */
} compare_result;

/* Reads both folders and compares them. Returns NULL after recording an
   error (a folder that is not a report, a results.json of an unknown
   format). Caller frees with compare_free. */
compare_result *compare_new(const char *old_dir, const char *new_dir, error_list *errors);
void compare_free(compare_result *c);

/* Whether a reader must look: a coefficient moved or appeared or
   vanished, a verdict changed, a check flipped, a level appeared or
   vanished, a model appeared or vanished, or the spec changed. New data
   alone, with the same conclusions, is not. */
bool compare_needs_attention(const compare_result *c);

#endif

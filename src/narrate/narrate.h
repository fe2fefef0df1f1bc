/*
 * narrate.h — turns an analysis into the report's document tree: title
 * block and provenance, the caution, the data and its row accounting, per
 * model the fitted equation, the coefficient table, one plain-language
 * sentence per coefficient and the fit in words, the spec's narrative
 * blocks with their cited values, and the appendix — in the order the spec
 * gives. Decides words and number formats; never writes a file format.
 */
#ifndef FITPROOF_NARRATE_H
#define FITPROOF_NARRATE_H

#include "../analysis/analysis.h"
#include "../compare/compare.h"
#include "../doc/doc.h"
#include "../figures/figures.h"

/* What the report cites besides the analysis; every field borrowed. */
typedef struct {
    const char *spec_sha256;
    const char *data_sha256;
    const char *fitproof_version;
    const char *gsl_version;
    figures_set *const *figures; /* one per model (NULL entries allowed); or NULL */
    /* The warnings the build printed ("spec.yaml:6:13: warning: …"), for
       the appendix; borrowed, may be NULL. */
    char *const *warnings;
    size_t n_warnings;
} narrate_sources;

/* Builds the report. Returns NULL after recording located errors (a
   narrative reference to something that does not exist). Caller frees
   with doc_free. */
doc_node *narrate_report(const analysis *a, const narrate_sources *sources,
                         error_list *errors);

/* Checks every narrative reference of the spec against the analysis's
   designs (fits not needed), for lint. Returns false after recording
   errors. */
bool narrate_check_references(const analysis *a, error_list *errors);

/* The document `fitproof diff` shows for a comparison of two report
   folders. Caller frees with doc_free. */
doc_node *narrate_diff(const compare_result *c);

/* Number formats shared by every place that shows a number, so that text
   and tables agree. out must hold at least NARRATE_NUMBER_SIZE bytes. */
#define NARRATE_NUMBER_SIZE 48
/* digits significant digits, no exponent for 1e-4 <= |x| < 1e9. */
void narrate_number(char *out, double value, int digits);

/* The sentence (no capital, no full stop) for a pushdown account's reason
   code: why the server's sums were not used, or what still came from the
   streamed rows. */
void narrate_pushdown_reason(buf *out, const pushdown_result *r);
/* A p-value: "< 0.001", or three decimals. */
void narrate_p_value(char *out, double p);

#endif

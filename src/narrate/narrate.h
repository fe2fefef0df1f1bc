/*
 * narrate.h — turns an analysis into the report's document tree: the data
 * summary, and per model the fitted equation, the coefficient table, one
 * plain-language sentence per coefficient and the fit in words, then the
 * caution. Decides words and number formats; never writes a file format.
 */
#ifndef FITPROOF_NARRATE_H
#define FITPROOF_NARRATE_H

#include "../analysis/analysis.h"
#include "../doc/doc.h"

/* Builds the report. Caller frees with doc_free. */
doc_node *narrate_report(const analysis *a);

/* Number formats shared by every place that shows a number, so that text
   and tables agree. out must hold at least NARRATE_NUMBER_SIZE bytes. */
#define NARRATE_NUMBER_SIZE 48
/* digits significant digits, no exponent for 1e-4 <= |x| < 1e9. */
void narrate_number(char *out, double value, int digits);
/* A p-value: "< 0.001", or three decimals. */
void narrate_p_value(char *out, double p);

#endif

/*
 * pushdown.h — the heavy pass of a PostgreSQL source run inside the server:
 * SQL generated from a model's design returns XᵀWX, XᵀWy, yᵀWy and n as
 * exact numeric sums in one scan; the normal equations are solved in exact
 * rational arithmetic (GMP) and rounded once to double. A guard refuses
 * what would not be exact (float columns, filters or missing tokens SQL
 * does not express, aliased or oversized designs) with a reason; the fit
 * then stays the in-process one on the streamed rows.
 */
#ifndef FITPROOF_PUSHDOWN_H
#define FITPROOF_PUSHDOWN_H

#include "../fit/fit.h"

/* Designs with more columns than this are not solved exactly (the exact
   Gauss–Jordan solve costs O(p³) operations on growing fractions). */
#define PUSHDOWN_MAX_COEFS 60

/* One SQL pass sent to the server. */
typedef struct {
    const char *name;    /* "cross-products", "residuals"; static */
    size_t rows_scanned; /* rows the pass aggregated */
    char *sql;           /* the exact text sent */
} pushdown_pass;

typedef struct {
    bool used;          /* the exact solution replaced the in-process estimates */
    char *reason;       /* why not, or what still came from the streamed rows */
    pushdown_pass passes[2];
    size_t n_passes;
    size_t n_coefs;
    double *estimates;  /* n_coefs: the exact solution rounded once; NULL unless used */
    double *std_errors; /* n_coefs: √(RSS/(n − p) · (XᵀWX)⁻¹ⱼⱼ) from the exact inverse */
    long double *xtx_inverse; /* n_coefs²: the exact (XᵀWX)⁻¹ rounded once per entry */
    double rss;         /* exact yᵀWy − bᵀXᵀWy, rounded once */
    double rss_pass_two; /* Σ w (y − xᵀb)² in numeric with b inlined (pass two) */
} pushdown_result;

/* Runs the passes for design d of a spec whose data.pushdown is set, and
   when they succeed puts the exact estimates, standard errors, RSS and the
   statistics derived from them into f (classical errors only). Returns
   NULL when the spec does not ask for pushdown. Caller frees with
   pushdown_free. */
pushdown_result *pushdown_new(const spec *s, const design *d, fit_result *f);
void pushdown_free(pushdown_result *r);

#endif

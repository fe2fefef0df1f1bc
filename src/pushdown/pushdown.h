/*
 * pushdown.h — the heavy pass of a PostgreSQL source run inside the server:
 * SQL generated from a model's design returns XᵀWX, XᵀWy, yᵀWy and n as
 * exact numeric sums in one scan, with the numeric predictors' ranges; the normal equations are solved in exact
 * rational arithmetic (GMP) and rounded once to double. A guard refuses
 * what would not be exact (float columns, filters or missing tokens SQL
 * does not express, aliased or oversized designs) with a reason; the fit
 * then stays the in-process one on the streamed rows.
 */
#ifndef FITPROOF_PUSHDOWN_H
#define FITPROOF_PUSHDOWN_H

#include "../diagnostics/diagnostics.h"
#include "../fit/fit.h"

/* Designs with more columns than this are not solved exactly (the exact
   Gauss–Jordan solve costs O(p³) operations on growing fractions). */
#define PUSHDOWN_MAX_COEFS 60

/* With data.pushdown: auto, the passes run from this many rows on. Below
   it the in-process fit keeps nearly every digit the exact sums would
   (test_nist: at least 11 significant digits on every StRD set, streaming
   or dense), and the server's passes cost more scans than they add. */
#define PUSHDOWN_AUTO_ROWS 1000000

/* Pass two returns Σ rᵏ of the residuals r for k = 1 … this. */
#define PUSHDOWN_N_POWERS 4

/* Why the exact solution was not used, or (PUSHDOWN_PARTIAL) that it was
   and what still came from the streamed rows. A code, not a sentence: the
   narrator words it (narrate_pushdown_reason), results.json also carries
   the code's stable name (pushdown_reason_name). */
typedef enum {
    PUSHDOWN_PARTIAL = 0,     /* used; diagnostics, figures, term tests from the rows */
    PUSHDOWN_WHERE,           /* the spec's where filter is not written as SQL */
    PUSHDOWN_DERIVE,          /* derived columns are not written as SQL */
    PUSHDOWN_MISSING_TOKENS,  /* missing-value tokens are not written as SQL */
    PUSHDOWN_TOO_MANY_COEFS,  /* more than PUSHDOWN_MAX_COEFS columns */
    PUSHDOWN_ALIASED,         /* aliased coefficients or no residual degrees of freedom */
    PUSHDOWN_ROBUST,          /* robust standard errors need the rows */
    PUSHDOWN_LEVELS_NOT_TEXT, /* a factor column is not plain text in the database */
    PUSHDOWN_DESCRIBE_FAILED, /* the server did not describe the source (detail) */
    PUSHDOWN_FLOAT_COLUMN,    /* column is real or double precision (column) */
    PUSHDOWN_INEXACT_COLUMN,  /* column is not an integer or numeric type (column) */
    PUSHDOWN_NOT_A_NUMBER,    /* a sum of pass one was not a finite number */
    PUSHDOWN_SINGULAR,        /* XᵀWX is singular in exact arithmetic */
    PUSHDOWN_PASS_FAILED,     /* the server could not run a pass (detail) */
    PUSHDOWN_CONNECT_FAILED,  /* the second connection failed (detail) */
    PUSHDOWN_ROW_COUNT,       /* the server's rows differ in number from the streamed ones */
    PUSHDOWN_FEW_ROWS         /* auto, and fewer than PUSHDOWN_AUTO_ROWS rows */
} pushdown_reason;

/* The code's stable name in results.json ("float_column", ...). */
const char *pushdown_reason_name(pushdown_reason reason);

/* One SQL pass sent to the server. */
typedef struct {
    const char *name;    /* "cross-products", "residuals"; static */
    size_t rows_scanned; /* rows the pass aggregated */
    char *sql;           /* the exact text sent */
} pushdown_pass;

typedef struct {
    bool used;          /* the exact solution replaced the in-process estimates */
    pushdown_reason reason; /* why not, or what still came from the streamed rows */
    char *reason_column;    /* the column the reason names, or NULL */
    char *reason_detail;    /* the server's or libpq's message, or NULL */
    pushdown_pass passes[5];
    size_t n_passes;
    size_t n_coefs;
    double *estimates;  /* n_coefs: the exact solution rounded once; NULL unless used */
    double *std_errors; /* n_coefs: √(RSS/(n − p) · (XᵀWX)⁻¹ⱼⱼ) from the exact inverse */
    /* pass one's smallest and largest value of each numeric predictor, in
       the design's order (design.ranges); NULL unless used */
    size_t n_ranges;
    double *range_min;
    double *range_max;
    long double *xtx_inverse; /* n_coefs²: the exact (XᵀWX)⁻¹ rounded once per entry */
    double rss;         /* exact yᵀWy − bᵀXᵀWy, rounded once */
    double rss_pass_two; /* Σ w (y − xᵀb)² in numeric with b inlined (pass two) */
    double residual_power_sums[PUSHDOWN_N_POWERS]; /* Σ rᵏ, r = √w (y − xᵀb), pass two */
    bool moments_computed;  /* moments below are from pass two's sums */
    diag_moments moments;   /* skewness, kurtosis and their tests from those sums */
    double durbin_watson;   /* Σ (r_t − r_{t−1})² / Σ r² from pass three, or NaN */
    double max_leverage;    /* max w xᵀ(XᵀWX)⁻¹x over the rows (pass two), or NaN */
    bool order_numeric;     /* the source's order_by column is an integer or numeric */
    /* Breusch–Pagan: on the model's own columns (intercept, no weights, no
       variance_columns) from pass two's Σ x_j e², Σ e², Σ e⁴ and pass
       one's exact (XᵀX)⁻¹; on other columns (the variance_columns, or the
       design's columns unweighted when the model has weights or no
       intercept; bp_other) from pass two's Σ z, Σ z zᵀ and Σ z e², centred
       and solved exactly */
    bool bp_computed;
    bool bp_other;
    bool variance_exact; /* every variance column is an integer or numeric type */
    diag_breusch_pagan breusch_pagan;
    /* RESET from pass two's cross-products of √w ŷ², √w ŷ³ with the
       design, each other and √w y, residualized in exact arithmetic */
    bool reset_computed;
    diag_reset reset;
    /* the influence measures' maxima and the rows each flag rule counts,
       with s² and the rules' bounds inlined (pass two) */
    bool influence_computed;
    double max_abs_studentized; /* externally studentized, may be ∞ */
    double max_cooks;
    double threshold[DIAG_N_RULES];
    size_t flag_count[DIAG_N_RULES];
    /* the DIAG_TOP_ROWS rows with the largest Cook's distance (a pass of
       their own, only with data.key): each row's key as the server writes
       it, and its distance; ordered as the report's list (distance, then
       leverage, then key) */
    size_t n_top;
    char *top_key[DIAG_TOP_ROWS];
    double top_cooks[DIAG_TOP_ROWS];
} pushdown_result;

/* Runs the passes for design d of a spec whose data.pushdown is set, and
   when they succeed puts the exact estimates, standard errors, RSS and the
   statistics derived from them into f (classical errors only). Returns
   NULL when the spec does not ask for pushdown. Caller frees with
   pushdown_free. */
pushdown_result *pushdown_new(const spec *s, const design *d, fit_result *f);
void pushdown_free(pushdown_result *r);

#endif

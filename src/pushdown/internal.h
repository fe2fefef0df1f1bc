/*
 * internal.h — private to src/pushdown: exact rationals read from and
 * rounded for the server, pass one's exact solution that later passes
 * reuse, and the residual diagnostics of pass two (assumptions.c).
 */
#ifndef FITPROOF_PUSHDOWN_INTERNAL_H
#define FITPROOF_PUSHDOWN_INTERNAL_H

#include <gmp.h>
#include <libpq-fe.h>

#include "pushdown.h"

/* A numeric's text ("-12.034", "NaN" refused) as an exact rational. */
bool pd_rational(mpq_t q, const char *text);
/* q's 30 significant digits (of its square root with root), as SQL and
   strtod read them. */
void pd_digits(const mpq_t q, bool root, buf *b);
/* q (or its square root) rounded to the nearest double / long double. */
double pd_nearest(const mpq_t q, bool root);
long double pd_nearest_long(const mpq_t q);

/* Pass one's exact solution. */
typedef struct {
    size_t p;
    mpq_t *inverse; /* p²: (XᵀWX)⁻¹ */
    mpq_t *beta;    /* p: (XᵀWX)⁻¹XᵀWy */
    mpq_t rss;      /* yᵀWy − βᵀXᵀWy */
} pd_exact;

void pd_exact_init(pd_exact *ex, size_t p);
void pd_exact_clear(pd_exact *ex);

/* Gauss–Jordan on [A | I] over the rationals (p × p, A overwritten): A⁻¹
   in inv; false when A is singular. */
bool pd_invert(mpq_t *a, mpq_t *inv, size_t p);

/* Where the diagnostic sums sit in a pass's row. */
typedef struct {
    bool breusch_pagan;   /* the model-columns case is summed */
    bool bp_other;        /* the other-columns case is summed: */
    size_t bp_other_at;   /* k sums Σ z, k(k + 1)/2 Σ z_a z_b, k Σ z e² */
    size_t bp_other_k;
    bool bp_variance_columns; /* z are the variance_columns, not the design's x */
    bool influence;       /* the flag rules and maxima are in the row */
    size_t bp_at;         /* p sums Σ x_j e² */
    size_t reset_at;      /* 2p + 5 sums (assumptions.c) */
    size_t flags_at;      /* DIAG_N_RULES counts */
    size_t max_at;        /* 2 maxima, the last columns */
    size_t end;           /* the next free column after the sums */
    double threshold[DIAG_N_RULES];
} pd_layout;

/* Appends pass two's Breusch–Pagan and RESET sums as ", sum(…) AS
   a<first> …" over the row values x0 …, y, w, f = xᵀb, d = y − f, h (the
   leverage) and the variance columns z0 …, and sets their places and end
   in layout. */
void pd_assumption_sums(buf *a, const design *d, size_t first, const pushdown_result *r,
                        pd_layout *layout);
/* Appends the influence flag counts from layout->end on, when s² > 0
   (layout->influence); the maxima of e²/(1 − h) and e²h/(1 − h)², e² = w
   d², are appended last by pd_influence_maxima at layout->max_at. */
void pd_influence_sums(buf *a, const spec *s, const design *d, const pd_exact *ex,
                       pd_layout *layout);
void pd_influence_maxima(buf *a, pd_layout *layout, size_t at);
/* Breusch–Pagan and RESET from pass two's row res (power sums Σeᵏ from
   column 2 on). */
void pd_assumptions_read(const PGresult *res, const pd_layout *layout, const pd_exact *ex,
                         pushdown_result *r);
/* The influence maxima and counts from a row laid out by layout. */
void pd_influence_read(const PGresult *res, const pd_layout *layout, const pd_exact *ex,
                       pushdown_result *r);

#endif

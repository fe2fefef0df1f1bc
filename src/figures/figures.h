/*
 * figures.h — the SVG figures of one fitted model, written by hand (no
 * plotting library) so that the bytes are deterministic, self-contained and
 * small. Each figure answers one question about the fit; its title states
 * the question, and its caption and text alternative come back as data for
 * the report to place.
 */
#ifndef FITPROOF_FIGURES_H
#define FITPROOF_FIGURES_H

#include "../diagnostics/diagnostics.h"
#include "../util/sort.h"

/* Above this many points in one figure (rows × panels), scatter plots are
   drawn as hexagonal bins shaded by count instead of one mark per row. */
#define FIGURES_SCATTER_MAX 20000

/* ---- input: plain arrays, all borrowed -------------------------------- */

/* A quantity on an axis. label and unit may be NULL (the name is used). */
typedef struct {
    const char *name;
    const char *label;
    const char *unit;
} figures_quantity;

/* One numeric predictor of response_by_predictor: its value per row and
   the model's fitted curve for each level of the grouping column (one
   curve when there is none), each over the predictor's range within that
   level, with the other numeric predictors at their means. */
typedef struct {
    figures_quantity column;
    const double *values;  /* n */
    double mean;           /* over the rows used: where the other panels hold it */
    size_t n_grid;         /* points per curve */
    const double *curve_x; /* n_curves × n_grid, row-major; n_curves = max(1, n_levels) */
    const double *curve_y;
} figures_predictor;

typedef struct figures_storage figures_storage;

/* The residual measures of one row. */
typedef struct {
    double standardized; /* e / (σ √(1 − h)); NaN where undefined */
    double studentized;  /* externally studentized; NaN where undefined */
    double cooks;        /* Cook's distance */
} figures_row_measures;

/* Everything the figures of one model are drawn from. Arrays of n hold one
   entry per row used by the fit, in design order. */
typedef struct {
    const char *model_id;
    size_t model_index; /* keeps element ids unique across a report */
    size_t n;
    const uint32_t *lines; /* data-file line of each row */
    const double *observed;
    const double *fitted;
    const double *residuals;
    const double *leverage;      /* hat values h */
    /* Row i's residual measures, computed on demand from its residual and
       leverage (no array of them is kept); measures_source is passed back. */
    figures_row_measures (*measures)(const void *measures_source, size_t i);
    const void *measures_source;
    const uint8_t *flagged;      /* nonzero: the influence diagnostics flag the row */
    double leverage_bound;       /* the report's flag rules: leverage above 2p/n, */
    double outlier_bound;        /* |studentized| above the Bonferroni bound (NaN: none), */
    double large_bound;          /* |studentized| above 3 */
    const size_t *order;         /* rows in order_by order; NULL without order_by */
    const double *order_values;  /* numeric order_by's value per row; NULL otherwise */
    figures_quantity order_by;
    double sigma;    /* residual standard deviation */
    size_t n_params; /* estimable coefficients: p of Cook's distance */
    double level;    /* confidence level of intervals and the Q-Q band */
    int digits;      /* significant digits of numbers in words */
    figures_quantity response;
    double log_base;           /* response is a logarithm: e or 10; 0 otherwise */
    figures_quantity original; /* log_base: the quantity it is the logarithm of */
    /* The coefficients as the sentences read them: a numeric predictor per
       its spec step (label "press speed, per 100 tablets/min"); with a
       logged response (coef_percent) each as the percentage change of the
       response it stands for, the intercept as the response itself. */
    size_t n_coefs;
    const char *const *coef_labels;
    const double *estimate; /* NaN when not estimable */
    const double *ci_low;
    const double *ci_high;
    bool coef_percent;
    size_t coef_intercept;  /* index of the intercept; SIZE_MAX when none */
    bool coef_conditional;  /* some main effect's column also enters an interaction
                               or a power: its row is the raw coefficient, a value at
                               zero of the other columns of those terms */
    bool group_interacts;   /* the grouping category shares a term with a numeric
                               predictor: the curves' slopes differ by level */
    bool numeric_interacts; /* two numeric predictors share a term, or one has
                               powers: a curve's shape depends on the held values */
    const char *group_name; /* category colouring response_by_predictor; NULL: none */
    const char *const *group_levels;
    size_t n_levels;
    const int32_t *group;            /* level index per row */
    const char *const *fixed_names;  /* other category columns of the model ... */
    const char *const *fixed_levels; /* ... and the level their curves hold them at */
    size_t n_fixed;
    const figures_predictor *predictors;
    size_t n_predictors;
    figures_storage *storage; /* what figures_input_new allocated; NULL if filled by hand */
} figures_input;

/* Fills the input of model d (fitted as f, diagnosed as g) from the spec,
   the table, the design, the fit and the diagnostics' influence measures,
   which it borrows and which must outlive it; computes the fitted curves.
   Caller frees with figures_input_free. */
figures_input *figures_input_new(const spec *s, const data_table *t, const design *d,
                                 const fit_result *f, const diagnostics *g,
                                 size_t model_index);
void figures_input_free(figures_input *in);

/* ---- output ------------------------------------------------------------ */

typedef struct {
    const char *name; /* one of spec_figure_names (static) */
    char *file;       /* "figures/<model>-<name>.svg" */
    char *title;      /* the question the figure answers */
    char *caption;    /* what it shows and what a problem would look like */
    char *alt;        /* a short text alternative: what is drawn */
    char *svg;        /* the file's bytes, NUL-terminated; output_add may take them */
    size_t svg_length;
} figures_figure;

typedef struct {
    figures_figure *items;
    size_t count;
} figures_set;

/* Draws the figures report->figures names (every figure when it was not
   given), in the order of spec_figure_names. response_by_predictor is left
   out when the model has no numeric predictor. Caller frees. */
figures_set *figures_draw(const figures_input *in, const spec_report *report);
void figures_set_free(figures_set *set);

/* ---- building blocks, public for tests --------------------------------- */

#define FIGURES_MAX_TICKS 16

/* Axis ticks by Heckbert's loose labelling: a step of 1, 2 or 5 × 10^k and
   outer ticks that enclose the data. Labels are made from integer
   mantissas, so they carry no floating-point noise, and use the true minus
   sign; large and small magnitudes are written as m×10ⁿ. */
typedef struct {
    double lo, hi; /* axis ends: the outer ticks */
    size_t count;
    double values[FIGURES_MAX_TICKS];
    char labels[FIGURES_MAX_TICKS][48];
} figures_ticks;

/* Ticks for data spanning [min, max] with about target ticks (≥ 2). A
   zero-width range is widened around its value; non-finite input gives the
   axis [0, 1]. */
void figures_ticks_make(double min, double max, int target, figures_ticks *out);

/* Summaries of y in bins of x: the finite pairs sorted by x (ties by y)
   and cut into figures_bin_count(m) bins of equal count (sizes differ by at
   most one). */
#define FIGURES_MAX_BINS 20
#define FIGURES_BIN_MIN_ROWS 8
typedef struct {
    size_t count;             /* pairs in the bin */
    double x_lo, x_hi, x_mid; /* smallest, largest and median x */
    double q1, median, q3;    /* quartiles of y (type 7) */
    double mean, sd;          /* of y; sd on count − 1 degrees of freedom */
    double sd_lo, sd_hi;      /* interval for the sd at the level (normal y) */
} figures_bin;

/* k = min(⌊√m⌋, ⌊m / FIGURES_BIN_MIN_ROWS⌋, FIGURES_MAX_BINS), at least 1
   when m > 0. */
size_t figures_bin_count(size_t m);
/* Writes up to FIGURES_MAX_BINS bins to out; returns how many. sd and its
   interval are NaN in a bin of one pair. */
size_t figures_bins_make(const double *x, const double *y, size_t n, double level,
                         figures_bin *out);
/* The same from m pairs (x, y), all finite, that the caller filled; sorts
   them in place. */
size_t figures_bins_from_pairs(sort_pair *pairs, size_t m, double level, figures_bin *out);

/* The detrended quantile comparison of the finite values against the
   normal: the i-th smallest value minus z_i = Φ⁻¹((i + 5/8)/(m + 1/4)), and
   the pointwise band of the i-th of m normal order statistics, also minus
   z_i, at up to FIGURES_BAND_POINTS order statistics (all when m is no
   larger, else spread evenly along z). */
#define FIGURES_BAND_POINTS 200
typedef struct {
    size_t count;      /* m finite values */
    double *quantile;  /* z_i, ascending */
    double *deviation; /* i-th smallest value − z_i */
    size_t n_band;
    size_t band_index[FIGURES_BAND_POINTS]; /* i of each band point */
    double band_lo[FIGURES_BAND_POINTS];    /* band ends − z_i */
    double band_hi[FIGURES_BAND_POINTS];
} figures_detrended;

/* From n values the caller allocated (malloc), which out takes: they
   become its deviations. Caller frees with figures_detrended_free. */
void figures_detrended_take(double *values, size_t n, double level, figures_detrended *out);
void figures_detrended_free(figures_detrended *d);

/* value rounded to digits significant digits, trailing zeros kept (2.500),
   in plain decimal notation (m×10ⁿ from 10⁷ and below 10⁻⁴), with the true
   minus sign. */
void figures_format_number(char *out, size_t size, double value, int digits);

#endif

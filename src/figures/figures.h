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
    const double *std_residuals; /* e / (σ √(1 − h)); NaN where undefined */
    const double *leverage;      /* hat values h */
    const double *cooks;         /* Cook's distance */
    const bool *flagged;         /* rows the influence diagnostics flag */
    double sigma;                /* residual standard deviation */
    size_t n_params;             /* estimable coefficients: p of Cook's distance */
    double level;                /* confidence level of intervals and the Q-Q band */
    int digits;                  /* significant digits of numbers in words */
    figures_quantity response;
    size_t n_coefs;
    const char *const *coef_labels;
    const double *estimate; /* NaN when not estimable */
    const double *ci_low;
    const double *ci_high;
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

/* LOWESS (Cleveland 1979): at each x[i] a straight line fitted by weighted
   least squares to the nearest span × Σweights of the data, tricube weights
   by distance, then `iterations` robustness passes with bisquare weights of
   the residuals. x must be ascending. weights are prior weights (counts of
   binned data) or NULL for 1. Points closer than delta to the last fitted
   point are interpolated. Writes fitted[0..n). */
void figures_lowess(const double *x, const double *y, const double *weights, size_t n,
                    double span, int iterations, double delta, double *fitted);

/* value rounded to digits significant digits, trailing zeros kept (2.500),
   in plain decimal notation (m×10ⁿ from 10⁷ and below 10⁻⁴), with the true
   minus sign. */
void figures_format_number(char *out, size_t size, double value, int digits);

#endif

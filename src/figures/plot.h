/*
 * plot.h — private to the figures stage: the hand-written SVG writer and
 * the parts every figure is built from (canvas with title and key, plot
 * panels with axes, points or hexagonal bins, lines, bands, row labels).
 * Coordinates are SVG user units (CSS pixels at scale 1), y downwards.
 */
#ifndef FITPROOF_FIGURES_PLOT_H
#define FITPROOF_FIGURES_PLOT_H

#include "figures.h"

/* ---- palette and marks ------------------------------------------------ */

/* Okabe & Ito's colour-blind-safe palette, ordered for categories; each
   colour is paired with its own mark shape so that greyscale still reads. */
#define PLOT_STYLES 8
extern const char *const plot_colour[PLOT_STYLES];
/* Dash pattern of series k's line ("" = solid). */
extern const char *const plot_dash[PLOT_STYLES];

#define PLOT_INK "#222222"    /* text and reference lines */
#define PLOT_SMOOTH "#d55e00" /* smoothers and fitted curves (vermillion) */

/* ---- the document ------------------------------------------------------ */

typedef struct {
    buf defs; /* <defs> content, written before the body */
    buf body;
    char id[32]; /* element-id prefix, unique per figure of a report */
    double width, height;
    double mark_size; /* radius of point marks */
    unsigned marks_defined;
    int clip_count;
    bool hex_defined;
} svg_doc;

void svg_begin(svg_doc *d, const char *id, double width, double height, double mark_size);
/* The finished file (caller frees); d is emptied. */
char *svg_end(svg_doc *d, const char *title, const char *desc, size_t *length);
void svg_free(svg_doc *d);

/* XML-escapes text for element content and attribute values; bytes that are
   not valid UTF-8 or not allowed in XML become U+FFFD. */
void svg_escape(buf *b, const char *text);
/* A coordinate with one decimal (0.1 px), "-0" written as "0". */
void svg_num(buf *b, double value);
/* Appends pattern with each '#' replaced by the next argument, a double,
   written by svg_num: svg_path(b, "M@ @h@", x, y, w). */
void svg_path(buf *b, const char *pattern, ...);
/* Width of text in a sans-serif face at size (an estimate for layout). */
double svg_text_width(const char *text, double size);
/* Text at (x, y); anchor "start", "middle" or "end"; extra attributes
   (already escaped) may be NULL. */
void svg_text(svg_doc *d, double x, double y, double size, const char *anchor,
              const char *extra, const char *text);
/* The id of the marker drawing series style k (defined on first use). */
const char *svg_mark(svg_doc *d, int style, char *id, size_t size);

/* ---- the canvas: title and key ---------------------------------------- */

typedef enum {
    KEY_MARK,      /* a point mark of style `style` */
    KEY_LINE,      /* a line: colour, width, dash */
    KEY_MARK_LINE, /* a mark on a line */
    KEY_BAND,      /* a filled band */
    KEY_BAR,       /* a histogram bar */
    KEY_RING,      /* the ring around a labelled row */
    KEY_DOT,       /* a plain dot: filled, or open when width is 0 */
    KEY_CIRCLE     /* a circle of radius width, colour at opacity inside */
} key_kind;

typedef struct {
    key_kind kind;
    int style;
    const char *colour;
    double width;
    const char *dash;
    double opacity;
    char text[96];
} key_entry;

#define KEY_MAX 24

typedef struct {
    key_entry items[KEY_MAX];
    size_t count;
} plot_key;

void key_mark(plot_key *k, int style, const char *text);
void key_line(plot_key *k, const char *colour, double width, const char *dash,
              const char *text);
void key_mark_line(plot_key *k, int style, const char *text);
void key_band(plot_key *k, const char *colour, const char *text);
void key_bar(plot_key *k, const char *text);
void key_ring(plot_key *k, const char *text);
void key_dot(plot_key *k, bool filled, const char *text);
void key_circle(plot_key *k, const char *colour, double opacity, double radius,
                const char *text);

/* Writes the background, the title (wrapped) and the key (wrapped into
   rows); returns the y where the plot may start. */
double canvas_header(svg_doc *d, const char *title, const plot_key *key);

/* ---- panels ------------------------------------------------------------ */

typedef struct {
    double left, top, width, height; /* plot area */
    figures_ticks x, y;
    char clip[48]; /* id of the clip path of the area */
} plot_panel;

double panel_x(const plot_panel *p, double value);
double panel_y(const plot_panel *p, double value);
/* Width of the widest tick label of t at the tick font. */
double ticks_width(const figures_ticks *t);
/* Moves the axis ends 3% of the span beyond the outer ticks, so that no
   point sits on the frame. */
void ticks_pad(figures_ticks *t);
/* Grid, axes, tick labels and axis titles. y_labels false leaves the y
   tick labels and title to a neighbouring panel. */
void panel_axes(svg_doc *d, plot_panel *p, const char *x_title, const char *y_title,
                bool y_labels);
/* A second axis in the original units of a logged quantity: along the top
   for x (top) or the right for y; ticks at log_base of round values of the
   original quantity, or, when percent, of round percentage changes
   100 (base^v − 1). Needs ORIGINAL_TOP above or ORIGINAL_RIGHT beside the
   panel. */
#define ORIGINAL_TOP 36.0
#define ORIGINAL_RIGHT 64.0
void panel_original_axis(svg_doc *d, const plot_panel *p, bool top, double base,
                         bool percent, const char *title);
/* Axis title from a quantity and an optional prefix: "fitted label (unit)". */
void axis_title(buf *out, const char *prefix, const figures_quantity *q);

/* Minimum and maximum of the finite values; false when there are none. */
bool finite_range(const double *values, size_t n, double *min, double *max);

/* ---- data layers --------------------------------------------------------- */

/* One mark per finite (x[i], y[i]), i in rows (all n rows when rows is
   NULL), of series style k; returns the number drawn. */
size_t layer_points(svg_doc *d, const plot_panel *p, const double *x, const double *y,
                    const size_t *rows, size_t n, int style);

/* Counts per hexagon and the shading classes (rows per hexagon). */
typedef struct {
    size_t cells;  /* hexagons drawn */
    size_t points; /* points binned */
    size_t n_classes;
    size_t class_lo[8]; /* first count of each class */
    size_t class_hi[8];
    char class_colour[8][8];
} hex_summary;

/* The points as hexagonal bins (Carr et al. 1987) in the panel, shaded by
   count class; each hexagon carries its count in data-n. The classes span
   counts up to class_max (0: this layer's largest count), so that panels
   can share one key. */
typedef struct hex_grid hex_grid;
void layer_hexbin(svg_doc *d, const plot_panel *p, const hex_grid *g, size_t class_max,
                  hex_summary *out);
/* The finite points (x, y) counted per hexagon of a grid laid over panel
   p, counted once for the layer and for any shared key. Caller frees with
   hexbin_free. */
hex_grid *hexbin_new(const plot_panel *p, const double *x, const double *y, size_t n);
void hexbin_free(hex_grid *g);
/* The largest count of one hexagon of g. */
size_t hexbin_peak(const hex_grid *g);
/* The count key of a hex layer, in a column at (x, y). */
void hex_key(svg_doc *d, const hex_summary *h, double x, double y);
/* Width the hex count key needs. */
#define HEX_KEY_WIDTH 112.0

/* A polyline through the finite points (NaN breaks it), clipped to the
   panel; halo draws a white casing under it so it reads on top of data. */
void layer_line(svg_doc *d, const plot_panel *p, const double *x, const double *y, size_t n,
                const char *colour, double width, const char *dash, bool halo);
/* The band between lower and upper over x, clipped to the panel. */
void layer_band(svg_doc *d, const plot_panel *p, const double *x, const double *lower,
                const double *upper, size_t n, const char *colour);

/* Other points a label should not cover: (x[i], y[i]) for i < n, or none. */
typedef struct {
    const double *x, *y;
    size_t n;
} plot_obstacles;

/* Rings the points (x[i], y[i]) (data coordinates) and labels them with
   text[i], trying eight directions at four distances around each and
   keeping clear of the ringed points and the obstacles where possible. A
   label that would cover an earlier one or leave the panel is left out
   (its ring stays); returns how many were left out. */
size_t layer_labels(svg_doc *d, const plot_panel *p, const double *x, const double *y,
                    const char *const *text, size_t n, const plot_obstacles *others);
/* The same for points drawn with radius[i] (NULL: the document's mark size). */
size_t layer_labels_sized(svg_doc *d, const plot_panel *p, const double *x, const double *y,
                          const double *radius, const char *const *text, size_t n,
                          const plot_obstacles *others);

/* ---- one figure being drawn (figures.c) ------------------------------------ */

#define LABELLED_MAX 8

typedef struct {
    const figures_input *in;
    svg_doc doc;
    buf title; /* the question */
    buf caption;
    buf alt;
    size_t labelled[LABELLED_MAX]; /* flagged rows to label, by Cook's distance */
    size_t n_labelled;
    bool original_axes; /* begin_panel leaves room for panel_original_axis */
    size_t unlabelled;  /* ringed rows whose label found no room */
} figure;

/* Radius of point marks for n points. */
double mark_radius(size_t n);
/* A single panel below y = top filling the canvas, with room for the y tick
   labels and, when count_key, the hex count key on the right. */
void single_panel(const svg_doc *d, plot_panel *p, double top, bool count_key);
/* (x, y) of every row as marks of style 0 or, when binned, as hexagons
   with their count key beside the panel. Returns the points drawn. */
size_t scatter(figure *fig, const plot_panel *p, const double *x, const double *y,
               bool binned);
/* Rings and labels the flagged rows at (x, y) with their data-file lines,
   clear of others where possible. */
void label_flagged(figure *fig, const plot_panel *p, const double *x, const double *y,
                   const plot_obstacles *others);
/* The same at positions given per labelled row: x[k], y[k] for
   fig->labelled[k] (NaN: not drawn), where a figure places its rows
   elsewhere than at their own values. */
void label_flagged_at(figure *fig, const plot_panel *p, const double *x, const double *y,
                      const plot_obstacles *others);
/* The points (x, y) of every row as obstacles, or none when binned. */
plot_obstacles row_obstacles(const figure *fig, const double *x, const double *y,
                             bool binned);
/* Adds "ringed: flagged row" to the key when rows are labelled. */
void key_flagged(const figure *fig, plot_key *k);
/* A confidence level as a percentage: 0.95 → "95". */
void percent_text(char *out, size_t size, double level);
/* Appends value with the input's significant digits. */
void put_number(buf *b, const figures_input *in, double value);
/* The caption's closing sentences: on hexagonal bins (when binned) and on
   the flagged rows. */
void caption_tail(figure *fig, bool binned, size_t points);
/* Row i's residual measures, from the input's callback. */
static inline figures_row_measures row_measures(const figures_input *in, size_t i)
{
    return in->measures(in->measures_source, i);
}
/* The standardized residual of every row, or with studentized the
   externally studentized one: an array of n the caller frees. */
double *residual_measures(const figures_input *in, bool studentized);
/* Pairs (x[i], y[i]) with both finite, i < n. */
size_t count_pairs(const double *x, const double *y, size_t n);
/* Starts a scatter figure of (x, y): its title, and its key with the row
   mark when every row is drawn. Returns the number of points; *binned
   says whether they are drawn as hexagons. */
size_t scatter_start(figure *fig, const double *x, const double *y, const char *title,
                     plot_key *key, bool *binned);
/* The header with its key, ticks for the ranges, the panel and its axes. */
void begin_panel(figure *fig, plot_panel *p, const plot_key *key, double x0, double x1,
                 double y0, double y1, const char *x_title, const char *y_title,
                 bool binned);
/* The finite range of v, or [0, 1] when there is none. */
void range_or_unit(const double *v, size_t n, double *min, double *max);
/* A straight reference line from (x0, y0) to (x1, y1) in ink, dashed by dash. */
void reference_line(figure *fig, const plot_panel *p, double x0, double y0, double x1,
                    double y1, const char *dash);
/* "residual (unit)". */
void residual_title(buf *b, const figures_input *in);
/* The response's label, else its name. */
const char *response_words(const figures_input *in);
#define DASH_REFERENCE "5 4"
/* Number of finite values. */
size_t count_finite(const double *v, size_t n);

/* The figures (residuals.c, predictors.c, coefficients.c). */
void figure_response_by_predictor(figure *fig);
void figure_residuals_by_fitted(figure *fig);
void figure_quantile_plot(figure *fig);
void figure_spread_by_fitted(figure *fig);
void figure_influence(figure *fig);
void figure_residuals_in_order(figure *fig);
void figure_residual_histogram(figure *fig);
void figure_coefficient_intervals(figure *fig);
void figure_observed_by_predicted(figure *fig);

/* ---- numerical helpers (stats.c) ---------------------------------------- */

/* The finite values of v, in their order (caller frees); *count of them. */
double *finite_values(const double *v, size_t n, size_t *count);
/* Quantile p of ascending values (linear interpolation between order
   statistics, Hyndman and Fan's type 7). */
double sorted_quantile(const double *sorted, size_t n, double p);
/* The same quantile of values in any order, by selection (the values are
   rearranged): the bits sorted_quantile gives once they are sorted. */
double selected_quantile(double *values, size_t n, double p);
/* Blom's plotting position of the i-th (0-based) of n: (i + 5/8)/(n + 1/4). */
double blom_position(size_t i, size_t n);
/* Pointwise band at level for the i-th (0-based) of n standard normal order
   statistics. */
void order_statistic_band(size_t i, size_t n, double level, double *lo, double *hi);

/* Histogram bins: width and first edge; count of bins. */
typedef struct {
    double start, width;
    size_t count;
    bool capped;  /* the rule asked for more than HISTOGRAM_MAX_BINS */
    bool sturges; /* the IQR was zero: Sturges' rule was used */
} histogram_bins;
#define HISTOGRAM_MAX_BINS 100
/* From n finite values in any order, which it rearranges. */
void histogram_bins_make(double *values, size_t n, histogram_bins *out);

#endif

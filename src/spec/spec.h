/*
 * spec.h — the analysis spec: what to read, how to read it, which models to
 * fit, what to check and what to report. spec_load() parses the YAML file
 * and validates everything that can be checked without the data; checks
 * that need the data's columns are made by the data and design stages,
 * with the marks recorded here.
 */
#ifndef FITPROOF_SPEC_H
#define FITPROOF_SPEC_H

#include "../util/util.h"

/* ---- data -------------------------------------------------------------- */

typedef enum {
    SPEC_KIND_INFER = 0, /* decided from the data */
    SPEC_KIND_NUMERIC,
    SPEC_KIND_CATEGORY,
    SPEC_KIND_DATE       /* ISO 8601 dates, read as a count of unit from origin */
} spec_kind;

/* What a date column counts: its unit and its origin. */
typedef enum { SPEC_DATE_DAY = 0, SPEC_DATE_HOUR, SPEC_DATE_WEEK } spec_date_unit;

/* Per-column declarations from data.columns. */
typedef struct {
    char *name;
    spec_kind kind;
    char *unit;        /* NULL when not given */
    char *label;       /* words used in sentences; NULL when not given */
    char **levels;     /* declared level order; NULL when not given */
    size_t n_levels;
    char *reference;   /* reference level of a category; NULL = first level */
    double step;       /* the change sentences speak of ("per 100 km"); 0 = 1 */
    /* SPEC_KIND_DATE: the unit counted (from unit: day, hour or week) and
       the origin (days since 1970-01-01 UTC), NAN for the earliest date */
    spec_date_unit date_unit;
    double origin;
    src_mark at;
    src_mark unit_at;
    src_mark origin_at;
    double *at_values; /* representative values where interactions and polynomials
                          are read; NULL = the median of each model's rows */
    size_t n_at_values;
    src_mark at_values_at;
    src_mark levels_at;
    src_mark reference_at;
} spec_column;

typedef enum { SPEC_FORMAT_AUTO = 0, SPEC_FORMAT_CSV, SPEC_FORMAT_TSV } spec_format;

/* data.pushdown: false, true, or auto (on from PUSHDOWN_AUTO_ROWS rows,
   src/pushdown/pushdown.h). */
typedef enum { SPEC_PUSHDOWN_OFF = 0, SPEC_PUSHDOWN_ON, SPEC_PUSHDOWN_AUTO } spec_pushdown;

/* A new column computed from one existing column (data.derive). */
typedef enum {
    SPEC_DERIVE_LOG,         /* natural logarithm */
    SPEC_DERIVE_LOG10,
    SPEC_DERIVE_SQRT,
    SPEC_DERIVE_SQUARE,
    SPEC_DERIVE_RECIPROCAL,
    SPEC_DERIVE_CENTER,      /* minus the mean of the rows kept */
    SPEC_DERIVE_STANDARDIZE  /* centred, divided by the standard deviation */
} spec_transform;

typedef struct {
    char *name;
    char *from;
    spec_transform transform;
    src_mark at;
    src_mark from_at;
} spec_derive;

/* Row filters (where): a tree of all/any over comparisons. */
typedef enum { SPEC_OP_EQ, SPEC_OP_NE, SPEC_OP_LT, SPEC_OP_LE, SPEC_OP_GT, SPEC_OP_GE,
               SPEC_OP_IN } spec_op;

typedef enum { SPEC_FILTER_ALL, SPEC_FILTER_ANY, SPEC_FILTER_COMPARE } spec_filter_kind;

typedef struct spec_filter spec_filter;
struct spec_filter {
    spec_filter_kind kind;
    /* ALL / ANY */
    spec_filter *children;
    size_t n_children;
    /* COMPARE */
    char *column;
    spec_op op;
    char **values;        /* one value, or several for SPEC_OP_IN, as written */
    size_t n_values;
    bool numeric_values;  /* every value parses as a number */
    double *numbers;      /* the parsed values when numeric_values */
    src_mark *values_at;  /* where each value was written */
    src_mark at;
    src_mark column_at;
};

/* Where the rows come from. */
typedef enum {
    SPEC_SOURCE_FILE = 0, /* a CSV or TSV file (path) */
    SPEC_SOURCE_SQLITE,   /* a SQLite database file (sqlite), read-only */
    SPEC_SOURCE_POSTGRES, /* a PostgreSQL server (postgres: a connection string) */
    SPEC_SOURCE_XLSX      /* a spreadsheet (path ending .xlsx): one sheet */
} spec_source;

typedef struct {
    spec_source source;
    char *path;            /* as written in the spec (the database file for sqlite) */
    char *resolved;        /* relative to the spec's folder */
    src_mark path_at;
    spec_format format;
    char delimiter;        /* 0: from the format */
    bool decimal_comma;
    char **missing;        /* tokens meaning "missing"; the empty cell always is */
    size_t n_missing;
    char *sha256;          /* lower-case hex pin, or NULL */
    src_mark sha256_at;
    char *rows_are;        /* plural noun for a row in sentences ("cylinders") */
    spec_column *columns;
    size_t n_columns;
    /* SQL sources: the query (or a table, read whole), the key column whose
       values name the rows, the connection string (postgres) */
    char *query;
    src_mark query_at;
    char *table;
    src_mark table_at;
    char *key;
    src_mark key_at;
    char *connection;
    src_mark connection_at;
    double statement_timeout; /* seconds; postgres */
    spec_pushdown pushdown;   /* postgres: the fit's sums run in the server (src/pushdown) */
    src_mark pushdown_at;
    /* date-times without an offset are read in this fixed offset (minutes
       east of UTC); has_time_zone false: they are refused */
    bool has_time_zone;
    int time_zone_minutes;
    char *time_zone;
    src_mark time_zone_at;
    /* SPEC_SOURCE_XLSX: the sheet (by name, or sheet_position from 1; neither:
       the first), the header's row (from 1; 0: the range's first row, else
       1) and the range of cells read (columns and rows from 1; 0: open) */
    char *sheet;
    long sheet_position;
    src_mark sheet_at;
    long header_row;
    src_mark header_row_at;
    unsigned range_first_column, range_last_column, range_first_row, range_last_row;
    char *range;
    src_mark range_at;
    /* Set by verify, never by the spec: a SQL source's rows as the build
       stored them in the report folder (report.archive_data), read in place
       of the database. stored_kinds holds, per column of the stored rows,
       the kind the database's types implied (SPEC_KIND_INFER: none);
       stored_query and stored_server are the manifest's. */
    char *stored_rows;
    spec_kind *stored_kinds;
    size_t n_stored_kinds;
    char *stored_query;
    char *stored_server;
} spec_data;

/* True when a SQL query has an ORDER BY of its own: outside quotes,
   comments and parentheses. */
bool spec_query_is_ordered(const char *query);

/* ---- models ------------------------------------------------------------ */

typedef enum {
    SPEC_TERM_MAIN,        /* one column */
    SPEC_TERM_INTERACTION, /* product of two or three columns */
    SPEC_TERM_POLYNOMIAL   /* raw powers 1..degree of one numeric column */
} spec_term_kind;

typedef struct {
    spec_term_kind kind;
    char **columns;      /* one for MAIN and POLYNOMIAL */
    size_t n_columns;
    int degree;          /* POLYNOMIAL only */
    src_mark at;
    src_mark *column_at; /* where each column name was written */
} spec_term;

typedef enum { SPEC_CODING_TREATMENT = 0, SPEC_CODING_SUM } spec_coding;

typedef enum { SPEC_ERRORS_CLASSICAL = 0, SPEC_ERRORS_HC0, SPEC_ERRORS_HC1,
               SPEC_ERRORS_HC2, SPEC_ERRORS_HC3,
               SPEC_ERRORS_HAC /* Newey–West, needs order_by */ } spec_errors;

typedef struct {
    char *id;
    char *response;
    spec_term *terms;
    size_t n_terms;
    bool intercept;
    char *weights;           /* column of weights, or NULL */
    spec_coding coding;      /* how categories are coded */
    spec_errors errors;      /* which standard errors the report leads with */
    char *order_by;          /* column giving the order of rows (Durbin–Watson), or NULL */
    long lags;               /* Newey–West lags for standard_errors: hac; -1 = the rule
                                ⌊4 (n/100)^(2/9)⌋ */
    char **variance_columns; /* Breusch–Pagan regressors; NULL = the model's own */
    size_t n_variance_columns;
    src_mark at;
    src_mark id_at;
    src_mark response_at;
    src_mark weights_at;
    src_mark order_by_at;
    src_mark errors_at;
    src_mark lags_at;
    src_mark *variance_columns_at;
    bool broken;             /* the spec recorded an error inside this model */
} spec_model;

/* ---- checks, comparisons, predictions ---------------------------------- */

typedef enum {
    SPEC_CHECK_RESIDUALS_NORMAL,
    SPEC_CHECK_VARIANCE_CONSTANT,
    SPEC_CHECK_ERRORS_INDEPENDENT,
    SPEC_CHECK_LINEAR,           /* RESET finds no missed curvature */
    SPEC_CHECK_VIF_BELOW,        /* every VIF (or GVIF^(1/(2 df))²) below bound */
    SPEC_CHECK_COOKS_BELOW,      /* every Cook's distance below bound */
    SPEC_CHECK_SIGN,             /* a coefficient is positive / negative */
    SPEC_CHECK_METRIC            /* a fit metric at least / at most a value */
} spec_check_kind;

typedef struct {
    spec_check_kind kind;
    char *name;           /* as the report lists it; generated when not given */
    char *model;          /* model id */
    double bound;         /* VIF_BELOW, COOKS_BELOW */
    char *coefficient;    /* SIGN: coefficient label */
    int sign;             /* SIGN: +1 or -1 */
    char *metric;         /* METRIC: r_squared, adj_r_squared, sigma, f_p, aic, bic, n_used */
    bool has_at_least, has_at_most;
    double at_least, at_most;
    src_mark at;
    src_mark model_at;
    src_mark coefficient_at;
} spec_check;

typedef struct {
    char *small;
    char *big;
    src_mark at;
    src_mark small_at;
    src_mark big_at;
} spec_compare;

/* One prediction row: column name → value as written. */
typedef struct {
    char **columns;
    char **values;
    src_mark *at;
    size_t n_values;
    src_mark row_at;
} spec_predict_row;

typedef struct {
    char *model;
    spec_predict_row *rows;
    size_t n_rows;
    src_mark at;
    src_mark model_at;
} spec_predict;

/* ---- report ------------------------------------------------------------ */

typedef enum {
    SPEC_FORMAT_MARKDOWN = 1 << 0,
    SPEC_FORMAT_HTML = 1 << 1,
    SPEC_FORMAT_JSON = 1 << 2,
    SPEC_FORMAT_PDF = 1 << 3,
    SPEC_FORMAT_DOCX = 1 << 4
} spec_output_format;

/* The computed sections a report can contain, in their default order. */
typedef enum {
    SPEC_SECTION_SUMMARY,
    SPEC_SECTION_DATA,
    SPEC_SECTION_MODELS,
    SPEC_SECTION_COMPARISONS,
    SPEC_SECTION_PREDICTIONS,
    SPEC_SECTION_CHECKS,
    SPEC_SECTION_APPENDIX,
    SPEC_SECTION_NARRATIVE /* a Markdown block written in the spec */
} spec_section_kind;

typedef struct {
    spec_section_kind kind;
    char *markdown;  /* NARRATIVE only */
    src_mark at;     /* NARRATIVE: where the text starts (for located errors) */
    bool literal;    /* NARRATIVE: written as a YAML literal block (|) */
} spec_section;

typedef struct {
    unsigned formats;         /* spec_output_format bits */
    src_mark formats_at;
    double confidence_level;  /* 0.95 */
    double alpha;             /* 0.05: verdicts and "cannot be told from zero" */
    int decimal_places;       /* -1: significant digits instead */
    int significant_digits;   /* 4 */
    spec_section *sections;   /* order of the report; default order when not given */
    size_t n_sections;
    char **figures;           /* figure names to draw; NULL = all */
    size_t n_figures;
    bool figures_given;
    bool residuals_table;     /* write residuals.csv */
    /* store the data file in the folder (data/NAME): given, or by default
       for a file of at most SPEC_ARCHIVE_DEFAULT_MAX bytes */
    bool archive_data;
    bool archive_data_given;
    src_mark archive_data_at;
    char *template_path;      /* custom HTML page template, resolved; or NULL */
    char *template_written;   /* the same as written in the spec; or NULL */
    src_mark template_at;
    src_mark figures_at;
    src_mark *figure_at;
} spec_report;

/* Without report.archive_data, a data file up to this size is stored in
   the report folder, a larger one is not. */
#define SPEC_ARCHIVE_DEFAULT_MAX ((size_t)50 << 20)

/* ---- the whole spec ---------------------------------------------------- */

typedef struct {
    char *key;
    char *value;
} spec_meta;

/* The parts of a spec that had errors (spec_load_partial): later stages
   check what the sound parts allow, so that one run reports every error. */
enum {
    SPEC_BROKEN_HEAD = 1 << 0,    /* the version, a required key */
    SPEC_BROKEN_DATA = 1 << 1,    /* data, derive or where */
    SPEC_BROKEN_MODELS = 1 << 2,  /* a model (see spec_model.broken) or the list */
    SPEC_BROKEN_OUTPUTS = 1 << 3, /* checks, compare, predict, their models */
    SPEC_BROKEN_REPORT = 1 << 4,  /* report */
    SPEC_BROKEN_META = 1 << 5,    /* title or meta */
    SPEC_BROKEN_KEYS = 1 << 6,    /* an unknown or repeated top-level key only */
    SPEC_BROKEN_REFERENCES = 1 << 7 /* a check, comparison or prediction names no model */
};

/* ---- document control (meta's date, revision, history and people) ------ */

typedef struct {
    char *name;
    char *role; /* or NULL */
} spec_person;

typedef struct {
    char *revision;
    char *date;   /* YYYY-MM-DD, or NULL */
    char *change;
} spec_revision;

/* Where the report's date came from; the manifest records it so that
   verify rebuilds with the same date. */
typedef enum {
    SPEC_DATE_NONE,         /* no date: the report shows none */
    SPEC_DATE_FROM_SPEC,    /* meta.date */
    SPEC_DATE_FROM_COMMAND, /* build --date (a given date, or today's with "now") */
    SPEC_DATE_FROM_EPOCH    /* the SOURCE_DATE_EPOCH environment variable */
} spec_date_source;

typedef struct {
    char *date;             /* the report's date, YYYY-MM-DD; NULL when none */
    spec_date_source date_source;
    src_mark date_at;
    char *revision;
    spec_revision *history;
    size_t n_history;
    spec_person *prepared, *reviewed, *approved;
    size_t n_prepared, n_reviewed, n_approved;
} spec_document;

typedef struct {
    char *path;           /* the spec file as given on the command line */
    char *source;         /* its full text, for the archive and the appendix */
    size_t source_length;
    char *title;
    spec_meta *meta;      /* client, project, analyst, document_id, … in order */
    size_t n_meta;
    spec_document document; /* meta's document-control keys */
    spec_data data;
    spec_derive *derive;
    size_t n_derive;
    spec_filter *where;   /* NULL: keep every row */
    spec_model *models;
    size_t n_models;
    spec_check *checks;
    size_t n_checks;
    spec_compare *compare;
    size_t n_compare;
    spec_predict *predict;
    size_t n_predict;
    spec_report report;
    unsigned broken;      /* SPEC_BROKEN_* bits; always 0 from spec_load */
} spec;

/* Limits on a spec, each checked before the work it bounds (docs/errors.md),
   so that no hostile spec costs more than a moment: the file's size; how
   deeply lists and mappings nest; the entries of any one list or mapping
   (models, terms, declared levels, meta keys, …); a model id's length in
   bytes (ids become file names). */
#define SPEC_MAX_BYTES ((size_t)1 << 20)
#define SPEC_MAX_DEPTH 32
#define SPEC_MAX_ENTRIES 1000
#define SPEC_MAX_ID 64

/* Parses and validates the spec at path. Returns NULL when errors were
   recorded. Caller frees with spec_free. */
spec *spec_load(const char *path, error_list *errors);
/* Like spec_load, but a spec with errors is returned all the same, its
   broken bits saying which parts had them (NULL only when the file is
   unreadable, not YAML, or not a mapping). For lint and build, which go on
   to check the data and designs the sound parts describe. */
spec *spec_load_partial(const char *path, error_list *errors);
/* Parses spec text already in memory (path names it in messages and
   locates the data file). */
spec *spec_parse(const char *path, const char *text, size_t length, error_list *errors);
void spec_free(spec *s);

/* The declaration for a column, or NULL when it was not declared. */
const spec_column *spec_find_column(const spec *s, const char *name);
/* The model with this id, or NULL. */
const spec_model *spec_find_model(const spec *s, const char *id);
/* The derived column with this name, or NULL. */
const spec_derive *spec_find_derive(const spec *s, const char *name);

/* The figure names report.figures accepts, NULL-terminated, in the order
   the report shows them. */
extern const char *const spec_figure_names[];

/* Names used in messages and documents. */
const char *spec_transform_name(spec_transform t);
const char *spec_section_name(spec_section_kind k);

/* Whether text is a calendar date written YYYY-MM-DD. */
bool spec_valid_date(const char *text);
/* Sets the report's date from outside the spec (build --date, the
   SOURCE_DATE_EPOCH variable, or verify repeating a recorded date). False
   when date is not YYYY-MM-DD. */
bool spec_set_report_date(spec *s, const char *date, spec_date_source source);

#endif

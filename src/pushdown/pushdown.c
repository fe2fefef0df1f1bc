/*
 * pushdown.c — pass one inside PostgreSQL and the exact solve.
 *
 * Every design column is written as a SQL expression over the source's
 * columns cast to numeric (a level as CASE WHEN c::text = 'level' THEN 1
 * ELSE 0 END, sum coding with −1 on the omitted level, a power or an
 * interaction as a product, weights as a factor of every sum), so that
 * sum() over numeric is exact: one scan returns n, XᵀWX, XᵀWy and yᵀWy.
 * The normal equations are then solved by Gauss–Jordan elimination over
 * the rationals (GMP mpq), which loses nothing whatever the conditioning
 * of XᵀWX; β, RSS = yᵀWy − βᵀXᵀWy and (XᵀWX)⁻¹ are exact and rounded once,
 * and the inverse replaces the fit's stored one and its classical covariance.
 * Pass two inlines β as decimal constants and sums the squared residuals
 * in the server, a check on the first pass that reads the rows again, and
 * the first four powers of the residuals (their moments); pass three, for
 * an ordered model on an unpartitioned source, sums the squared lagged
 * differences (Durbin–Watson).
 */
#include "internal.h"

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Numeric type OIDs (pg_type.dat): exact integers and numeric. */
static bool pd_exact_type(Oid oid)
{
    return oid == 20 || oid == 21 || oid == 23 || oid == 1700;
}

static bool pd_float_type(Oid oid)
{
    return oid == 700 || oid == 701;
}

/* A SQL identifier, double-quoted. */
static void pd_ident(buf *b, const char *name)
{
    buf_putc(b, '"');
    for (const char *c = name; *c; c++) {
        if (*c == '"')
            buf_putc(b, '"');
        buf_putc(b, *c);
    }
    buf_putc(b, '"');
}

/* A SQL string literal. */
static void pd_literal(buf *b, const char *text)
{
    buf_putc(b, '\'');
    for (const char *c = text; *c; c++) {
        if (*c == '\'')
            buf_putc(b, '\'');
        buf_putc(b, *c);
    }
    buf_putc(b, '\'');
}

static void pd_source(buf *b, const spec *s)
{
    if (s->data.query)
        buf_printf(b, "(%s) AS fitproof_source", s->data.query);
    else
        buf_puts(b, s->data.table);
}

/* One factor of a coefficient as a numeric expression. */
static void pd_part(buf *b, const design_part *p)
{
    if (p->kind == DESIGN_NUMERIC) {
        for (int k = 0; k < p->power; k++) {
            if (k)
                buf_puts(b, " * ");
            pd_ident(b, p->column->name);
            buf_puts(b, "::numeric");
        }
        return;
    }
    buf_puts(b, "CASE WHEN ");
    pd_ident(b, p->column->name);
    buf_puts(b, "::text = ");
    pd_literal(b, p->level);
    buf_puts(b, " THEN 1");
    if (p->kind == DESIGN_SUM) {
        buf_puts(b, " WHEN ");
        pd_ident(b, p->column->name);
        buf_puts(b, "::text = ");
        pd_literal(b, p->omitted);
        buf_puts(b, " THEN -1");
    }
    buf_puts(b, " ELSE 0 END");
}

static void pd_coef(buf *b, const design_coef *c)
{
    if (c->n_parts == 0) {
        buf_puts(b, "1::numeric");
        return;
    }
    for (size_t k = 0; k < c->n_parts; k++) {
        if (k)
            buf_puts(b, " * ");
        buf_putc(b, '(');
        pd_part(b, &c->parts[k]);
        buf_putc(b, ')');
    }
}

/* The partition key of a partitioned table source: the columns every
   pass groups by, so that postgres_fdw can send each aggregate whole to
   the shard holding the partition (it sends none that a partition only
   partly answers). Only a LIST key: its values are few (a plant, a site),
   where grouping by a RANGE or HASH key (a row number) would make a group
   of nearly every row. Empty for a query, a plain table, another strategy
   or a key that is an expression. */
typedef struct {
    char **columns;
    size_t n;
} pd_partition;

/* The rows of the model: FROM the source WHERE every used column is
   present, with columns x0 … x(p−1), y, w and the partition key g0 …. */
enum {
    PD_ROWS_KEY = 1 << 0,    /* the key k */
    PD_ROWS_ORDER = 1 << 1,  /* order_by o (with the key: the streamed rows' order) */
    PD_ROWS_RANGES = 1 << 2,  /* the numeric predictors r0 … as numeric */
    PD_ROWS_VARIANCE = 1 << 3 /* the model's variance_columns z0 … as numeric */
};

static void pd_rows(buf *b, const spec *s, const design *d, const pd_partition *part,
                    unsigned with)
{
    buf_puts(b, "(SELECT ");
    if (with & PD_ROWS_ORDER) {
        pd_ident(b, d->model->order_by);
        buf_puts(b, " AS o, ");
    }
    if (with & PD_ROWS_KEY) {
        pd_ident(b, s->data.key);
        buf_puts(b, " AS k, ");
    }
    for (size_t k = 0; (with & PD_ROWS_RANGES) && k < d->n_ranges; k++) {
        pd_ident(b, d->ranges[k].column->name);
        buf_printf(b, "::numeric AS r%zu, ", k);
    }
    for (size_t k = 0; (with & PD_ROWS_VARIANCE) && k < d->model->n_variance_columns; k++) {
        pd_ident(b, d->model->variance_columns[k]);
        buf_printf(b, "::numeric AS z%zu, ", k);
    }
    for (size_t c = 0; c < d->n_coefs; c++) {
        pd_coef(b, &d->coefs[c]);
        buf_printf(b, " AS x%zu, ", c);
    }
    for (size_t k = 0; k < part->n; k++) {
        pd_ident(b, part->columns[k]);
        buf_printf(b, " AS g%zu, ", k);
    }
    pd_ident(b, d->response->name);
    buf_puts(b, "::numeric AS y, ");
    if (d->weight) {
        pd_ident(b, d->weight->name);
        buf_puts(b, "::numeric AS w");
    } else
        buf_puts(b, "1::numeric AS w");
    buf_puts(b, " FROM ");
    pd_source(b, s);
    for (size_t k = 0; k < d->n_missing; k++) {
        buf_puts(b, k ? " AND " : " WHERE ");
        pd_ident(b, d->missing[k].column->name);
        buf_puts(b, " IS NOT NULL");
    }
    buf_puts(b, ") AS fitproof_rows");
}

/* SELECT of the m aggregates aggs (a0 … a(m−1), comma-separated) over the
   model's rows, extended by the row values values when not NULL: directly,
   or per partition and then summed, which changes no digit (sums of
   numeric sums are exact); the last n_max are maxima, combined by max. */
static char *pd_select(const spec *s, const design *d, const pd_partition *part,
                       const char *aggs, size_t m, size_t n_max, const char *values,
                       unsigned with)
{
    buf b;
    buf_init(&b);
    buf_puts(&b, "SELECT ");
    if (part->n > 0) {
        for (size_t i = 0; i < m; i++)
            buf_printf(&b, "%s%s(a%zu)", i ? ", " : "", i + n_max >= m ? "max" : "sum", i);
        buf_puts(&b, " FROM (SELECT ");
    }
    buf_puts(&b, aggs);
    buf_puts(&b, " FROM ");
    if (values)
        buf_printf(&b, "(SELECT *, %s FROM ", values);
    pd_rows(&b, s, d, part, with);
    /* Unpartitioned, OFFSET 0 keeps the subquery whole, so that each row's
       values are computed once; on a partitioned source it is flattened
       into the aggregates, which is what lets them go to the shards. */
    if (values)
        buf_puts(&b, part->n > 0 ? ") AS fitproof_values" : " OFFSET 0) AS fitproof_values");
    if (part->n > 0) {
        buf_puts(&b, " GROUP BY ");
        for (size_t k = 0; k < part->n; k++)
            buf_printf(&b, "%sg%zu", k ? ", " : "", k);
        buf_puts(&b, ") AS fitproof_partitions");
    }
    return buf_detach(&b);
}

/* Pass one: count, then XᵀWX's upper triangle by rows, XᵀWy, yᵀWy, then
   each numeric predictor's largest value and largest negated value (its
   smallest, as a maximum, which is how maxima combine across partitions). */
static char *pd_pass_one(const spec *s, const design *d, const pd_partition *part)
{
    buf a;
    buf_init(&a);
    size_t m = 0;
    buf_printf(&a, "count(*) AS a%zu", m++);
    for (size_t i = 0; i < d->n_coefs; i++)
        for (size_t j = i; j < d->n_coefs; j++)
            buf_printf(&a, ", sum(w * x%zu * x%zu) AS a%zu", i, j, m++);
    for (size_t i = 0; i < d->n_coefs; i++)
        buf_printf(&a, ", sum(w * x%zu * y) AS a%zu", i, m++);
    buf_printf(&a, ", sum(w * y * y) AS a%zu", m++);
    for (size_t k = 0; k < d->n_ranges; k++) {
        buf_printf(&a, ", max(r%zu) AS a%zu", k, m++);
        buf_printf(&a, ", max(-r%zu) AS a%zu", k, m++);
    }
    char *sql = pd_select(s, d, part, a.data, m, 2 * d->n_ranges, NULL, PD_ROWS_RANGES);
    buf_free(&a);
    return sql;
}

/* The residual (y − xᵀb) in SQL, b written as exact decimals (%.17g reads
   back to the same double, and the numeric product is exact). */
static void pd_residual(buf *b, const design *d, const double *b_hat)
{
    buf_puts(b, "(y");
    for (size_t c = 0; c < d->n_coefs; c++)
        buf_printf(b, " - %.17g::numeric * x%zu", b_hat[c], c);
    buf_putc(b, ')');
}

/* A constant times design column c: just the constant for the intercept
   (its column is 1), so that no row multiplies by it. */
static void pd_term(buf *b, double constant, const design *d, size_t c)
{
    buf_printf(b, "%.17g::numeric", constant);
    if (d->coefs[c].n_parts > 0)
        buf_printf(b, " * x%zu", c);
}

/* The row values pass two reads: the fitted value f = xᵀb, d = y − f and
   the leverage h = w xᵀ(XᵀWX)⁻¹x, b as exact decimals and the inverse as
   the nearest doubles (enough for a diagnostic). h is nested as
   Σᵢ xᵢ (cᵢᵢ xᵢ + Σ_{j>i} 2cᵢⱼ xⱼ), half the products of the full form:
   on a partitioned source PostgreSQL evaluates it once per aggregate that
   reads it. */
static void pd_row_values(buf *v, const design *d, const double *b_hat,
                          const long double *inverse)
{
    size_t p = d->n_coefs;
    buf f;
    buf_init(&f);
    buf_puts(&f, "(0");
    for (size_t c = 0; c < p; c++) {
        buf_puts(&f, " + ");
        pd_term(&f, b_hat[c], d, c);
    }
    buf_putc(&f, ')');
    buf_printf(v, "%s AS f, (y - %s) AS d, w * (0", f.data, f.data);
    for (size_t i = 0; i < p; i++) {
        buf_puts(v, " + ");
        if (d->coefs[i].n_parts > 0)
            buf_printf(v, "x%zu * ", i);
        buf_putc(v, '(');
        for (size_t j = i; j < p; j++) {
            double c = (double)inverse[i * p + j];
            if (j > i)
                buf_puts(v, " + ");
            pd_term(v, j == i ? c : 2.0 * c, d, j);
        }
        buf_putc(v, ')');
    }
    buf_puts(v, ") AS h");
    buf_free(&f);
}

/* Pass two: Σ w d², then Σ rᵏ for k = 1 … 4 of r = √w d, the residuals
   the diagnostics test (exact without weights; √w is numeric's sqrt with
   weights), Breusch–Pagan's and RESET's sums (assumptions.c), unpartitioned
   the influence counts, and the maxima: the leverage, unpartitioned the
   influence maxima. */
static char *pd_pass_two(const spec *s, const design *d, const pd_partition *part,
                         const pushdown_result *r, const pd_exact *ex, pd_layout *layout,
                         size_t *leverage_at)
{
    const char *e = d->weight ? "(sqrt(w) * d)" : "d";
    buf a;
    buf_init(&a);
    buf_puts(&a, "count(*) AS a0, sum(w * d * d) AS a1");
    for (int k = 1; k <= PUSHDOWN_N_POWERS; k++) {
        buf_puts(&a, ", sum(");
        for (int j = 0; j < k; j++)
            buf_printf(&a, "%s%s", j ? " * " : "", e);
        buf_printf(&a, ") AS a%d", k + 1);
    }
    pd_assumption_sums(&a, d, 2 + PUSHDOWN_N_POWERS, r, layout);
    if (part->n == 0)
        pd_influence_sums(&a, s, d, ex, layout);
    *leverage_at = layout->end;
    buf_printf(&a, ", max(h) AS a%zu", *leverage_at);
    pd_influence_maxima(&a, layout, *leverage_at + 1);
    size_t n_max = layout->influence ? 3 : 1;
    buf v;
    buf_init(&v);
    pd_row_values(&v, d, r->estimates, r->xtx_inverse);
    unsigned with = layout->bp_other && d->model->n_variance_columns ? PD_ROWS_VARIANCE : 0;
    char *sql = pd_select(s, d, part, a.data, *leverage_at + n_max, n_max, v.data, with);
    buf_free(&v);
    buf_free(&a);
    return sql;
}

/* The influence pass of a partitioned source: the counts and maxima of
   pass two, ungrouped and with the row values fenced. The flag rules read
   h many times, and folded into aggregates that go to the shards each
   reading would be computed again; here the coordinator computes each
   row's values once, from the rows the shards send it (none reach
   fitproof). */
static char *pd_pass_influence(const spec *s, const design *d, const pushdown_result *r,
                               const pd_exact *ex, pd_layout *layout)
{
    memset(layout, 0, sizeof *layout);
    layout->end = 1;
    buf a;
    buf_init(&a);
    buf_puts(&a, "count(*) AS a0");
    pd_influence_sums(&a, s, d, ex, layout);
    pd_influence_maxima(&a, layout, layout->end);
    buf v;
    buf_init(&v);
    pd_row_values(&v, d, r->estimates, r->xtx_inverse);
    pd_partition none = {NULL, 0};
    char *sql = pd_select(s, d, &none, a.data, layout->end + 2, 2, v.data, 0);
    buf_free(&v);
    buf_free(&a);
    return sql;
}

/* The top-rows pass: the DIAG_TOP_ROWS rows with the largest Cook's
   distance, as the key and e²h/(1 − h)² (D times p s², which orders the
   rows as D does), in the report's order: the distance, rows with h ≥ 1
   (no distance) last, then the leverage, then the key. The row values are
   fenced and the LIMIT lets the server keep only the top rows while it
   reads (a bounded sort); on a partitioned source the coordinator does
   this over the rows the shards send it. */
static char *pd_pass_top(const spec *s, const design *d, const pushdown_result *r)
{
    buf b;
    buf_init(&b);
    buf_puts(&b, "SELECT k::text, c, h FROM (SELECT k, h, CASE WHEN h < 1 THEN w * d * d * h / "
                 "((1 - h) * (1 - h)) END AS c FROM (SELECT *, ");
    pd_row_values(&b, d, r->estimates, r->xtx_inverse);
    buf_puts(&b, " FROM ");
    pd_partition none = {NULL, 0};
    pd_rows(&b, s, d, &none, PD_ROWS_KEY);
    buf_printf(&b, " OFFSET 0) AS fitproof_values) AS fitproof_influence "
                   "ORDER BY c DESC NULLS LAST, h DESC, k LIMIT %d",
               DIAG_TOP_ROWS);
    return buf_detach(&b);
}

/* Whether pass three (Durbin–Watson's Σ (r_t − r_{t−1})² along order_by)
   runs: the model has a usable numeric order_by and a key breaking ties,
   and the source is not partitioned (a window over every row cannot be
   split by partition; the shards would send every row). */
static bool pd_ordered(const spec *s, const design *d, const pd_partition *part,
                       const pushdown_result *r)
{
    return d->model->order_by && d->order && s->data.key && part->n == 0 && r->order_numeric;
}

/* Pass three: count and Σ (r_t − r_{t−1})² with r = √w (y − xᵀb), the
   previous residual from lag() over the rows ordered by order_by, then
   the key. */
static char *pd_pass_three(const spec *s, const design *d, const double *b_hat)
{
    buf b;
    buf_init(&b);
    buf_puts(&b, "SELECT count(*) AS a0, sum((r - r_before) * (r - r_before)) AS a1 FROM "
                 "(SELECT r, lag(r) OVER (ORDER BY o, k) AS r_before FROM (SELECT o, k, ");
    if (d->weight)
        buf_puts(&b, "sqrt(w) * ");
    pd_residual(&b, d, b_hat);
    buf_puts(&b, " AS r FROM ");
    pd_partition none = {NULL, 0};
    pd_rows(&b, s, d, &none, PD_ROWS_ORDER | PD_ROWS_KEY);
    buf_puts(&b, ") AS fitproof_residuals) AS fitproof_lagged");
    return buf_detach(&b);
}

/* Reads the partition key of a table source from the catalog; leaves
   part empty when there is none (or the server cannot tell). */
static void pd_find_partition(PGconn *conn, const spec *s, pd_partition *part)
{
    memset(part, 0, sizeof *part);
    if (!s->data.table)
        return;
    const char *params[1] = {s->data.table};
    PGresult *res = PQexecParams(
        conn,
        "SELECT k.attnum, a.attname FROM pg_partitioned_table AS p "
        "CROSS JOIN LATERAL unnest(p.partattrs::int2[]) WITH ORDINALITY AS k(attnum, place) "
        "LEFT JOIN pg_attribute AS a ON a.attrelid = p.partrelid AND a.attnum = k.attnum "
        "WHERE p.partrelid = to_regclass($1) AND p.partstrat = 'l' ORDER BY k.place",
        1, NULL, params, NULL, NULL, 0);
    size_t n = PQresultStatus(res) == PGRES_TUPLES_OK ? (size_t)PQntuples(res) : 0;
    bool columns_only = n > 0;
    for (size_t k = 0; k < n && columns_only; k++)
        columns_only = strcmp(PQgetvalue(res, (int)k, 0), "0") != 0 && !PQgetisnull(res, (int)k, 1);
    if (columns_only) {
        part->columns = xcalloc(n, sizeof *part->columns);
        for (size_t k = 0; k < n; k++)
            part->columns[k] = xstrdup(PQgetvalue(res, (int)k, 1));
        part->n = n;
    }
    PQclear(res);
}

static void pd_partition_free(pd_partition *part)
{
    for (size_t k = 0; k < part->n; k++)
        free(part->columns[k]);
    free(part->columns);
}

bool pd_rational(mpq_t q, const char *text)
{
    buf digits;
    buf_init(&digits);
    size_t scale = 0;
    bool point = false, ok = *text != '\0';
    for (const char *c = text; *c && ok; c++) {
        if (*c == '-' && c == text)
            buf_putc(&digits, '-');
        else if (*c == '.' && !point)
            point = true;
        else if (*c >= '0' && *c <= '9') {
            buf_putc(&digits, *c);
            scale += point;
        } else
            ok = false;
    }
    if (ok) {
        mpz_t num, den;
        mpz_init(num);
        mpz_init(den);
        ok = mpz_set_str(num, digits.data, 10) == 0;
        mpz_ui_pow_ui(den, 10, scale);
        mpq_set_num(q, num);
        mpq_set_den(q, den);
        mpq_canonicalize(q);
        mpz_clear(num);
        mpz_clear(den);
    }
    buf_free(&digits);
    return ok;
}

/* Records why pushdown stops (or, PUSHDOWN_PARTIAL, what it left to the
   rows), with the column or the server's message it concerns. */
static void pd_refuse(pushdown_result *r, pushdown_reason reason, const char *column,
                      const char *detail)
{
    r->reason = reason;
    free(r->reason_column);
    free(r->reason_detail);
    r->reason_column = column ? xstrdup(column) : NULL;
    r->reason_detail = detail ? xstrdup(detail) : NULL;
}

const char *pushdown_reason_name(pushdown_reason reason)
{
    static const char *const names[] = {
        "partial",         "where_filter",    "derived_columns", "missing_tokens",
        "too_many_coefficients", "aliased",   "robust_errors",   "levels_not_text",
        "describe_failed", "float_column",    "inexact_column",  "not_a_number",
        "singular",        "pass_failed",     "connection_failed", "row_count_differs",
        "below_auto_rows"};
    return names[reason];
}

/* q's 30 significant digits of a 256-bit value, as text strtod reads:
   mpq_get_d truncates, so rounding goes through the correctly rounded
   strtod / strtold (the chance that 30 digits decide a tie differently is
   below 1e-13). */
void pd_digits(const mpq_t q, bool root, buf *b)
{
    mpf_t v;
    mpf_init2(v, 256);
    mpf_set_q(v, q);
    if (root)
        mpf_sqrt(v, v);
    mp_exp_t exponent;
    char *digits = mpf_get_str(NULL, &exponent, 10, 30, v);
    const char *d = digits;
    if (*d == '-')
        buf_putc(b, *d++);
    buf_printf(b, "0.%se%ld", *d ? d : "0", (long)exponent);
    void (*release)(void *, size_t);
    mp_get_memory_functions(NULL, NULL, &release);
    release(digits, strlen(digits) + 1);
    mpf_clear(v);
}

/* Rounded through 30 digits: mpq_get_d truncates. */
double pd_nearest(const mpq_t q, bool root)
{
    buf b;
    buf_init(&b);
    pd_digits(q, root, &b);
    double out = strtod(b.data, NULL);
    buf_free(&b);
    return out;
}

/* q rounded to the nearest long double, whose range holds an entry of
   (XᵀWX)⁻¹ for columns of any size a double holds. */
long double pd_nearest_long(const mpq_t q)
{
    buf b;
    buf_init(&b);
    pd_digits(q, false, &b);
    long double out = strtold(b.data, NULL);
    buf_free(&b);
    return out;
}

/* The residual moments from pass two's Σ rᵏ: the central moments exactly
   (rationals), rounded once, then the diagnostics' own formula. */
static void pd_moments(const PGresult *res, pushdown_result *r)
{
    mpq_t sum[PUSHDOWN_N_POWERS + 1], mean, central[PUSHDOWN_N_POWERS + 1], t, binom;
    mpq_inits(mean, t, binom, NULL);
    bool ok = true;
    size_t n = r->passes[1].rows_scanned;
    mpq_init(sum[0]);
    mpq_set_ui(sum[0], (unsigned long)n, 1);
    for (int k = 1; k <= PUSHDOWN_N_POWERS; k++) {
        mpq_init(sum[k]);
        const char *text = PQgetvalue(res, 0, k + 1);
        ok = ok && pd_rational(sum[k], text);
        r->residual_power_sums[k - 1] = strtod(text, NULL);
    }
    for (int k = 0; k <= PUSHDOWN_N_POWERS; k++)
        mpq_init(central[k]);
    if (ok && n > 0) {
        mpq_div(mean, sum[1], sum[0]);
        /* n·m_k = Σ_j C(k, j) (−mean)^(k−j) Σ r^j */
        for (int k = 2; k <= PUSHDOWN_N_POWERS; k++) {
            mpq_set_ui(central[k], 0, 1);
            for (int j = 0; j <= k; j++) {
                static const unsigned long choose[5][5] = {
                    {1}, {1, 1}, {1, 2, 1}, {1, 3, 3, 1}, {1, 4, 6, 4, 1}};
                mpq_set_ui(binom, choose[k][j], 1);
                mpq_set(t, sum[j]);
                for (int m = 0; m < k - j; m++) {
                    mpq_mul(t, t, mean);
                    mpq_neg(t, t);
                }
                mpq_mul(t, t, binom);
                mpq_add(central[k], central[k], t);
            }
            mpq_div(central[k], central[k], sum[0]);
        }
        diagnostics_moments_from_central(n, pd_nearest_long(central[2]),
                                         pd_nearest_long(central[3]),
                                         pd_nearest_long(central[4]), &r->moments);
        r->moments_computed = true;
    }
    for (int k = 0; k <= PUSHDOWN_N_POWERS; k++) {
        mpq_clear(sum[k]);
        mpq_clear(central[k]);
    }
    mpq_clears(mean, t, binom, NULL);
}

/* The guard on the source's types: every used numeric column exact. */
/* The field of res named name (exactly, as the source spells it; the
   data layer refuses a name given twice), or -1. */
static int pd_field(const PGresult *res, const char *name)
{
    for (int j = 0; j < PQnfields(res); j++)
        if (strcmp(PQfname(res, j), name) == 0)
            return j;
    return -1;
}

static bool pd_check_types(PGconn *conn, const spec *s, const design *d, pushdown_result *r)
{
    buf q;
    buf_init(&q);
    buf_puts(&q, "SELECT * FROM ");
    pd_source(&q, s);
    buf_puts(&q, " LIMIT 0");
    PGresult *res = PQexec(conn, q.data);
    buf_free(&q);
    bool ok = PQresultStatus(res) == PGRES_TUPLES_OK;
    if (!ok)
        pd_refuse(r, PUSHDOWN_DESCRIBE_FAILED, NULL, PQresultErrorMessage(res));
    /* an integer or numeric order_by sorts in SQL as in fitproof */
    if (ok && d->model->order_by) {
        int j = pd_field(res, d->model->order_by);
        if (j >= 0)
            r->order_numeric = pd_exact_type(PQftype(res, j));
    }
    /* The variance columns enter only Breusch–Pagan's check: one that is not
       exact in SQL leaves that check out, not the pushdown. */
    r->variance_exact = true;
    for (size_t k = 0; ok && k < d->model->n_variance_columns; k++) {
        int j = pd_field(res, d->model->variance_columns[k]);
        if (j >= 0 && !pd_exact_type(PQftype(res, j)))
            r->variance_exact = false;
    }
    for (size_t k = 0; ok && k < d->n_missing; k++) {
        const data_column *col = d->missing[k].column;
        int j = col->kind == DATA_NUMERIC ? pd_field(res, col->name) : -1;
        if (j < 0)
            continue;
        Oid oid = PQftype(res, j);
        if (pd_float_type(oid)) {
            pd_refuse(r, PUSHDOWN_FLOAT_COLUMN, col->name, NULL);
            ok = false;
        } else if (!pd_exact_type(oid)) {
            pd_refuse(r, PUSHDOWN_INEXACT_COLUMN, col->name, NULL);
            ok = false;
        }
    }
    PQclear(res);
    return ok;
}

/* What the spec asks that the generated SQL does not express, or
   PUSHDOWN_PARTIAL when it asks nothing of the kind. */
static pushdown_reason pd_unexpressed(const spec *s, const design *d, fit_result *f)
{
    if (s->where)
        return PUSHDOWN_WHERE;
    if (s->n_derive)
        return PUSHDOWN_DERIVE;
    if (s->data.n_missing)
        return PUSHDOWN_MISSING_TOKENS;
    if (d->n_coefs > PUSHDOWN_MAX_COEFS)
        return PUSHDOWN_TOO_MANY_COEFS;
    if (f->rank < d->n_coefs || f->df_residual <= 0)
        return PUSHDOWN_ALIASED;
    if (f->errors != SPEC_ERRORS_CLASSICAL)
        return PUSHDOWN_ROBUST;
    for (size_t c = 0; c < d->n_coefs; c++)
        for (size_t k = 0; k < d->coefs[c].n_parts; k++)
            if (d->coefs[c].parts[k].kind != DESIGN_NUMERIC &&
                d->coefs[c].parts[k].column->kind != DATA_CATEGORY)
                return PUSHDOWN_LEVELS_NOT_TEXT;
    return PUSHDOWN_PARTIAL;
}

bool pd_invert(mpq_t *a, mpq_t *inv, size_t p)
{
    mpq_t t;
    mpq_init(t);
    for (size_t i = 0; i < p; i++)
        for (size_t j = 0; j < p; j++)
            mpq_set_ui(inv[i * p + j], i == j, 1);
    bool ok = true;
    for (size_t k = 0; k < p && ok; k++) {
        size_t piv = k;
        while (piv < p && mpq_sgn(a[piv * p + k]) == 0)
            piv++;
        if (piv == p) {
            ok = false;
            break;
        }
        if (piv != k)
            for (size_t j = 0; j < p; j++) {
                mpq_swap(a[k * p + j], a[piv * p + j]);
                mpq_swap(inv[k * p + j], inv[piv * p + j]);
            }
        mpq_inv(t, a[k * p + k]);
        for (size_t j = 0; j < p; j++) {
            mpq_mul(a[k * p + j], a[k * p + j], t);
            mpq_mul(inv[k * p + j], inv[k * p + j], t);
        }
        for (size_t i = 0; i < p; i++) {
            if (i == k || mpq_sgn(a[i * p + k]) == 0)
                continue;
            mpq_set(t, a[i * p + k]);
            for (size_t j = 0; j < p; j++) {
                mpq_t u;
                mpq_init(u);
                mpq_mul(u, t, a[k * p + j]);
                mpq_sub(a[i * p + j], a[i * p + j], u);
                mpq_mul(u, t, inv[k * p + j]);
                mpq_sub(inv[i * p + j], inv[i * p + j], u);
                mpq_clear(u);
            }
        }
    }
    mpq_clear(t);
    return ok;
}

void pd_exact_init(pd_exact *ex, size_t p)
{
    ex->p = p;
    ex->inverse = xcalloc(p * p + 1, sizeof(mpq_t));
    ex->beta = xcalloc(p + 1, sizeof(mpq_t));
    for (size_t i = 0; i < p * p; i++)
        mpq_init(ex->inverse[i]);
    for (size_t i = 0; i < p; i++)
        mpq_init(ex->beta[i]);
    mpq_init(ex->rss);
}

void pd_exact_clear(pd_exact *ex)
{
    for (size_t i = 0; i < ex->p * ex->p; i++)
        mpq_clear(ex->inverse[i]);
    for (size_t i = 0; i < ex->p; i++)
        mpq_clear(ex->beta[i]);
    mpq_clear(ex->rss);
    free(ex->inverse);
    free(ex->beta);
}

/* The exact solve from pass one's row, kept in ex; false (with a reason)
   when XᵀWX is singular or a sum is not a number. */
static bool pd_solve(const PGresult *res, size_t p, pushdown_result *r, pd_exact *ex)
{
    size_t nq = p * p;
    mpq_t *a = xcalloc(nq, sizeof(mpq_t)), *inv = xcalloc(nq, sizeof(mpq_t));
    mpq_t *xty = xcalloc(p, sizeof(mpq_t));
    mpq_t yty, rss, t, beta;
    mpq_inits(yty, rss, t, beta, NULL);
    for (size_t i = 0; i < nq; i++) {
        mpq_init(a[i]);
        mpq_init(inv[i]);
    }
    for (size_t i = 0; i < p; i++)
        mpq_init(xty[i]);
    bool ok = true;
    int field = 1;
    for (size_t i = 0; i < p; i++)
        for (size_t j = i; j < p; j++, field++) {
            ok = ok && pd_rational(a[i * p + j], PQgetvalue(res, 0, field));
            mpq_set(a[j * p + i], a[i * p + j]);
        }
    for (size_t i = 0; i < p; i++, field++)
        ok = ok && pd_rational(xty[i], PQgetvalue(res, 0, field));
    ok = ok && pd_rational(yty, PQgetvalue(res, 0, field));
    if (!ok)
        pd_refuse(r, PUSHDOWN_NOT_A_NUMBER, NULL, NULL);
    else if (!pd_invert(a, inv, p)) {
        pd_refuse(r, PUSHDOWN_SINGULAR, NULL, NULL);
        ok = false;
    }
    if (ok) {
        r->estimates = xcalloc(p, sizeof(double));
        r->std_errors = xcalloc(p, sizeof(double));
        r->xtx_inverse = xcalloc(nq, sizeof(long double));
        for (size_t i = 0; i < nq; i++)
            r->xtx_inverse[i] = pd_nearest_long(inv[i]);
        mpq_set(rss, yty);
        for (size_t i = 0; i < p; i++) {
            mpq_set_ui(beta, 0, 1);
            for (size_t j = 0; j < p; j++) {
                mpq_mul(t, inv[i * p + j], xty[j]);
                mpq_add(beta, beta, t);
            }
            r->estimates[i] = pd_nearest(beta, false);
            mpq_set(ex->beta[i], beta);
            mpq_mul(t, beta, xty[i]);
            mpq_sub(rss, rss, t);
        }
        r->rss = pd_nearest(rss, false);
        mpq_set(ex->rss, rss);
        for (size_t i = 0; i < nq; i++)
            mpq_set(ex->inverse[i], inv[i]);
        size_t n = r->passes[0].rows_scanned;
        for (size_t i = 0; i < p; i++) {
            /* σ² (XᵀWX)⁻¹ᵢᵢ exactly, its square root rounded once */
            mpq_mul(t, rss, inv[i * p + i]);
            mpq_set_ui(beta, n > p ? (unsigned long)(n - p) : 1, 1);
            mpq_div(t, t, beta);
            r->std_errors[i] = n > p ? pd_nearest(t, true) : NAN;
        }
    }
    for (size_t i = 0; i < nq; i++) {
        mpq_clear(a[i]);
        mpq_clear(inv[i]);
    }
    for (size_t i = 0; i < p; i++)
        mpq_clear(xty[i]);
    mpq_clears(yty, rss, t, beta, NULL);
    free(a);
    free(inv);
    free(xty);
    return ok;
}

/* Runs one pass; its single row or NULL with a reason. */
static PGresult *pd_run(PGconn *conn, pushdown_result *r, const char *name, char *sql)
{
    pushdown_pass *pass = &r->passes[r->n_passes++];
    pass->name = name;
    pass->sql = sql;
    PGresult *res = PQexec(conn, sql);
    if (PQresultStatus(res) != PGRES_TUPLES_OK || PQntuples(res) != 1) {
        pd_refuse(r, PUSHDOWN_PASS_FAILED, NULL, PQresultErrorMessage(res));
        PQclear(res);
        return NULL;
    }
    pass->rows_scanned = strtoull(PQgetvalue(res, 0, 0), NULL, 10);
    return res;
}

/* Runs the top-rows pass and keeps its rows; it reads the rows pass one
   counted (one snapshot: the passes share a repeatable-read transaction). */
static bool pd_run_top(PGconn *conn, const spec *s, const design *d, const pd_exact *ex,
                       pushdown_result *r)
{
    pushdown_pass *pass = &r->passes[r->n_passes++];
    pass->name = "top rows";
    pass->sql = pd_pass_top(s, d, r);
    pass->rows_scanned = r->passes[0].rows_scanned;
    PGresult *res = PQexec(conn, pass->sql);
    if (PQresultStatus(res) != PGRES_TUPLES_OK) {
        pd_refuse(r, PUSHDOWN_PASS_FAILED, NULL, PQresultErrorMessage(res));
        PQclear(res);
        return false;
    }
    size_t p = ex->p, n = pass->rows_scanned;
    long double cooks_scale = (long double)p * pd_nearest_long(ex->rss) / (long double)(n - p);
    r->n_top = (size_t)PQntuples(res);
    for (size_t i = 0; i < r->n_top; i++) {
        r->top_key[i] = xstrdup(PQgetvalue(res, (int)i, 0));
        r->top_cooks[i] = PQgetisnull(res, (int)i, 1)
                              ? NAN
                              : (double)(strtold(PQgetvalue(res, (int)i, 1), NULL) / cooks_scale);
    }
    PQclear(res);
    return true;
}

/* f's stored (XᵀWX)⁻¹ and classical covariance σ²(XᵀWX)⁻¹ from the exact
   inverse, in f's layout (powers of two taken out, fit.h), so that every
   reading, prediction and interval built from them uses the exact numbers. */
static void pd_fill_matrices(const pushdown_result *r, fit_result *f)
{
    size_t p = r->n_coefs;
    long double variance = (long double)r->rss / f->df_residual;
    for (size_t a = 0; a < p; a++)
        for (size_t b = 0; b < p; b++) {
            long double v = r->xtx_inverse[a * p + b];
            int e = f->column_exponent[a] + f->column_exponent[b];
            gsl_matrix_set(f->xtx_inverse, a, b, (double)ldexpl(v, -e));
            gsl_matrix_set(f->cov, a, b,
                           (double)ldexpl(v * variance, -(e + 2 * f->response_exponent)));
        }
    f->rss_scaled = (double)ldexpl((long double)r->rss, -2 * f->response_exponent);
}

/* The statistics of f that follow from the estimates, σ and the errors. */
static void pd_fill_fit(const pushdown_result *r, fit_result *f)
{
    f->rss = r->rss;
    pd_fill_matrices(r, f);
    f->sigma = sqrt(r->rss / f->df_residual);
    double q = gsl_cdf_tdist_Pinv(0.5 + f->level / 2, f->df_residual);
    for (size_t c = 0; c < r->n_coefs; c++) {
        fit_coef *k = &f->coefs[c];
        k->estimate = r->estimates[c];
        k->std_error = r->std_errors[c];
        k->t = k->estimate / k->std_error;
        k->p = fit_t_p_value(k->t, f->df_residual);
        k->ci_low = k->estimate - q * k->std_error;
        k->ci_high = k->estimate + q * k->std_error;
    }
    /* the same summaries fit.c derives from RSS */
    double n = (double)f->n, k0 = f->centred || f->constant_spanned ? 1.0 : 0.0;
    f->r_squared = f->tss > 0 ? 1.0 - f->rss / f->tss : NAN;
    f->adj_r_squared = 1.0 - (1.0 - f->r_squared) * (n - k0) / f->df_residual;
    if (f->df_model > 0) {
        f->f = ((f->tss - f->rss) / f->df_model) / (f->rss / f->df_residual);
        f->f_p = fit_f_p_value(f->f, f->df_model, f->df_residual);
    }
    f->log_likelihood =
        -0.5 * n * (log(2.0 * 3.14159265358979323846) + log(f->rss / n) + 1.0) + 0.5 * f->sum_log_weights;
    double parameters = (double)f->rank + 1.0;
    f->aic = -2.0 * f->log_likelihood + 2.0 * parameters;
    f->bic = -2.0 * f->log_likelihood + log(n) * parameters;
}

/* Passes two, three (or the influence pass) and so on; false when one
   fails. */
static bool pd_later_passes(PGconn *conn, const spec *s, const design *d,
                            const pd_partition *part, const pd_exact *ex, pushdown_result *r)
{
    pd_layout layout;
    size_t leverage_at;
    PGresult *res = pd_run(conn, r, "residuals",
                           pd_pass_two(s, d, part, r, ex, &layout, &leverage_at));
    if (!res)
        return false;
    r->rss_pass_two = strtod(PQgetvalue(res, 0, 1), NULL);
    pd_moments(res, r);
    r->max_leverage = strtod(PQgetvalue(res, 0, (int)leverage_at), NULL);
    pd_assumptions_read(res, &layout, ex, r);
    pd_influence_read(res, &layout, ex, r);
    PQclear(res);
    if (part->n > 0 && mpq_sgn(ex->rss) > 0) {
        res = pd_run(conn, r, "influence", pd_pass_influence(s, d, r, ex, &layout));
        if (!res)
            return false;
        pd_influence_read(res, &layout, ex, r);
        PQclear(res);
    }
    if (pd_ordered(s, d, part, r) && r->moments_computed) {
        res = pd_run(conn, r, "lagged residuals", pd_pass_three(s, d, r->estimates));
        if (!res)
            return false;
        r->durbin_watson = strtod(PQgetvalue(res, 0, 1), NULL) / r->residual_power_sums[1];
        PQclear(res);
    }
    if (s->data.key && mpq_sgn(ex->rss) > 0 && r->passes[0].rows_scanned > ex->p)
        return pd_run_top(conn, s, d, ex, r);
    return true;
}

/* Pass one's ranges, after its sums: max r and max −r per predictor. */
static void pd_read_ranges(const PGresult *res, const design *d, pushdown_result *r)
{
    size_t p = d->n_coefs;
    int at = (int)(1 + p * (p + 1) / 2 + p + 1);
    r->n_ranges = d->n_ranges;
    r->range_min = xcalloc(d->n_ranges + 1, sizeof(double));
    r->range_max = xcalloc(d->n_ranges + 1, sizeof(double));
    for (size_t k = 0; k < d->n_ranges; k++, at += 2) {
        r->range_max[k] = strtod(PQgetvalue(res, 0, at), NULL);
        r->range_min[k] = -strtod(PQgetvalue(res, 0, at + 1), NULL);
    }
}

static void pd_passes(PGconn *conn, const spec *s, const design *d, const pd_partition *part,
                      fit_result *f, pushdown_result *r)
{
    PGresult *res = pd_run(conn, r, "cross-products", pd_pass_one(s, d, part));
    if (!res)
        return;
    bool ok = r->passes[0].rows_scanned == d->n_used;
    if (!ok)
        pd_refuse(r, PUSHDOWN_ROW_COUNT, NULL, NULL);
    pd_exact ex;
    pd_exact_init(&ex, d->n_coefs);
    ok = ok && pd_solve(res, d->n_coefs, r, &ex);
    if (ok)
        pd_read_ranges(res, d, r);
    PQclear(res);
    ok = ok && pd_later_passes(conn, s, d, part, &ex, r);
    pd_exact_clear(&ex);
    if (!ok)
        return;
    r->used = true;
    pd_fill_fit(r, f);
    pd_refuse(r, PUSHDOWN_PARTIAL, NULL, NULL);
}

pushdown_result *pushdown_new(const spec *s, const design *d, fit_result *f)
{
    if (!s->data.pushdown || s->data.source != SPEC_SOURCE_POSTGRES || s->data.stored_rows)
        return NULL;
    pushdown_result *r = xcalloc(1, sizeof *r);
    r->n_coefs = d->n_coefs;
    r->rss_pass_two = NAN;
    r->durbin_watson = NAN;
    r->max_leverage = NAN;
    r->reason = pd_unexpressed(s, d, f);
    if (s->data.pushdown == SPEC_PUSHDOWN_AUTO && d->n_used < PUSHDOWN_AUTO_ROWS)
        r->reason = PUSHDOWN_FEW_ROWS;
    if (r->reason != PUSHDOWN_PARTIAL)
        return r;
    PGconn *conn = PQconnectdb(s->data.connection);
    if (PQstatus(conn) != CONNECTION_OK)
        pd_refuse(r, PUSHDOWN_CONNECT_FAILED, NULL, PQerrorMessage(conn));
    else {
        PGresult *begin = PQexec(conn, "BEGIN TRANSACTION ISOLATION LEVEL REPEATABLE READ READ ONLY");
        PQclear(begin);
        if (pd_check_types(conn, s, d, r)) {
            pd_partition part;
            pd_find_partition(conn, s, &part);
            pd_passes(conn, s, d, &part, f, r);
            pd_partition_free(&part);
        }
    }
    PQfinish(conn);
    return r;
}

void pushdown_free(pushdown_result *r)
{
    if (!r)
        return;
    for (size_t i = 0; i < r->n_passes; i++)
        free(r->passes[i].sql);
    free(r->reason_column);
    free(r->reason_detail);
    free(r->estimates);
    free(r->std_errors);
    free(r->xtx_inverse);
    for (size_t i = 0; i < r->n_top; i++)
        free(r->top_key[i]);
    free(r->range_min);
    free(r->range_max);
    free(r);
}

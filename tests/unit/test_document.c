/*
 * test_document.c — the document around the numbers: the summary is
 * written from the results (terms that matter, each assumption's outcome),
 * the caution names this report's own limits (associations, violated
 * assumptions, extrapolated predictions, rows left out), the client text
 * names no spec key (those go to the appendix for the analyst), and each
 * model gives the level counts of the rows it fitted. The expected counts
 * are recounted here from the rows the design used.
 */
#include "testkit.h"

#include <stdio.h>
#include <stdlib.h>

#include "../../src/narrate/narrate.h"
#include "../../src/render/render.h"

typedef struct {
    pipeline run;
    analysis *a;
    char *md; /* Markdown escapes removed */
} report_run;

static void report_of(report_run *r, const char *spec_path, const char *yaml)
{
    pipeline_load(&r->run, spec_path, yaml);
    assert_non_null(r->run.table);
    r->a = analysis_new(r->run.spec, r->run.table, &r->run.errors);
    assert_non_null(r->a);
    doc_node *doc = narrate_report(r->a, NULL, &r->run.errors);
    assert_non_null(doc);
    buf md, plain;
    buf_init(&md);
    buf_init(&plain);
    render_markdown(doc, &md);
    for (const char *p = md.data; *p; p++)
        if (*p != '\\')
            buf_putc(&plain, *p);
    buf_free(&md);
    doc_free(doc);
    r->md = buf_detach(&plain);
}

static void report_free(report_run *r)
{
    free(r->md);
    analysis_free(r->a);
    pipeline_free(&r->run);
}

static void expect_in(const char *text, const char *part)
{
    if (!strstr(text, part))
        fprintf(stderr, "expected \"%s\" in the report:\n%.1500s\n", part, text);
    assert_non_null(strstr(text, part));
}

/* The text before the appendix for the analyst must not name spec keys. */
static void no_spec_keys_in_client_text(const char *md)
{
    const char *end = strstr(md, "### For the analyst");
    assert_non_null(end);
    char *client = xstrndup(md, (size_t)(end - md));
    static const char *const keys[] = {"order_by",   "standard_errors", "residuals_table",
                                       "transform:", "lags:",           "weights:",
                                       "at: [",      "document_id"};
    for (size_t k = 0; k < sizeof keys / sizeof keys[0]; k++) {
        if (strstr(client, keys[k]))
            fprintf(stderr, "client text names the spec key '%s'\n", keys[k]);
        assert_null(strstr(client, keys[k]));
    }
    free(client);
}

static const char *const CYLINDERS =
    "fitproof: 1\n"
    "meta: {document_id: QA-1}\n"
    "data:\n"
    "  path: cylinders.csv\n"
    "  rows_are: cylinders\n"
    "  columns:\n"
    "    admixture: {kind: category, reference: none, label: admixture}\n"
    "    strength_mpa: {kind: numeric, unit: MPa, label: compressive strength}\n"
    "    age_days: {kind: numeric, unit: day, label: curing age}\n"
    "    wc_ratio: {kind: numeric, label: water-cement ratio, step: 0.05}\n"
    "models:\n"
    "  - id: main\n"
    "    response: strength_mpa\n"
    "    terms: [age_days, wc_ratio, admixture, [age_days, admixture]]\n";

static void test_summary_caution_counts_and_appendix(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "examples/cylinders/spec.yaml", CYLINDERS);
    const design *d = r.a->models[0].design;
    /* The level counts of the fitted rows, recounted. */
    const data_column *admixture = NULL;
    for (size_t k = 0; k < d->n_counts; k++)
        if (strcmp(d->counts[k].column->name, "admixture") == 0)
            admixture = d->counts[k].column;
    assert_non_null(admixture);
    size_t counts[3] = {0, 0, 0};
    for (size_t i = 0; i < d->n_used; i++)
        counts[admixture->codes[design_table_row(d, i)]]++;
    assert_int_equal(counts[0] + counts[1] + counts[2], d->n_used);
    char text[256];
    snprintf(text, sizeof text,
             "Counts of the fitted cylinders by admixture: %s %zu, %s %zu, "
             "%s %zu.",
             admixture->levels[0], counts[0], admixture->levels[1], counts[1],
             admixture->levels[2], counts[2]);
    expect_in(r.md, text);
    /* The summary, from the results. */
    expect_in(r.md, "Terms associated with compressive strength, given the other terms: "
                    "curing age, water-cement "
                    "ratio, admixture and curing age × admixture.");
    expect_in(r.md, "Not assessed: independent errors.");
    /* The caution names this report's limits. */
    expect_in(r.md, "The coefficients describe associations in these data, not causes");
    snprintf(text, sizeof text, "Model 'main' leaves out %zu of the %zu cylinders",
             d->n_dropped, r.run.table->n_rows);
    expect_in(r.md, text);
    /* Spec keys only in the appendix for the analyst. */
    no_spec_keys_in_client_text(r.md);
    expect_in(r.md, "- **Document number:** QA-1");
    expect_in(r.md, "Model 'main': order_by: COLUMN names the column that orders the rows");
    expect_in(r.md, "at: [v1, v2, …] on column age_days");
    report_free(&r);
}

/* A violated assumption and an extrapolated prediction reach the caution
   and the summary. */
static void test_limits_reach_the_caution(void **state)
{
    (void)state;
    report_run r;
    report_of(&r, "tests/data/robust/spec.yaml",
              "fitproof: 1\n"
              "data: {path: robust.csv}\n"
              "models:\n"
              "  - {id: m, response: y, terms: [x, z, g, [x, g]], order_by: t}\n"
              "predict:\n"
              "  - model: m\n"
              "    rows:\n"
              "      - {x: 5, z: 5, g: a}\n"
              "      - {x: 40, z: 5, g: b}\n");
    expect_in(r.md,
              "Model 'm' violates the assumptions of constant variance and independent "
              "errors, so its "
              "classical p-values and intervals are unreliable");
    expect_in(r.md, "Prediction 2 of model 'm' lies outside the data");
    expect_in(r.md, "Violated: constant variance and independent errors.");
    expect_in(r.md, "the Newey–West figures are given beside them");
    no_spec_keys_in_client_text(r.md);
    expect_in(r.md, "standard_errors: hac makes every p-value and interval");
    report_free(&r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_summary_caution_counts_and_appendix),
        cmocka_unit_test(test_limits_reach_the_caution),
    };
    return cmocka_run_group_tests_name("document", tests, NULL, NULL);
}

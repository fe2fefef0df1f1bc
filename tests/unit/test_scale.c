/*
 * test_scale.c — units do not matter: the same invented data with the
 * response, or one numeric predictor, multiplied by 1e-200 … 1e200 give the
 * same analysis up to the units. A numeric predictor, a category and their
 * interaction, rows in an order (Durbin–Watson, Newey–West). Expected values
 * by hand derivation: with y → c·y every estimate, standard error, interval,
 * σ and residual is multiplied by c; with x → c·x every coefficient whose
 * columns include x (and its standard error) is divided by c; t, p, R², F,
 * every diagnostic statistic, the verdicts and the influence flags do not
 * change (least squares is equivariant under a change of units: β̂(cy) =
 * cβ̂(y), β̂(XD) = D⁻¹β̂(X) for a diagonal D).
 */
#define _XOPEN_SOURCE 700
#include "diagkit.h"

#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <stdlib.h>
#include <unistd.h>

static const double FACTORS[] = {1e-200, 1e-150, 1e-100, 1e-10, 1, 1e10, 1e100, 1e150, 1e200};
#define N_FACTORS (sizeof FACTORS / sizeof FACTORS[0])
#define ROWS 90

/* Relative tolerances: the data are rounded to double once more at each
   scale (c·y is not exact for c not a power of two), so results differ in
   the last digits times the problem's conditioning. */
#define TOL 1e-10
#define TOL_P 1e-9

typedef enum { SCALE_RESPONSE, SCALE_PREDICTOR } scale_what;

/* Seeded invented data: y = 3 + 1.5x + level shift + 0.3x on level b +
   0.5z + AR(1) noise, the rows in time order t. */
static void write_data(const char *path, scale_what what, double factor)
{
    FILE *f = fopen(path, "w");
    assert_non_null(f);
    fputs("t,x,g,z,y\n", f);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 15);
    double noise = 0.0;
    static const char *const levels[] = {"a", "b", "c"};
    static const double shift[] = {0.0, 2.0, -1.0};
    for (size_t i = 0; i < ROWS; i++) {
        double x = gsl_rng_uniform(rng) * 10.0;
        size_t g = i % 3;
        double z = gsl_ran_gaussian(rng, 1.0);
        noise = 0.3 * noise + gsl_ran_gaussian(rng, 1.0) * (1.0 + 0.05 * x);
        double y = 3.0 + 1.5 * x + shift[g] + (g == 1 ? 0.3 * x : 0.0) + 0.5 * z + noise;
        if (i == 17)
            y += 6.0; /* one row the influence rules flag */
        if (what == SCALE_RESPONSE)
            y *= factor;
        else
            x *= factor;
        fprintf(f, "%zu,%.17g,%s,%.17g,%.17g\n", i, x, levels[g], z, y);
    }
    gsl_rng_free(rng);
    fclose(f);
}

static void run_at(diag_run *run, const char *folder, scale_what what, double factor)
{
    char data[256], spec_path[256];
    snprintf(data, sizeof data, "%s/d.csv", folder);
    snprintf(spec_path, sizeof spec_path, "%s/spec.yaml", folder);
    write_data(data, what, factor);
    diag_run_yaml(run, spec_path,
                  "fitproof: 1\n"
                  "data:\n  path: d.csv\n  columns:\n"
                  "    t: {kind: numeric}\n    x: {kind: numeric}\n"
                  "    g: {kind: category, levels: [a, b, c]}\n"
                  "    z: {kind: numeric}\n    y: {kind: numeric}\n"
                  "models:\n"
                  "  - {id: m, response: y, terms: [x, g, z, [x, g]], order_by: t}\n");
    if (!run->analysis)
        error_list_print(&run->stages.errors);
    assert_non_null(run->analysis);
}

/* Does coefficient c's column contain x? */
static bool has_x(const design *d, size_t c)
{
    for (size_t k = 0; k < d->coefs[c].n_parts; k++)
        if (strcmp(d->coefs[c].parts[k].column->name, "x") == 0)
            return true;
    return false;
}

static void agree_inference(agreement *a, const fit_inference *got, const fit_inference *want,
                            double unit, const char *what)
{
    if (!(isfinite(got->std_error) && got->std_error > 0))
        fprintf(stderr, "%s: %s standard error %g\n", a->name, what, got->std_error);
    assert_true(isfinite(got->std_error) && got->std_error > 0);
    agree(a, got->std_error, want->std_error * unit, 0, TOL, what);
    agree(a, got->ci_low, want->ci_low * unit, fabs(want->std_error * unit), TOL, what);
    agree(a, got->ci_high, want->ci_high * unit, fabs(want->std_error * unit), TOL, what);
    agree(a, got->t, want->t, 1e-6, TOL, what);
    agree(a, got->p, want->p, 1e-300, TOL_P, what);
}

static void compare_fits(agreement *a, const analysis_model *got, const analysis_model *want,
                         scale_what what, double factor)
{
    const fit_result *f = got->fit, *w = want->fit;
    const design *d = got->design;
    double yunit = what == SCALE_RESPONSE ? factor : 1.0;
    for (size_t c = 0; c < f->n_coefs; c++) {
        double unit = what == SCALE_RESPONSE ? factor : has_x(d, c) ? 1.0 / factor : 1.0;
        const fit_coef *g = &f->coefs[c], *r = &w->coefs[c];
        agree(a, g->estimate, r->estimate * unit, fabs(r->std_error * unit) * 1e-3, TOL,
              "estimate");
        fit_inference classical = {g->std_error, g->t, g->p, g->ci_low, g->ci_high};
        fit_inference reference = {r->std_error, r->t, r->p, r->ci_low, r->ci_high};
        agree_inference(a, &classical, &reference, unit, "classical");
        for (int k = 0; k < FIT_N_HC; k++)
            agree_inference(a, &g->robust[k], &r->robust[k], unit, "HC");
        agree_inference(a, &g->hac, &r->hac, unit, "Newey-West");
    }
    agree(a, f->sigma, w->sigma * yunit, 0, TOL, "sigma");
    agree(a, f->r_squared, w->r_squared, 0, TOL, "R2");
    agree(a, f->adj_r_squared, w->adj_r_squared, 0, TOL, "adjusted R2");
    agree(a, f->f, w->f, 0, TOL, "F");
    agree(a, f->f_p, w->f_p, 1e-300, TOL_P, "F p");
    /* RSS itself may be beyond double's range (1e-400): its ratio to the
       reference's, one factor of the unit at a time. */
    int de = f->response_exponent - w->response_exponent;
    double ratio = ldexp(ldexp(f->rss_scaled / w->rss_scaled, de) / yunit, de) / yunit;
    agree(a, ratio, 1.0, 0, TOL, "RSS in the fit's units");
    if (what == SCALE_RESPONSE && fabs(log10(factor)) > 150) {
        assert_true(isnan(f->rss)); /* 1e±300 and beyond: null in results.json */
    } else {
        agree(a, f->rss, w->rss * yunit * yunit, 0, TOL, "RSS");
    }
    for (size_t k = 0; k < f->n_terms; k++) {
        agree(a, f->term_tests[k].f, w->term_tests[k].f, 0, TOL, "term F");
        agree(a, f->term_tests[k].p, w->term_tests[k].p, 1e-300, TOL_P, "term p");
        agree(a, f->sequential_tests[k].f, w->sequential_tests[k].f, 0, TOL, "sequential F");
    }
    for (size_t i = 0; i < f->n; i++)
        agree(a, gsl_vector_get(f->residuals, i), gsl_vector_get(w->residuals, i) * yunit,
              w->sigma * yunit, TOL, "residual");
    assert_int_equal(got->readings->n, want->readings->n);
    for (size_t k = 0; k < got->readings->n; k++) {
        const fit_reading *g = &got->readings->items[k], *r = &want->readings->items[k];
        if (what == SCALE_RESPONSE)
            agree(a, g->estimate, r->estimate * factor, fabs(r->inference.std_error * factor),
                  TOL, "reading");
        agree(a, g->inference.t, r->inference.t, 1e-6, TOL, "reading t");
        assert_true(g->inference.std_error > 0 && isfinite(g->inference.std_error));
    }
}

static void compare_diagnostics(agreement *a, const diagnostics *g, const diagnostics *r,
                                double yunit)
{
    agree(a, g->shapiro.w, r->shapiro.w, 0, TOL, "Shapiro-Wilk W");
    agree(a, g->shapiro.p, r->shapiro.p, 0, TOL_P, "Shapiro-Wilk p");
    agree(a, g->moments.k2, r->moments.k2, 0, TOL, "moments K2");
    agree(a, g->breusch_pagan.studentized.statistic, r->breusch_pagan.studentized.statistic, 0,
          TOL, "Breusch-Pagan");
    agree(a, g->breusch_pagan.studentized.p, r->breusch_pagan.studentized.p, 0, TOL_P,
          "Breusch-Pagan p");
    agree(a, g->breusch_pagan.original.statistic, r->breusch_pagan.original.statistic, 0, TOL,
          "Breusch-Pagan original");
    agree(a, g->durbin_watson.d, r->durbin_watson.d, 0, TOL, "Durbin-Watson d");
    agree(a, g->durbin_watson.p_two_sided, r->durbin_watson.p_two_sided, 1e-300, TOL_P,
          "Durbin-Watson p");
    agree(a, g->reset.f, r->reset.f, 0, TOL, "RESET F");
    agree(a, g->reset.p, r->reset.p, 0, TOL_P, "RESET p");
    agree(a, g->collinearity.condition_number, r->collinearity.condition_number, 0, TOL,
          "condition number");
    for (size_t k = 0; k < g->collinearity.n_terms; k++)
        agree(a, g->collinearity.terms[k].gvif, r->collinearity.terms[k].gvif, 0, TOL, "GVIF");
    const diag_influence *gi = &g->influence, *ri = &r->influence;
    for (int k = 0; k < DIAG_N_RULES; k++)
        assert_int_equal(gi->count[k], ri->count[k]);
    assert_int_equal(gi->n_flagged, ri->n_flagged);
    assert_true(ri->n_flagged > 0);
    agree(a, gi->max_cooks, ri->max_cooks, 0, TOL, "Cook's distance");
    agree(a, gi->max_leverage, ri->max_leverage, 0, TOL, "leverage");
    for (size_t i = 0; i < gi->n; i++) {
        agree(a, diag_influence_residual(gi, i), diag_influence_residual(ri, i) * yunit,
              1e-3 * fabs(yunit), TOL, "influence residual");
        diag_row_measures gm = diag_influence_row(gi, i), rm = diag_influence_row(ri, i);
        agree(a, gm.studentized, rm.studentized, 1e-6, TOL, "studentized");
        agree(a, gm.dffits, rm.dffits, 1e-6, TOL, "DFFITS");
    }
    for (int k = 0; k < DIAG_N_ASSUMPTIONS; k++)
        assert_int_equal(g->verdicts[k].verdict, r->verdicts[k].verdict);
}

/* The large-design algorithm (double-precision block fold) on the same
   designs: its first pass squares in double too. */
static void compare_streaming(agreement *a, const design *got, const design *want,
                              scale_what what, double factor)
{
    fit_result *g = fit_new_using(got, 0.95, FIT_SOLVER_STREAMING);
    fit_result *r = fit_new_using(want, 0.95, FIT_SOLVER_STREAMING);
    for (size_t c = 0; c < g->n_coefs; c++) {
        double unit = what == SCALE_RESPONSE ? factor : has_x(got, c) ? 1.0 / factor : 1.0;
        agree(a, g->coefs[c].estimate, r->coefs[c].estimate * unit,
              fabs(r->coefs[c].std_error * unit) * 1e-3, TOL, "estimate");
        fit_inference classical = {g->coefs[c].std_error, g->coefs[c].t, g->coefs[c].p,
                                   g->coefs[c].ci_low, g->coefs[c].ci_high};
        fit_inference reference = {r->coefs[c].std_error, r->coefs[c].t, r->coefs[c].p,
                                   r->coefs[c].ci_low, r->coefs[c].ci_high};
        agree_inference(a, &classical, &reference, unit, "classical");
        agree_inference(a, &g->coefs[c].robust[FIT_HC3], &r->coefs[c].robust[FIT_HC3], unit,
                        "HC3");
    }
    agree(a, g->r_squared, r->r_squared, 0, TOL, "R2");
    agree(a, g->f, r->f, 0, TOL, "F");
    fit_free(g);
    fit_free(r);
}

static void scale_one(scale_what what, const char *name)
{
    char folder[] = "/tmp/fitproof-scale-XXXXXX";
    assert_non_null(mkdtemp(folder));
    diag_run base;
    run_at(&base, folder, what, 1.0);
    agreement a = {name, 0};
    char streaming_name[160];
    snprintf(streaming_name, sizeof streaming_name, "%s, streaming solver", name);
    agreement streaming = {streaming_name, 0};
    for (size_t k = 0; k < N_FACTORS; k++) {
        diag_run run;
        run_at(&run, folder, what, FACTORS[k]);
        const analysis_model *got = &run.analysis->models[0];
        const analysis_model *want = &base.analysis->models[0];
        compare_fits(&a, got, want, what, FACTORS[k]);
        compare_diagnostics(&a, got->diagnostics, want->diagnostics,
                            what == SCALE_RESPONSE ? FACTORS[k] : 1.0);
        compare_streaming(&streaming, got->design, want->design, what, FACTORS[k]);
        diag_run_free(&run);
    }
    agreement_print(&a);
    agreement_print(&streaming);
    diag_run_free(&base);
    char path[256];
    snprintf(path, sizeof path, "%s/d.csv", folder);
    unlink(path);
    rmdir(folder);
}

static void test_response_in_any_units(void **state)
{
    (void)state;
    scale_one(SCALE_RESPONSE, "response × 1e-200 … 1e200 against × 1");
}

static void test_predictor_in_any_units(void **state)
{
    (void)state;
    scale_one(SCALE_PREDICTOR, "predictor x × 1e-200 … 1e200 against × 1");
}

/* A column of ordinary size in its first rows and near 1e200 after them
   (more rows than the streaming fold's first block): the streaming solver
   must scale it by its largest value over all rows, not over the first
   block, or its squares overflow and every estimate is lost. Expected: the
   dense solver's answer (the same least squares problem; that solver is
   checked against the NIST StRD certified values in test_nist.c). */
static void test_column_huge_after_its_first_rows(void **state)
{
    (void)state;
    char folder[] = "/tmp/fitproof-scale-XXXXXX";
    assert_non_null(mkdtemp(folder));
    char data[256], spec_path[256];
    snprintf(data, sizeof data, "%s/d.csv", folder);
    snprintf(spec_path, sizeof spec_path, "%s/spec.yaml", folder);
    FILE *f = fopen(data, "w");
    assert_non_null(f);
    fputs("x,y\n", f);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 18);
    for (size_t i = 0; i < 600; i++) {
        double x = (1.0 + gsl_rng_uniform(rng)) * (i < 300 ? 1.0 : 1e200);
        double y = 3.0 + 2e-200 * x + gsl_ran_gaussian(rng, 1.0);
        fprintf(f, "%.17g,%.17g\n", x, y);
    }
    gsl_rng_free(rng);
    fclose(f);
    diag_run run;
    diag_run_yaml(&run, spec_path,
                  "fitproof: 1\ndata:\n  path: d.csv\n"
                  "models:\n  - {id: m, response: y, terms: [x]}\n");
    assert_non_null(run.analysis);
    const design *d = run.analysis->models[0].design;
    fit_result *dense = fit_new_using(d, 0.95, FIT_SOLVER_DENSE);
    fit_result *streaming = fit_new_using(d, 0.95, FIT_SOLVER_STREAMING);
    agreement a = {"a column near 1e200 after 300 ordinary rows, streaming against dense", 0};
    for (size_t c = 0; c < dense->n_coefs; c++) {
        assert_true(isfinite(streaming->coefs[c].estimate));
        assert_true(isfinite(streaming->coefs[c].std_error) &&
                    streaming->coefs[c].std_error > 0);
        agree(&a, streaming->coefs[c].estimate, dense->coefs[c].estimate, 0, TOL, "estimate");
        agree(&a, streaming->coefs[c].std_error, dense->coefs[c].std_error, 0, TOL,
              "standard error");
    }
    agree(&a, streaming->r_squared, dense->r_squared, 0, TOL, "R2");
    agreement_print(&a);
    fit_free(dense);
    fit_free(streaming);
    diag_run_free(&run);
    unlink(data);
    unlink(spec_path);
    rmdir(folder);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_response_in_any_units),
        cmocka_unit_test(test_predictor_in_any_units),
        cmocka_unit_test(test_column_huge_after_its_first_rows),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

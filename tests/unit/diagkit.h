/*
 * diagkit.h — helpers for the diagnostics tests: run every stage up to the
 * checks (analysis_new) on YAML text, and compare numbers with a recorded
 * worst relative difference, printed as a "measured:" line.
 */
#ifndef FITPROOF_DIAGKIT_H
#define FITPROOF_DIAGKIT_H

#include <stdio.h>

#include "../../src/analysis/analysis.h"
#include "testkit.h"

/* The spec and data stages (testkit's pipeline), then the analysis. */
typedef struct {
    pipeline stages; /* design and fit unused: the analysis has its own */
    analysis *analysis;
} diag_run;

static inline void diag_run_yaml(diag_run *run, const char *spec_path, const char *yaml)
{
    pipeline_load(&run->stages, spec_path, yaml);
    run->analysis = run->stages.table ? analysis_new(run->stages.spec, run->stages.table,
                                                     &run->stages.errors)
                                      : NULL;
}

static inline void diag_run_free(diag_run *run)
{
    analysis_free(run->analysis);
    pipeline_free(&run->stages);
}

/* The worst relative difference seen by one family of comparisons. */
typedef struct {
    const char *name;
    double worst;
} agreement;

/* |got − want| / max(|want|, floor) ≤ tolerance; records the worst. */
static inline void agree(agreement *a, double got, double want, double floor,
                         double tolerance, const char *what)
{
    double scale = fabs(want) > floor ? fabs(want) : floor;
    double difference = fabs(got - want) / scale;
    if (!(difference <= tolerance))
        fprintf(stderr, "%s: %s computed %.17g, reference %.17g (relative %.3g)\n", a->name,
                what, got, want, difference);
    if (difference > a->worst || isnan(difference))
        a->worst = difference;
    assert_true(difference <= tolerance);
}

/* One residual measure of every row (the influence computes them on
   demand); the caller frees. */
typedef enum { MEASURE_STANDARDIZED, MEASURE_STUDENTIZED, MEASURE_COOKS, MEASURE_DFFITS } measure;

static inline double *measure_rows(const diag_influence *inf, measure which)
{
    double *values = malloc((inf->n ? inf->n : 1) * sizeof *values);
    for (size_t i = 0; i < inf->n; i++) {
        diag_row_measures m = diag_influence_row(inf, i);
        values[i] = which == MEASURE_STANDARDIZED  ? m.standardized
                    : which == MEASURE_STUDENTIZED ? m.studentized
                    : which == MEASURE_COOKS       ? m.cooks
                                                   : m.dffits;
    }
    return values;
}

static inline void agreement_print(const agreement *a)
{
    printf("  measured: %s: worst relative difference %.2g\n", a->name, a->worst);
}

#endif

/*
 * testkit.h — helpers shared by the unit tests: run the spec → data →
 * design → fit stages on YAML text held in the test, and measure agreement
 * as the log relative error.
 */
#ifndef FITPROOF_TESTKIT_H
#define FITPROOF_TESTKIT_H

#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <string.h>

#include "../../src/fit/fit.h"

typedef struct {
    error_list errors;
    spec *spec;
    data_table *table;
    design *design;
    fit_result *fit;
} pipeline;

/* Parses the spec and loads its data. spec_path only locates the data file
   (relative to it) and names the spec in messages. */
static inline void pipeline_load(pipeline *run, const char *spec_path, const char *yaml)
{
    memset(run, 0, sizeof *run);
    fit_library_init();
    error_list_init(&run->errors);
    run->spec = spec_parse(spec_path, yaml, strlen(yaml), &run->errors);
    if (run->spec)
        run->table = data_load(run->spec, &run->errors);
}

/* Runs the stages up to the fit of the first model. */
static inline void pipeline_run(pipeline *run, const char *spec_path, const char *yaml)
{
    pipeline_load(run, spec_path, yaml);
    if (run->table)
        run->design = design_new(run->spec, &run->spec->models[0], run->table, &run->errors);
    if (run->design)
        run->fit = fit_new(run->design, 0.95);
}

/* The next number in [0, 1) of a seeded 64-bit linear congruential
   generator (Knuth's MMIX multiplier and increment): the same stream on
   every machine, no library randomness. */
static inline double testkit_uniform(uint64_t *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) / 9007199254740992.0;
}

static inline void pipeline_free(pipeline *run)
{
    fit_free(run->fit);
    design_free(run->design);
    data_table_free(run->table);
    spec_free(run->spec);
    error_list_free(&run->errors);
}

/* Log relative error, −log10(|computed − certified| / |certified|), capped
   at 15; against a certified 0 it is −log10(|computed|), also capped. */
static inline double log_relative_error(double computed, double certified)
{
    double difference = fabs(computed - certified);
    if (difference == 0.0)
        return 15.0;
    double lre = certified == 0.0 ? -log10(difference) : -log10(difference / fabs(certified));
    return lre > 15.0 ? 15.0 : lre;
}

/* The index of the coefficient with this label; fails the test if none. */
static inline size_t coef_index(const design *d, const char *label)
{
    for (size_t c = 0; c < d->n_coefs; c++)
        if (strcmp(d->coefs[c].label, label) == 0)
            return c;
    print_error("no coefficient '%s'\n", label);
    fail();
    return 0;
}

/* The first error message recorded, or "" — for asserting on exact text. */
static inline const char *first_error(const pipeline *run)
{
    return run->errors.count ? run->errors.messages[0] : "";
}

#endif

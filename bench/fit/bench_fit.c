/*
 * bench_fit.c — times the data load, the design and the fit of the
 * benchmark model and reports peak memory (VmHWM) after each stage, so the
 * fit can be compared with loading the data (bench/fit/README.md).
 * Run by hand through bench/fit/run.sh; not part of `make test`.
 */
#define _POSIX_C_SOURCE 200809L
#include <stdio.h>
#include <stdlib.h>
#include <math.h>
#include <string.h>
#include <time.h>

#include "../../src/fit/fit.h"

static double clock_of(clockid_t id)
{
    struct timespec t;
    clock_gettime(id, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* Wall-clock seconds (the streaming fit runs on up to eight threads). */
static double now(void)
{
    return clock_of(CLOCK_MONOTONIC);
}

/* CPU seconds of the process, all threads. */
static double cpu(void)
{
    return clock_of(CLOCK_PROCESS_CPUTIME_ID);
}

/* Resets the peak (VmHWM) to the current resident size (Linux ≥ 4.0), so
   that each stage's own peak can be read. */
static void reset_peak(void)
{
    FILE *f = fopen("/proc/self/clear_refs", "w");
    if (f) {
        fputs("5", f);
        fclose(f);
    }
}

/* A line of /proc/self/status in MiB (VmRSS, VmHWM). */
static double status_mib(const char *key)
{
    FILE *f = fopen("/proc/self/status", "r");
    char line[256];
    double kib = 0;
    size_t length = strlen(key);
    while (f && fgets(line, sizeof line, f))
        if (strncmp(line, key, length) == 0)
            kib = atof(line + length + 1);
    if (f)
        fclose(f);
    return kib / 1024.0;
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "usage: bench_fit SPEC.yaml [auto|dense|streaming [REPEATS]]\n");
        return 2;
    }
    fit_solver solver = FIT_SOLVER_AUTO;
    if (argc > 2 && strcmp(argv[2], "dense") == 0)
        solver = FIT_SOLVER_DENSE;
    if (argc > 2 && strcmp(argv[2], "streaming") == 0)
        solver = FIT_SOLVER_STREAMING;
    int repeats = argc > 3 ? atoi(argv[3]) : 1;
    fit_library_init();
    error_list errors;
    error_list_init(&errors);
    spec *s = spec_load(argv[1], &errors);
    double base = status_mib("VmRSS:");
    double c0 = cpu(), t0 = now();
    data_table *t = s ? data_load(s, &errors) : NULL;
    double t1 = now(), c1 = cpu();
    if (!t) {
        error_list_print(&errors);
        return 2;
    }
    double loaded = status_mib("VmRSS:");
    double load_peak = status_mib("VmHWM:");
    reset_peak();
    design *d = design_new(s, &s->models[0], t, &errors);
    double t2 = now();
    if (!d) {
        error_list_print(&errors);
        return 2;
    }
    double design_peak = status_mib("VmHWM:");
    double designed = status_mib("VmRSS:");
    reset_peak();
    /* The fastest of several fits: the machine may be shared. */
    double c2 = cpu();
    fit_result *f = fit_new_using(d, 0.95, solver);
    double t3 = now(), c3 = cpu(), fastest = t3 - t2;
    for (int k = 1; k < repeats; k++) {
        double start = now();
        fit_free(f);
        f = fit_new_using(d, 0.95, solver);
        fastest = fmin(fastest, now() - start);
    }
    double fit_peak = status_mib("VmHWM:");
    double matrix = (double)d->n_used * (double)d->n_coefs * 8.0 / (1024.0 * 1024.0);
    printf("rows %zu, coefficients %zu, solver %s, rank %zu\n", d->n_used, d->n_coefs,
           f->solver == FIT_SOLVER_DENSE ? "dense" : "streaming", f->rank);
    printf("wall seconds: load %.2f  design %.2f  fit %.2f", t1 - t0, t2 - t1, t3 - t2);
    if (repeats > 1)
        printf(" (fastest of %d: %.2f)", repeats, fastest);
    printf("\nCPU seconds: load %.2f  fit %.2f (first fit, all threads)\n", c1 - c0, c3 - c2);
    printf("MiB: loaded columns %.0f (peak while loading %.0f); design: peak %.0f, kept %.0f; "
           "fit: peak %.0f above the design\n",
           loaded - base, load_peak - base, design_peak - loaded, designed - loaded,
           fit_peak - designed);
    printf("MiB: peak beyond the loaded columns during the fit %.0f; one n×p double design "
           "matrix is %.0f\n",
           fit_peak - loaded, matrix);
    printf("estimates:");
    for (size_t c = 0; c < d->n_coefs; c++)
        printf(" %.6g", f->coefs[c].estimate);
    printf("\n");
    fit_free(f);
    design_free(d);
    data_table_free(t);
    spec_free(s);
    error_list_free(&errors);
    return 0;
}

/*
 * figures_bench.c — time and size of one model's figure set at 10³, 10⁵
 * and 10⁷ rows (or the sizes given on the command line), drawn from an
 * invented straight-line model with a two-level category and a spread that
 * grows with x. Run by hand (bench/figures.sh); nothing here is a test.
 * Writes each size's SVGs into build/figures-bench/<rows>/ for a look.
 */
#define _POSIX_C_SOURCE 199309L
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <time.h>

#include "../src/figures/figures.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* Uniform (0, 1) from a 64-bit linear congruential generator. */
static double uniform(uint64_t *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return ((double)(*state >> 11) + 0.5) / 9007199254740992.0;
}

typedef struct {
    double *x, *y, *fit, *res, *std, *lev, *cook;
    uint32_t *lines;
    uint8_t *flag;
    int32_t *group;
    double cx[2 * 2], cy[2 * 2];
} rows;

static figures_row_measures bench_measures(const void *source, size_t i)
{
    const rows *r = source;
    return (figures_row_measures){r->std[i], r->std[i], r->cook[i]};
}

static void invent(rows *r, size_t n)
{
    r->x = malloc(n * sizeof(double));
    r->y = malloc(n * sizeof(double));
    r->fit = malloc(n * sizeof(double));
    r->res = malloc(n * sizeof(double));
    r->std = malloc(n * sizeof(double));
    r->lev = malloc(n * sizeof(double));
    r->cook = malloc(n * sizeof(double));
    r->lines = malloc(n * sizeof(uint32_t));
    r->flag = malloc(n * sizeof *r->flag);
    r->group = malloc(n * sizeof(int32_t));
    uint64_t state = 2024;
    double sx = 0, sxx = 0;
    for (size_t i = 0; i < n; i++) {
        r->x[i] = 100.0 * uniform(&state);
        r->group[i] = uniform(&state) < 0.4;
        /* Box–Muller normal noise, sd growing with x. */
        double z = sqrt(-2 * log(uniform(&state))) * cos(6.283185307179586 * uniform(&state));
        r->fit[i] = 20 + 0.3 * r->x[i] + 4 * r->group[i];
        r->res[i] = z * (1 + 0.03 * r->x[i]);
        r->y[i] = r->fit[i] + r->res[i];
        r->lines[i] = (uint32_t)(i + 2);
        sx += r->x[i];
        sxx += r->x[i] * r->x[i];
    }
    double mean = sx / (double)n, ssx = sxx - (double)n * mean * mean, sigma = 2.5;
    for (size_t i = 0; i < n; i++) {
        double d = r->x[i] - mean;
        r->lev[i] = 1.0 / (double)n + d * d / ssx;
        r->std[i] = r->res[i] / (sigma * sqrt(1 - r->lev[i]));
        r->cook[i] = r->std[i] * r->std[i] * r->lev[i] / (3 * (1 - r->lev[i]));
        r->flag[i] = r->cook[i] > 4.0 / (double)n;
    }
    for (int g = 0; g < 2; g++) {
        r->cx[2 * g] = 0;
        r->cx[2 * g + 1] = 100;
        r->cy[2 * g] = 20 + 4 * g;
        r->cy[2 * g + 1] = 50 + 4 * g;
    }
}

static void rows_free(rows *r)
{
    free(r->x);
    free(r->y);
    free(r->fit);
    free(r->res);
    free(r->std);
    free(r->lev);
    free(r->cook);
    free(r->lines);
    free(r->flag);
    free(r->group);
}

static void run(size_t n)
{
    rows r;
    invent(&r, n);
    static const char *const levels[2] = {"standard", "premium"};
    static const char *const labels[3] = {"(intercept)", "x", "grade = premium"};
    static const double est[3] = {20, 0.3, 4}, lo[3] = {19.5, 0.29, 3.8},
                        hi[3] = {20.5, 0.31, 4.2};
    figures_predictor predictor = {{"x", "load", "kN"}, r.x, 50, 2, r.cx, r.cy};
    figures_input in = {0};
    in.model_id = "bench";
    in.n = n;
    in.lines = r.lines;
    in.observed = r.y;
    in.fitted = r.fit;
    in.residuals = r.res;
    in.leverage = r.lev;
    in.measures = bench_measures;
    in.measures_source = &r;
    in.flagged = r.flag;
    in.sigma = 2.5;
    in.n_params = 3;
    in.level = 0.95;
    in.digits = 4;
    in.response = (figures_quantity){"y", "deflection", "mm"};
    in.n_coefs = 3;
    in.coef_labels = labels;
    in.estimate = est;
    in.ci_low = lo;
    in.ci_high = hi;
    in.group_name = "grade";
    in.group_levels = levels;
    in.n_levels = 2;
    in.group = r.group;
    in.predictors = &predictor;
    in.n_predictors = 1;

    /* Each figure alone, for its time; then the whole set. */
    double each[8] = {0};
    for (size_t k = 0; k < 8; k++) {
        char *name = (char *)spec_figure_names[k];
        spec_report one = {0};
        one.figures_given = true;
        one.figures = &name;
        one.n_figures = 1;
        double t0 = now();
        figures_set_free(figures_draw(&in, &one));
        each[k] = now() - t0;
    }
    double start = now();
    figures_set *set = figures_draw(&in, NULL);
    double seconds = now() - start;
    char dir[64];
    snprintf(dir, sizeof dir, "build/figures-bench/%zu", n);
    mkdir("build/figures-bench", 0755);
    mkdir(dir, 0755);
    size_t largest = 0;
    printf("%zu rows: %.2f s for %zu figures\n", n, seconds, set->count);
    for (size_t k = 0; k < set->count; k++) {
        const figures_figure *f = &set->items[k];
        largest = f->svg_length > largest ? f->svg_length : largest;
        printf("  %-26s %9zu bytes  %6.2f s\n", f->name, f->svg_length, each[k]);
        char path[128];
        snprintf(path, sizeof path, "%s/%s.svg", dir, f->name);
        FILE *out = fopen(path, "wb");
        if (out) {
            fwrite(f->svg, 1, f->svg_length, out);
            fclose(out);
        }
    }
    printf("  largest file %zu bytes\n", largest);
    figures_set_free(set);
    rows_free(&r);
}

int main(int argc, char **argv)
{
    fit_library_init();
    if (argc > 1)
        for (int i = 1; i < argc; i++)
            run((size_t)strtod(argv[i], NULL));
    else {
        run(1000);
        run(100000);
        run(10000000);
    }
    struct rusage usage;
    getrusage(RUSAGE_SELF, &usage);
    printf("peak resident memory %.0f MB\n", (double)usage.ru_maxrss / 1024.0);
    return 0;
}

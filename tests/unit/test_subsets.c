/*
 * test_subsets.c — the kernels behind sub-models read off the fit's
 * triangle: the unpivoted triangle of a column subset (lsq_tri_select)
 * against the cross-product of the same columns summed from the rows and
 * against the pivoted least-squares solve (fit_subset_rss, itself checked
 * against NIST StRD and statsmodels through the term tests); the inverse
 * cross-product of a triangle (lsq_upper_inverse_gram) against the
 * identity; lsq_combine_rows against the plain loop, bit for bit; the
 * Cholesky solve against the Cholesky inverse. Seeded rows, no files.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <math.h>

#include "../../src/fit/internal.h"

enum { ROWS = 400, COLS = 12 }; /* COLS predictors; the triangle adds y */

static uint64_t state_bits = 88172645463325252u;

/* Marsaglia's xorshift64 (J. Stat. Softw. 8(14), 2003), to [−1, 1). */
static long double uniform(void)
{
    state_bits ^= state_bits << 13;
    state_bits ^= state_bits >> 7;
    state_bits ^= state_bits << 17;
    return (long double)(state_bits >> 11) / 0x1p52L - 1.0L;
}

/* Rows of predictors with mixed scales, some 0/1 indicators, and a
   response; rows[i * (COLS + 1) + j]. */
static long double *seeded_rows(void)
{
    long double *rows = malloc(ROWS * (COLS + 1) * sizeof(long double));
    for (size_t i = 0; i < ROWS; i++) {
        long double *x = rows + i * (COLS + 1), y = 0.0L;
        for (size_t j = 0; j < COLS; j++) {
            x[j] = j == 0 ? 1.0L : j < 4 ? (i % 4 == j - 1) : ldexpl(uniform(), (int)j - 6);
            y += (long double)(j + 1) * x[j];
        }
        x[COLS] = y + uniform();
    }
    return rows;
}

static lsq_tri *triangle_of(const long double *rows)
{
    lsq_tri *t = lsq_tri_new(COLS + 1);
    for (size_t i = 0; i < ROWS; i++)
        lsq_tri_add(t, rows + i * (COLS + 1));
    lsq_tri_finish(t);
    return t;
}

static void test_selected_triangle(void **state)
{
    (void)state;
    long double *rows = seeded_rows();
    lsq_tri *t = triangle_of(rows);
    static const size_t subsets[][COLS] = {
        {0, 1, 2, 3, 4, 5},          /* leading run */
        {0, 4, 5, 6, 7, 8, 9, 10, 11}, /* a block of indicators dropped */
        {0, 2, 4, 6, 8, 10},         /* every other column */
        {3, 11},
    };
    static const size_t sizes[] = {6, 9, 6, 2};
    long double worst_gram = 0.0L, worst_rss = 0.0L;
    for (size_t s = 0; s < 4; s++) {
        size_t m = sizes[s];
        long double r[COLS * COLS], z[COLS + 1];
        lsq_tri_select(t, subsets[s], m, COLS, r, z);
        /* RᵀR against the cross-product summed from the rows. */
        for (size_t a = 0; a < m; a++)
            for (size_t b = 0; b < m; b++) {
                long double direct = 0.0L, from_r = 0.0L;
                for (size_t i = 0; i < ROWS; i++)
                    direct += rows[i * (COLS + 1) + subsets[s][a]] *
                              rows[i * (COLS + 1) + subsets[s][b]];
                for (size_t l = 0; l < m; l++)
                    from_r += r[a * m + l] * r[b * m + l];
                /* Relative to √(x_aᵀx_a · x_bᵀx_b): exact zeros (indicators of
                   different levels) come out as rounding-sized numbers. */
                long double aa = 0.0L, bb = 0.0L;
                for (size_t l = 0; l < m; l++) {
                    aa += r[a * m + l] * r[a * m + l];
                    bb += r[b * m + l] * r[b * m + l];
                }
                long double scale = sqrtl(aa * bb);
                worst_gram = fmaxl(worst_gram, fabsl(from_r - direct) / scale);
                if (a > b)
                    assert_true(r[b * m + a] == 0.0L); /* upper triangular */
            }
        long double rss = 0.0L;
        for (size_t i = m; i < COLS + 1; i++)
            rss += z[i] * z[i];
        size_t rank;
        long double pivoted = fit_subset_rss(t, subsets[s], m, COLS, &rank);
        assert_int_equal(rank, m);
        worst_rss = fmaxl(worst_rss, fabsl(rss - pivoted) / pivoted);
    }
    print_message("  measured: subset triangles, cross-products %.1Le, RSS vs pivoted %.1Le\n",
                  worst_gram, worst_rss);
    assert_true(worst_gram < 1e-16L);
    assert_true(worst_rss < 1e-16L);
    lsq_tri_free(t);
    free(rows);
}

static void test_inverse_cross_product(void **state)
{
    (void)state;
    long double *rows = seeded_rows();
    lsq_tri *t = triangle_of(rows);
    size_t m = COLS, cols[COLS];
    for (size_t j = 0; j < m; j++)
        cols[j] = j;
    long double r[COLS * COLS], z[COLS + 1], g[COLS * COLS];
    lsq_tri_select(t, cols, m, COLS, r, z);
    long double condition = lsq_upper_inverse_gram(r, m, g);
    /* g · RᵀR = I. */
    long double worst = 0.0L;
    for (size_t a = 0; a < m; a++)
        for (size_t b = 0; b < m; b++) {
            long double sum = 0.0L;
            for (size_t c = 0; c < m; c++) {
                long double gram = 0.0L;
                for (size_t l = 0; l < m; l++)
                    gram += r[c * m + l] * r[b * m + l];
                sum += g[a * m + c] * gram;
            }
            worst = fmaxl(worst, fabsl(sum - (a == b ? 1.0L : 0.0L)));
        }
    print_message("  measured: (RᵀR)⁻¹ RᵀR − I largest entry %.1Le, condition %.3Lg\n", worst,
                  condition);
    assert_true(condition >= 1.0L && condition < 1e4L);
    assert_true(worst < 1e-16L * condition);
    lsq_tri_free(t);
    free(rows);
}

static void test_combine_rows_matches_the_plain_loop(void **state)
{
    (void)state;
    enum { N = 37, COUNT = 23 };
    long double x[COUNT * N], coef[COUNT], fast[N], plain[N];
    for (size_t i = 0; i < COUNT * N; i++)
        x[i] = ldexpl(uniform(), (int)(i % 40) - 20);
    for (size_t c = 0; c < COUNT; c++)
        coef[c] = uniform();
    for (size_t j = 0; j < N; j++)
        fast[j] = plain[j] = uniform();
    lsq_combine_rows(fast, coef, COUNT, x, N, N);
    for (size_t c = 0; c < COUNT; c++)
        for (size_t j = 0; j < N; j++)
            plain[j] += coef[c] * x[c * N + j];
    assert_memory_equal(fast, plain, sizeof fast);
}

static void test_spd_solve_matches_the_inverse(void **state)
{
    (void)state;
    enum { N = 9 };
    long double m[N * N], inverse[N * N], b[N], x[N];
    for (size_t a = 0; a < N; a++)
        for (size_t c = 0; c <= a; c++) {
            long double v = a == c ? (long double)N : uniform();
            m[a * N + c] = m[c * N + a] = v;
        }
    for (size_t a = 0; a < N; a++)
        b[a] = uniform();
    memcpy(inverse, m, sizeof m);
    assert_true(lsq_spd_inverse(inverse, N));
    assert_true(lsq_spd_solve(m, N, b, x));
    for (size_t a = 0; a < N; a++) {
        long double via_inverse = 0.0L;
        for (size_t c = 0; c < N; c++)
            via_inverse += inverse[a * N + c] * b[c];
        assert_true(fabsl(via_inverse - x[a]) <= 1e-17L * (1.0L + fabsl(x[a])));
    }
    m[0] = -1.0L; /* not positive definite */
    assert_false(lsq_spd_solve(m, N, b, x));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_selected_triangle),
        cmocka_unit_test(test_inverse_cross_product),
        cmocka_unit_test(test_combine_rows_matches_the_plain_loop),
        cmocka_unit_test(test_spd_solve_matches_the_inverse),
    };
    return cmocka_run_group_tests_name("subsets", tests, NULL, NULL);
}

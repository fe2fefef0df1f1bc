/*
 * test_sort.c — the radix sorts (src/util/sort.c) against the C library's
 * qsort with a plain comparison on the same values: seeded random doubles
 * of every sign and exponent, infinities, both zeros, heavy ties, sizes on
 * both sides of the small-sort threshold, values already in order; pairs
 * ordered by x, ties by y; the selection of one order statistic and the
 * next against the sorted array.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <math.h>

#include "../../src/util/sort.h"

static uint64_t state_bits = 88172645463325252u;

/* Marsaglia's xorshift64 (J. Stat. Softw. 8(14), 2003): a fixed stream. */
static uint64_t next_bits(void)
{
    state_bits ^= state_bits << 13;
    state_bits ^= state_bits >> 7;
    state_bits ^= state_bits << 17;
    return state_bits;
}

/* A double of any sign and finite exponent, or a tie from a short list. */
static double draw(unsigned mix)
{
    uint64_t bits = next_bits();
    switch (bits % mix) {
    case 0:
        return 0.0;
    case 1:
        return -0.0;
    case 2:
        return (bits >> 8) % 2 ? INFINITY : -INFINITY;
    case 3:
        return (double)((bits >> 8) % 5) - 2.0;
    default: {
        double v;
        bits = next_bits();
        memcpy(&v, &bits, sizeof v);
        return isnan(v) ? 1.5 : v;
    }
    }
}

static int by_value(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

typedef struct {
    double x, y;
} pair;

static int by_pair(const void *a, const void *b)
{
    const pair *p = a, *q = b;
    if (p->x != q->x)
        return (p->x > q->x) - (p->x < q->x);
    return (p->y > q->y) - (p->y < q->y);
}

static void check_doubles(size_t n, unsigned mix)
{
    double *v = malloc((n + 1) * sizeof *v), *expected = malloc((n + 1) * sizeof *v);
    for (size_t i = 0; i < n; i++)
        v[i] = expected[i] = draw(mix);
    qsort(expected, n, sizeof *expected, by_value);
    sort_doubles(v, n);
    for (size_t i = 0; i < n; i++) {
        assert_true(v[i] == expected[i]);
        assert_false(v[i] == 0.0 && signbit(v[i])); /* −0 comes back as 0 */
    }
    free(v);
    free(expected);
}

static void test_doubles(void **state)
{
    (void)state;
    size_t sizes[] = {0, 1, 2, 17, 2047, 2048, 2049, 100000};
    for (size_t s = 0; s < sizeof sizes / sizeof *sizes; s++) {
        check_doubles(sizes[s], 10);
        check_doubles(sizes[s], 5); /* mostly ties */
    }
}

/* Values already in order take the one-pass path: written back as they
   are, −0 as 0; one value out of place at the end takes the radix sort. */
static void test_doubles_in_order(void **state)
{
    (void)state;
    size_t n = 5000;
    double *v = malloc(n * sizeof *v);
    for (size_t i = 0; i < n; i++)
        v[i] = i < 10 ? -0.0 : (double)i;
    v[3] = 0.0;
    sort_doubles(v, n);
    for (size_t i = 0; i < n; i++) {
        assert_true(v[i] == (i < 10 ? 0.0 : (double)i));
        assert_false(signbit(v[i]));
    }
    v[n - 1] = -1.0;
    sort_doubles(v, n);
    assert_true(v[0] == -1.0 && v[1] == 0.0 && v[n - 1] == (double)(n - 2));
    for (size_t i = 1; i < n; i++)
        assert_true(v[i - 1] <= v[i]);
    free(v);
}

/* sort_select gives the k-th value of the sorted array and the one after
   it, bit for bit (−0 as 0), at both ends and in between, with ties. */
static void test_select(void **state)
{
    (void)state;
    size_t sizes[] = {1, 2, 7, 3000};
    for (size_t s = 0; s < sizeof sizes / sizeof *sizes; s++) {
        size_t n = sizes[s];
        double *v = malloc(n * sizeof *v), *sorted = malloc(n * sizeof *v);
        for (size_t i = 0; i < n; i++)
            v[i] = sorted[i] = draw(5);
        sort_doubles(sorted, n);
        size_t ks[] = {0, n / 3, n / 2, n - 1};
        for (size_t j = 0; j < sizeof ks / sizeof *ks; j++) {
            size_t k = ks[j];
            double *work = malloc(n * sizeof *work), kth, next;
            memcpy(work, v, n * sizeof *work);
            sort_select(work, n, k, &kth, &next);
            assert_memory_equal(&kth, &sorted[k], sizeof kth);
            assert_memory_equal(&next, &sorted[k + 1 < n ? k + 1 : k], sizeof next);
            free(work);
        }
        free(v);
        free(sorted);
    }
}

static void test_pairs(void **state)
{
    (void)state;
    size_t sizes[] = {0, 3, 2047, 50000};
    for (size_t s = 0; s < sizeof sizes / sizeof *sizes; s++) {
        size_t n = sizes[s];
        sort_pair *got = malloc((n + 1) * sizeof *got);
        pair *expected = malloc((n + 1) * sizeof *expected);
        for (size_t i = 0; i < n; i++) {
            got[i].x = (double)(next_bits() % 50); /* many ties in x */
            got[i].y = draw(10);
            expected[i] = (pair){got[i].x, got[i].y};
        }
        qsort(expected, n, sizeof *expected, by_pair);
        sort_pair_records(got, n);
        for (size_t i = 0; i < n; i++) {
            assert_true(got[i].x == expected[i].x);
            assert_true(got[i].y == expected[i].y);
        }
        free(got);
        free(expected);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_doubles),
        cmocka_unit_test(test_doubles_in_order),
        cmocka_unit_test(test_select),
        cmocka_unit_test(test_pairs),
    };
    return cmocka_run_group_tests_name("sort", tests, NULL, NULL);
}

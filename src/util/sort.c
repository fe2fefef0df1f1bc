/*
 * sort.c — radix sorts of doubles (sort.h). A double's bits, with every
 * bit flipped for a negative number and only the sign bit for a positive
 * one, compare as unsigned integers in the order of the numbers; sorting
 * those keys a byte at a time from the most significant, in place, takes
 * a few passes over the data where a comparison sort makes about twenty
 * at a million values, and no spare array. Below SMALL_SORT values the
 * library sort is as quick.
 */
#include "sort.h"

#include <gsl/gsl_statistics_double.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>


#define SMALL_SORT 2048

static uint64_t order_key(double value)
{
    uint64_t bits;
    if (value == 0.0)
        value = 0.0; /* −0 as 0 */
    memcpy(&bits, &value, sizeof bits);
    return bits >> 63 ? ~bits : bits | (UINT64_C(1) << 63);
}

static double key_value(uint64_t key)
{
    uint64_t bits = key >> 63 ? key & ~(UINT64_C(1) << 63) : ~key;
    double value;
    memcpy(&value, &bits, sizeof value);
    return value;
}

static int compare_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* A record of the pair sort: the keys of x and y. */
typedef struct {
    uint64_t x, y;
} pair_key;

static int compare_pair_key(const void *a, const void *b)
{
    const pair_key *p = a, *q = b;
    if (p->x != q->x)
        return (p->x > q->x) - (p->x < q->x);
    return (p->y > q->y) - (p->y < q->y);
}

/* In-place most-significant-digit radix sort (McIlroy, Bostic & McIlroy
   1993, "Engineering radix sort"): the records are spread into the 256
   buckets of one byte of their key by following permutation cycles, then
   each bucket is sorted on the next byte. No spare array; the order is
   that of the whole key, so records with equal keys, which are equal
   values, need no stability. */
#define BUCKETS 256
#define INSERTION_SORT 32

static unsigned key_byte(uint64_t key, unsigned level)
{
    return (unsigned)(key >> (56 - 8 * level)) & (BUCKETS - 1);
}

/* The first byte, from level on, at which keys whose XOR with one of them
   ORed together is diff differ (diff ≠ 0). */
static unsigned first_difference(uint64_t diff, unsigned level)
{
    while (key_byte(diff, level) == 0)
        level++;
    return level;
}

/* The first slot of each bucket (next) and the one past its last (end). */
static void bucket_bounds(const size_t *count, size_t *next, size_t *end)
{
    size_t total = 0;
    for (unsigned b = 0; b < BUCKETS; b++) {
        next[b] = total;
        total += count[b];
        end[b] = total;
    }
}

/* Moves each record of a into its bucket of byte `level` by following
   permutation cycles: a record taken from a wrong slot goes to the next
   free slot of its bucket and the one it displaces moves on.
   DIGIT(&record, level) is a record's bucket. */
#define SPREAD(TYPE, DIGIT)                                                                \
    do {                                                                                   \
        for (unsigned b = 0; b < BUCKETS; b++)                                             \
            while (next[b] < end[b]) {                                                     \
                TYPE r = a[next[b]];                                                       \
                unsigned d = DIGIT(&r, level);                                             \
                while (d != b) {                                                           \
                    TYPE held = a[next[d]];                                                \
                    a[next[d]++] = r;                                                      \
                    r = held;                                                              \
                    d = DIGIT(&r, level);                                                  \
                }                                                                          \
                a[next[b]++] = r;                                                          \
            }                                                                              \
    } while (0)

static unsigned key_digit(const uint64_t *key, unsigned level)
{
    return key_byte(*key, level);
}

/* Insertion sort of the few records of a small bucket; BELOW(&p, &q) says
   whether record p sorts before record q. */
#define INSERTION(TYPE, BELOW)                                                             \
    do {                                                                                   \
        for (size_t i = 1; i < n; i++) {                                                   \
            TYPE r = a[i];                                                                 \
            size_t j = i;                                                                  \
            for (; j > 0 && BELOW(&r, &a[j - 1]); j--)                                     \
                a[j] = a[j - 1];                                                           \
            a[j] = r;                                                                      \
        }                                                                                  \
    } while (0)

static bool key_below(const uint64_t *p, const uint64_t *q)
{
    return *p < *q;
}

static void flag_sort_keys(uint64_t *a, size_t n, unsigned level)
{
    if (n < INSERTION_SORT) {
        INSERTION(uint64_t, key_below);
        return;
    }
    /* Keys that agree on this byte and more (heavy ties: a column of a
       few values) skip those bytes; keys all equal are sorted. */
    size_t count[BUCKETS] = {0}, next[BUCKETS], end[BUCKETS];
    uint64_t diff = 0;
    for (size_t i = 0; i < n; i++) {
        count[key_byte(a[i], level)]++;
        diff |= a[i] ^ a[0];
    }
    if (diff == 0)
        return;
    if (first_difference(diff, level) != level) {
        flag_sort_keys(a, n, first_difference(diff, level));
        return;
    }
    bucket_bounds(count, next, end);
    SPREAD(uint64_t, key_digit);
    if (level == 7)
        return;
    size_t first = 0;
    for (unsigned b = 0; b < BUCKETS; first += count[b], b++)
        if (count[b] > 1)
            flag_sort_keys(a + first, count[b], level + 1);
}

/* Byte `level` of a pair record's key: 0–7 of x, most significant first,
   then 8–15 of y. */
static unsigned pair_byte(const pair_key *r, unsigned level)
{
    return level < 8 ? key_byte(r->x, level) : key_byte(r->y, level - 8);
}

static bool pair_below(const pair_key *p, const pair_key *q)
{
    return p->x != q->x ? p->x < q->x : p->y < q->y;
}


static void flag_sort_pairs(pair_key *a, size_t n, unsigned level)
{
    if (n < INSERTION_SORT) {
        INSERTION(pair_key, pair_below);
        return;
    }
    size_t count[BUCKETS] = {0}, next[BUCKETS], end[BUCKETS];
    uint64_t diff_x = 0, diff_y = 0;
    for (size_t i = 0; i < n; i++) {
        count[pair_byte(&a[i], level)]++;
        diff_x |= a[i].x ^ a[0].x;
        diff_y |= a[i].y ^ a[0].y;
    }
    if (diff_x == 0 && diff_y == 0)
        return;
    unsigned differs = diff_x ? first_difference(diff_x, level < 8 ? level : 7)
                              : 8 + first_difference(diff_y, level < 8 ? 0 : level - 8);
    if (differs != level) {
        flag_sort_pairs(a, n, differs);
        return;
    }
    bucket_bounds(count, next, end);
    SPREAD(pair_key, pair_byte);
    if (level == 15)
        return;
    size_t first = 0;
    for (unsigned b = 0; b < BUCKETS; first += count[b], b++)
        if (count[b] > 1)
            flag_sort_pairs(a + first, count[b], level + 1);
}

/* The keys are written over the values they come from (a double and its
   key are both 8 bytes): the sort needs no memory beyond the values. */
void sort_doubles(double *v, size_t n)
{
    /* Values already in order (a run number, a date) are common: one pass. */
    size_t ordered = 1;
    while (ordered < n && v[ordered - 1] <= v[ordered])
        ordered++;
    if (ordered >= n || n < SMALL_SORT) {
        for (size_t i = 0; i < n; i++)
            v[i] = sort_plain_zero(v[i]);
        if (ordered < n)
            qsort(v, n, sizeof *v, compare_double);
        return;
    }
    _Static_assert(sizeof(uint64_t) == sizeof(double), "a key in place of its double");
    uint64_t *keys = (uint64_t *)(void *)v;
    for (size_t i = 0; i < n; i++) {
        uint64_t key = order_key(v[i]);
        memcpy(&keys[i], &key, sizeof key);
    }
    flag_sort_keys(keys, n, 0);
    for (size_t i = 0; i < n; i++) {
        double value = key_value(keys[i]);
        memcpy(&v[i], &value, sizeof value);
    }
}

static void sort_keys(pair_key *keys, size_t n)
{
    if (n < SMALL_SORT)
        qsort(keys, n, sizeof *keys, compare_pair_key);
    else
        flag_sort_pairs(keys, n, 0);
}

void sort_pair_records(sort_pair *p, size_t n)
{
    _Static_assert(sizeof(pair_key) == sizeof(sort_pair), "a key record in place of its pair");
    pair_key *keys = (pair_key *)(void *)p;
    for (size_t i = 0; i < n; i++) {
        pair_key key = {order_key(p[i].x), order_key(p[i].y)};
        memcpy(&keys[i], &key, sizeof key);
    }
    sort_keys(keys, n);
    for (size_t i = 0; i < n; i++) {
        sort_pair pair = {key_value(keys[i].x), key_value(keys[i].y)};
        memcpy(&p[i], &pair, sizeof pair);
    }
}

void sort_select(double *v, size_t n, size_t k, double *kth, double *next)
{
    *kth = sort_plain_zero(gsl_stats_select(v, 1, n, k));
    /* The ones after k are no smaller: the next is their smallest. */
    double above = k + 1 < n ? v[k + 1] : *kth;
    for (size_t i = k + 2; i < n; i++)
        above = v[i] < above ? v[i] : above;
    *next = sort_plain_zero(above);
}

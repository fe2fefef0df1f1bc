/*
 * sort.c — radix sorts of doubles (sort.h). A double's bits, with every
 * bit flipped for a negative number and only the sign bit for a positive
 * one, compare as unsigned integers in the order of the numbers; sorting
 * those keys 16 bits a pass is four passes over the data, where a
 * comparison sort makes about twenty at a million values. Below
 * SMALL_SORT values the library sort is as quick and needs no tables.
 */
#include "sort.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

#define SMALL_SORT 2048
#define DIGIT_BITS 16
#define DIGITS (1u << DIGIT_BITS)

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

/* Counts of one digit turned into the first slot of each digit value;
   false when every key has the same digit (the pass would move nothing). */
static bool digit_offsets(size_t *count, size_t n)
{
    size_t total = 0;
    bool moves = true;
    for (size_t d = 0; d < DIGITS; d++) {
        size_t c = count[d];
        if (c == n)
            moves = false;
        count[d] = total;
        total += c;
    }
    return moves;
}

/* Stable passes over the 16-bit digits of the keys, least significant
   first; the sorted keys end in keys. */
static void radix_keys(uint64_t *keys, size_t n)
{
    uint64_t *from = keys, *to = xmalloc(n * sizeof *to), *spare = to;
    size_t *count = xmalloc(DIGITS * sizeof *count);
    for (unsigned shift = 0; shift < 64; shift += DIGIT_BITS) {
        memset(count, 0, DIGITS * sizeof *count);
        for (size_t i = 0; i < n; i++)
            count[(from[i] >> shift) & (DIGITS - 1)]++;
        if (!digit_offsets(count, n))
            continue;
        for (size_t i = 0; i < n; i++)
            to[count[(from[i] >> shift) & (DIGITS - 1)]++] = from[i];
        uint64_t *swap = from;
        from = to;
        to = swap;
    }
    if (from != keys)
        memcpy(keys, from, n * sizeof *keys);
    free(count);
    free(spare);
}

/* The digit of a pair record at pass `pass` (0–3 on y, 4–7 on x). */
static unsigned pair_digit(const pair_key *r, unsigned pass)
{
    uint64_t key = pass < 4 ? r->y : r->x;
    return (unsigned)(key >> (DIGIT_BITS * (pass % 4))) & (DIGITS - 1);
}

static void radix_pairs(pair_key *keys, size_t n)
{
    pair_key *from = keys, *to = xmalloc(n * sizeof *to), *spare = to;
    size_t *count = xmalloc(DIGITS * sizeof *count);
    for (unsigned pass = 0; pass < 8; pass++) {
        memset(count, 0, DIGITS * sizeof *count);
        for (size_t i = 0; i < n; i++)
            count[pair_digit(&from[i], pass)]++;
        if (!digit_offsets(count, n))
            continue;
        for (size_t i = 0; i < n; i++)
            to[count[pair_digit(&from[i], pass)]++] = from[i];
        pair_key *swap = from;
        from = to;
        to = swap;
    }
    if (from != keys)
        memcpy(keys, from, n * sizeof *keys);
    free(count);
    free(spare);
}

/* The keys are written over the values they come from (a double and its
   key are both 8 bytes), so that a sort needs one spare array, not two. */
void sort_doubles(double *v, size_t n)
{
    if (n < SMALL_SORT) {
        for (size_t i = 0; i < n; i++)
            v[i] = v[i] == 0.0 ? 0.0 : v[i];
        qsort(v, n, sizeof *v, compare_double);
        return;
    }
    _Static_assert(sizeof(uint64_t) == sizeof(double), "a key in place of its double");
    uint64_t *keys = (uint64_t *)(void *)v;
    for (size_t i = 0; i < n; i++) {
        uint64_t key = order_key(v[i]);
        memcpy(&keys[i], &key, sizeof key);
    }
    radix_keys(keys, n);
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
        radix_pairs(keys, n);
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

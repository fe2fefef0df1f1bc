/*
 * sort.h — ascending sorts of doubles in linear time (an in-place most-
 * significant-digit radix sort on the bits of each number), for the arrays of a
 * million residuals or column values that the library sort takes a tenth
 * of a second each to order. Callers leave NaN out; −0 sorts as 0 and is
 * written back as 0.
 */
#ifndef FITPROOF_SORT_H
#define FITPROOF_SORT_H

#include <stddef.h>

/* Sorts v[0..n) ascending in place. */
void sort_doubles(double *v, size_t n);

/* v as the sorts write it: −0 as 0. */
static inline double sort_plain_zero(double v)
{
    return v == 0.0 ? 0.0 : v;
}

/* The k-th smallest of v[0..n) (from 0) in *kth and the next one up in
   *next (the k-th again when k is the last), as the sorted values would
   hold them, by selection instead of a sort: v is rearranged. */
void sort_select(double *v, size_t n, size_t k, double *kth, double *next);

/* Sorts the pairs p[0..n) ascending by x, ties by y, in place. */
typedef struct {
    double x, y;
} sort_pair;
void sort_pair_records(sort_pair *p, size_t n);

#endif

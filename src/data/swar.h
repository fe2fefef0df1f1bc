/*
 * swar.h — private to the data stage: byte tests on eight bytes at once in
 * a 64-bit word ("SIMD within a register"), for the CSV reader's hot path.
 * Bytes are numbered from the lowest (the first in memory: these helpers
 * assume a little-endian machine, and callers check SWAR_OK).
 *
 * A lane test sets bit 7 of each lane that matches; carries and borrows
 * can only run upwards from a matching lane, so the lowest set bit is
 * always exact, and that is the only one callers use. Eight digits become
 * a number with three multiplications, combining neighbours pairwise
 * (the method described in D. Lemire, "Number parsing at a gigabyte per
 * second", Software: Practice and Experience 51(8), 2021).
 */
#ifndef FITPROOF_DATA_SWAR_H
#define FITPROOF_DATA_SWAR_H

#include <stdint.h>
#include <string.h>

#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
#define SWAR_OK 1
#else
#define SWAR_OK 0
#endif

#define SWAR_ONES UINT64_C(0x0101010101010101)
#define SWAR_HIGHS UINT64_C(0x8080808080808080)

static inline uint64_t swar_load(const char *p)
{
    uint64_t word;
    memcpy(&word, p, sizeof word);
    return word;
}

/* Lanes equal to byte. */
static inline uint64_t swar_equal(uint64_t word, unsigned char byte)
{
    uint64_t x = word ^ (SWAR_ONES * byte);
    return (x - SWAR_ONES) & ~x & SWAR_HIGHS;
}

/* Lanes that are not an ASCII digit. */
static inline uint64_t swar_non_digits(uint64_t word)
{
    return ((word + SWAR_ONES * 0x46) | (word - SWAR_ONES * 0x30) | word) & SWAR_HIGHS;
}

/* Index of the lowest marked lane (mask != 0). */
static inline unsigned swar_first(uint64_t mask)
{
    return (unsigned)__builtin_ctzll(mask) >> 3;
}

/* The lowest n lanes of word (0 <= n <= 8), the others zero. */
static inline uint64_t swar_keep(uint64_t word, unsigned n)
{
    return n >= 8 ? word : word & ((UINT64_C(1) << (8 * n)) - 1);
}

/* The value of the n digits in the lowest lanes (1 <= n <= 8). */
static inline uint64_t swar_digits(uint64_t word, unsigned n)
{
    word = (word & (SWAR_ONES * 0x0F)) << (8 * (8 - n)); /* leading zeros fill in */
    word = (word * 10 + (word >> 8)) & UINT64_C(0x00FF00FF00FF00FF);
    word = (word * 100 + (word >> 16)) & UINT64_C(0x0000FFFF0000FFFF);
    return (word * 10000 + (word >> 32)) & UINT64_C(0xFFFFFFFF);
}

#endif

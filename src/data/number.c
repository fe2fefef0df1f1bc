/*
 * number.c — decimal text to the nearest double, for what the inline fast
 * path in number.h cannot settle.
 *
 * Method (D. Lemire, "Number parsing at a gigabyte per second", Software:
 * Practice and Experience 51(8), 2021, after M. Eisel): with w normalised
 * to 64 bits and T a 128-bit approximation of 5^q (|T − exact| < 1, table
 * in pow5_table.h), the 192-bit product P = w·T differs from the exact
 * w·5^q (scaled) by less than 2^64. The double's 53 significant bits and
 * its rounding bit are the top 54 bits of P; they are right unless the
 * bits below them, down to bit 64, are all zeros or all ones (the error
 * could then cross a boundary) — in that rare case, and for subnormal
 * results, strtod decides. When more than 19 significant digits were
 * given, w and w + 1 bracket the value; if both give the same double, so
 * does the value. Exact ties (round half to even) can only occur when
 * −4 ≤ q ≤ 23, where P is exact (5^q fits in 128 bits for q ≤ 55) or the
 * all-zeros test already sent the case to strtod.
 */
#define _POSIX_C_SOURCE 200809L /* newlocale, uselocale */

#include "number.h"

#include <locale.h>
#include <stdlib.h>
#include <string.h>
#include <threads.h>

#include "../util/util.h"
#include "pow5_table.h"

__extension__ typedef unsigned __int128 uint128;

/* Sets *bits to the IEEE bits of the double nearest w × 10^q (w > 0);
   returns false when the product cannot decide (rare) or the result is
   subnormal. */
static bool eisel_lemire(uint64_t w, int q, uint64_t *bits)
{
    if (q < POW5_Q_MIN) { /* below half the smallest subnormal */
        *bits = 0;
        return true;
    }
    if (q > POW5_Q_MAX) {
        *bits = UINT64_C(0x7FF0000000000000);
        return true;
    }
    int lz = __builtin_clzll(w);
    w <<= lz;
    const uint64_t *t = pow5_table[q - POW5_Q_MIN];
    uint128 high = (uint128)w * t[0]; /* bits 64..191 of P */
    uint128 low = (uint128)w * t[1];  /* bits 0..127 of P */
    uint128 middle = (uint128)(uint64_t)high + (low >> 64);
    uint64_t p_mid = (uint64_t)middle;
    uint64_t p_hi = (uint64_t)(high >> 64) + (uint64_t)(middle >> 64);
    uint64_t p_lo = (uint64_t)low;
    int upper = (int)(p_hi >> 63);
    int shift = 9 + upper; /* p_hi bits below the 54 we keep */
    uint64_t below_mask = (UINT64_C(1) << shift) - 1;
    uint64_t below = p_hi & below_mask;
    bool exact = q >= 0 && q <= 55;
    if (!exact && ((below == 0 && p_mid == 0) || (below == below_mask && p_mid == UINT64_MAX)))
        return false;
    uint64_t m = p_hi >> shift; /* 54 bits: 53 and the rounding bit */
    int biased = pow10_exponent2[q - POW5_Q_MIN] + 1086 - lz + upper;
    bool tie = exact && (m & 1) && below == 0 && p_mid == 0 && p_lo == 0;
    if (tie && (m & 2) == 0)
        m >>= 1; /* halfway, and the lower neighbour is even */
    else
        m = (m + 1) >> 1;
    if (m == UINT64_C(1) << 53) {
        m >>= 1;
        biased++;
    }
    if (biased <= 0)
        return false;
    if (biased >= 2047) {
        *bits = UINT64_C(0x7FF0000000000000);
        return true;
    }
    *bits = ((uint64_t)biased << 52) | (m & ((UINT64_C(1) << 52) - 1));
    return true;
}

/* strtod in the C locale whatever the thread's locale, on a copy of the
   text with the decimal mark made a point. */
static locale_t c_locale;

static void make_c_locale(void)
{
    c_locale = newlocale(LC_ALL_MASK, "C", (locale_t)0);
}

static double strtod_c_locale(const char *digits, const char *digits_end, char mark)
{
    static once_flag once = ONCE_FLAG_INIT; /* two reader threads may get here */
    call_once(&once, make_c_locale);
    size_t n = (size_t)(digits_end - digits);
    char small[128];
    char *copy = n < sizeof small ? small : xmalloc(n + 1);
    for (size_t i = 0; i < n; i++)
        copy[i] = digits[i] == mark ? '.' : digits[i];
    copy[n] = '\0';
    locale_t previous = c_locale ? uselocale(c_locale) : (locale_t)0;
    double value = strtod(copy, NULL);
    if (c_locale)
        uselocale(previous);
    if (copy != small)
        free(copy);
    return value;
}

static double from_bits(uint64_t bits)
{
    double value;
    memcpy(&value, &bits, sizeof value);
    return value;
}

double number_convert(uint64_t w, int q, bool lost, const char *digits, const char *digits_end,
                      char mark)
{
    uint64_t bits, bits_above;
    if (eisel_lemire(w, q, &bits)) {
        if (!lost)
            return from_bits(bits);
        if (eisel_lemire(w + 1, q, &bits_above) && bits_above == bits)
            return from_bits(bits);
    }
    return strtod_c_locale(digits, digits_end, mark);
}

static bool equal_ignoring_case(const char *text, size_t length, const char *word)
{
    if (strlen(word) != length)
        return false;
    for (size_t i = 0; i < length; i++)
        if ((text[i] | 0x20) != word[i])
            return false;
    return true;
}

bool number_is_nonfinite_word(const char *text, size_t length)
{
    while (length && (*text == ' ' || *text == '\t'))
        text++, length--;
    while (length && (text[length - 1] == ' ' || text[length - 1] == '\t'))
        length--;
    if (length && (*text == '+' || *text == '-'))
        text++, length--;
    return equal_ignoring_case(text, length, "nan") || equal_ignoring_case(text, length, "inf") ||
           equal_ignoring_case(text, length, "infinity");
}

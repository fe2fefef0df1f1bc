/*
 * number.h — private to the data stage: the decimal-number scanner. The
 * common case (at most 19 significant digits, a power of ten up to 22 and
 * a mantissa up to 2^53) is inline here, because the CSV reader calls it
 * for every numeric cell; the rest is in number.c.
 *
 * Correct rounding: the result is the double nearest the decimal value
 * (ties to even), bit for bit what strtod gives in the C locale.
 * Fast path: W. D. Clinger, "How to read floating point numbers
 * accurately", PLDI 1990 — w and 10^q are both exact doubles, so one IEEE
 * multiplication or division rounds correctly.
 */
#ifndef FITPROOF_DATA_NUMBER_H
#define FITPROOF_DATA_NUMBER_H

#include <float.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

/* Bits of *flags after number_scan. */
#define NUMBER_BIG_INTEGER 1u /* an integer literal beyond 2^53 in magnitude */
#define NUMBER_OVERFLOW 2u    /* too large for a double: the value is ±infinity */

/* Everything number_scan cannot settle with one exact operation: the
   magnitude of w × 10^q (lost: a nonzero digit after the 19th was
   dropped); digits..digits_end is the unsigned text for strtod. */
double number_convert(uint64_t w, int q, bool lost, const char *digits, const char *digits_end,
                      char mark);

/* Whether text (surrounding blanks allowed) spells NaN or an infinity:
   an optional sign, then nan, inf or infinity in any case. */
bool number_is_nonfinite_word(const char *text, size_t length);

static inline bool number_is_digit(char c)
{
    return (unsigned char)(c - '0') < 10;
}

/*
 * Scans a decimal number at p, before end: an optional sign, digits with
 * an optional decimal mark (mark: '.' or ','), an optional exponent; at
 * least one digit before the exponent; no blanks. Returns the end of the
 * number, or NULL when p does not start one. Sets *out and *flags.
 */
static inline const char *number_scan(const char *p, const char *end, char mark, double *out,
                                      unsigned *flags)
{
    static const double powers[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                    1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
                                    1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
    const char *s = p;
    bool negative = false;
    if (s < end && (*s == '-' || *s == '+'))
        negative = *s++ == '-';
    const char *digits = s;
    uint64_t w = 0;
    int taken = 0; /* significant digits in w (leading zeros are not) */
    int q = 0;     /* the value is w × 10^q */
    bool lost = false;
    for (; s < end && number_is_digit(*s); s++) {
        if (taken < 19) {
            w = w * 10 + (uint64_t)(*s - '0');
            taken += w != 0;
        } else {
            q++;
            lost |= *s != '0';
        }
    }
    size_t n_digits = (size_t)(s - digits);
    bool integer = true;
    if (s < end && *s == mark) {
        integer = false;
        const char *fraction = ++s;
        for (; s < end && number_is_digit(*s); s++) {
            if (taken < 19) {
                w = w * 10 + (uint64_t)(*s - '0');
                taken += w != 0;
                q--;
            } else {
                lost |= *s != '0';
            }
        }
        n_digits += (size_t)(s - fraction);
    }
    if (n_digits == 0)
        return NULL;
    if (s < end && (*s == 'e' || *s == 'E')) {
        const char *e = s + 1;
        bool exponent_negative = false;
        if (e < end && (*e == '+' || *e == '-'))
            exponent_negative = *e++ == '-';
        if (e >= end || !number_is_digit(*e))
            return NULL;
        int exponent = 0;
        for (; e < end && number_is_digit(*e); e++)
            if (exponent < 100000) /* saturates far beyond any double */
                exponent = exponent * 10 + (*e - '0');
        q += exponent_negative ? -exponent : exponent;
        integer = false;
        s = e;
    }
    double value;
    if (w == 0)
        value = 0.0;
#if defined(FLT_EVAL_METHOD) && FLT_EVAL_METHOD == 0
    else if (!lost && q >= -22 && q <= 22 && w <= (UINT64_C(1) << 53))
        value = q < 0 ? (double)w / powers[-q] : (double)w * powers[q];
#endif
    else
        value = number_convert(w, q, lost, digits, s, mark);
    (void)powers;
    *flags = 0;
    if (integer && (lost || q > 0 || w > (UINT64_C(1) << 53)))
        *flags |= NUMBER_BIG_INTEGER;
    if (value > DBL_MAX)
        *flags |= NUMBER_OVERFLOW;
    *out = negative ? -value : value;
    return s;
}

#endif

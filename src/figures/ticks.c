/*
 * ticks.c — axis ticks and number words for the figures.
 *
 * Ticks follow P. S. Heckbert, "Nice numbers for graph labels", in Graphics
 * Gems (A. Glassner, ed.), Academic Press 1990, pp. 61–63: the step is the
 * "nice" number (1, 2 or 5 × 10^e) nearest to range / (target − 1), and
 * the axis runs from floor(min / step) to ceil(max / step) steps ("loose"
 * labelling, so the data lie inside). A tick is k × f × 10^e with integers
 * k and f, so its label is written from the integer mantissa m = k f and
 * the exponent e, never from a rounded double.
 */
#include "figures.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char MINUS[] = "\xe2\x88\x92"; /* U+2212 */
static const char *const SUPERSCRIPT[] = {
    "\xe2\x81\xb0", "\xc2\xb9",     "\xc2\xb2",     "\xc2\xb3",     "\xe2\x81\xb4",
    "\xe2\x81\xb5", "\xe2\x81\xb6", "\xe2\x81\xb7", "\xe2\x81\xb8", "\xe2\x81\xb9"};
static const char SUPER_MINUS[] = "\xe2\x81\xbb"; /* U+207B */

/* 10^e; exact for 0 ≤ e ≤ 22, correctly rounded by the library beyond. */
static double power10(int e)
{
    return pow(10.0, (double)e);
}

/* m × 10^e with a single rounding (division by an exact power when e < 0). */
static double scaled(long long m, int e)
{
    return e >= 0 ? (double)m * power10(e) : (double)m / power10(-e);
}

/* Heckbert's nice number: f ∈ {1, 2, 5} and exponent e with f × 10^e near
   x = 2 × half (rounded when round is true, otherwise not below x). Taking
   the half keeps x finite for spans near DBL_MAX. */
static void nice_number(double half, bool round, int *f, int *e)
{
    int exponent = (int)floor(log10(half) + log10(2.0));
    double fraction = half / power10(exponent) * 2.0;
    int nice;
    if (round)
        nice = fraction < 1.5 ? 1 : fraction < 3.0 ? 2 : fraction < 7.0 ? 5 : 10;
    else
        nice = fraction <= 1.0 ? 1 : fraction <= 2.0 ? 2 : fraction <= 5.0 ? 5 : 10;
    if (nice == 10) {
        nice = 1;
        exponent++;
    }
    *f = nice;
    *e = exponent;
}

/* The next step of the 1-2-5 sequence. */
static void next_step(int *f, int *e)
{
    if (*f == 1)
        *f = 2;
    else if (*f == 2)
        *f = 5;
    else {
        *f = 1;
        (*e)++;
    }
}

static void append(char *out, size_t size, const char *text)
{
    size_t used = strlen(out);
    if (used < size)
        snprintf(out + used, size - used, "%s", text);
}

static void append_superscript(char *out, size_t size, int exponent)
{
    char digits[16];
    snprintf(digits, sizeof digits, "%d", exponent < 0 ? -exponent : exponent);
    if (exponent < 0)
        append(out, size, SUPER_MINUS);
    for (const char *p = digits; *p; p++)
        append(out, size, SUPERSCRIPT[*p - '0']);
}

/* |m| written with `decimals` digits after the point (zero-padded). */
static void mantissa_text(char *out, size_t size, unsigned long long m, int decimals)
{
    char digits[32];
    int length = snprintf(digits, sizeof digits, "%llu", m);
    char padded[48] = "";
    for (int i = length; i <= decimals; i++)
        append(padded, sizeof padded, "0");
    append(padded, sizeof padded, digits);
    size_t total = strlen(padded);
    if (decimals > 0) {
        char whole[48];
        snprintf(whole, sizeof whole, "%.*s.%s", (int)(total - (size_t)decimals), padded,
                 padded + total - (size_t)decimals);
        append(out, size, whole);
    } else {
        append(out, size, padded);
    }
}

static int digit_count(unsigned long long m)
{
    int count = 1;
    while (m >= 10) {
        m /= 10;
        count++;
    }
    return count;
}

/* Writes m × 10^e: plain when the axis's largest exponent top lies in
   [−4, 6] and e ≥ −5, otherwise as a mantissa with a common number of
   decimals and ×10^top. */
static void tick_label(char *out, size_t size, long long m, int e, int top)
{
    out[0] = '\0';
    bool plain = e >= -5 && top >= -4 && top <= 6;
    if (m == 0) {
        /* Zero carries the axis's decimals ("0.0"), never trailing zeros. */
        mantissa_text(out, size, 0, plain && e < 0 ? -e : 0);
        return;
    }
    if (m < 0)
        append(out, size, MINUS);
    unsigned long long magnitude =
        m < 0 ? 0ULL - (unsigned long long)m : (unsigned long long)m;
    if (plain) {
        mantissa_text(out, size, magnitude, e < 0 ? -e : 0);
        for (int i = 0; i < e; i++)
            append(out, size, "0");
        return;
    }
    mantissa_text(out, size, magnitude, top - e);
    append(out, size, "\xc3\x97"); /* × */
    append(out, size, "10");
    append_superscript(out, size, top);
}

/* Lays out the ticks for step f × 10^e; false when there would be too many.
   An outer tick beyond ±DBL_MAX is left out and the axis ends there. */
static bool place_ticks(double min, double max, int f, int e, figures_ticks *out)
{
    double step = scaled(f, e);
    double first = floor(min / step + 1e-9), last = ceil(max / step - 1e-9);
    if (!isfinite(step) || !isfinite(first) || !isfinite(last) ||
        last - first + 1 > FIGURES_MAX_TICKS || fabs(first) > 1e15 || fabs(last) > 1e15)
        return false;
    long long k0 = (long long)first, k1 = (long long)last;
    if (k1 == k0)
        k1++;
    unsigned long long biggest = 0;
    for (long long k = k0; k <= k1; k++) {
        unsigned long long m = (unsigned long long)llabs(k * f);
        biggest = m > biggest ? m : biggest;
    }
    int top = e + digit_count(biggest) - 1;
    out->count = 0;
    for (long long k = k0; k <= k1; k++) {
        double value = scaled(k * f, e);
        if (!isfinite(value))
            continue;
        out->values[out->count] = value;
        tick_label(out->labels[out->count], sizeof out->labels[0], k * f, e, top);
        out->count++;
    }
    double lo = scaled(k0 * f, e), hi = scaled(k1 * f, e);
    out->lo = isfinite(lo) ? lo : -DBL_MAX;
    out->hi = isfinite(hi) ? hi : DBL_MAX;
    return out->count >= 2;
}

/* A zero-width (or numerically zero-width) range, widened around its value. */
static void widen(double *min, double *max)
{
    double middle = *min / 2 + *max / 2;
    double half = middle == 0.0 ? 1.0 : fabs(middle) * 0.05;
    *min = middle - half;
    *max = middle + half;
}

void figures_ticks_make(double min, double max, int target, figures_ticks *out)
{
    memset(out, 0, sizeof *out);
    if (!isfinite(min) || !isfinite(max)) {
        min = 0.0;
        max = 1.0;
    }
    if (min > max) {
        double swap = min;
        min = max;
        max = swap;
    }
    if (target < 2)
        target = 2;
    /* Magnitudes near the underflow threshold read as zero. */
    if (fmax(fabs(min), fabs(max)) < 1e-290)
        min = max = 0.0;
    /* Halves keep the span finite for data near ±DBL_MAX. */
    double half_span = max / 2 - min / 2;
    if (half_span <= fmax(fabs(min), fabs(max)) * 1e-12)
        widen(&min, &max);
    half_span = max / 2 - min / 2;
    int f, e;
    nice_number(half_span / (target - 1), true, &f, &e);
    for (int tries = 0; !place_ticks(min, max, f, e, out); tries++) {
        if (tries > 60) { /* cannot happen for finite input; keeps the loop finite */
            place_ticks(0.0, 1.0, 2, -1, out);
            return;
        }
        next_step(&f, &e);
    }
}

void figures_format_number(char *out, size_t size, double value, int digits)
{
    if (digits < 1)
        digits = 1;
    if (digits > 15)
        digits = 15;
    if (size == 0)
        return;
    out[0] = '\0';
    if (!isfinite(value)) {
        append(out, size, isnan(value) ? "not available" : value > 0 ? "∞" : "−∞");
        return;
    }
    if (value == 0.0) {
        append(out, size, "0");
        return;
    }
    /* Rounding to `digits` significant digits through the C library's
       correctly rounded %e, then read back as mantissa and exponent. */
    char text[64];
    snprintf(text, sizeof text, "%.*e", digits - 1, fabs(value));
    unsigned long long m = 0;
    for (const char *p = text; *p && *p != 'e'; p++)
        if (*p >= '0' && *p <= '9')
            m = m * 10 + (unsigned long long)(*p - '0');
    int exponent = atoi(strchr(text, 'e') + 1);
    int e = exponent - (digits - 1);
    if (value < 0)
        append(out, size, MINUS);
    if (exponent >= 7 || exponent < -4) {
        mantissa_text(out, size, m, digits - 1);
        append(out, size,
               "\xc3\x97"
               "10");
        append_superscript(out, size, exponent);
        return;
    }
    mantissa_text(out, size, m, e < 0 ? -e : 0);
    for (int i = 0; i < e; i++)
        append(out, size, "0");
}

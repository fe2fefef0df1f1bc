/*
 * fuzz_number.c — libFuzzer target for the decimal-number parser of the
 * data stage: whenever the bytes are a whole number in the parser's syntax,
 * the double must equal strtod's in the C locale, bit for bit (the same
 * oracle as tests/unit/test_number.c, on inputs the fuzzer invents). Run
 * with `make fuzz`.
 */
#define _GNU_SOURCE /* strtod_l */

#include <assert.h>
#include <locale.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/data/number.h"

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size)
{
    static locale_t c_locale;
    if (!c_locale)
        c_locale = newlocale(LC_ALL_MASK, "C", (locale_t)0);
    if (size > 4096)
        return 0;
    char text[4097];
    memcpy(text, bytes, size);
    text[size] = '\0';
    double value;
    unsigned flags;
    const char *end = number_scan(text, text + size, '.', &value, &flags);
    if (!end || end != text + size || strlen(text) != size)
        return 0;
    double expected = strtod_l(text, NULL, c_locale);
    assert(memcmp(&value, &expected, sizeof value) == 0);
    return 0;
}

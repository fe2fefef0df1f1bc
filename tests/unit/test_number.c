/*
 * test_number.c — the decimal-number parser of the data stage against the
 * C library's strtod in the C locale (strtod_l with a "C" locale object),
 * bit for bit, on edge cases and on about 1.5 million seeded random
 * strings: random digit strings with exponents up to ±350, random doubles
 * printed with 1 to 20 digits, subnormals, near-halfway decimals (the
 * midpoint between two neighbouring doubles, printed with 15 to 45
 * digits), integers around 2^53 and uint64, and long mantissas of up to
 * 800 digits. The same strings are read with a decimal comma, and a share
 * of them with the thread in a German locale (de_DE.UTF-8), where strtod
 * itself would read a comma: the parser must not change.
 */
#define _GNU_SOURCE /* strtod_l */

#include "testkit.h"

#include <locale.h>
#include <stdio.h>
#include <stdlib.h>

#include "../../src/data/number.h"

static locale_t c_locale;
static unsigned long long n_checked;

static uint64_t rng = 0x2545F4914F6CDD1DULL;

/* xorshift64* (Vigna, ACM TOMS 42(2), 2016). */
static uint64_t next_random(void)
{
    rng ^= rng >> 12;
    rng ^= rng << 25;
    rng ^= rng >> 27;
    return rng * 0x2545F4914F6CDD1DULL;
}

static unsigned below(unsigned n)
{
    return (unsigned)(next_random() % n);
}

static double bits_to_double(uint64_t bits)
{
    double d;
    memcpy(&d, &bits, sizeof d);
    return d;
}

/* The parser must read all of text and give strtod's double exactly. */
static void check(const char *text)
{
    size_t n = strlen(text);
    double got = 0, want = strtod_l(text, NULL, c_locale);
    unsigned flags = 0;
    const char *end = number_scan(text, text + n, '.', &got, &flags);
    if (end != text + n || memcmp(&got, &want, sizeof got) != 0)
        fprintf(stderr, "  '%s': got %a (end %td), strtod %a\n", text, got,
                end ? end - text : -1, want);
    assert_ptr_equal(end, text + n);
    assert_memory_equal(&got, &want, sizeof got);
    n_checked++;
}

/* The same with a decimal comma in place of the point. */
static void check_comma(const char *text)
{
    char copy[1024];
    size_t n = strlen(text);
    assert_true(n < sizeof copy);
    for (size_t i = 0; i <= n; i++)
        copy[i] = text[i] == '.' ? ',' : text[i];
    double got = 0, want = strtod_l(text, NULL, c_locale);
    unsigned flags = 0;
    assert_ptr_equal(number_scan(copy, copy + n, ',', &got, &flags), copy + n);
    assert_memory_equal(&got, &want, sizeof got);
}

/* ---- string families ------------------------------------------------------- */

static void random_digits(char *out)
{
    int k = 0;
    if (below(2))
        out[k++] = below(2) ? '-' : '+';
    unsigned digits = 1 + below(25), point = below(digits + 1);
    for (unsigned i = 0; i < digits; i++) {
        if (i == point)
            out[k++] = '.';
        out[k++] = (char)('0' + below(10));
    }
    if (below(2))
        k += sprintf(out + k, "%c%d", below(2) ? 'e' : 'E', (int)below(701) - 350);
    out[k] = '\0';
}

static void random_double(char *out)
{
    double d;
    do
        d = bits_to_double(next_random());
    while (!isfinite(d));
    sprintf(out, "%.*g", 1 + (int)below(20), d);
}

static void random_subnormal(char *out)
{
    double d = bits_to_double(next_random() & 0x800FFFFFFFFFFFFFULL);
    sprintf(out, "%.*e", (int)below(25), d);
}

/* The exact midpoint of two neighbouring doubles (held exactly in long
   double), printed with 15 to 45 significant digits. */
static void near_halfway(char *out)
{
    double d = ldexp((double)(next_random() >> 11), (int)below(2000) - 1100);
    double next = nextafter(d, INFINITY);
    if (!isfinite(next))
        next = d;
    long double mid = ((long double)d + (long double)next) / 2;
    sprintf(out, "%.*Le", 14 + (int)below(31), mid);
}

static void integer_text(char *out)
{
    if (below(2)) {
        uint64_t x = (1ULL << 53) + below(64) - 32;
        sprintf(out, "%s%llu", below(2) ? "-" : "", (unsigned long long)x);
    } else {
        sprintf(out, "%llu", (unsigned long long)(next_random() >> below(64)));
    }
}

/* A random double printed with up to 800 digits (exact expansions). */
static void long_mantissa(char *out)
{
    double d = ldexp((double)(next_random() >> 11), (int)below(300) - 200);
    sprintf(out, "%.*e", 30 + (int)below(770), d);
}

typedef void (*family)(char *out);

static const family families[] = {random_digits, random_double,  random_subnormal,
                                  near_halfway,  integer_text,   long_mantissa};

/* ---- tests ---------------------------------------------------------------------- */

static void test_edge_cases(void **state)
{
    (void)state;
    static const char *const cases[] = {
        "0", "-0", "+0", "0.0", "00000.00000e99999", ".5", "5.", "1", "-1", "9", "10",
        "0.1", "0.2", "0.3", "1e23", "8.98846567431158e307", "9007199254740992",
        "9007199254740993", "9007199254740994", "9007199254740995", "18446744073709551615",
        "18446744073709551616", "123456789012345678901234567890",
        /* the largest and smallest normal and subnormal doubles, and around them */
        "1.7976931348623157e308", "1.7976931348623158e308", "1.7976931348623159e308",
        "2.2250738585072014e-308", "2.2250738585072011e-308", "2.2250738585072009e-308",
        "4.9406564584124654e-324", "2.4703282292062327e-324", "2.4703282292062328e-324",
        "1e-400", "1e400", "1e-350", "1e309", "1e-324", "3e-324",
        /* halfway cases, rounding to even */
        "9007199254740993.0", "9007199254740993.0000000000000000000001",
        "1.00000000000000011102230246251565404236316680908203125",
        "1.000000000000000111022302462515654042363166809082031250000001",
        "1.00000000000000011102230246251565404236316680908203124999999",
        "7.2057594037927933e16",
        "2.225073858507201136057409796709131975934819546351645648e-308",
        "0.000000000000000000000000000000000000000000000000000000000000000000000001234",
        "-8.0e-1", "0.429796848199937E-03", "1e-5", "123.456e-2", "6.02214076e23",
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        check(cases[i]);
        check_comma(cases[i]);
    }
}

static void test_random_strings(void **state)
{
    (void)state;
    char text[1024];
    unsigned long long before = n_checked;
    const unsigned per_family = 250000;
    for (size_t f = 0; f < sizeof families / sizeof families[0]; f++)
        for (unsigned i = 0; i < per_family; i++) {
            families[f](text);
            check(text);
            if (i % 8 == 0)
                check_comma(text);
        }
    printf("  measured: number parser: %llu random strings equal strtod (C locale) bit for "
           "bit\n",
           n_checked - before);
}

/* A locale whose decimal mark is a comma changes neither the parser nor
   its strtod fallback. */
static void test_under_a_german_locale(void **state)
{
    (void)state;
    locale_t german = newlocale(LC_ALL_MASK, "de_DE.UTF-8", (locale_t)0);
    if (!german) {
        printf("  note: locale de_DE.UTF-8 is not installed (Debian: locales-all); the "
               "non-C-locale check was skipped\n");
        return;
    }
    char text[1024];
    unsigned long long before = n_checked;
    locale_t previous = uselocale(german);
    /* strtod itself now reads a comma: "1.5" stops at the point. */
    char *end;
    double local = strtod("1.5", &end);
    bool comma_locale = local == 1.0 && *end == '.';
    for (size_t f = 0; f < sizeof families / sizeof families[0]; f++)
        for (unsigned i = 0; i < 20000; i++) {
            uselocale(c_locale); /* sprintf writes the test string with a point */
            families[f](text);
            uselocale(german);
            check(text);
        }
    uselocale(previous);
    freelocale(german);
    assert_true(comma_locale);
    printf("  measured: number parser: %llu random strings equal strtod (C locale) under "
           "de_DE.UTF-8\n",
           n_checked - before);
}

static void test_flags(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        unsigned flags;
    } cases[] = {
        {"9007199254740992", 0},
        {"-9007199254740992", 0},
        {"9007199254740993", NUMBER_BIG_INTEGER},
        {"-9007199254740993", NUMBER_BIG_INTEGER},
        {"12345678901234567890123", NUMBER_BIG_INTEGER},
        {"000000000000000000000000001", 0},
        {"9007199254740993.0", 0}, /* not an integer literal */
        {"1e300", 0},
        {"1e309", NUMBER_OVERFLOW},
        {"-1e309", NUMBER_OVERFLOW},
        {"1e-400", 0}, /* underflows to zero, as strtod rounds it */
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double value;
        unsigned flags = 99;
        const char *text = cases[i].text;
        assert_non_null(number_scan(text, text + strlen(text), '.', &value, &flags));
        if (flags != cases[i].flags)
            fprintf(stderr, "  '%s': flags %u\n", text, flags);
        assert_int_equal(flags, cases[i].flags);
    }
}

static void test_syntax(void **state)
{
    (void)state;
    static const char *const refused[] = {"", "-", "+", ".", "-.", "e5", ".e5", "1e", "1e+",
                                          "abc", ",5", "--1"};
    for (size_t i = 0; i < sizeof refused / sizeof refused[0]; i++) {
        double value;
        unsigned flags;
        const char *text = refused[i];
        assert_null(number_scan(text, text + strlen(text), '.', &value, &flags));
    }
    /* The number ends where its syntax ends; the caller checks what follows. */
    double value;
    unsigned flags;
    const char *text = "12.5x";
    assert_ptr_equal(number_scan(text, text + 5, '.', &value, &flags), text + 4);
    assert_true(value == 12.5);
    text = "1,5";
    assert_ptr_equal(number_scan(text, text + 3, '.', &value, &flags), text + 1);
    assert_ptr_equal(number_scan(text, text + 3, ',', &value, &flags), text + 3);
    assert_true(value == 1.5);
    /* With a decimal comma, a point is not a decimal mark. */
    text = "1.5";
    assert_ptr_equal(number_scan(text, text + 3, ',', &value, &flags), text + 1);
}

static void test_nonfinite_words(void **state)
{
    (void)state;
    static const char *const words[] = {"nan", "NaN", "NAN", "-nan", "+NaN", "inf", "-Inf",
                                        "INF", "infinity", "-Infinity", " nan "};
    for (size_t i = 0; i < sizeof words / sizeof words[0]; i++)
        assert_true(number_is_nonfinite_word(words[i], strlen(words[i])));
    static const char *const others[] = {"na", "nano", "infinite", "in", "-", "", "n a n"};
    for (size_t i = 0; i < sizeof others / sizeof others[0]; i++)
        assert_false(number_is_nonfinite_word(others[i], strlen(others[i])));
}

static int make_c_locale(void **state)
{
    (void)state;
    c_locale = newlocale(LC_ALL_MASK, "C", (locale_t)0);
    return c_locale ? 0 : -1;
}

static int free_c_locale(void **state)
{
    (void)state;
    freelocale(c_locale);
    return 0;
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_edge_cases),     cmocka_unit_test(test_random_strings),
        cmocka_unit_test(test_under_a_german_locale), cmocka_unit_test(test_flags),
        cmocka_unit_test(test_syntax),         cmocka_unit_test(test_nonfinite_words),
    };
    return cmocka_run_group_tests_name("number", tests, make_c_locale, free_c_locale);
}

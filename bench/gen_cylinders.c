/*
 * gen_cylinders.c — writes a large CSV of the invented concrete-cylinder
 * scenario for the loading benchmark: six columns (four numeric, two
 * categories), seeded, so the same row count always gives the same bytes.
 *
 *   strength_mpa = 62 + 0.15 age - 60 wc + shift(admixture) + shift(plant)
 *                  + noise (a sum of uniforms, roughly normal, sd ~2.5)
 *
 * Usage: gen_cylinders ROWS [SEED] > file.csv
 * The random numbers come from xorshift64* (Vigna, "An experimental
 * exploration of Marsaglia's xorshift generators, scrambled", ACM TOMS 42(2),
 * 2016), written here from the paper's description.
 */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

static uint64_t rng_state;

static uint64_t next_random(void)
{
    rng_state ^= rng_state >> 12;
    rng_state ^= rng_state << 25;
    rng_state ^= rng_state >> 27;
    return rng_state * 0x2545F4914F6CDD1DULL;
}

/* Uniform in [0, 1) from the top 53 bits. */
static double next_uniform(void)
{
    return (double)(next_random() >> 11) * 0x1.0p-53;
}

int main(int argc, char **argv)
{
    if (argc < 2 || argc > 3) {
        fputs("usage: gen_cylinders ROWS [SEED] > file.csv\n", stderr);
        return 2;
    }
    long long rows = atoll(argv[1]);
    rng_state = argc == 3 ? strtoull(argv[2], NULL, 10) : 20261201ULL;
    if (rng_state == 0)
        rng_state = 1;
    static const int ages[] = {3, 7, 14, 28, 56, 90};
    static const char *const admixtures[] = {"none", "plasticizer", "superplasticizer"};
    static const double admixture_shift[] = {0.0, 3.0, 6.0};
    static const char *const plants[] = {"north", "south", "east", "west"};
    static const double plant_shift[] = {0.0, -1.0, 0.5, 1.5};
    static char out[1 << 20];
    setvbuf(stdout, out, _IOFBF, sizeof out);
    fputs("cylinder_id,age_days,wc_ratio,admixture,plant,strength_mpa\n", stdout);
    for (long long id = 1; id <= rows; id++) {
        int age = ages[next_random() % 6];
        int wc_hundredths = 35 + (int)(next_random() % 31); /* 0.35 .. 0.65 */
        int admixture = (int)(next_random() % 3);
        int plant = (int)(next_random() % 4);
        double noise = 0.0;
        for (int k = 0; k < 6; k++)
            noise += next_uniform() - 0.5;
        noise *= 2.5 * 1.41421356; /* sd of a sum of 6 uniforms is 1/sqrt(2) */
        double strength = 62.0 + 0.15 * age - 60.0 * wc_hundredths / 100.0 +
                          admixture_shift[admixture] + plant_shift[plant] + noise;
        printf("%lld,%d,0.%02d,%s,%s,%.1f\n", id, age, wc_hundredths, admixtures[admixture],
               plants[plant], strength);
    }
    return fflush(stdout) == 0 ? 0 : 1;
}

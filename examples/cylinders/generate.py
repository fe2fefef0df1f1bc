#!/usr/bin/env python3
"""Generate examples/cylinders/cylinders.csv for fitproof.

Scenario (invented): a materials lab casts concrete cylinders and crushes
them at a fixed curing age to measure compressive strength. Each cylinder
has a curing age in days, a water/cement ratio, and one of three admixture
treatments (none, plasticizer, superplasticizer). All data are invented for
the fitproof examples and test suite; they describe no real lab or product.

The data are simulated from a known linear model so the fitted report can be
checked against expectations:

    strength_mpa = 62
                 + 0.15 * age_days
                 - 60   * wc_ratio
                 + 3    [admixture = plasticizer]
                 + 6    [admixture = superplasticizer]
                 + 0.01 * age_days [admixture = plasticizer]
                 + 0.04 * age_days [admixture = superplasticizer]
                 + Normal(0, 2.5)

rounded to 1 decimal. Exactly three cells are left blank (one strength_mpa,
one wc_ratio, one admixture, on three different rows) to exercise
missing-value handling.

cylinder_id is an integer 1..150 (a text ID would be read as a category).

Run from the repository root (standard library only; output is
deterministic because the generator is seeded):

    python3 examples/cylinders/generate.py

The CSV is written next to this script, whatever the working directory.
"""

import os
import random

SEED = 20261201
N_ROWS = 150
AGES = (3, 7, 14, 28, 56, 90)
ADMIXTURES = ("none", "plasticizer", "superplasticizer")

INTERCEPT = 62.0
AGE_SLOPE = 0.15
WC_SLOPE = -60.0
ADMIX_SHIFT = {"none": 0.0, "plasticizer": 3.0, "superplasticizer": 6.0}
ADMIX_AGE_EXTRA = {"none": 0.0, "plasticizer": 0.01, "superplasticizer": 0.04}
NOISE_SD = 2.5

HEADER = ("cylinder_id", "age_days", "wc_ratio", "admixture", "strength_mpa")


def main():
    rng = random.Random(SEED)
    rows = []
    for cid in range(1, N_ROWS + 1):
        age = rng.choice(AGES)
        wc = round(rng.uniform(0.35, 0.65), 2)
        admix = rng.choice(ADMIXTURES)
        mean = (INTERCEPT
                + (AGE_SLOPE + ADMIX_AGE_EXTRA[admix]) * age
                + WC_SLOPE * wc
                + ADMIX_SHIFT[admix])
        strength = mean + rng.gauss(0.0, NOISE_SD)
        rows.append([str(cid), str(age), "%.2f" % wc, admix,
                     "%.1f" % strength])

    # Blank exactly three cells, on three different rows.
    blank_rows = rng.sample(range(N_ROWS), 3)
    for row_index, column in zip(blank_rows,
                                 ("strength_mpa", "wc_ratio", "admixture")):
        rows[row_index][HEADER.index(column)] = ""

    out_path = os.path.join(os.path.dirname(os.path.abspath(__file__)),
                            "cylinders.csv")
    with open(out_path, "w", encoding="utf-8", newline="") as f:
        f.write(",".join(HEADER) + "\n")
        for row in rows:
            f.write(",".join(row) + "\n")


if __name__ == "__main__":
    main()

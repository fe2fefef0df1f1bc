#!/usr/bin/python3
"""Seeded generator of a large invented data set for the fit benchmark:
test cylinders (age, water-cement ratio, curing temperature, slump,
admixture, curing method) and their compressive strength.

    /usr/bin/python3 bench/fit/generate.py ROWS OUT.csv
"""
import sys

import numpy as np


def main():
    rows, path = int(sys.argv[1]), sys.argv[2]
    rng = np.random.default_rng(7)
    chunk = 1_000_000
    admixtures = np.array(["none", "plasticizer", "superplasticizer"])
    cures = np.array(["air", "moist"])
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write("age_days,wc_ratio,temp_c,slump_mm,admixture,cure,strength_mpa\n")
        done = 0
        while done < rows:
            n = min(chunk, rows - done)
            age = rng.integers(1, 91, n)
            wc = np.round(rng.uniform(0.35, 0.65, n), 3)
            temp = np.round(rng.normal(21, 3, n), 1)
            slump = rng.integers(40, 200, n)
            adm = rng.integers(0, 3, n)
            cure = rng.integers(0, 2, n)
            strength = (70 - 55 * wc + 6 * np.log(age) + 0.3 * temp + 0.01 * slump
                        + np.array([0, 3, 5])[adm] + 2 * cure + 0.02 * age * (adm == 2)
                        + rng.normal(0, 3, n))
            lines = ["%d,%.3f,%.1f,%d,%s,%s,%.2f" % row for row in zip(
                age.tolist(), wc.tolist(), temp.tolist(), slump.tolist(),
                admixtures[adm].tolist(), cures[cure].tolist(),
                np.round(strength, 2).tolist())]
            f.write("\n".join(lines))
            f.write("\n")
            done += n


if __name__ == "__main__":
    main()

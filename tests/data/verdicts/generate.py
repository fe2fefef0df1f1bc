"""Seeded data for the verdict wording tests (tests/unit/test_verdicts.c).

small.csv   12 rows, y = 2 + 0.5 x + 2 (E - 1) with E exponential(1): skewed
            errors that a 12-row Shapiro-Wilk test can miss.
large.csv   2000 rows in time order t, y = 1 + 0.8 x + 0.3 z + e with mildly
            skewed errors e = u + 0.05 (u^2 - 1), u standard normal: a
            departure a large sample detects but too small to matter.
Run by hand: python3 tests/data/verdicts/generate.py (standard library only).
"""
import os
import random

HERE = os.path.dirname(os.path.abspath(__file__))


def small():
    rng = random.Random(20261202)
    rows = []
    for i in range(12):
        x = round(rng.uniform(0, 10), 2)
        e = 2.0 * (rng.expovariate(1.0) - 1.0)
        rows.append((round(2 + 0.5 * x + e, 3), x))
    with open(os.path.join(HERE, "small.csv"), "w") as f:
        f.write("y,x\n")
        for y, x in rows:
            f.write("%s,%s\n" % (y, x))


def large():
    rng = random.Random(7)
    with open(os.path.join(HERE, "large.csv"), "w") as f:
        f.write("t,y,x,z\n")
        for t in range(1, 2001):
            x = round(rng.uniform(0, 10), 3)
            z = round(rng.gauss(0, 2), 3)
            u = rng.gauss(0, 1)
            e = u + 0.05 * (u * u - 1)
            f.write("%d,%s,%s,%s\n" % (t, round(1 + 0.8 * x + 0.3 * z + e, 4), x, z))


small()
large()

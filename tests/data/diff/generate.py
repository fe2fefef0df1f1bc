#!/usr/bin/env python3
"""Make the "next month" data for the tests of `fitproof diff`.

Scenario (invented): the tablet line of examples/tablets runs another 24
samples (10% more rows) after press C was serviced, and press C now makes
tablets about 25 N harder at the same settings. The earlier rows are kept
unchanged, so the later file holds the earlier one plus 24 rows.

Writes tablets_next.csv beside this script; standard library only, seeded,
so the bytes are the same on every run. Regenerate with
`python3 tests/data/diff/generate.py` from the repository root.
"""

import csv
import os
import random

SEED = 20261202
NEW_ROWS = 24
# The model of examples/tablets/generate.py, with press C shifted.
INTERCEPT, FORCE, SPEED, MOISTURE = 96.0, 6.0, -0.035, -12.0
PRESS = {"A": 0.0, "B": 5.0, "C": -4.0 + 25.0}


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    root = os.path.dirname(os.path.dirname(os.path.dirname(here)))
    with open(os.path.join(root, "examples", "tablets", "tablets.csv"),
              encoding="utf-8", newline="") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    rng = random.Random(SEED)
    error = 0.0
    last = int(body[-1][0])
    for k in range(1, NEW_ROWS + 1):
        press = rng.choice(sorted(PRESS))
        force = round(rng.uniform(11.0, 16.0), 1)
        speed = int(round(rng.uniform(900.0, 1500.0)))
        moisture = round(2.4 + rng.gauss(0.0, 0.07), 2)
        error = 0.65 * error + rng.gauss(0.0, 4.0)
        hardness = (INTERCEPT + FORCE * force + SPEED * speed
                    + MOISTURE * moisture + PRESS[press] + error)
        body.append([str(last + k), "production", press, "%.1f" % force,
                     str(speed), "%.2f" % moisture, "%.1f" % hardness])
    with open(os.path.join(here, "tablets_next.csv"), "w", encoding="utf-8",
              newline="") as f:
        csv.writer(f, lineterminator="\n").writerows([header] + body)


if __name__ == "__main__":
    main()

#!/usr/bin/python3
# Writes the rows of an invented scenario for the cross-shard tests and the
# pushdown bench: tensile strength (MPa) of coated steel coupons from two
# plants, by oven temperature (degC), hours in the oven and oven line (a
# category of three). Every number is written with a fixed count of
# decimals, so that PostgreSQL's numeric column and fitproof's CSV reader
# read the same value. Column "line" gives the run's order and is each
# row's line in the CSV file (2 … N+1), so that a database source keyed by
# it names the rows as the file does. Plant north holds the first half,
# plant south the rest, and each plant's rows go to its own shard file.
#
#   gen_coupons.py ROWS CSV SHARD1 SHARD2
#
# CSV gets a header and every row; SHARD1 and SHARD2 get the same rows
# without a header, split by plant, in the text format of COPY. The
# sequence depends only on ROWS and the seed below (Python's Mersenne
# Twister, the same on every machine).
import random
import sys


def main():
    rows = int(sys.argv[1])
    rng = random.Random(18)
    ovens = ("east", "middle", "west")
    shift = {"east": 0.0, "middle": 3.5, "west": -2.25}
    half = rows // 2
    with open(sys.argv[2], "w") as csv, open(sys.argv[3], "w") as one, \
            open(sys.argv[4], "w") as two:
        csv.write("line,plant,oven,temp_c,hours,strength_mpa\n")
        drift = 0.0
        for line in range(2, rows + 2):
            plant = "north" if line <= half + 1 else "south"
            oven = ovens[rng.randrange(3)]
            temp = round(rng.uniform(160.0, 220.0), 1)
            hours = round(rng.uniform(0.5, 4.0), 2)
            # a slowly wandering offset: the run has some memory
            drift = 0.9 * drift + rng.gauss(0.0, 0.4)
            strength = (412.0 + 0.85 * (temp - 190.0) + 6.2 * hours
                        - 0.9 * hours * hours + shift[oven]
                        + (1.5 if plant == "south" else 0.0)
                        + drift + rng.gauss(0.0, 2.0))
            values = (line, plant, oven, "%.1f" % temp, "%.2f" % hours,
                      "%.3f" % strength)
            csv.write("%d,%s,%s,%s,%s,%s\n" % values)
            (one if plant == "north" else two).write("%d\t%s\t%s\t%s\t%s\t%s\n" % values)


main()

#!/usr/bin/python3
# The cross-products of one regression design (intercept, temp_c, hours,
# hours², oven middle, oven west, plant south, strength_mpa) for the
# coupon rows of gen_coupons.py, as a partitioned table's aggregate and as
# exact sums computed here from the CSV file with Python's integers (every
# value times a power of ten is a whole number), to check that the sums
# PostgreSQL's shards return and the coordinator adds up lose nothing.
#
#   exact_sums.py sql TABLE       prints the SQL (one row of sums)
#   exact_sums.py check CSV OUT   OUT: psql -At output of that SQL;
#                                 exit 1 unless every sum is exact
#
# The SQL groups by the partition key (plant) inside and adds the groups'
# sums outside: grouped by the partition key, each group's aggregate can be
# computed whole on the shard holding the partition (docs/shards.md).
import csv
import sys
from decimal import Decimal
from operator import mul

# (SQL expression, decimals of its values)
COLUMNS = [
    ("1", 0),
    ("temp_c", 1),
    ("hours", 2),
    ("hours * hours", 4),
    ("CASE WHEN oven = 'middle' THEN 1 ELSE 0 END", 0),
    ("CASE WHEN oven = 'west' THEN 1 ELSE 0 END", 0),
    ("CASE WHEN plant = 'south' THEN 1 ELSE 0 END", 0),
    ("strength_mpa", 3),
]


def pairs():
    return [(i, j) for i in range(len(COLUMNS)) for j in range(i, len(COLUMNS))]


def sql(table):
    inner = ", ".join("sum((%s) * (%s)) AS s%d_%d" % (COLUMNS[i][0], COLUMNS[j][0], i, j)
                      for i, j in pairs())
    outer = ", ".join("sum(s%d_%d)" % (i, j) for i, j in pairs())
    return "SELECT %s FROM (SELECT plant, %s FROM %s GROUP BY plant) AS partials" % (
        outer, inner, table)


def scaled(text, decimals):
    whole, _, fraction = text.partition(".")
    assert len(fraction) == decimals, text
    return int(whole + fraction)


def exact(path):
    temp, hours, middle, west, south, strength = [], [], [], [], [], []
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            temp.append(scaled(row["temp_c"], 1))
            hours.append(scaled(row["hours"], 2))
            middle.append(1 if row["oven"] == "middle" else 0)
            west.append(1 if row["oven"] == "west" else 0)
            south.append(1 if row["plant"] == "south" else 0)
            strength.append(scaled(row["strength_mpa"], 3))
    values = [[1] * len(temp), temp, hours, list(map(mul, hours, hours)),
              middle, west, south, strength]
    return [Decimal(sum(map(mul, values[i], values[j]))).scaleb(-COLUMNS[i][1] - COLUMNS[j][1])
            for i, j in pairs()]


def check(path, out):
    with open(out) as f:
        got = [Decimal(v) for v in f.read().strip().split("|")]
    want = exact(path)
    if len(got) != len(want):
        sys.exit("%d sums returned, %d expected" % (len(got), len(want)))
    wrong = [(p, g, w) for p, g, w in zip(pairs(), got, want) if g != w]
    for (i, j), g, w in wrong:
        print("sum of %s times %s: %s, exactly %s" % (COLUMNS[i][0], COLUMNS[j][0], g, w))
    if wrong:
        sys.exit(1)
    print("measured: %d sums over %d rows exact" % (len(want), want[0]))


if sys.argv[1:2] == ["sql"] and len(sys.argv) == 3:
    print(sql(sys.argv[2]))
elif sys.argv[1:2] == ["check"] and len(sys.argv) == 4:
    check(sys.argv[2], sys.argv[3])
else:
    sys.exit("usage: exact_sums.py sql TABLE | check CSV OUT")

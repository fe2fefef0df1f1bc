#!/usr/bin/python3
# Compares two fitproof results.json files of the same spec built from
# different sources (a CSV file, PostgreSQL rows streamed, sums computed in
# PostgreSQL): every whole number (counts, rows flagged, degrees of
# freedom, row lines) must be equal, every other number must agree to
# DIGITS significant digits, every
# text (verdicts, labels, flag reasons), every true/false and null, every
# list length (flagged rows, levels) and every key must be the same. Keys
# that say where the rows came from are left out: the data's path and
# digest, and the pushdown account, which only one side has.
#
#   compare_results.py A B [DIGITS]
#
# Prints "measured: N numbers agree to at least D significant digits" and
# exits 0, or prints each difference (at most 20) and exits 1.
import json
import math
import sys

SOURCE_KEYS = {"path", "sha256", "pushdown", "source", "query", "server", "timings"}
# Below this both sides count as zero: an underflowed p-value is 0 in one
# computation and a few ulps of the smallest double in another.
TINY = 1e-290


def digits_of_agreement(a, b):
    if a == b:
        return math.inf
    scale = max(abs(a), abs(b))
    if scale < TINY:
        return math.inf
    if math.isnan(a) or math.isnan(b) or math.isinf(a) or math.isinf(b):
        return -math.inf
    return -math.log10(abs(a - b) / scale)


class Comparison:
    def __init__(self, digits):
        self.digits = digits
        self.numbers = 0
        self.worst = math.inf
        self.worst_at = ""
        self.differences = []

    def differ(self, where, what):
        self.differences.append("%s: %s" % (where or "/", what))

    def walk(self, a, b, where):
        if isinstance(a, bool) or isinstance(b, bool) or a is None or b is None \
                or isinstance(a, str) or isinstance(b, str):
            if a != b or type(a) is not type(b):
                self.differ(where, "%r against %r" % (a, b))
        elif isinstance(a, int) and isinstance(b, int):
            # counts (rows used, rows flagged, degrees of freedom) exactly
            self.numbers += 1
            if a != b:
                self.differ(where, "%d against %d" % (a, b))
        elif isinstance(a, (int, float)) and isinstance(b, (int, float)):
            self.numbers += 1
            agree = digits_of_agreement(float(a), float(b))
            if agree < self.worst:
                self.worst, self.worst_at = agree, where
            if agree < self.digits:
                self.differ(where, "%r against %r (%.1f digits)" % (a, b, agree))
        elif isinstance(a, list) and isinstance(b, list):
            if len(a) != len(b):
                self.differ(where, "%d entries against %d" % (len(a), len(b)))
            for i, (x, y) in enumerate(zip(a, b)):
                self.walk(x, y, "%s[%d]" % (where, i))
        elif isinstance(a, dict) and isinstance(b, dict):
            for key in sorted(set(a) | set(b)):
                if key in SOURCE_KEYS:
                    continue
                if key not in a or key not in b:
                    self.differ(where, "key %r only in %s" % (key, "B" if key in b else "A"))
                else:
                    self.walk(a[key], b[key], "%s/%s" % (where, key))
        else:
            self.differ(where, "%s against %s" % (type(a).__name__, type(b).__name__))


def main():
    if len(sys.argv) not in (3, 4):
        sys.exit("usage: compare_results.py A B [DIGITS]")
    with open(sys.argv[1]) as fa, open(sys.argv[2]) as fb:
        a, b = json.load(fa), json.load(fb)
    comparison = Comparison(float(sys.argv[3]) if len(sys.argv) == 4 else 10.0)
    comparison.walk(a, b, "")
    if comparison.differences:
        for line in comparison.differences[:20]:
            print(line)
        print("%d differences in %d numbers" % (len(comparison.differences), comparison.numbers))
        sys.exit(1)
    worst = "all identical" if comparison.worst == math.inf else \
        "at least %.1f significant digits (least at %s)" % (comparison.worst, comparison.worst_at)
    print("measured: %d numbers agree: %s" % (comparison.numbers, worst))


main()

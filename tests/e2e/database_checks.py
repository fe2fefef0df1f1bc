#!/usr/bin/python3
# The diagnostics' values computed in the database (results.json
# models[0].pushdown) against the same values from an in-process build of
# the same rows (a CSV build, whose residuals_MODEL.csv gives every row's
# studentized residual): the residuals' skewness and excess kurtosis
# (pass two's power sums), the largest leverage, Breusch-Pagan (on the
# model's columns, the variance columns or the design's columns without the
# weights, when computed there), RESET, the largest |studentized
# residual| and Cook's distance (pass two) and, with --durbin-watson,
# Durbin-Watson d (pass three), each to 10 significant digits (relative
# difference at most 5e-11); the rows each influence flag rule counts
# identical; pass one's ranges of the numeric predictors identical to the
# model's own; and the top-rows pass's 25 rows with the largest Cook's
# distance (keys and distances) against the pushdown build's own list
# from its streamed rows, whose line is the key: the same keys in the same
# order (two rows may swap only where their distances agree to 10 digits),
# each distance to 10 significant digits.
#
#   database_checks.py CSV_RESULTS PUSHDOWN_RESULTS LABEL [--durbin-watson]
#       [--perturb NAME]
#
# --perturb multiplies the database's value NAME by 1 + 1e-9 (a count:
# adds one) first, so that a test can see the check fail. Prints one
# "measured:" line per value and exits 1 when any differs.
import csv as csvfile
import glob
import json
import os
import sys

args = sys.argv[1:]
csv, pd = (json.load(open(p))["models"][0] for p in args[0:2])
label = args[2]
db, diag = pd["pushdown"], csv["diagnostics"]
checks = [("skewness", db["moments"]["skewness"], diag["moments"]["skewness"]),
          ("excess_kurtosis", db["moments"]["excess_kurtosis"],
           diag["moments"]["excess_kurtosis"]),
          # the hat value w xᵀ(XᵀWX)⁻¹x: the influence's, not fit.max_leverage,
          # which is before the weight
          ("max leverage", db["max_leverage"], diag["influence"]["max_leverage"])]
if "--durbin-watson" in args:
    checks.append(("Durbin-Watson d", db["durbin_watson"], diag["durbin_watson"]["d"]))
if db["breusch_pagan"] is not None:
    for form in ("studentized", "original"):
        checks.append(("Breusch-Pagan %s" % form, db["breusch_pagan"][form]["statistic"],
                       diag["breusch_pagan"][form]["statistic"]))
checks.append(("RESET F", db["reset"]["f"], diag["reset"]["f"]))
checks.append(("RESET cohen_f2", db["reset"]["cohen_f2"], diag["reset"]["cohen_f2"]))
# every row's externally studentized residual, from the in-process build
residuals = glob.glob(os.path.join(os.path.dirname(args[0]), "residuals_*.csv"))[0]
with open(residuals, newline="") as f:
    rows = list(csvfile.DictReader(f))
largest = max(abs(float(r["studentized_residual"])) for r in rows if r["studentized_residual"])
checks.append(("max |studentized residual|",
               db["influence"]["max_abs_studentized_residual"], largest))
checks.append(("max Cook's distance", db["influence"]["max_cooks_distance"],
               diag["influence"]["max_cooks_distance"]))
counts = [("rows %s" % a["id"], a["rows"], b["rows"])
          for a, b in zip(db["influence"]["rules"], diag["influence"]["rules"])]
# pass one's ranges of the numeric predictors, exactly (data values)
ranges = [("%s %s" % (mine["column"], end), theirs[end], mine[end])
          for mine, theirs in zip(csv["ranges"], db["ranges"]) for end in ("min", "max")]
if len(db["ranges"]) != len(csv["ranges"]) or not ranges:
    print("  %s ranges: %d from the database, %d in process" % (label, len(db["ranges"]), len(csv["ranges"])))
    sys.exit(1)
top_db = [(r["key"], r["cooks_distance"]) for r in db["most_influential"]]
top_rows = [(str(r["line"]), r["cooks_distance"])
            for r in pd["diagnostics"]["influence"]["most_influential"]]
if "--perturb" in args:
    name = args[args.index("--perturb") + 1]
    checks = [(n, a * (1 + 1e-9) if n == name else a, b) for n, a, b in checks]
    counts = [(n, a + 1 if n == name else a, b) for n, a, b in counts]
    if name == "top rows":
        top_db[0] = ("0", top_db[0][1])
    ranges = [(n, a * (1 + 1e-15) if n == name else a, b) for n, a, b in ranges]
bad = len(top_db) != len(top_rows) or len(top_db) == 0
for k, ((key_db, d_db), (key, d)) in enumerate(zip(top_db, top_rows)):
    tie = abs(d_db - d) <= 5e-11 * abs(d)
    if key_db != key:
        other = dict(top_rows).get(key_db)
        tie = tie and other is not None and abs(other - d_db) <= 5e-11 * abs(d_db)
    bad = bad or not tie
    if k < 3 or not tie:
        print("  measured: %s top row %d key %s Cook's distance %.15g, in process key %s %.15g"
              % (label, k + 1, key_db, d_db, key, d))
print("  measured: %s top rows from the database: %d, in process %d"
      % (label, len(top_db), len(top_rows)))
for name, a, b in checks:
    print("  measured: %s %s %.15g, in process %.15g" % (label, name, a, b))
    bad = bad or abs(a - b) > 5e-11 * abs(b)
for name, a, b in ranges:
    print("  measured: %s range %s %.17g, in process %.17g" % (label, name, a, b))
    bad = bad or a != b
for name, a, b in counts:
    print("  measured: %s %s %d, in process %d" % (label, name, a, b))
    bad = bad or a != b
sys.exit(bad)

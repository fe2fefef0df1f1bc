#!/usr/bin/python3
# The diagnostics' values computed in the database (results.json
# models[0].pushdown) against the same values from an in-process build of
# the same rows (a CSV build): the residuals' skewness and excess kurtosis
# (pass two's power sums), the largest leverage (pass two) and, with
# --durbin-watson, Durbin–Watson d (pass three), each to 10 significant
# digits (relative difference at most 5e-11).
#
#   database_checks.py CSV_RESULTS PUSHDOWN_RESULTS LABEL [--durbin-watson]
#
# Prints one "measured:" line per value and exits 1 when any differs.
import json
import sys

csv, pd = (json.load(open(p))["models"][0] for p in sys.argv[1:3])
label = sys.argv[3]
checks = [("%s skewness" % label, pd["pushdown"]["moments"]["skewness"],
           csv["diagnostics"]["moments"]["skewness"]),
          ("%s excess_kurtosis" % label, pd["pushdown"]["moments"]["excess_kurtosis"],
           csv["diagnostics"]["moments"]["excess_kurtosis"]),
          ("%s max leverage" % label, pd["pushdown"]["max_leverage"], csv["fit"]["max_leverage"])]
if "--durbin-watson" in sys.argv[4:]:
    checks.append(("%s Durbin-Watson d" % label, pd["pushdown"]["durbin_watson"],
                   csv["diagnostics"]["durbin_watson"]["d"]))
bad = False
for name, a, b in checks:
    print("  measured: %s %.15g, in process %.15g" % (name, a, b))
    bad = bad or abs(a - b) > 5e-11 * abs(b)
sys.exit(bad)

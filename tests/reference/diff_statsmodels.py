#!/usr/bin/python3
"""Reference values for the tests of `fitproof diff`: the tablets example
(examples/tablets/tablets.csv) against the "next month" data
(tests/data/diff/tablets_next.csv, made by tests/data/diff/generate.py).

Refits the example's model on the production rows of each file with
statsmodels OLS, with the design built by hand (treatment coding, press A
the reference level, no formula strings):

    hardness_n ~ intercept + compression_force_kn + press_speed_tpm
                 + granule_moisture_pct + [press = B] + [press = C]

and writes tests/reference/diff.expected.tsv: per coefficient, in the
model's order, the earlier and later estimate and standard error, the
change in combined standard errors (b_new - b_old) / sqrt(se_old^2 +
se_new^2) and whether it exceeds 1; then, for the checks the example
declares on normality and constant variance, whether each passes at the
5% level in each run (scipy's Shapiro-Wilk, statsmodels' studentized
Breusch-Pagan on the model's own columns).

Run by hand, NOT by `make test` (which needs no Python):

    /usr/bin/python3 tests/reference/diff_statsmodels.py
"""

import csv
import math
import os

import numpy as np
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm
from statsmodels.stats.diagnostic import het_breuschpagan

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
OLD = os.path.join(ROOT, "examples", "tablets", "tablets.csv")
NEW = os.path.join(ROOT, "tests", "data", "diff", "tablets_next.csv")
OUT = os.path.join(HERE, "diff.expected.tsv")


def fit(path):
    with open(path, encoding="utf-8", newline="") as f:
        rows = [r for r in csv.DictReader(f) if r["phase"] == "production"]
    X = np.array([[1.0, float(r["compression_force_kn"]),
                   float(r["press_speed_tpm"]),
                   float(r["granule_moisture_pct"]),
                   1.0 if r["press"] == "B" else 0.0,
                   1.0 if r["press"] == "C" else 0.0] for r in rows])
    y = np.array([float(r["hardness_n"]) for r in rows])
    result = sm.OLS(y, X).fit()
    normal = scipy.stats.shapiro(result.resid).pvalue >= 0.05
    constant = het_breuschpagan(result.resid, X)[1] >= 0.05
    return result, normal, constant


def main():
    old, old_normal, old_constant = fit(OLD)
    new, new_normal, new_constant = fit(NEW)
    lines = ["# statsmodels %s, numpy %s, scipy %s" % (
        statsmodels.__version__, np.__version__, scipy.__version__),
        "# index\told_estimate\told_se\tnew_estimate\tnew_se\tshift_in_se\tmoved"]
    for k in range(len(old.params)):
        shift = (new.params[k] - old.params[k]) / math.hypot(old.bse[k], new.bse[k])
        lines.append("%d\t%.17g\t%.17g\t%.17g\t%.17g\t%.17g\t%d" % (
            k, old.params[k], old.bse[k], new.params[k], new.bse[k], shift,
            abs(shift) > 1))
    lines.append("check\tresiduals consistent with a normal distribution\t%d\t%d" % (
        old_normal, new_normal))
    lines.append("check\tresidual spread the same across the range\t%d\t%d" % (
        old_constant, new_constant))
    with open(OUT, "w", encoding="utf-8") as f:
        f.write("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()

#!/usr/bin/python3
"""Reference values for the fitproof test suite: the figures stage.

Writes tests/reference/figures.expected.json with

  band       scipy's Beta quantiles mapped through the normal quantile
             function: the pointwise band of the i-th of n standard normal
             order statistics, Phi^-1(Beta(i, n - i + 1).ppf(q));
  influence  statsmodels' OLS influence measures (hat values, internally
             studentized residuals, Cook's distances) for the bundled
             cylinders example, the same model as cylinders_statsmodels.py.

Run by hand, NOT by `make test`; the output is committed with the library
versions recorded in it. Needs Debian's python3 with python3-statsmodels:

    /usr/bin/python3 tests/reference/figures_reference.py
"""

import csv
import json
import os

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
REPO_ROOT = os.path.dirname(os.path.dirname(HERE))
CSV_PATH = os.path.join(REPO_ROOT, "examples", "cylinders", "cylinders.csv")
OUT_PATH = os.path.join(HERE, "figures.expected.json")


def band_case():
    cases = []
    for n in (5, 40, 150, 1000, 100000):
        for i in sorted({0, 1, n // 10, n // 2, n - 1}):
            a, b = i + 1, n - i
            lo = stats.norm.ppf(stats.beta.ppf(0.025, a, b))
            hi = stats.norm.ppf(stats.beta.ppf(0.975, a, b))
            cases.append({"n": n, "i": i, "level": 0.95, "lo": lo, "hi": hi})
    return cases


def influence_case():
    rows = []
    with open(CSV_PATH, newline="") as f:
        for line, record in enumerate(csv.DictReader(f), start=2):
            if any(record[k].strip() == "" for k in
                   ("age_days", "wc_ratio", "admixture", "strength_mpa")):
                continue
            rows.append(record)
    age = np.array([float(r["age_days"]) for r in rows])
    wc = np.array([float(r["wc_ratio"]) for r in rows])
    y = np.array([float(r["strength_mpa"]) for r in rows])
    plast = np.array([r["admixture"] == "plasticizer" for r in rows], float)
    superp = np.array([r["admixture"] == "superplasticizer" for r in rows],
                      float)
    x = np.column_stack([np.ones_like(age), age, wc, plast, superp,
                         age * plast, age * superp])
    influence = sm.OLS(y, x).fit().get_influence()
    return {"hat": influence.hat_matrix_diag.tolist(),
            "studentized_internal": influence.resid_studentized_internal.tolist(),
            "cooks": influence.cooks_distance[0].tolist()}


def main():
    out = {
        "generated_by": "tests/reference/figures_reference.py with statsmodels "
                        "%s, scipy %s, numpy %s" % (statsmodels.__version__,
                                                     scipy.__version__,
                                                     np.__version__),
        "band": band_case(),
        "influence": influence_case(),
    }
    with open(OUT_PATH, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()

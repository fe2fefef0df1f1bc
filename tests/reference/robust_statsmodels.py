#!/usr/bin/python3
"""Reference values for tests that follow the covariance (tests/unit/test_robust.c).

1. Generates invented data, seeded, and writes tests/data/robust/robust.csv:
   120 rows in time order t (shuffled in the file, so that the order comes
   from the column), numeric x and z, a category g (a, b, c), response
   y = 2 + 0.8 x - 0.5 z + level effects + 0.3 x [g = c] + e with AR(1)
   errors (rho 0.5) whose spread grows with x.
2. Builds the design BY HAND with numpy, in fitproof's coding (levels in
   byte order, the first the reference; interactions are products) and
   fits with statsmodels OLS under cov_type HC0, HC1, HC2, HC3 and HAC
   (Bartlett kernel, maxlags L, rows sorted by t; use_correction False,
   which is statsmodels' default), with use_t=True.
3. Records per covariance: standard errors; the Wald F test of each term
   given the others and in order (the sub-model fitted under the same
   cov_type, then wald_test(R, use_f=True)); the overall Wald test of every
   coefficient but the intercept; and for HC3 the Wald test of g and x:g in
   the full model (the comparison of [x, z] with [x, z, g, x:g]).

Run by hand with Debian's interpreter (needs python3-statsmodels); NOT run
by `make test`:

    /usr/bin/python3 tests/reference/robust_statsmodels.py
"""

import json
import math
import os
import random

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
DATA = os.path.join(ROOT, "tests", "data", "robust", "robust.csv")
OUT = os.path.join(HERE, "robust.expected.json")
LAGS = 3


def generate():
    rng = random.Random(1212)
    rows = []
    e = 0.0
    for t in range(1, 121):
        x = round(rng.uniform(0, 10), 3)
        z = round(rng.gauss(5, 2), 3)
        g = "abc"[rng.randrange(3)]
        e = 0.5 * e + rng.gauss(0, 0.3 + 0.15 * x)
        y = 2 + 0.8 * x - 0.5 * z + {"a": 0, "b": 1.0, "c": -0.5}[g] + 0.3 * x * (g == "c") + e
        rows.append((t, round(y, 4), x, z, g))
    rng.shuffle(rows)
    with open(DATA, "w") as f:
        f.write("t,y,x,z,g\n")
        for r in rows:
            f.write("%d,%s,%s,%s,%s\n" % r)
    rows.sort()
    return rows


# Terms: x, z, g, x:g; columns: (intercept), x, z, g=b, g=c, x*g=b, x*g=c.
TERMS = ["x", "z", "g", "x:g"]
COLUMN_TERM = [None, 0, 1, 2, 2, 3, 3]


def design(rows):
    X = []
    for t, y, x, z, g in rows:
        b, c = float(g == "b"), float(g == "c")
        X.append([1.0, x, z, b, c, x * b, x * c])
    return np.array(X), np.array([r[1] for r in rows])


def contains(big, small):
    cols = {"x": {"x"}, "z": {"z"}, "g": {"g"}, "x:g": {"x", "g"}}
    return cols[small] < cols[big]


def fit(X, y, cov):
    model = sm.OLS(y, X)
    if cov == "HAC":
        return model.fit(cov_type="HAC", cov_kwds={"maxlags": LAGS}, use_t=True)
    return model.fit(cov_type=cov, use_t=True)


def wald(X, y, cols, tested, cov):
    sub = X[:, cols]
    res = fit(sub, y, cov)
    R = np.zeros((len(tested), len(cols)))
    for i, c in enumerate(tested):
        R[i, cols.index(c)] = 1.0
    w = res.wald_test(R, use_f=True, scalar=True)
    return {"f": float(w.statistic), "df_num": float(w.df_num),
            "df_den": float(w.df_denom), "p": float(w.pvalue)}


def main():
    rows = generate()
    X, y = design(rows)
    out = {"versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__,
                        "scipy": scipy.__version__},
           "lags": LAGS, "kinds": {}}
    for cov in ["HC0", "HC1", "HC2", "HC3", "HAC"]:
        res = fit(X, y, cov)
        entry = {"std_errors": [float(v) for v in res.bse],
                 "p": [float(v) for v in res.pvalues],
                 "marginal": [], "sequential": []}
        for k, term in enumerate(TERMS):
            tested = [c for c, tt in enumerate(COLUMN_TERM) if tt == k]
            keep = [c for c, tt in enumerate(COLUMN_TERM)
                    if tt is None or not contains(TERMS[tt], term)]
            entry["marginal"].append(wald(X, y, keep, tested, cov))
            upto = [c for c, tt in enumerate(COLUMN_TERM) if tt is None or tt <= k]
            entry["sequential"].append(wald(X, y, upto, tested, cov))
        entry["overall"] = wald(X, y, list(range(7)), list(range(1, 7)), cov)
        entry["compare"] = wald(X, y, list(range(7)), [3, 4, 5, 6], cov)
        out["kinds"][cov] = entry
    # The lag rule for this n.
    out["lag_rule"] = int(math.floor(4 * (len(rows) / 100) ** (2 / 9)))
    with open(OUT, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


main()

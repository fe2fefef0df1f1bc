#!/usr/bin/python3
"""Reference values for the term tests of a wide design (tests/unit/test_wide.c).

1. Generates invented data, seeded, and writes tests/data/wide/wide.csv:
   600 rows, a category site with 300 levels (s000 … s299, two rows each),
   a numeric x, response y = 1 + 0.01 site + 0.5 x + e, e ~ N(0, 1 + 0.2 x).
2. Builds the design BY HAND with numpy in fitproof's coding (levels in
   byte order, the first the reference), 301 coefficients, and records
   with statsmodels OLS: the classical F test of each term in order and
   given the others (RSS of the sub-models, F on the full model's σ²), and
   the HC3 Wald test of each term in order (the sub-model fitted with
   cov_type HC3, then wald_test(R, use_f=True)).

Run by hand with Debian's interpreter (needs python3-statsmodels); NOT run
by `make test`:

    /usr/bin/python3 tests/reference/wide_statsmodels.py
"""

import json
import os
import random

import numpy as np
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
DATA = os.path.join(ROOT, "tests", "data", "wide", "wide.csv")
OUT = os.path.join(HERE, "wide.expected.json")
LEVELS = 300


def generate():
    rng = random.Random(1515)
    rows = []
    for i in range(2 * LEVELS):
        s = i % LEVELS
        x = round(rng.uniform(0, 10), 4)
        y = round(1 + 0.01 * s + 0.5 * x + rng.gauss(0, 1 + 0.2 * x), 4)
        rows.append(("s%03d" % s, x, y))
    with open(DATA, "w") as f:
        f.write("site,x,y\n")
        for r in rows:
            f.write("%s,%.4f,%.4f\n" % r)
    return rows


def main():
    rows = generate()
    n = len(rows)
    y = np.array([r[2] for r in rows])
    X = np.zeros((n, 1 + (LEVELS - 1) + 1))
    X[:, 0] = 1.0
    for i, r in enumerate(rows):
        s = int(r[0][1:])
        if s > 0:
            X[i, s] = 1.0
        X[i, LEVELS] = r[1]
    site = list(range(1, LEVELS))
    xcol = [LEVELS]
    full = sm.OLS(y, X).fit()
    sigma2 = full.ssr / full.df_resid

    def rss(cols):
        return sm.OLS(y, X[:, cols]).fit().ssr

    def f_test(cols0, cols1, df):
        f = ((rss(cols0) - rss(cols1)) / df) / sigma2
        return {"f": f, "df": df, "p": scipy.stats.f.sf(f, df, full.df_resid)}

    def hc3_wald(cols, tested):
        res = sm.OLS(y, X[:, cols]).fit(cov_type="HC3", use_t=True)
        R = np.zeros((len(tested), len(cols)))
        for a, c in enumerate(tested):
            R[a, cols.index(c)] = 1.0
        w = res.wald_test(R, use_f=True, scalar=True)
        return {"f": float(w.fvalue), "df": len(tested), "p": float(w.pvalue)}

    out = {
        "source": "statsmodels %s, numpy %s, scipy %s" % (statsmodels.__version__,
                                                          np.__version__, scipy.__version__),
        "sequential": [f_test([0], [0] + site, LEVELS - 1),
                       f_test([0] + site, [0] + site + xcol, 1)],
        "marginal": [f_test([0] + xcol, [0] + site + xcol, LEVELS - 1),
                     f_test([0] + site, [0] + site + xcol, 1)],
        "hc3_sequential": [hc3_wald([0] + site, site),
                           hc3_wald([0] + site + xcol, xcol)],
    }
    with open(OUT, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()

#!/usr/bin/python3
"""Reference values for the fitproof test suite: the summaries the
diagnostic figures draw.

Writes tests/reference/figure_summaries.expected.json with

  bins        per bin of x (rows sorted by x, ties by y, cut at ranks
              floor(b m / k)): count, smallest, largest and median x, the
              quartiles and median of y (numpy's default linear quantile,
              Hyndman and Fan's type 7), mean and standard deviation of y
              (ddof 1) and the 95% interval for a normal standard deviation
              from scipy's chi-square quantiles; on seeded, invented data
              with tied x values and a missing value;
  detrended   each sorted value minus the normal quantile of Blom's
              position (i - 3/8)/(n + 1/4), and the pointwise 95% band of
              the i-th of n normal order statistics,
              Phi^-1(Beta(i, n - i + 1).ppf(q)), minus the same quantile;
              all n band points for n = 40, 200 points spread evenly along
              the quantiles for n = 500;
  thresholds  the influence figure's lines for the bundled cylinders
              example (n = 147 rows used, p = 7): 2p/n, its multiple of
              p/n, the Bonferroni bound t(1 - alpha/(2n), n - p - 1) at
              alpha 0.05.

Run by hand, NOT by `make test`; the output is committed with the library
versions recorded in it. Needs Debian's python3-numpy and python3-scipy:

    /usr/bin/python3 tests/reference/figure_summaries_reference.py
"""

import json
import math
import os

import numpy as np
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT_PATH = os.path.join(HERE, "figure_summaries.expected.json")


def bin_count(m):
    k = min(int(math.floor(math.sqrt(m))), m // 8, 20)
    return k if k > 0 else (1 if m > 0 else 0)


def bins_case():
    rng = np.random.default_rng(20261202)
    n = 157
    x = np.round(rng.uniform(10.0, 60.0, n) * 2.0) / 2.0   # ties on a 0.5 grid
    y = 0.002 * (x - 35.0) ** 2 + rng.normal(0.0, 1.0 + x / 40.0, n)
    y[11] = np.nan                                       # skipped
    ok = np.isfinite(x) & np.isfinite(y)
    xs, ys = x[ok], y[ok]
    order = np.lexsort((ys, xs))
    xs, ys = xs[order], ys[order]
    m = len(xs)
    k = bin_count(m)
    out = []
    for b in range(k):
        first, last = b * m // k, (b + 1) * m // k
        bx, by = xs[first:last], ys[first:last]
        ss = float(np.sum((by - by.mean()) ** 2))
        df = len(by) - 1
        out.append({
            "count": len(by), "x_lo": float(bx.min()), "x_hi": float(bx.max()),
            "x_mid": float(np.quantile(bx, 0.5)),
            "q1": float(np.quantile(by, 0.25)), "median": float(np.quantile(by, 0.5)),
            "q3": float(np.quantile(by, 0.75)), "mean": float(by.mean()),
            "sd": float(np.std(by, ddof=1)),
            "sd_lo": math.sqrt(ss / stats.chi2.ppf(0.975, df)),
            "sd_hi": math.sqrt(ss / stats.chi2.ppf(0.025, df)),
        })
    return {"x": [None if not np.isfinite(v) else float(v) for v in x],
            "y": [None if not np.isfinite(v) else float(v) for v in y],
            "level": 0.95, "bins": out}


def detrended_case(n, seed):
    rng = np.random.default_rng(seed)
    values = rng.standard_t(5, n)
    s = np.sort(values)
    i = np.arange(n)
    z = stats.norm.ppf((i + 0.625) / (n + 0.25))
    if n <= 200:
        idx = list(range(n))
    else:
        idx, last = [], None
        for k in range(200):
            target = z[0] + (z[-1] - z[0]) * k / 199
            pos = stats.norm.cdf(target) * (n + 0.25) - 0.625
            j = int(min(max(np.round(pos), 0), n - 1))
            if j != last:
                idx.append(j)
                last = j
    lo = [float(stats.norm.ppf(stats.beta.ppf(0.025, j + 1, n - j)) - z[j]) for j in idx]
    hi = [float(stats.norm.ppf(stats.beta.ppf(0.975, j + 1, n - j)) - z[j]) for j in idx]
    return {"values": values.tolist(), "level": 0.95, "quantile": z.tolist(),
            "deviation": (s - z).tolist(), "band_index": idx, "band_lo": lo,
            "band_hi": hi}


def thresholds_case():
    n, p, alpha = 147, 7, 0.05
    return {"n": n, "p": p, "alpha": alpha, "leverage": 2.0 * p / n,
            "leverage_multiple": 2.0,
            "bonferroni": float(stats.t.ppf(1.0 - alpha / (2.0 * n), n - p - 1)),
            "large": 3.0}


def main():
    out = {
        "generated_by": "tests/reference/figure_summaries_reference.py with scipy %s, "
                        "numpy %s" % (scipy.__version__, np.__version__),
        "bins": bins_case(),
        "detrended": [detrended_case(40, 7), detrended_case(500, 8)],
        "thresholds": thresholds_case(),
    }
    with open(OUT_PATH, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()

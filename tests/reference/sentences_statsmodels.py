#!/usr/bin/python3
"""Reference numbers for the coefficient sentences (tests/unit/test_sentences.c).

For each kind of reading the sentence test checks, the number it must
print, recomputed here from tests/data/sentences/mixed.csv and costs.csv
with statsmodels OLS on design matrices built BY HAND (no formula strings),
in fitproof's coding: levels in byte order, the reference first (g: ctl,
h: hi); treatment indicators 1[x = L]; sum coding 1[x = L] - 1[x = ref];
interactions are products; raw powers. Readings at representative values
are linear combinations c'b with standard error sqrt(c' V c) and the
t quantile on the residual degrees of freedom (V the classical covariance,
res.cov_params()); the representative value of a numeric column is the
median of the fitted rows (numpy.median). Logged responses read as
100 (exp(d) - 1) percent; a logged predictor per 10% increase as
100 (1.1^b - 1) percent; the back-transformed mean uses Duan's smearing
factor, the mean of exp(residual).

Run by hand with Debian's interpreter (needs python3-statsmodels); NOT run
by `make test`:

    /usr/bin/python3 tests/reference/sentences_statsmodels.py

It writes tests/reference/sentences.expected.json, and the data of the
three-numeric model, tests/data/sentences/three.csv (seeded; the values
are read back from the file as written, so both programs fit the same
numbers).
"""

import csv
import json
import math
import os

import numpy as np
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(os.path.dirname(HERE), "data", "sentences")


def load(name):
    with open(os.path.join(DATA, name)) as f:
        return list(csv.DictReader(f))


def fit(columns, y):
    X = np.column_stack(columns)
    return sm.OLS(np.array(y), X).fit()


def combination(res, c):
    c = np.array(c, dtype=float)
    value = float(c @ res.params)
    se = math.sqrt(float(c @ res.cov_params() @ c))
    q = scipy.stats.t.ppf(0.975, res.df_resid)
    p = 2 * scipy.stats.t.sf(abs(value / se), res.df_resid)
    return {"value": value, "low": value - q * se, "high": value + q * se, "p": float(p)}


def coefficient(res, j):
    c = [0.0] * len(res.params)
    c[j] = 1.0
    return combination(res, c)


def write_three():
    """40 rows of y, a, b, c with a three-way product (seeded)."""
    rng = np.random.default_rng(12)
    a = rng.uniform(1, 9, 40)
    b = rng.uniform(0.5, 5, 40)
    c = rng.uniform(10, 30, 40)
    y = (2 + 0.8 * a + 0.5 * b - 0.1 * c + 0.12 * a * b + 0.02 * a * c - 0.03 * b * c
         + 0.004 * a * b * c + rng.normal(0, 0.6, 40))
    with open(os.path.join(DATA, "three.csv"), "w") as f:
        f.write("y,a,b,c\n")
        for row in zip(y, a, b, c):
            f.write("%.3f,%.2f,%.2f,%.1f\n" % row)


def main():
    write_three()
    rows = load("mixed.csv")
    y = [float(r["y"]) for r in rows]
    a = np.array([float(r["a"]) for r in rows])
    b = np.array([float(r["b"]) for r in rows])
    trt = np.array([float(r["g"] == "trt") for r in rows])
    lo = np.array([float(r["h"] == "lo") for r in rows])
    one = np.ones(len(rows))
    med_a, med_b = float(np.median(a)), float(np.median(b))
    out = {"versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__,
                        "scipy": scipy.__version__},
           "median_a": med_a, "median_b": med_b}

    # [a, b, g, h, [a, b], [g, h]]: (intercept), a, b, g=trt, h=lo, a*b, trt*lo
    res = fit([one, a, b, trt, lo, a * b, trt * lo], y)
    out["num_num"] = {
        # slope of a at the median of b
        "slope_a_at_median_b": combination(res, [0, 1, 0, 0, 0, med_b, 0]),
        "a_times_b": coefficient(res, 5),
    }
    out["cat_cat"] = {
        # trt vs ctl where h is hi (the reference) and where h is lo
        "trt_at_hi": combination(res, [0, 0, 0, 1, 0, 0, 0]),
        "trt_at_lo": combination(res, [0, 0, 0, 1, 0, 0, 1]),
        "trt_times_lo": coefficient(res, 6),
    }

    # [a, g, [a, g]]: (intercept), a, g=trt, a*trt
    res = fit([one, a, trt, a * trt], y)
    out["num_cat"] = {
        "slope_a_ctl": combination(res, [0, 1, 0, 0]),
        "slope_a_trt": combination(res, [0, 1, 0, 1]),
        "trt_at_median_a": combination(res, [0, 0, 1, med_a]),
        "a_times_trt": coefficient(res, 3),
    }

    # [a] alone and [b, h] for plain numeric, level and not significant readings
    res = fit([one, a, b, lo], y)
    out["plain"] = {"a": coefficient(res, 1), "b": coefficient(res, 2),
                    "lo": coefficient(res, 3)}

    # polynomial a, degree 2: derivative b1 + 2 b2 a at the median of a
    res = fit([one, a, a * a], y)
    out["polynomial"] = {"slope_at_median": combination(res, [0, 1, 2 * med_a]),
                         "a2": coefficient(res, 2)}

    # sum coding [a, g]: (intercept), a, g: trt vs average (1[trt] - 1[ctl])
    res = fit([one, a, trt - (1 - trt)], y)
    out["sum"] = {"intercept": coefficient(res, 0), "trt_vs_average": coefficient(res, 2)}

    # no intercept [g, a]: g=ctl, g=trt, a
    res = fit([1 - trt, trt, a], y)
    out["no_intercept"] = {"ctl": coefficient(res, 0), "trt": coefficient(res, 1),
                           "r_squared_centred": float(res.rsquared),
                           "k_constant": int(res.k_constant)}

    # no intercept: each level's fitted value at the median of a, and the
    # difference trt - ctl (adjusted for a)
    out["no_intercept"].update({
        "ctl_at_median_a": combination(res, [1, 0, med_a]),
        "trt_at_median_a": combination(res, [0, 1, med_a]),
        "trt_minus_ctl": combination(res, [-1, 1, 0]),
    })

    # three-way, numeric x numeric x category:
    # [a, b, g, [a, b], [a, g], [b, g], [a, b, g]]:
    # (intercept), a, b, trt, a*b, a*trt, b*trt, a*b*trt
    res = fit([one, a, b, trt, a * b, a * trt, b * trt, a * b * trt], y)
    out["num_num_cat"] = {
        "a_times_b_at_ctl": combination(res, [0, 0, 0, 0, 1, 0, 0, 0]),
        "a_times_b_at_trt": combination(res, [0, 0, 0, 0, 1, 0, 0, 1]),
        "a_times_trt_at_median_b": combination(res, [0, 0, 0, 0, 0, 1, 0, med_b]),
        "b_times_trt_at_median_a": combination(res, [0, 0, 0, 0, 0, 0, 1, med_a]),
        "slope_a_median_b_trt": combination(res, [0, 1, 0, 0, med_b, 1, 0, med_b]),
        "three_way": coefficient(res, 7),
    }
    # three-way, numeric x category x category:
    # [a, g, h, [a, g], [a, h], [g, h], [a, g, h]]:
    # (intercept), a, trt, lo, a*trt, a*lo, trt*lo, a*trt*lo
    res = fit([one, a, trt, lo, a * trt, a * lo, trt * lo, a * trt * lo], y)
    out["num_cat_cat"] = {
        "a_times_trt_at_hi": combination(res, [0, 0, 0, 0, 1, 0, 0, 0]),
        "a_times_trt_at_lo": combination(res, [0, 0, 0, 0, 1, 0, 0, 1]),
        "trt_times_lo_at_median_a": combination(res, [0, 0, 0, 0, 0, 0, 1, med_a]),
        "trt_at_median_a_lo": combination(res, [0, 0, 1, 0, med_a, 0, 1, med_a]),
        "three_way": coefficient(res, 7),
    }
    # three-way, numeric x numeric x numeric on three.csv:
    # [a, b, c, [a, b], [a, c], [b, c], [a, b, c]]
    rows3 = load("three.csv")
    y3 = [float(r["y"]) for r in rows3]
    a3, b3, c3 = (np.array([float(r[k]) for r in rows3]) for k in "abc")
    m = {k: float(np.median(v)) for k, v in (("a", a3), ("b", b3), ("c", c3))}
    res = fit([np.ones(len(rows3)), a3, b3, c3, a3 * b3, a3 * c3, b3 * c3, a3 * b3 * c3], y3)
    out["num_num_num"] = {
        "medians": m,
        "a_times_b_at_median_c": combination(res, [0, 0, 0, 0, 1, 0, 0, m["c"]]),
        "slope_a_at_medians": combination(res, [0, 1, 0, 0, m["b"], m["c"], 0,
                                                m["b"] * m["c"]]),
        "three_way": coefficient(res, 7),
    }

    # logged response and predictor: log(cost) ~ log(distance) + kind
    rows = load("costs.csv")
    yl = [math.log(float(r["cost"])) for r in rows]
    ld = np.array([math.log(float(r["distance"])) for r in rows])
    fast = np.array([float(r["kind"] == "fast") for r in rows])
    res = fit([np.ones(len(rows)), ld, fast], yl)
    e = coefficient(res, 1)
    k = coefficient(res, 2)
    out["logged"] = {
        "elasticity": e["value"],
        "per_10_percent": {key: 100 * (1.1 ** e[key] - 1) for key in ("value", "low", "high")},
        "fast_percent": {key: 100 * (math.exp(k[key]) - 1) for key in ("value", "low", "high")},
        # Duan's (1983) smearing factor: the mean of exp(residual)
        "smearing": float(np.mean(np.exp(res.resid))),
    }
    # logged predictor x category: log(cost) ~ log(distance) * kind; the
    # change per 10% increase in distance for each service (std first)
    res = fit([np.ones(len(rows)), ld, fast, ld * fast], yl)
    std = combination(res, [0, 1, 0, 0])
    fst = combination(res, [0, 1, 0, 1])
    out["logged_by_kind"] = {
        name: {key: 100 * (1.1 ** c[key] - 1) for key in ("value", "low", "high")}
        for name, c in (("std", std), ("fast", fst))}
    with open(os.path.join(HERE, "sentences.expected.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


main()

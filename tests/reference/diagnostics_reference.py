#!/usr/bin/python3
"""Reference values for the fitproof test suite: assumption diagnostics.

Writes
  tests/data/diagnostics/kilns.csv   invented data: shrinkage of fired clay
                                     test bars, 80 kiln batches, generated here
                                     with a fixed seed (file rows shuffled, so
                                     that the batch order differs from the file
                                     order)
  tests/data/diagnostics/long.csv    invented data: 1,200 rows of a sensor
                                     calibration log, for the large-n
                                     Durbin-Watson approximation
  tests/reference/diagnostics.expected.json

with, for tests/unit/test_diagnostics.c:
  * Shapiro-Wilk on seeded samples, n = 3 ... 5000: scipy.stats.shapiro
    (single precision) and a double-precision run of the published
    algorithm (Royston 1992; AS R94, 1995) written below with numpy;
  * the skewness, kurtosis and omnibus tests of scipy.stats on the
    residuals;
  * statsmodels OLS of shrinkage_pct on moisture_pct, temperature_c, clay,
    shelf and moisture_pct x clay (indicator coding, reference levels "red"
    and "bottom", in fitproof's column order): hat values, internally and
    externally studentized residuals, Cook's distance, DFFITS, Bonferroni
    outlier p-values, Breusch-Pagan (studentized and original; on the
    model's regressors and on humidity_pct), Durbin-Watson d in batch
    order, VIF (one-df terms), GVIF (numpy, by Fox & Monette's determinant
    formula), the condition number of the unit-length-scaled design (numpy
    SVD) and RESET (powers 2 and 3 of the fitted values, F form);
  * the same influence measures for the weighted fit with weights w,
    computed as OLS on sqrt(w)-scaled data (the definition of the weighted
    fit);
  * Monte Carlo estimates of P(D <= c) for both designs under independent
    normal errors (seeded; each with its count of replications, from which
    the test takes the standard error).

Run by hand with Debian's interpreter (needs python3-numpy, python3-scipy,
python3-statsmodels); the library versions are recorded in the output:

    /usr/bin/python3 tests/reference/diagnostics_reference.py
"""

import csv
import json
import math
import os

import numpy as np
import scipy
import scipy.stats as st
import statsmodels
import statsmodels.api as sm
from statsmodels.stats.diagnostic import het_breuschpagan, linear_reset
from statsmodels.stats.outliers_influence import (OLSInfluence,
                                                  variance_inflation_factor)
from statsmodels.stats.stattools import durbin_watson

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
DATA = os.path.join(ROOT, "tests", "data", "diagnostics")
OUT = os.path.join(HERE, "diagnostics.expected.json")
TIMES = "\u00d7"

SW_SIZES = (3, 4, 5, 7, 11, 20, 50, 100, 1000, 5000)


# ---- Shapiro-Wilk in double precision (Royston 1992; AS R94) -------------

def poly(c, x):
    return sum(ck * x ** k for k, ck in enumerate(c))


def sw_double(x):
    x = np.sort(np.asarray(x, dtype=float))
    n = len(x)
    half = n // 2
    if n == 3:
        a = np.array([math.sqrt(0.5)])
    else:
        i = np.arange(1, half + 1)
        m = -st.norm.ppf((i - 0.375) / (n + 0.25))
        summ2 = 2.0 * np.sum(m ** 2)
        u = 1.0 / math.sqrt(n)
        c1 = [0.0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056]
        c2 = [0.0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633]
        a = np.empty(half)
        a[0] = m[0] / math.sqrt(summ2) + poly(c1, u)
        if n > 5:
            a[1] = m[1] / math.sqrt(summ2) + poly(c2, u)
            phi = (summ2 - 2 * m[0] ** 2 - 2 * m[1] ** 2) / \
                (1 - 2 * a[0] ** 2 - 2 * a[1] ** 2)
            a[2:] = m[2:] / math.sqrt(phi)
        else:
            phi = (summ2 - 2 * m[0] ** 2) / (1 - 2 * a[0] ** 2)
            a[1:] = m[1:] / math.sqrt(phi)
    b = np.sum(a * (x[::-1][:half] - x[:half]))
    ss = np.sum((x - x.mean()) ** 2)
    w = b * b / (2.0 * np.sum(a * a) * ss)
    if n == 3:
        p = max(0.0, (6 / math.pi) * (math.asin(math.sqrt(w)) - math.pi / 3))
        return w, p
    y = math.log1p(-w)
    if n <= 11:
        gamma = -2.273 + 0.459 * n
        z = (-math.log(gamma - y) - poly([0.5440, -0.39978, 0.025054, -6.714e-4], n)) / \
            math.exp(poly([1.3822, -0.77857, 0.062767, -0.0020322], n))
    else:
        ln = math.log(n)
        z = (y - poly([-1.5861, -0.31082, -0.083751, 0.0038915], ln)) / \
            math.exp(poly([-0.4803, -0.082676, 0.0030302], ln))
    return w, float(st.norm.sf(z))


def shapiro_cases():
    cases = []
    for k, n in enumerate(SW_SIZES):
        rng = np.random.default_rng(1000 + n)
        # Mostly normal samples, some mildly heavy-tailed, so that p-values
        # spread over (0, 1) without falling where single precision has no
        # relative digits left.
        x = rng.standard_t(12, n) if k % 3 == 2 else rng.normal(10.0, 2.0, n)
        x = np.round(x, 6)
        w32, p32 = st.shapiro(x)
        w64, p64 = sw_double(x)
        cases.append({"n": n, "x": [float(v) for v in x],
                      "scipy_w": float(w32), "scipy_p": float(p32),
                      "double_w": w64, "double_p": p64})
    return cases


# ---- the kilns data -------------------------------------------------------

LEVELS = ("red", "stoneware", "white")


def make_kilns():
    rng = np.random.default_rng(20240517)
    n = 80
    batch = np.arange(1, n + 1)
    clay = rng.choice(LEVELS, n)
    shelf = rng.choice(("bottom", "top"), n)
    moisture = np.round(rng.uniform(8.0, 16.0, n), 2)
    temperature = np.round(1100 + 8.0 * (moisture - 12) + rng.normal(0, 25, n), 1)
    humidity = np.round(rng.uniform(30, 80, n), 1)
    weight = np.round(rng.uniform(0.5, 2.0, n), 3)
    # AR(1) errors in batch order, spread growing with humidity.
    noise = np.empty(n)
    noise[0] = rng.normal()
    for t in range(1, n):
        noise[t] = 0.45 * noise[t - 1] + rng.normal()
    noise *= 0.15 * (humidity / 50.0)
    effect = {"red": 0.0, "stoneware": 0.6, "white": -0.4}
    slope = {"red": 0.30, "stoneware": 0.22, "white": 0.35}
    y = np.array([2.0 + slope[c] * m + 0.002 * (tc - 1100) + effect[c] +
                  (0.25 if s == "top" else 0.0)
                  for c, m, tc, s in zip(clay, moisture, temperature, shelf)])
    y = np.round(y + noise, 4)
    y[37] += 1.4  # one batch with a cracked bar: an outlier to flag
    order = rng.permutation(n)
    rows = []
    for i in order:
        rows.append({"batch": int(batch[i]), "clay": clay[i], "shelf": shelf[i],
                     "moisture_pct": moisture[i], "temperature_c": temperature[i],
                     "humidity_pct": humidity[i], "weight": weight[i],
                     "shrinkage_pct": y[i]})
    os.makedirs(DATA, exist_ok=True)
    with open(os.path.join(DATA, "kilns.csv"), "w", newline="") as f:
        out = csv.writer(f, lineterminator="\n")
        keys = list(rows[0].keys())
        out.writerow(keys)
        for r in rows:
            out.writerow([("%.10g" % r[k]) if isinstance(r[k], float) else r[k]
                          for k in keys])

    # Everything below works on the file as written, as fitproof reads it.
    with open(os.path.join(DATA, "kilns.csv"), newline="") as f:
        return list(csv.DictReader(f))


def kilns_design(rows):
    X, labels = [], ["baseline value", "moisture_pct", "temperature_c", "clay = stoneware",
                     "clay = white", "shelf = top",
                     "moisture_pct %s clay = stoneware" % TIMES,
                     "moisture_pct %s clay = white" % TIMES]
    for r in rows:
        ind = [1.0 if r["clay"] == lv else 0.0 for lv in LEVELS[1:]]
        m = float(r["moisture_pct"])
        X.append([1.0, m, float(r["temperature_c"])] + ind +
                 [1.0 if r["shelf"] == "top" else 0.0] + [m * d for d in ind])
    y = np.array([float(r["shrinkage_pct"]) for r in rows])
    return np.array(X), y, labels


def gvif(X, columns):
    """Fox & Monette (1992): det R11 det R22 / det R over the non-intercept
    columns' correlation matrix."""
    R = np.corrcoef(X[:, 1:], rowvar=False)
    inside = [c - 1 for c in columns]
    outside = [c for c in range(R.shape[0]) if c not in inside]
    return (np.linalg.det(R[np.ix_(inside, inside)]) *
            np.linalg.det(R[np.ix_(outside, outside)]) / np.linalg.det(R))


def influence_values(res):
    inf = OLSInfluence(res)
    return {"hat": inf.hat_matrix_diag.tolist(),
            "standardized": inf.resid_studentized_internal.tolist(),
            "studentized": inf.resid_studentized_external.tolist(),
            "cooks": inf.cooks_distance[0].tolist(),
            "dffits": inf.dffits[0].tolist()}


def bp(resid, exog):
    robust = het_breuschpagan(resid, exog, robust=True)
    original = het_breuschpagan(resid, exog, robust=False)
    return {"studentized": [robust[0], robust[1]], "original": [original[0], original[1]],
            "f": [robust[2], robust[3]]}


def dw_monte_carlo(X, points, reps, seed, batch):
    """P(D <= c) under independent normal errors, e = M u with M from QR."""
    q, _ = np.linalg.qr(X)
    rng = np.random.default_rng(seed)
    counts = np.zeros(len(points))
    done = 0
    while done < reps:
        b = min(batch, reps - done)
        u = rng.standard_normal((b, X.shape[0]))
        e = u - (u @ q) @ q.T
        d = np.sum(np.diff(e, axis=1) ** 2, axis=1) / np.sum(e ** 2, axis=1)
        counts += (d[:, None] <= np.asarray(points)[None, :]).sum(axis=0)
        done += b
    return {"points": list(points), "p": (counts / reps).tolist(), "reps": reps}


def kilns_reference(rows):
    X, y, labels = kilns_design(rows)
    res = sm.OLS(y, X).fit()
    out = {"labels": labels, "lines": list(range(2, len(rows) + 2))}
    out.update(influence_values(res))
    out["bonferroni_p"] = res.outlier_test(method="bonf")[:, 2].tolist()
    out["fitted"] = res.fittedvalues.tolist()
    out["residuals"] = res.resid.tolist()
    out["bp_model"] = bp(res.resid, X)
    humidity = np.array([float(r["humidity_pct"]) for r in rows])
    out["bp_humidity"] = bp(res.resid, sm.add_constant(humidity))
    order = np.argsort([int(r["batch"]) for r in rows], kind="stable")
    out["dw"] = durbin_watson(res.resid[order])
    out["vif"] = {labels[j]: variance_inflation_factor(X, j) for j in (1, 2, 5)}
    out["gvif"] = {"clay": gvif(X, [3, 4]), "moisture_pct %s clay" % TIMES: gvif(X, [6, 7]),
                   "moisture_pct": gvif(X, [1])}
    out["condition_number"] = float(np.linalg.cond(X / np.linalg.norm(X, axis=0)))
    reset = linear_reset(res, power=3, test_type="fitted", use_f=True)
    out["reset"] = {"f": float(reset.fvalue), "p": float(reset.pvalue),
                    "df_num": float(reset.df_num), "df_den": float(reset.df_denom)}
    resid = res.resid
    out["skewtest"] = list(st.skewtest(resid))
    out["kurtosistest"] = list(st.kurtosistest(resid))
    out["normaltest"] = list(st.normaltest(resid))
    out["skewness"] = float(st.skew(resid))
    out["excess_kurtosis"] = float(st.kurtosis(resid))
    out["shapiro_scipy"] = list(map(float, st.shapiro(resid)))
    out["shapiro_double"] = list(sw_double(resid))
    d = out["dw"]
    out["dw_mc"] = dw_monte_carlo(X[order], (d, 1.4, 1.7, 2.0, 2.3, 2.6), 1_000_000,
                                  51, 20000)
    # Weighted fit: OLS on sqrt(w)-scaled rows is the weighted fit.
    root_w = np.sqrt([float(r["weight"]) for r in rows])
    res_w = sm.OLS(y * root_w, X * root_w[:, None]).fit()
    out["weighted"] = influence_values(res_w)
    out["weighted"]["dw"] = durbin_watson(res_w.resid[order])
    out["weighted"]["shapiro_double"] = list(sw_double(res_w.resid))
    return out


# ---- the long calibration log --------------------------------------------

def make_long():
    rng = np.random.default_rng(777)
    n = 1200
    reading = np.round(rng.uniform(0, 50, n), 3)
    ambient = np.round(20 + 5 * np.sin(np.arange(n) / 40.0) + rng.normal(0, 1, n), 2)
    probe = rng.choice(("a", "b"), n)
    y = 0.3 + 1.02 * reading + 0.05 * (ambient - 20) + np.where(probe == "b", 0.2, 0.0)
    noise = np.empty(n)
    noise[0] = rng.normal()
    for t in range(1, n):
        noise[t] = 0.1 * noise[t - 1] + rng.normal()
    y = np.round(y + 0.1 * noise, 4)
    with open(os.path.join(DATA, "long.csv"), "w", newline="") as f:
        out = csv.writer(f, lineterminator="\n")
        out.writerow(["seq", "probe", "reading", "ambient_c", "true_value"])
        for i in range(n):
            out.writerow([i + 1, probe[i], "%.10g" % reading[i], "%.10g" % ambient[i],
                          "%.10g" % y[i]])
    with open(os.path.join(DATA, "long.csv"), newline="") as f:
        rows = list(csv.DictReader(f))
    reading = np.array([float(r["reading"]) for r in rows])
    ambient = np.array([float(r["ambient_c"]) for r in rows])
    probe = np.array([r["probe"] for r in rows])
    y = np.array([float(r["true_value"]) for r in rows])
    X = np.column_stack([np.ones(n), reading, ambient, (probe == "b").astype(float)])
    res = sm.OLS(y, X).fit()
    d = durbin_watson(res.resid)
    return {"dw": d,
            "dw_mc": dw_monte_carlo(X, (d, 1.85, 1.9, 1.95, 2.0), 200_000, 52, 2000)}


def main():
    rows = make_kilns()
    reference = {
        "versions": {"numpy": np.__version__, "scipy": scipy.__version__,
                     "statsmodels": statsmodels.__version__},
        "shapiro": shapiro_cases(),
        "kilns": kilns_reference(rows),
        "long": make_long(),
    }
    with open(OUT, "w") as f:
        json.dump(reference, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()

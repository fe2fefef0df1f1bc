#!/usr/bin/python3
"""Reference values for the fitproof model engine (tests/unit/test_engine.c).

1. Generates invented data, seeded, and writes tests/data/engine/engine.csv:
   numeric x1, x2; categories g (a-d), h (hi, lo, mid), k (u, v); positive
   weights w; response y with level effects, interactions and errors whose
   spread grows with x1 (so that the robust standard errors differ from the
   classical ones). A few cells are blank so that models drop rows.
2. For each model of tests/data/engine/engine.yaml (repeated below as Python
   data) builds the design matrix BY HAND with numpy -- no formula strings --
   following fitproof's documented coding: levels in byte order, the first
   is the reference; treatment coding 1[x = L]; sum coding
   1[x = L] - 1[x = reference]; a model without intercept gives its first
   category main effect every level; interactions are products, the last
   component varying fastest; polynomial terms are raw powers.
3. Fits with statsmodels OLS / WLS and records: estimates, standard errors,
   t, p, 95% intervals; HC0-HC3 standard errors with their t-based p-values
   and intervals (get_robustcov_results(use_t=True)); R2, F, log-likelihood,
   AIC and BIC; the term F tests, computed by fitting the sub-models with
   OLS / WLS (definitions below, the same as fitproof's); predictions
   (get_prediction, a new observation of weight 1); nested-model F tests
   (compare_f_test).

Definitions (docs/results.md):
- term test of T ("marginality-respecting"): H(T) = terms whose columns
  strictly include T's; M1 = all terms but H(T); M0 = M1 without T;
  F = ((RSS(M0) - RSS(M1)) / (rank M1 - rank M0)) / (RSS_full / df_resid_full).
- sequential test of term k: M1 = terms 1..k, M0 = terms 1..k-1, same F.
- AIC = -2 log L + 2 (rank + 1), BIC = -2 log L + log(n) (rank + 1): the error
  variance counts as a parameter (statsmodels counts rank only, so its AIC
  is 2 lower and its BIC log(n) lower; both are recorded).
- Without intercept R2 is uncentred: 1 - RSS / sum(w y^2), and the overall F
  uses the uncentred total with df_model = rank, computed here from
  statsmodels' ssr and uncentered_tss; except when the columns still span
  the constant (one indicator per level of a category), where fitproof and
  statsmodels (which detects the implicit constant) both centre.

Run by hand with Debian's interpreter (needs python3-statsmodels); NOT run
by `make test`:

    /usr/bin/python3 tests/reference/engine_statsmodels.py

It rewrites tests/data/engine/engine.csv and
tests/reference/engine.expected.json (library versions recorded inside).
"""

import csv
import itertools
import json
import math
import os

import numpy as np
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm

HERE = os.path.dirname(os.path.abspath(__file__))
REPO_ROOT = os.path.dirname(os.path.dirname(HERE))
CSV_PATH = os.path.join(REPO_ROOT, "tests", "data", "engine", "engine.csv")
OUT_PATH = os.path.join(REPO_ROOT, "tests", "reference", "engine.expected.json")
TIMES = "\u00d7"
LEVEL = 0.95

# ---- data ------------------------------------------------------------------

def generate():
    rng = np.random.default_rng(20240611)
    n = 240
    x1 = np.round(rng.uniform(0, 10, n), 3)
    x2 = np.round(rng.normal(50, 8, n), 2)
    g = rng.choice(["a", "b", "c", "d"], n)
    h = rng.choice(["hi", "lo", "mid"], n)
    k = rng.choice(["u", "v"], n)
    w = np.round(rng.uniform(0.5, 3.0, n), 3)
    g_effect = {"a": 0.0, "b": 2.5, "c": -1.8, "d": 4.1}
    h_effect = {"hi": 1.2, "lo": -2.2, "mid": 0.0}
    k_effect = {"u": 0.0, "v": 1.7}
    mean = (5.0 + 1.3 * x1 - 0.4 * x2 + 0.02 * x1 * x2
            + np.array([g_effect[v] for v in g])
            + np.array([h_effect[v] for v in h])
            + np.array([k_effect[v] for v in k])
            + 0.3 * x1 * (g == "b") - 0.5 * x1 * (g == "d")
            + 1.5 * ((g == "c") & (h == "lo")) - 0.9 * ((g == "b") & (k == "v"))
            + 0.05 * x1 ** 3 / 10)
    noise = rng.normal(0, 1, n) * 2.0 * (1 + 0.15 * x1) / np.sqrt(w)
    y = np.round(mean + noise, 4)
    rows = []
    for i in range(n):
        rows.append({"y": "%.4f" % y[i], "x1": "%.3f" % x1[i], "x2": "%.2f" % x2[i],
                     "g": g[i], "h": h[i], "k": k[i], "w": "%.3f" % w[i]})
    for i in (7, 41, 133, 200):
        rows[i]["x2"] = ""
    for i in (15, 99, 180):
        rows[i]["g"] = ""
    for i in (60, 61):
        rows[i]["w"] = ""
    for i in (3, 222):
        rows[i]["y"] = ""
    os.makedirs(os.path.dirname(CSV_PATH), exist_ok=True)
    with open(CSV_PATH, "w", encoding="utf-8", newline="\n") as f:
        writer = csv.DictWriter(f, fieldnames=["y", "x1", "x2", "g", "h", "k", "w"],
                                lineterminator="\n")
        writer.writeheader()
        writer.writerows(rows)


def load():
    with open(CSV_PATH, encoding="utf-8", newline="") as f:
        return list(csv.DictReader(f))

# ---- models (the same as tests/data/engine/engine.yaml) ----------------------

MODELS = [
    {"id": "treat", "terms": [["x1"], ["x2"], ["g"], ["h"], ["x1", "g"], ["g", "h"],
                              ["x1", "x2"]]},
    {"id": "small", "terms": [["x1"], ["x2"], ["g"], ["h"]]},
    {"id": "sum", "coding": "sum",
     "terms": [["x1"], ["x2"], ["g"], ["h"], ["x1", "g"], ["g", "h"], ["x1", "x2"]]},
    {"id": "three", "terms": [["x1"], ["g"], ["k"], ["x1", "g"], ["x1", "k"], ["g", "k"],
                              ["x1", "g", "k"]]},
    {"id": "cells", "coding": "sum",
     "terms": [["g"], ["h"], ["k"], ["g", "h"], ["g", "k"], ["h", "k"], ["g", "h", "k"]]},
    {"id": "weighted", "weights": "w", "terms": [["x1"], ["x2"], ["g"], ["x1", "g"]]},
    {"id": "wsmall", "weights": "w", "terms": [["x1"], ["x2"], ["g"]]},
    {"id": "noint", "intercept": False, "terms": [["x1"], ["g"], ["x1", "g"]]},
    {"id": "noint_num", "intercept": False, "terms": [["x1"], ["x2"]]},
    {"id": "poly", "terms": [("poly", "x1", 3), ["g"], ["x1", "h"]]},
]
NUMERIC = {"x1", "x2"}
COMPARE = [("small", "treat"), ("wsmall", "weighted")]
PREDICT = {
    "treat": [{"x1": "2.5", "x2": "48", "g": "b", "h": "mid"},
              {"x1": "12", "x2": "50", "g": "d", "h": "lo"}],
    "weighted": [{"x1": "4", "x2": "55", "g": "c"}],
    "noint": [{"x1": "7.5", "g": "a"}],
}


def term_columns(term):
    return [term[1]] if isinstance(term, tuple) else list(term)


def used_columns(model):
    cols = ["y"]
    for term in model["terms"]:
        for c in term_columns(term):
            if c not in cols:
                cols.append(c)
    if model.get("weights"):
        cols.append(model["weights"])
    return cols


def levels_of(rows, column):
    return sorted({r[column] for r in rows if r[column] != ""})


class Design:
    """Builds design rows for one model, given all data rows (for levels)."""

    def __init__(self, model, all_rows):
        self.model = model
        self.coding = model.get("coding", "treatment")
        self.intercept = model.get("intercept", True)
        # A no-intercept model with one indicator per level of a category
        # still spans the constant: its R2 and F are the centred ones.
        self.spans_constant = False
        self.levels = {c: levels_of(all_rows, c) for c in ("g", "h", "k")}
        self.labels = []
        self.term_of = []
        # Factor lists: (label, function of a row dict) per component.
        self.term_factors = []
        all_levels_given = False
        for index, term in enumerate(model["terms"]):
            lists = []
            if isinstance(term, tuple):
                _, col, degree = term
                lists.append([(col if p == 1 else "%s^%d" % (col, p),
                               (lambda r, c=col, p=p: float(r[c]) ** p))
                              for p in range(1, degree + 1)])
                self.term_factors.append(("poly", lists))
                continue
            for col in term:
                if col in NUMERIC:
                    lists.append([(col, lambda r, c=col: float(r[c]))])
                    continue
                levels = self.levels[col]
                ref = levels[0]
                if not self.intercept and len(term) == 1 and not all_levels_given:
                    all_levels_given = True
                    self.spans_constant = True
                    lists.append([("%s = %s" % (col, L),
                                   (lambda r, c=col, L=L: float(r[c] == L)))
                                  for L in levels])
                elif self.coding == "sum":
                    lists.append([("%s: %s vs average of levels" % (col, L),
                                   (lambda r, c=col, L=L, ref=ref:
                                    float(r[c] == L) - float(r[c] == ref)))
                                  for L in levels[1:]])
                else:
                    lists.append([("%s = %s" % (col, L),
                                   (lambda r, c=col, L=L: float(r[c] == L)))
                                  for L in levels[1:]])
            self.term_factors.append(("product", lists))
        if self.intercept:
            self.labels.append("baseline value")
            self.term_of.append(None)
        self.columns = []
        for index, (kind, lists) in enumerate(self.term_factors):
            if kind == "poly":
                combos = [(f,) for f in lists[0]]
            else:
                combos = list(itertools.product(*lists))
            for combo in combos:
                self.labels.append((" " + TIMES + " ").join(lbl for lbl, _ in combo))
                self.term_of.append(index)
                self.columns.append([fn for _, fn in combo])

    def row(self, r):
        values = [1.0] if self.intercept else []
        for fns in self.columns:
            v = 1.0
            for fn in fns:
                v *= fn(r)
            values.append(v)
        return values

    def matrix(self, rows):
        return np.array([self.row(r) for r in rows], dtype=float)


def term_label(term):
    if isinstance(term, tuple):
        _, col, degree = term
        return col if degree == 1 else "%s up to %s^%d" % (col, col, degree)
    return (" " + TIMES + " ").join(term)

# ---- fitting ---------------------------------------------------------------------

def fit(X, y, w):
    return sm.WLS(y, X, weights=w).fit() if w is not None else sm.OLS(y, X).fit()


def rank(X):
    return int(np.linalg.matrix_rank(X)) if X.shape[1] else 0


def subset_rss(X, y, w, cols):
    if not cols:
        ww = w if w is not None else np.ones_like(y)
        return float(np.sum(ww * y * y)), 0
    Xs = X[:, cols]
    return float(fit(Xs, y, w).ssr), rank(Xs)


def term_tests(design, X, y, w, full):
    terms = design.model["terms"]
    sets = [set(term_columns(t)) for t in terms]
    sigma2 = full.ssr / full.df_resid

    def cols_for(include):
        return [j for j, t in enumerate(design.term_of) if t is None or include[t]]

    def test(index, include0, include1):
        rss0, r0 = subset_rss(X, y, w, cols_for(include0))
        rss1, r1 = subset_rss(X, y, w, cols_for(include1))
        df = r1 - r0
        f = ((rss0 - rss1) / df) / sigma2
        return {"label": term_label(terms[index]), "df": df, "sum_of_squares": rss0 - rss1,
                "f": f, "p": float(scipy.stats.f.sf(f, df, full.df_resid))}

    marginal, sequential = [], []
    for k in range(len(terms)):
        include1 = [not (sets[k] < sets[j]) for j in range(len(terms))]
        include0 = list(include1)
        include0[k] = False
        marginal.append(test(k, include0, include1))
        sequential.append(test(k, [j < k for j in range(len(terms))],
                               [j <= k for j in range(len(terms))]))
    return marginal, sequential


def robust(res):
    out = {}
    for kind in ("HC0", "HC1", "HC2", "HC3"):
        r = res.get_robustcov_results(cov_type=kind, use_t=True)
        ci = r.conf_int(alpha=1 - LEVEL)
        out[kind.lower()] = {"std_error": list(map(float, r.bse)),
                             "t": list(map(float, r.tvalues)),
                             "p": list(map(float, r.pvalues)),
                             "ci_low": list(map(float, ci[:, 0])),
                             "ci_high": list(map(float, ci[:, 1]))}
    return out


def model_reference(model, all_rows):
    cols = used_columns(model)
    rows = [r for r in all_rows if all(r[c] != "" for c in cols)]
    design = Design(model, all_rows)
    X = design.matrix(rows)
    y = np.array([float(r["y"]) for r in rows])
    w = (np.array([float(r[model["weights"]]) for r in rows])
         if model.get("weights") else None)
    res = fit(X, y, w)
    ci = res.conf_int(alpha=1 - LEVEL)
    hc = robust(res)
    coefficients = []
    for j, label in enumerate(design.labels):
        entry = {"label": label, "estimate": float(res.params[j]),
                 "std_error": float(res.bse[j]), "t": float(res.tvalues[j]),
                 "p": float(res.pvalues[j]), "ci_low": float(ci[j, 0]),
                 "ci_high": float(ci[j, 1]), "robust": {}}
        for kind, values in hc.items():
            entry["robust"][kind] = {key: values[key][j] for key in values}
        coefficients.append(entry)
    n = len(rows)
    r = rank(X)
    centred = design.intercept or design.spans_constant
    if centred:
        # statsmodels detects the implicit constant itself (k_constant = 1).
        assert res.k_constant == 1
        r2, adj, f, f_p = (float(res.rsquared), float(res.rsquared_adj),
                           float(res.fvalue), float(res.f_pvalue))
        tss = float(res.centered_tss)
    else:
        tss = float(res.uncentered_tss)
        r2 = 1 - res.ssr / tss
        adj = 1 - (1 - r2) * n / res.df_resid
        f = ((tss - res.ssr) / r) / (res.ssr / res.df_resid)
        f_p = float(scipy.stats.f.sf(f, r, res.df_resid))
    marginal, sequential = term_tests(design, X, y, w, res)
    predictions = []
    for values in PREDICT.get(model["id"], []):
        x0 = np.array([design.row(values)])
        kwargs = {"weights": np.ones(1)} if w is not None else {}
        frame = res.get_prediction(x0, **kwargs).summary_frame(alpha=1 - LEVEL)
        predictions.append({"values": values, "fit": float(frame["mean"][0]),
                            "se_fit": float(frame["mean_se"][0]),
                            "ci_low": float(frame["mean_ci_lower"][0]),
                            "ci_high": float(frame["mean_ci_upper"][0]),
                            "pi_low": float(frame["obs_ci_lower"][0]),
                            "pi_high": float(frame["obs_ci_upper"][0])})
    return {
        "n_used": n, "n_dropped": len(all_rows) - n, "rank": r,
        "coefficients": coefficients,
        "fit": {"rss": float(res.ssr), "tss": tss, "r_squared": float(r2),
                "adj_r_squared": float(adj), "sigma": math.sqrt(float(res.scale)),
                "df_model": float(r - (1 if centred else 0)),
                "df_residual": float(res.df_resid), "f": float(f), "f_p": float(f_p),
                "log_likelihood": float(res.llf),
                "aic": float(-2 * res.llf + 2 * (r + 1)),
                "bic": float(-2 * res.llf + math.log(n) * (r + 1)),
                "aic_statsmodels": float(res.aic), "bic_statsmodels": float(res.bic)},
        "term_tests": marginal, "sequential_tests": sequential,
        "predictions": predictions,
    }, res


def main():
    generate()
    all_rows = load()
    models, fits = {}, {}
    for model in MODELS:
        models[model["id"]], fits[model["id"]] = model_reference(model, all_rows)
    comparisons = []
    for small, big in COMPARE:
        f, p, df_diff = fits[big].compare_f_test(fits[small])
        comparisons.append({"small": small, "big": big, "df_num": float(df_diff),
                            "df_den": float(fits[big].df_resid), "f": float(f),
                            "p": float(p)})
    out = {
        "source": "statsmodels %s OLS/WLS, numpy %s, scipy %s, computed by "
                  "tests/reference/engine_statsmodels.py"
                  % (statsmodels.__version__, np.__version__, scipy.__version__),
        "statsmodels_version": statsmodels.__version__,
        "numpy_version": np.__version__,
        "scipy_version": scipy.__version__,
        "confidence_level": LEVEL,
        "models": models,
        "comparisons": comparisons,
    }
    with open(OUT_PATH, "w", encoding="utf-8", newline="\n") as f:
        json.dump(out, f, indent=1, ensure_ascii=False)
        f.write("\n")


if __name__ == "__main__":
    main()

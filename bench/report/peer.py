#!/usr/bin/python3
"""The benchmark's Python peer: the content of `fitproof build` on the
benchmark spec (bench/report/run.sh), produced by a plain script pipeline
with Debian's python3-pandas, -numpy, -scipy, -statsmodels and -matplotlib.
Our own script, for timing only: it is not a reference for any test.

    peer.py cylinders DATA.csv OUT_DIR   # the 13-coefficient cylinders model
    peer.py wide DATA.csv OUT_DIR        # 900-level site + x1 + x2 (902 coefficients):
                                         # fit, summary, term tests, Breusch-Pagan, influence

What it computes, as the report does: the least-squares fit and its
summary (R², F, log-likelihood, AIC, BIC), classical, HC0-HC3 and (with a
row order) Newey-West standard errors, a test of every term given the
others and in order, influence (leverage, studentized residuals, Cook's
distance, DFFITS, six flag rules, the 25 largest), Breusch-Pagan (both
forms), Durbin-Watson, RESET, VIF and the condition number, Shapiro-Wilk
on 5000 rows and the moment tests, nine SVG figures, and report.md,
report.html (figures embedded) and results.json.
"""
import base64
import io
import json
import math
import os
import sys

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
import statsmodels.api as sm  # noqa: E402
from scipy import stats  # noqa: E402
from statsmodels.stats.diagnostic import het_breuschpagan, linear_reset  # noqa: E402
from statsmodels.stats.outliers_influence import OLSInfluence  # noqa: E402
from statsmodels.stats.stattools import durbin_watson  # noqa: E402


def indicators(column, reference):
    levels = sorted(set(column.unique()) - {reference})
    return {level: (column == level).to_numpy(dtype=float) for level in levels}


def cylinders_design(frame):
    age = frame["age_days"].to_numpy(float)
    wc = frame["wc_ratio"].to_numpy(float)
    admix = indicators(frame["admixture"], "none")
    plant = indicators(frame["plant"], sorted(frame["plant"].unique())[0])
    columns, terms = [np.ones(len(frame))], [None]
    names = ["(intercept)"]

    def add(name, values, term):
        columns.append(values)
        names.append(name)
        terms.append(term)

    add("age_days", age, 0)
    add("wc_ratio", wc, 1)
    for level, values in admix.items():
        add("admixture=" + level, values, 2)
    for level, values in plant.items():
        add("plant=" + level, values, 3)
    for level, values in admix.items():
        add("age_days x admixture=" + level, age * values, 4)
    for level, values in plant.items():
        add("wc_ratio x plant=" + level, wc * values, 5)
    contains = {0: [4], 1: [5], 2: [4], 3: [5], 4: [], 5: []}
    return np.column_stack(columns), names, terms, contains, frame["strength_mpa"].to_numpy(float), True


def wide_design(frame):
    site = indicators(frame["site"], sorted(frame["site"].unique())[0])
    columns = [np.ones(len(frame))] + list(site.values())
    names = ["(intercept)"] + ["site=" + s for s in site]
    terms = [None] + [0] * len(site)
    for k, name in enumerate(("x1", "x2")):
        columns.append(frame[name].to_numpy(float))
        names.append(name)
        terms.append(k + 1)
    return np.column_stack(columns), names, terms, {0: [], 1: [], 2: []}, frame["y"].to_numpy(float), False


def f_against(y, x_small, fit_big):
    small = sm.OLS(y, x_small).fit()
    f, p, df = fit_big.compare_f_test(small)
    return {"f": f, "p": p, "df": df}


def term_tests(y, x, terms, contains, fit):
    out = []
    n_terms = max(t for t in terms if t is not None) + 1
    for t in range(n_terms):
        given = [j for j, tj in enumerate(terms) if tj is None or tj not in contains[t] + [t]]
        with_t = [j for j, tj in enumerate(terms) if tj is None or tj not in contains[t]]
        big = sm.OLS(y, x[:, with_t]).fit()
        marginal = f_against(y, x[:, given], big)
        before = [j for j, tj in enumerate(terms) if tj is None or tj < t]
        upto = [j for j, tj in enumerate(terms) if tj is None or tj <= t]
        sequential = f_against(y, x[:, before], sm.OLS(y, x[:, upto]).fit())
        out.append({"term": t, "given_others": marginal, "in_order": sequential})
    return out


def influence(fit, x, alpha):
    n, p = x.shape
    inf = OLSInfluence(fit)
    h = inf.hat_matrix_diag
    r = inf.resid_studentized_internal
    df = n - p - 1
    # Closed forms (statsmodels' external residuals refit without each row).
    t = r * np.sqrt(df / (n - p - r * r))
    cooks = inf.cooks_distance[0]
    dffits = t * np.sqrt(h / (1 - h))
    rules = {
        "leverage_above_2p_over_n": h > 2 * p / n,
        "bonferroni_outlier": np.abs(t) > stats.t.isf(alpha / (2 * n), df),
        "studentized_above_3": np.abs(t) > 3,
        "cooks_above_f_median": cooks > stats.f.ppf(0.5, p, n - p),
        "cooks_above_4_over_n": cooks > 4 / n,
        "dffits_above_2_root_p_over_n": np.abs(dffits) > 2 * math.sqrt(p / n),
    }
    top = np.argsort(-cooks, kind="stable")[:25]
    return h, r, t, cooks, dffits, {
        "rules": {k: int(v.sum()) for k, v in rules.items()},
        "most_influential": [
            {"row": int(i), "leverage": float(h[i]), "studentized": float(t[i]),
             "cooks": float(cooks[i]), "dffits": float(dffits[i])} for i in top],
    }


def vif(x, names):
    # The variance inflation factor of each non-intercept column from the
    # correlation matrix of the centred columns.
    z = x[:, 1:] - x[:, 1:].mean(axis=0)
    z /= np.linalg.norm(z, axis=0)
    inverse = np.linalg.inv(z.T @ z)
    return dict(zip(names[1:], np.diag(inverse).tolist()))


def svg(fig):
    out = io.StringIO()
    fig.savefig(out, format="svg")
    plt.close(fig)
    return out.getvalue()


def figures(frame, y, fitted, resid, h, t, cooks, order, coef, ci, names, numeric):
    out = {}
    fig, ax = plt.subplots()
    ax.hexbin(fitted, resid, gridsize=60, mincnt=1)
    edges = np.quantile(fitted, np.linspace(0, 1, 21))
    which = np.clip(np.searchsorted(edges, fitted) - 1, 0, 19)
    med = [np.median(resid[which == b]) for b in range(20)]
    ax.plot((edges[1:] + edges[:-1]) / 2, med)
    out["residuals_by_fitted"] = svg(fig)
    fig, ax = plt.subplots()
    z = np.sort(t)
    q = stats.norm.ppf((np.arange(1, len(z) + 1) - 0.5) / len(z))
    ax.plot(q, z - q, ".", markersize=1)
    out["quantile_plot"] = svg(fig)
    fig, ax = plt.subplots()
    sd = [np.std(resid[which == b], ddof=1) for b in range(20)]
    ax.plot((edges[1:] + edges[:-1]) / 2, sd, "o-")
    out["spread_by_fitted"] = svg(fig)
    fig, ax = plt.subplots()
    ax.hexbin(h * len(h) / len(coef), t, gridsize=60, mincnt=1)
    out["influence"] = svg(fig)
    fig, ax = plt.subplots()
    ax.hist(resid, bins="fd")
    out["residual_histogram"] = svg(fig)
    fig, ax = plt.subplots(figsize=(6, max(3, 0.25 * len(coef))))
    ax.errorbar(coef, np.arange(len(coef)), xerr=[coef - ci[:, 0], ci[:, 1] - coef], fmt="o")
    ax.set_yticks(np.arange(len(coef)), names)
    out["coefficient_intervals"] = svg(fig)
    fig, ax = plt.subplots()
    ax.hexbin(fitted, y, gridsize=60, mincnt=1)
    out["observed_by_predicted"] = svg(fig)
    for name in numeric:
        fig, ax = plt.subplots()
        ax.hexbin(frame[name].to_numpy(float), y, gridsize=60, mincnt=1)
        out["response_by_" + name] = svg(fig)
    if order is not None:
        fig, (a1, a2) = plt.subplots(1, 2)
        e = resid[order]
        step = max(1, len(e) // 20000)
        a1.plot(e[::step], linewidth=0.5)
        a2.hexbin(e[:-1], e[1:], gridsize=60, mincnt=1)
        out["residuals_in_order"] = svg(fig)
    return out


def main():
    kind, path, out_dir = sys.argv[1:4]
    frame = pd.read_csv(path)
    if kind == "cylinders":
        x, names, terms, contains, y, ordered = cylinders_design(frame)
        numeric = ["age_days", "wc_ratio"]
    else:
        x, names, terms, contains, y, ordered = wide_design(frame)
        numeric = ["x1", "x2"]
    n, p = x.shape
    alpha = 0.05
    fit = sm.OLS(y, x).fit()
    summary = fit.summary(xname=names).as_text()
    robust = {k: fit.get_robustcov_results(cov_type=k).bse.tolist() for k in ("HC0", "HC1", "HC2", "HC3")}
    order = None
    if ordered:
        order = np.argsort(frame["cylinder_id"].to_numpy(), kind="stable")
        lags = int(math.floor(4 * (n / 100) ** (2 / 9)))
        robust["HAC"] = sm.OLS(y[order], x[order]).fit(cov_type="HAC", cov_kwds={"maxlags": lags}).bse.tolist()
    tests = term_tests(y, x, terms, contains, fit)
    h, r, t, cooks, dffits, infl = influence(fit, x, alpha)
    resid, fitted = fit.resid, fit.fittedvalues
    bp_s = het_breuschpagan(resid, x, robust=True)
    bp_o = het_breuschpagan(resid, x, robust=False)
    if kind == "wide":
        # As the comparison: fit, summary, term tests, Breusch-Pagan
        # and influence only.
        os.makedirs(out_dir, exist_ok=True)
        with open(os.path.join(out_dir, "results.json"), "w") as f:
            json.dump({"summary": summary, "term_tests": tests, "influence": infl,
                       "breusch_pagan": [bp_s[0], bp_s[1], bp_o[0], bp_o[1]]}, f, default=float)
        return
    dw = durbin_watson(resid[order] if order is not None else resid)
    reset = linear_reset(fit, power=3, use_f=True)
    z = x / np.linalg.norm(x, axis=0)
    condition = float(np.linalg.cond(z))
    rng = np.random.default_rng(15)
    sample = resid if n <= 5000 else rng.choice(resid, 5000, replace=False)
    shapiro = stats.shapiro(sample)
    moments = [stats.skewtest(resid).pvalue, stats.kurtosistest(resid).pvalue, stats.normaltest(resid).pvalue]
    ci = fit.conf_int(alpha)
    figs = figures(frame, y, fitted, resid, h, t, cooks, order, fit.params, ci, names, numeric)
    results = {
        "n": n, "coefficients": dict(zip(names, fit.params.tolist())), "std_errors": fit.bse.tolist(),
        "robust": robust, "r_squared": fit.rsquared, "f": fit.fvalue, "aic": fit.aic, "bic": fit.bic,
        "term_tests": tests, "influence": infl,
        "breusch_pagan": [bp_s[0], bp_s[1], bp_o[0], bp_o[1]], "durbin_watson": dw,
        "reset": [float(reset.fvalue), float(reset.pvalue)], "vif": vif(x, names) if p < 100 else None,
        "condition_number": condition, "shapiro": [shapiro.statistic, shapiro.pvalue], "moments": moments,
    }
    os.makedirs(os.path.join(out_dir, "figures"), exist_ok=True)
    with open(os.path.join(out_dir, "results.json"), "w") as f:
        json.dump(results, f, default=float)
    md = ["# Report", "", "```", summary, "```", ""]
    html = ["<html><body><pre>", summary, "</pre>"]
    for name, text in figs.items():
        with open(os.path.join(out_dir, "figures", name + ".svg"), "w") as f:
            f.write(text)
        md.append("![%s](figures/%s.svg)" % (name, name))
        html.append('<img alt="%s" src="data:image/svg+xml;base64,%s">'
                    % (name, base64.b64encode(text.encode()).decode()))
    with open(os.path.join(out_dir, "report.md"), "w") as f:
        f.write("\n".join(md))
    with open(os.path.join(out_dir, "report.html"), "w") as f:
        f.write("\n".join(html + ["</body></html>"]))


if __name__ == "__main__":
    main()

#!/usr/bin/python3
"""Reference values for the fitproof test suite: cylinders example.

Fits the linear model

    strength_mpa on an intercept ("baseline value"), age_days, wc_ratio, admixture
                   + age_days x admixture

to examples/cylinders/cylinders.csv (invented data) with statsmodels OLS and
writes tests/reference/cylinders.expected.json. The design matrix is built by
hand with numpy (no formula strings), using treatment/indicator coding with
"none" as the reference level of admixture, so that column order and labels
match what fitproof produces.

Rows where any of age_days, wc_ratio, admixture or strength_mpa is blank are
dropped before fitting.

This script is run by hand, NOT by `make test`; its output JSON is committed
and the tests compare fitproof's results against it. The statsmodels and
numpy versions used are recorded in the output. Needs numpy and statsmodels
(e.g. Debian's /usr/bin/python3 with python3-statsmodels):

    /usr/bin/python3 tests/reference/cylinders_statsmodels.py
"""

import csv
import json
import math
import os

import numpy as np
import statsmodels
import statsmodels.api as sm

HERE = os.path.dirname(os.path.abspath(__file__))
REPO_ROOT = os.path.dirname(os.path.dirname(HERE))
CSV_PATH = os.path.join(REPO_ROOT, "examples", "cylinders", "cylinders.csv")
OUT_PATH = os.path.join(REPO_ROOT, "tests", "reference",
                        "cylinders.expected.json")

USED_COLUMNS = ("age_days", "wc_ratio", "admixture", "strength_mpa")
REFERENCE_LEVEL = "none"
OTHER_LEVELS = ("plasticizer", "superplasticizer")
TIMES = "\u00d7"  # multiplication sign

LABELS = (
    ["baseline value", "age_days", "wc_ratio"]
    + ["admixture = %s" % lv for lv in OTHER_LEVELS]
    + ["age_days %s admixture = %s" % (TIMES, lv) for lv in OTHER_LEVELS]
)


def load_rows():
    with open(CSV_PATH, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    kept = [r for r in rows
            if all(r[c].strip() != "" for c in USED_COLUMNS)]
    return kept, len(rows) - len(kept)


def design(rows):
    x_rows = []
    y = []
    for r in rows:
        age = float(r["age_days"])
        wc = float(r["wc_ratio"])
        admix = r["admixture"].strip()
        if admix != REFERENCE_LEVEL and admix not in OTHER_LEVELS:
            raise ValueError("unexpected admixture level: %r" % admix)
        ind = [1.0 if admix == lv else 0.0 for lv in OTHER_LEVELS]
        x_rows.append([1.0, age, wc] + ind + [age * d for d in ind])
        y.append(float(r["strength_mpa"]))
    return np.array(x_rows, dtype=float), np.array(y, dtype=float)


def main():
    rows, n_dropped = load_rows()
    X, y = design(rows)
    res = sm.OLS(y, X).fit()
    ci = res.conf_int(alpha=0.05)

    coefficients = []
    for i, label in enumerate(LABELS):
        coefficients.append({
            "label": label,
            "estimate": float(res.params[i]),
            "std_error": float(res.bse[i]),
            "t": float(res.tvalues[i]),
            "p": float(res.pvalues[i]),
            "ci_low": float(ci[i, 0]),
            "ci_high": float(ci[i, 1]),
        })

    out = {
        "source": "statsmodels %s OLS, numpy %s, computed by "
                  "tests/reference/cylinders_statsmodels.py"
                  % (statsmodels.__version__, np.__version__),
        "statsmodels_version": statsmodels.__version__,
        "numpy_version": np.__version__,
        "notes": "Confidence intervals are 95% (t distribution). sigma is "
                 "sqrt(scale), the residual standard error. "
                 "aic_statsmodels and bic_statsmodels are statsmodels' "
                 "values, which count only the regression coefficients "
                 "(k = df_model + 1) as parameters, not the error variance; "
                 "a convention counting the error variance adds 2 to AIC "
                 "and log(n_used) to BIC.",
        "n_used": int(res.nobs),
        "n_dropped": n_dropped,
        "coefficients": coefficients,
        "fit": {
            "r_squared": float(res.rsquared),
            "adj_r_squared": float(res.rsquared_adj),
            "sigma": math.sqrt(float(res.scale)),
            "df_model": float(res.df_model),
            "df_residual": float(res.df_resid),
            "f": float(res.fvalue),
            "f_p": float(res.f_pvalue),
            "log_likelihood": float(res.llf),
            "aic_statsmodels": float(res.aic),
            "bic_statsmodels": float(res.bic),
        },
    }

    with open(OUT_PATH, "w", encoding="utf-8", newline="\n") as f:
        json.dump(out, f, indent=2, ensure_ascii=False)
        f.write("\n")


if __name__ == "__main__":
    main()

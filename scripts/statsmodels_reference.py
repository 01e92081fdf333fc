"""Reference values for the categorical and regression likelihood-ratio tests.

Writes into test/fixtures/statsmodels/:
  regression-data.csv   a seeded generated dataset (numpy default_rng(20240611))
  regression-ref.json   statsmodels Logit / MNLogit / OLS fits on it (coefficients, log-likelihoods)
  ucb-scipy.json        scipy.stats.chi2_contingency per department of the Berkeley admissions
                        counts (ucb-admissions.json), Pearson (correction=False) and
                        likelihood-ratio (lambda_="log-likelihood")

Run:  python3 scripts/statsmodels_reference.py            (writes the fixtures)
      python3 scripts/statsmodels_reference.py --ucb      (prints the scipy Berkeley values as JSON)
"""
import json
import os
import sys

import numpy as np
from scipy.stats import chi2_contingency

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "statsmodels")


def ucb():
    with open(os.path.join(OUT, "ucb-admissions.json")) as f:
        data = json.load(f)
    depts = []
    for d in data["departments"]:
        t = np.array([[d["men_admitted"], d["men_rejected"]], [d["women_admitted"], d["women_rejected"]]])
        x2 = chi2_contingency(t, correction=False)[0]
        g2 = chi2_contingency(t, correction=False, lambda_="log-likelihood")[0]
        depts.append({"dept": d["dept"], "x2": float(x2), "g2": float(g2)})
    return {
        "source": "scipy.stats.chi2_contingency(correction=False) and lambda_='log-likelihood', scipy "
        + __import__("scipy").__version__,
        "departments": depts,
        "x2_sum": float(sum(d["x2"] for d in depts)),
        "g2_sum": float(sum(d["g2"] for d in depts)),
    }


def regression():
    import statsmodels.api as sm

    rng = np.random.default_rng(20240611)
    n = 600
    x1 = rng.normal(size=n)
    x2 = rng.integers(0, 2, size=n)
    x3 = rng.integers(0, 3, size=n)  # nominal, 3 levels
    d31 = (x3 == 1).astype(float)
    d32 = (x3 == 2).astype(float)
    eta = -0.3 + 0.8 * x1 - 0.5 * x2 + 0.4 * d31 - 0.7 * d32
    yb = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(int)
    e1 = 0.2 + 0.5 * x1 + 0.3 * x2 - 0.4 * d31
    e2 = -0.4 - 0.6 * x1 + 0.2 * x2 + 0.5 * d32
    pr = np.column_stack([np.ones(n), np.exp(e1), np.exp(e2)])
    pr /= pr.sum(axis=1, keepdims=True)
    u = rng.random(n)
    ym = (u[:, None] > pr.cumsum(axis=1)).sum(axis=1)
    yc = 1.0 + 0.5 * x1 - 0.25 * x2 + 0.3 * d31 + rng.normal(scale=1.3, size=n)

    with open(os.path.join(OUT, "regression-data.csv"), "w") as f:
        f.write("x1,x2,x3,yb,ym,yc\n")
        for i in range(n):
            f.write(f"{float(x1[i])!r},{int(x2[i])},{int(x3[i])},{int(yb[i])},{int(ym[i])},{float(yc[i])!r}\n")

    X_full = np.column_stack([np.ones(n), x1, x2, d31, d32])
    X_null = np.column_stack([np.ones(n), x2, d31, d32])  # without x1
    out = {"source": f"statsmodels {sm.__version__ if hasattr(sm, '__version__') else __import__('statsmodels').__version__}, numpy {np.__version__}",
           "columns": ["const", "x1", "x2", "x3=1", "x3=2"]}
    lf = sm.Logit(yb, X_full).fit(disp=0, tol=1e-12, maxiter=100)
    l0 = sm.Logit(yb, X_null).fit(disp=0, tol=1e-12, maxiter=100)
    out["logit"] = {"params": lf.params.tolist(), "llf": float(lf.llf), "llf_null_without_x1": float(l0.llf), "llr": float(2 * (lf.llf - l0.llf))}
    mf = sm.MNLogit(ym, X_full).fit(disp=0, method="newton", tol=1e-12, maxiter=100)
    m0 = sm.MNLogit(ym, X_null).fit(disp=0, method="newton", tol=1e-12, maxiter=100)
    # params: p × (K−1), column k is category k+1 against category 0
    out["mnlogit"] = {"params": np.asarray(mf.params).T.tolist(), "llf": float(mf.llf), "llf_null_without_x1": float(m0.llf), "llr": float(2 * (mf.llf - m0.llf))}
    of = sm.OLS(yc, X_full).fit()
    o0 = sm.OLS(yc, X_null).fit()
    out["ols"] = {"params": of.params.tolist(), "llf": float(of.llf), "llf_null_without_x1": float(o0.llf), "llr": float(2 * (of.llf - o0.llf)),
                  "ssr": float(of.ssr), "ssr_null": float(o0.ssr)}
    # grouped (weighted) logistic: categorical predictors only, frequency weights via GLM
    Xc = np.column_stack([np.ones(n), x2, d31, d32])
    gf = sm.GLM(yb, Xc, family=sm.families.Binomial()).fit(tol=1e-12)
    out["logit_categorical"] = {"params": gf.params.tolist(), "llf": float(gf.llf)}
    with open(os.path.join(OUT, "regression-ref.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    if "--ucb" in sys.argv:
        print(json.dumps(ucb()))
    else:
        with open(os.path.join(OUT, "ucb-scipy.json"), "w") as f:
            json.dump(ucb(), f, indent=1)
            f.write("\n")
        regression()

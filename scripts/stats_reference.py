#!/usr/bin/env python3
"""Reference values for arrowaudit's statistics core, from numpy, scipy, statsmodels and mpmath.

Writes one JSON file per topic into test/fixtures/stats/ (or --out DIR); --only NAME writes
just that topic. The committed fixtures are this script's output; the tests rerun it when
python3 and the modules are present and fall back to the fixtures otherwise.

Topics:
  partial    generated data; partial correlations by the residual method (numpy lstsq with
             intercept, then np.corrcoef), t, df, two-sided p (scipy.stats.t.sf), log p,
             95% Fisher-z interval (scipy.stats.norm.ppf(0.975)) and the interval that inverts
             the t test, tanh(z -+ scipy.stats.t.ppf(0.975, df) |z / t|); the same on mid-ranks
             (scipy.stats.rankdata, method="average") for the Spearman partial correlation
  tails      scipy.stats.chi2.sf and 2*scipy.stats.t.sf down to 1e-300; natural logs by mpmath
             (50 digits) also where the tail underflows
  gamma      regularized incomplete gamma P and Q (mpmath, 40 digits), including large shapes
  ncx2       scipy.stats.ncx2.cdf and .sf
  quantiles  scipy.stats.norm.ppf, scipy.stats.chi2.ppf and .isf
  adjust     statsmodels.stats.multitest.multipletests ("holm", "fdr_bh"), and
             scipy.stats.false_discovery_control for BH
  fisher     scipy.stats.combine_pvalues(method="fisher")
  effect     noncentrality bounds by scipy.optimize.brentq on scipy.stats.ncx2.sf
"""
import argparse
import json
import math
import os
import sys

import numpy as np
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT_OUT = os.path.join(HERE, "..", "test", "fixtures", "stats")
Z975 = float(stats.norm.ppf(0.975))


def residual_partial(data, i, j, given):
    """Partial correlation of columns i, j given `given` by regressing both on [1, given].

    Columns are centred first: with the raw 1e6 offset column, lstsq on [1, big] loses about
    1e-9 relative accuracy (checked against a 60-digit mpmath solution of the same problem).
    """
    data = data - data.mean(axis=0)
    n = data.shape[0]
    X = np.column_stack([np.ones(n)] + [data[:, g] for g in given])
    ri = data[:, i] - X @ np.linalg.lstsq(X, data[:, i], rcond=None)[0]
    rj = data[:, j] - X @ np.linalg.lstsq(X, data[:, j], rcond=None)[0]
    return float(np.corrcoef(ri, rj)[0, 1])


def t_test(r, n, c):
    df = n - 2 - c
    t = r * math.sqrt(df / (1 - r * r))
    p = float(2 * stats.t.sf(abs(t), df))
    log_p = float(math.log(2) + stats.t.logsf(abs(t), df))
    half = Z975 / math.sqrt(n - c - 3)
    z = math.atanh(r)
    # the interval that inverts the t test: Fisher's z with the standard error |z / t| the test implies
    half_t = float(stats.t.ppf(0.975, df)) * abs(z / t)
    return {"t": t, "df": df, "p": p, "log_p": log_p, "ci": [math.tanh(z - half), math.tanh(z + half)],
            "ci_test": [math.tanh(z - half_t), math.tanh(z + half_t)]}


def make_datasets():
    rng = np.random.default_rng(20240611)
    out = []
    # A: continuous, n = 200; w is nearly a linear function of z1 and z2; "big" has a large offset
    n = 200
    z1 = rng.normal(size=n)
    z2 = rng.normal(size=n)
    x = 0.5 * z1 + rng.normal(size=n)
    y = 0.3 * x + 0.4 * z2 + rng.normal(size=n)
    w = z1 + z2 + 0.05 * rng.normal(size=n)
    big = 1e6 + 0.01 * (z1 - z2) + 0.01 * rng.normal(size=n)
    out.append(("continuous", ["x", "y", "z1", "z2", "w", "big"], np.column_stack([x, y, z1, z2, w, big])))
    # B: tied integer scores and a skewed variable, n = 60 (mid-ranks matter)
    n = 60
    a = rng.integers(0, 5, size=n).astype(float)
    b = np.round(a + rng.normal(size=n))
    c = np.exp(rng.normal(size=n)) + 0.3 * a
    d = rng.integers(0, 2, size=n).astype(float)
    out.append(("ties", ["a", "b", "c", "d"], np.column_stack([a, b, c, d])))
    # C: small n = 8, a strong association
    n = 8
    u = rng.normal(size=n)
    v = u + 0.2 * rng.normal(size=n)
    s = rng.normal(size=n)
    out.append(("small", ["u", "v", "s"], np.column_stack([u, v, s])))
    return out


def topic_partial():
    sets = []
    for name, cols, data in make_datasets():
        k = data.shape[1]
        n = data.shape[0]
        ranks = np.column_stack([stats.rankdata(data[:, q], method="average") for q in range(k)])
        cases = []
        for i in range(k):
            for j in range(i + 1, k):
                others = [q for q in range(k) if q not in (i, j)]
                for given in ([], others[:1], others[:2], others[:3]):
                    if n - 3 - len(given) < 1:
                        continue
                    r = residual_partial(data, i, j, given)
                    rho = residual_partial(ranks, i, j, given)
                    cases.append({
                        "i": i, "j": j, "given": list(given),
                        "pearson": dict(r=r, **t_test(r, n, len(given))),
                        "spearman": dict(r=rho, **t_test(rho, n, len(given))),
                    })
        sets.append({"name": name, "columns": cols, "n": n, "data": data.T.tolist(), "ranks": ranks.T.tolist(), "cases": cases})
    return {"source": "numpy residual method + scipy.stats.t / norm / rankdata, scripts/stats_reference.py", "sets": sets}


def topic_tails():
    import mpmath as mp
    mp.mp.dps = 50
    chi = []
    for x, df in [(0.5, 1), (3.841458820694124, 1), (10, 3), (80, 3), (200, 10), (700, 1), (1300, 3), (1380, 3),
                  (1400, 3), (1500, 3), (5000, 3), (3000, 100), (1e5, 1e4), (1200, 1000), (950, 1000), (20000, 20000),
                  (1e-3, 2), (4e4, 2)]:
        sf = float(stats.chi2.sf(x, df))
        log_sf = float(mp.log(mp.gammainc(mp.mpf(df) / 2, mp.mpf(x) / 2, mp.inf, regularized=True)))
        chi.append({"x": x, "df": df, "p": sf, "log_p": log_sf})
    tt = []
    for t, df in [(0.3, 5), (2.0345, 33), (5.82, 33), (40, 10), (1e3, 20), (50, 1000), (1e10, 3), (1e30, 10), (1e6, 50),
                  (1e200, 3), (300, 1e5), (8, 2), (1e5, 1), (3, 1e4)]:
        p = float(2 * stats.t.sf(t, df))
        tm, dfm = mp.mpf(t), mp.mpf(df)
        log_p = float(mp.log(mp.betainc(dfm / 2, mp.mpf(1) / 2, 0, dfm / (dfm + tm * tm), regularized=True)))
        tt.append({"t": t, "df": df, "p": p, "log_p": log_p})
    return {"source": "scipy.stats.chi2.sf, 2*scipy.stats.t.sf (p); mpmath 50 digits (log_p); scripts/stats_reference.py",
            "chi2": chi, "t": tt}


def topic_gamma():
    import mpmath as mp
    mp.mp.dps = 40
    rows = []
    for a in [0.5, 1, 1.5, 5, 20, 100, 500, 1000, 2000, 5000, 1e4, 1e5, 1e6]:
        for kz in [-8, -5, -2, -1, -0.3, 0, 0.3, 1, 2, 5, 20, 40]:
            x = a + kz * math.sqrt(a)
            if x <= 0:
                continue
            Q = mp.gammainc(mp.mpf(a), mp.mpf(x), mp.inf, regularized=True)
            try:
                P = mp.gammainc(mp.mpf(a), 0, mp.mpf(x), regularized=True)
            except mp.libmp.libhyper.NoConvergence:
                P = 1 - Q  # 40 digits leave P to 1e-25 absolute; used only where P is not tiny
                if P < mp.mpf(10) ** -20:
                    raise
            log_q = mp.log1p(-P) if Q > 0.5 else mp.log(Q)  # log1p keeps digits when Q is near 1
            rows.append({"a": a, "x": x, "P": float(P), "Q": float(Q), "log_Q": float(log_q)})
    return {"source": "mpmath.gammainc(regularized=True), 40 digits, scripts/stats_reference.py", "rows": rows}


def topic_ncx2():
    rows = []
    for x, df, lam in [(3, 2, 1), (0.5, 1, 0.1), (100, 5, 20), (200, 5, 20), (5, 10, 1e-8), (10, 3, 5), (1, 1, 30),
                       (60, 4, 50), (300, 20, 200), (1100, 10, 1000), (2, 1, 500), (40, 7, 3), (0.01, 2, 2)]:
        rows.append({"x": x, "df": df, "lambda": lam, "cdf": float(stats.ncx2.cdf(x, df, lam)), "sf": float(stats.ncx2.sf(x, df, lam))})
    return {"source": "scipy.stats.ncx2.cdf / .sf, scripts/stats_reference.py", "rows": rows}


def topic_quantiles():
    ps = [1e-300, 1e-20, 1e-10, 1e-5, 0.001, 0.025, 0.1, 0.3, 0.5, 0.7, 0.9, 0.975, 0.999, 1 - 1e-10]
    normal = [{"p": p, "q": float(stats.norm.ppf(p))} for p in ps]
    chi = []
    for df in [0.5, 1, 2, 3, 5, 10, 30, 100, 1000, 1e5]:
        for p in [1e-10, 0.001, 0.05, 0.5, 0.95, 0.99, 0.999999]:
            chi.append({"p": p, "df": df, "q": float(stats.chi2.ppf(p, df))})
    upper = []
    for df in [1, 4, 30]:
        for alpha in [1e-10, 1e-50, 1e-200]:
            upper.append({"alpha": alpha, "df": df, "q": float(stats.chi2.isf(alpha, df))})
    return {"source": "scipy.stats.norm.ppf, scipy.stats.chi2.ppf / .isf, scripts/stats_reference.py",
            "normal": normal, "chi2": chi, "chi2_upper": upper}


def topic_adjust():
    rng = np.random.default_rng(7)
    vectors = [
        [0.01, 0.04, 0.03],
        [0.001, 0.002, 0.002, 0.5, 0.04, 0.04, 0.9, 1.0, 0.0],
        list(rng.uniform(size=25)),
        list(np.concatenate([rng.uniform(0, 0.01, size=10), rng.uniform(size=30)])),
        [0.2],
        list(np.round(rng.uniform(size=40), 2)),  # many ties
    ]
    rows = []
    for p in vectors:
        row = {"p": [float(v) for v in p]}
        try:
            from statsmodels.stats.multitest import multipletests
            row["holm"] = [float(v) for v in multipletests(p, method="holm")[1]]
            row["bh"] = [float(v) for v in multipletests(p, method="fdr_bh")[1]]
            row["holm_source"] = "statsmodels.stats.multitest.multipletests(method='holm')"
        except ImportError:
            pass
        row["bh_scipy"] = [float(v) for v in stats.false_discovery_control(p, method="bh")]
        rows.append(row)
    return {"source": "statsmodels multipletests and scipy.stats.false_discovery_control, scripts/stats_reference.py", "rows": rows}


def topic_fisher():
    rows = []
    for p in [[0.05, 0.5], [0.01, 0.2, 0.3, 0.9], [1e-10, 1e-20, 0.5], [0.9] * 50, list(np.linspace(0.01, 0.99, 1500))]:
        res = stats.combine_pvalues(p, method="fisher")
        rows.append({"p": [float(v) for v in p], "statistic": float(res.statistic), "pvalue": float(res.pvalue)})
    return {"source": "scipy.stats.combine_pvalues(method='fisher'), scripts/stats_reference.py", "rows": rows}


def topic_effect():
    rows = []
    for lr, df, n in [(20, 1, 100), (5, 2, 300), (60, 4, 500), (3, 1, 50), (150, 3, 1000), (8, 6, 200)]:
        def bound(target):
            f = lambda lam: stats.ncx2.sf(lr, df, lam) - target
            if stats.chi2.sf(lr, df) >= target:
                return 0.0
            return optimize.brentq(f, 1e-12, 10 * lr + 100, xtol=1e-13, rtol=1e-14)
        lo, hi = bound(0.025), bound(0.975)
        rows.append({"lr": lr, "df": df, "n": n, "lambda": [lo, hi],
                     "ci": [math.sqrt(1 - math.exp(-lo / n)), math.sqrt(1 - math.exp(-hi / n))]})
    return {"source": "scipy.optimize.brentq on scipy.stats.ncx2.sf, scripts/stats_reference.py", "rows": rows}


TOPICS = {"partial": topic_partial, "tails": topic_tails, "gamma": topic_gamma, "ncx2": topic_ncx2,
          "quantiles": topic_quantiles, "adjust": topic_adjust, "fisher": topic_fisher, "effect": topic_effect}


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=DEFAULT_OUT)
    ap.add_argument("--only", choices=sorted(TOPICS))
    args = ap.parse_args()
    os.makedirs(args.out, exist_ok=True)
    for name, fn in TOPICS.items():
        if args.only and name != args.only:
            continue
        with open(os.path.join(args.out, name + ".json"), "w") as fh:
            json.dump(fn(), fh, indent=1)
            fh.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())

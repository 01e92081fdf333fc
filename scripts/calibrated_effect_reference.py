#!/usr/bin/env python3
"""Reference values for the effect of a G² tested by permutations, from numpy and scipy.

  intervals     for (G2, df, n, null mean m, null variance v, permutation p): the two-moment scaled
                chi-square a * chi2(nu), a = v / (2 m), nu = 2 m^2 / v; on several df the
                noncentralities lambda' with Phi(Phi^-1(scipy.stats.ncx2.sf(G2 / a, nu, lambda')) + d)
                = 0.05 (lower, 0 when p >= 0.05) and 0.975 (upper), d = Phi^-1(p) - Phi^-1(central
                tail) (scipy.optimize.brentq), mapped to the effect scale by
                sqrt(1 - exp(-a lambda' / n)), and the point sqrt(1 - exp(-max(0, G2 - m) / n)); on
                1 df the signed root sqrt(G2) -+ 1.96 sqrt(G2) / Phi^-1(1 - p/2) mapped by
                sign(d) sqrt(1 - exp(-d^2 / n)); p is the central tail where none is listed
  exact_null    a small stratified table (two strata, 3 x 3 and 2 x 3): every table with each
                stratum's margins, its multivariate hypergeometric probability
                prod(r_i!) prod(c_j!) / (n! prod(n_ij!)), and G2 of each; the exact mean and
                variance (and fourth central moment) of the stratified G2 under within-stratum
                permutation, and the exact
                permutation p-value of the observed G2

Run:  python3 scripts/calibrated_effect_reference.py          (writes test/fixtures/calibrated-effect/reference.json)
      python3 scripts/calibrated_effect_reference.py --print  (prints the same JSON)
"""
import itertools
import math
import os

import numpy as np
from reference_output import emit_reference
import scipy
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "calibrated-effect")


def bound(x, nu, target):
    sf = lambda lam: stats.ncx2.sf(x, nu, lam) if lam > 0 else stats.chi2.sf(x, nu)
    if sf(0) >= target:
        return 0.0
    hi = max(1.0, x)
    while sf(hi) < target:
        hi *= 2
    return float(optimize.brentq(lambda lam: sf(lam) - target, 0.0, hi, xtol=1e-14, rtol=1e-14, maxiter=500))


def intervals(alpha=0.05):
    """The recalibrated inversion (see the module docstring) at level 1 - alpha."""
    rows = []
    level = 1 - alpha
    for g2, df, n, m, v, p in [
        (104.6, 56, 100, 82.3, 45.0, None),
        (48.1, 13, 90, 22.6, 26.0, None),
        (126.7, 65, 80, 83.2, 51.0, None),
        (20.0, 4, 200, 4.0, 8.0, None),
        (69.0, 44, 100, 70.0, 42.0, None),
        (30.0, 1, 60, 1.3, 3.1, None),
        (104.6, 56, 100, 82.3, 45.0, 0.03),
        (104.6, 56, 100, 82.3, 45.0, 0.07),
        (48.1, 13, 90, 22.6, 26.0, 0.004),
        (20.0, 4, 200, 4.0, 8.0, 0.0449),
        (30.0, 1, 60, 1.3, 3.1, 0.03),
        (3.0, 1, 60, 1.3, 3.1, 0.2),
    ]:
        a = v / (2 * m)
        nu = 2 * m * m / v
        tail0 = float(stats.chi2.sf(g2 / a, nu))
        if p is None:
            p = tail0
        to_e = lambda lam: math.sqrt(-math.expm1(-lam / n))
        if df == 1:
            # signed root with the standard error implied by p: sqrt(G2) -+ z_{1-alpha/2} sqrt(G2) / z_{1-p/2}
            z = math.sqrt(g2)
            half = stats.norm.isf(alpha / 2) * z / stats.norm.isf(p / 2)
            m_ = lambda d: math.copysign(math.sqrt(-math.expm1(-d * d / n)), d)
            ci = [m_(z - half), m_(z + half)]
            lam = [None, None]
            effect = to_e(g2)
        else:
            delta = stats.norm.ppf(p) - stats.norm.ppf(tail0)
            target = lambda t: float(stats.norm.cdf(stats.norm.ppf(t) - delta))
            lam_lo = bound(g2 / a, nu, target(alpha)) if p < alpha else 0.0
            lam_hi = bound(g2 / a, nu, target((1 + level) / 2))
            lam = [a * lam_lo, a * lam_hi]
            ci = [to_e(a * lam_lo), to_e(a * lam_hi)]
            effect = to_e(max(0.0, g2 - m))
        rows.append({
            "g2": g2, "df": df, "n": n, "mean": m, "variance": v, "scale": a, "nu": nu, "p": p,
            "lambda": lam, "ci": ci, "effect": effect, "central_tail": tail0,
        })
    return rows


def tables_with_margins(rows, cols):
    """Every nonnegative integer table with the given margins."""
    r, c = len(rows), len(cols)
    out = []

    def rec(i, col_left, acc):
        if i == r - 1:
            out.append(acc + [list(col_left)])
            return
        for cells in itertools.product(*[range(min(rows[i], cl) + 1) for cl in col_left]):
            if sum(cells) != rows[i]:
                continue
            rec(i + 1, [cl - k for cl, k in zip(col_left, cells)], acc + [list(cells)])

    rec(0, list(cols), [])
    return out


def g2_of(t):
    t = np.array(t, dtype=float)
    rs, cs, n = t.sum(axis=1), t.sum(axis=0), t.sum()
    e = np.outer(rs, cs) / n
    mask = t > 0
    return float(2 * np.sum(t[mask] * np.log(t[mask] / e[mask])))


def log_prob(t):
    t = np.array(t)
    lf = lambda k: math.lgamma(k + 1)
    return (sum(lf(x) for x in t.sum(axis=1)) + sum(lf(x) for x in t.sum(axis=0)) - lf(t.sum())
            - sum(lf(x) for x in t.ravel()))


def exact_null():
    strata = [[[3, 0, 1], [0, 2, 1], [1, 1, 0]], [[2, 0, 1], [0, 3, 0]]]
    dists = []
    for s in strata:
        s = np.array(s)
        d = {}
        for t in tables_with_margins(list(s.sum(axis=1)), list(s.sum(axis=0))):
            key = round(g2_of(t), 9)
            d[key] = d.get(key, 0.0) + math.exp(log_prob(t))
        dists.append(d)
    total = {0.0: 1.0}
    for d in dists:
        nxt = {}
        for a, pa in total.items():
            for b, pb in d.items():
                k = round(a + b, 9)
                nxt[k] = nxt.get(k, 0.0) + pa * pb
        total = nxt
    vals = np.array(list(total.keys()))
    probs = np.array(list(total.values()))
    mean = float(np.sum(vals * probs))
    var = float(np.sum((vals - mean) ** 2 * probs))
    mu4 = float(np.sum((vals - mean) ** 4 * probs))
    observed = sum(g2_of(s) for s in strata)
    p = float(np.sum(probs[vals >= observed - 1e-9]))
    return {"strata": strata, "g2": observed, "df": 6, "mean": mean, "variance": var, "mu4": mu4, "p": p, "total_probability": float(np.sum(probs))}


def main():
    doc = {
        "source": f"numpy {np.__version__}, scipy {scipy.__version__}; scripts/calibrated_effect_reference.py",
        "intervals": intervals(),
        "exact_null": exact_null(),
    }
    emit_reference(doc, OUT)


if __name__ == "__main__":
    main()

"""Reference values for the noncentral chi-square grid test in test/stats/noncentralChiSquare.test.ts:
scipy.stats.ncx2.sf / .cdf on df 1-500, lambda 0-5000 and x in both tails down to p = 1e-300,
each checked against an independent 40-digit mpmath sum of the Poisson mixture of regularized
incomplete gammas (mpmath.gammainc), because scipy loses the far tails when lambda is large
(it returns sf = 0 at lambda = 5000 where the tail is about 1e-181). x is chosen by
scipy.stats.ncx2.isf / .ppf at the target p (only a way to place x; the values are recomputed).
Writes test/fixtures/ncx2-grid/ncx2-grid.json (about 4 minutes, mostly mpmath).
With --scipy-at-fixture it only prints (JSON, stdout) scipy's sf and cdf at the committed
fixture's points, in seconds; the test runs that live when python3 with scipy is present.
Run: python3 scripts/ncx2_grid_reference.py"""
import json
import math
import os
import sys

import mpmath as mp
from scipy import stats

mp.mp.dps = 40
DFS = [1, 2, 5, 10, 50, 500]
LAMBDAS = [0, 0.5, 5, 50, 500, 5000]
TARGETS = [0.5, 0.05, 1e-10, 1e-50, 1e-150, 1e-300]


def mp_tail(x, df, lam, upper):
    """sum_j Poisson(j; lam/2) * (Q or P)(df/2 + j, x/2), summed outward from the Poisson mode."""
    z = mp.mpf(x) / 2
    a0 = mp.mpf(df) / 2

    def tail(a):
        return mp.gammainc(a, z, mp.inf, regularized=True) if upper else mp.gammainc(a, 0, z, regularized=True)

    if lam == 0:
        return tail(a0)
    mu = mp.mpf(lam) / 2
    mode = int(math.floor(lam / 2))
    total = mp.mpf(0)
    for js in (range(mode, mode + 10**6), range(mode - 1, -1, -1)):
        for j in js:
            term = mp.exp(-mu + j * mp.log(mu) - mp.loggamma(j + 1)) * tail(a0 + j)
            total += term
            # terms are unimodal in j, so once past 10 terms a term this small ends the side
            if abs(j - mode) > 10 and term < total * mp.mpf(10) ** -30:
                break
    return total


here = os.path.dirname(os.path.abspath(__file__))
path = os.path.join(here, "..", "test", "fixtures", "ncx2-grid", "ncx2-grid.json")
if "--scipy-at-fixture" in sys.argv:
    with open(path) as f:
        fixture = json.load(f)
    print(json.dumps([{"sf": float(stats.ncx2.sf(r["x"], r["df"], r["lambda"])), "cdf": float(stats.ncx2.cdf(r["x"], r["df"], r["lambda"]))}
                      for r in fixture["rows"]]))
    sys.exit(0)

rows = []
for df in DFS:
    for lam in LAMBDAS:
        xs = set()
        for p in TARGETS:
            for x in (float(stats.ncx2.isf(p, df, lam)), float(stats.ncx2.ppf(p, df, lam))):
                if math.isfinite(x) and x > 0:
                    xs.add(x)
        for x in sorted(xs):
            sf_mp = mp_tail(x, df, lam, True)
            cdf_mp = mp_tail(x, df, lam, False)
            rows.append({
                "x": x, "df": df, "lambda": lam,
                "sf": float(stats.ncx2.sf(x, df, lam)), "cdf": float(stats.ncx2.cdf(x, df, lam)),
                "sf_mpmath": float(sf_mp), "cdf_mpmath": float(cdf_mp),
            })

out = {"origin": "scipy.stats.ncx2.sf / .cdf and a 40-digit mpmath Poisson mixture (scripts/ncx2_grid_reference.py)", "rows": rows}
os.makedirs(os.path.dirname(path), exist_ok=True)
with open(path, "w") as f:
    json.dump(out, f, indent=1)
print(f"wrote {len(rows)} rows to {path}")

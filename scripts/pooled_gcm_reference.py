"""Reference values for pooled flexible claims (test/audit/poolFlexible.test.ts).

Reads a JSON document written by the test: per claim, per site, the residuals of each side
column kept by the site's own fit (`residuals`: q lists of n values, x's first), the number of
x side columns `qx`, the site's adjustment columns `params`, and, for a binary or nominal side, the
conditional covariance of the residual products at each row under the claim (`variance`: n lists of
qq*qq values; e.g. e_x^2 * pi(1 - pi) at the fitted probability pi of a binary y).
For each claim it stacks the sites' residual products R_t = e_x,t (x) e_y,t and computes the
generalised covariance measure (Shah & Peters 2020, Annals of Statistics 48:1514-1538) with
P = sum of the sites' params + (sites - 1) adjustment columns (the set interacted with site):
- one product: T = sqrt(N) * mean(R) / R.std(ddof=0) * sqrt((N - 1 - P) / N) (with `variance`:
  sqrt(mean(V) - mean(R)^2) in place of R.std), referred to Student's t on N - 2 - P df
  (scipy.stats.t.sf, two-sided);
- several products: W = N * mean(R)' S^-1 mean(R) with S = mean of the rows' variances - mean(R)
  mean(R)' (numpy.linalg.solve), scaled by (N - 1 - P)/N, F = W * (nu - q + 1)/(q * nu) on
  (q, nu - q + 1) df (scipy.stats.f.sf), nu = N - 2 - P.
Usage: python3 scripts/pooled_gcm_reference.py input.json [out_dir] [--print]
"""
import json
import sys

import numpy as np
from scipy import stats

from reference_output import emit_reference

args = [a for a in sys.argv[1:] if a != "--print"]
with open(args[0]) as f:
    doc = json.load(f)
out = {}
for name, claim in doc["claims"].items():
    products = []
    variances = []
    P = len(claim["sites"]) - 1
    for site in claim["sites"]:
        e = np.array(site["residuals"], dtype=float)
        qx = site["qx"]
        ex, ey = e[:qx], e[qx:]
        products.append(np.einsum("an,bn->nab", ex, ey).reshape(e.shape[1], -1))
        if "variance" in site:
            variances.append(np.array(site["variance"], dtype=float))
        P += site["params"]
    R = np.vstack(products)
    N, q = R.shape
    nu = N - 2 - P
    mean = R.mean(axis=0)
    if q == 1:
        sd = np.sqrt(np.vstack(variances).mean() - mean[0] ** 2) if variances else R[:, 0].std(ddof=0)
        t = np.sqrt(N) * mean[0] / sd * np.sqrt((N - 1 - P) / N)
        out[name] = {"n": N, "df": nu, "statistic": float(t), "p": float(2 * stats.t.sf(abs(t), nu))}
    else:
        V = np.vstack(variances).reshape(N, q, q).mean(axis=0) - np.outer(mean, mean)
        w = N * mean @ np.linalg.solve(V, mean) * (N - 1 - P) / N
        df2 = nu - q + 1
        fstat = w * df2 / (q * nu)
        out[name] = {"n": N, "df": q, "statistic": float(w), "f": float(fstat), "p": float(stats.f.sf(fstat, q, df2))}
emit_reference(out, args[1] if len(args) > 1 else ".")

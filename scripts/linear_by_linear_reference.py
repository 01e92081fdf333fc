#!/usr/bin/env python3
"""Reference values for the stratified linear-by-linear association test, from numpy and scipy.

Everything here is computed from the definition, independently of arrowaudit's code:

  one_stratum   a seeded 5 x 4 ordinal table with unequal scores; Q = (n - 1) r^2 with r from
                scipy.stats.pearsonr on the expanded rows; p = scipy.stats.chi2.sf(Q, 1) and
                log p = scipy.stats.chi2.logsf(Q, 1)
  stratified    seeded strata (one with a single row level, one with a single row, one with an
                empty row and column); per stratum, on the expanded rows (u, v):
                  T = sum(u v), E = sum(u) sum(v) / n,
                  V = (n sum(u^2) - sum(u)^2)(n sum(v^2) - sum(v)^2) / (n^2 (n - 1))
                (Mantel 1963, JASA 58:690-700), summed over strata; Q = (sum T - sum E)^2 / sum V;
                the pooled within-stratum correlation from numpy residuals about stratum means
  exact         a 7-row stratum: the exact mean and variance of T over all 7! orderings of x
                (itertools.permutations), which E and V must equal (the n - 1 denominator)
  malformation  infant malformation by maternal alcohol consumption, scores 0, 0.5, 1.5, 4, 7
                (the worked example of Agresti, Categorical Data Analysis, section 3.4): n, r, M^2, p

Run:  python3 scripts/linear_by_linear_reference.py          (writes test/fixtures/linear-by-linear/reference.json)
      python3 scripts/linear_by_linear_reference.py --print  (prints the same JSON)
"""
import itertools
import math
import os

import numpy as np
from reference_output import emit_reference
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "linear-by-linear")


def expand(counts, row_scores, col_scores):
    """Rows (u, v) of a table: one per counted case, in row-major cell order."""
    u, v = [], []
    for i, rs in enumerate(row_scores):
        for j, cs in enumerate(col_scores):
            k = int(counts[i][j])
            u += [rs] * k
            v += [cs] * k
    return np.array(u, dtype=float), np.array(v, dtype=float)


def stratum_moments(counts, row_scores, col_scores):
    u, v = expand(counts, row_scores, col_scores)
    n = len(u)
    t = float(np.sum(u * v))
    if n < 2:
        return {"n": n, "t": t, "e": t, "v": 0.0, "used": False}
    e = float(np.sum(u) * np.sum(v) / n)
    var = float((n * np.sum(u * u) - np.sum(u) ** 2) * (n * np.sum(v * v) - np.sum(v) ** 2) / (n * n * (n - 1)))
    used = bool(np.ptp(u) > 0 and np.ptp(v) > 0)
    return {"n": n, "t": t, "e": e if used else t, "v": var if used else 0.0, "used": used}


def one_stratum():
    rng = np.random.default_rng(20240701)
    row_scores = [1.0, 2.0, 3.0, 5.0, 8.0]
    col_scores = [0.0, 1.0, 2.0, 3.0]
    # a mild monotone trend: cell weight grows with the product of the level ranks
    w = np.array([[1.0 + 0.15 * i * j for j in range(4)] for i in range(5)])
    counts = rng.multinomial(150, (w / w.sum()).ravel()).reshape(5, 4)
    u, v = expand(counts, row_scores, col_scores)
    r = float(stats.pearsonr(u, v).statistic)
    n = len(u)
    q = (n - 1) * r * r
    return {
        "counts": counts.tolist(),
        "row_scores": row_scores,
        "col_scores": col_scores,
        "n": n,
        "r": r,
        "q": q,
        "p": float(stats.chi2.sf(q, 1)),
        "log_p": float(stats.chi2.logsf(q, 1)),
    }


def stratified():
    rng = np.random.default_rng(20240702)
    row_scores = [1.0, 2.0, 4.0, 7.0]
    col_scores = [0.0, 1.0, 2.0, 3.0, 10.0]
    strata = []
    for s in range(5):
        lam = np.array([[2.0 + 0.4 * (i - 1.5) * (j - 2) + s for j in range(5)] for i in range(4)])
        strata.append(rng.poisson(np.clip(lam, 0.3, None)).astype(int))
    strata[1][1:, :] = 0  # a single x level: contributes nothing
    strata[2][:, :] = 0
    strata[2][3][4] = 1  # a single row: contributes nothing
    strata[3][2, :] = 0  # an empty row and an empty column
    strata[3][:, 1] = 0
    per = [stratum_moments(c, row_scores, col_scores) for c in strata]
    used = [m for m in per if m["used"]]
    t = sum(m["t"] for m in used)
    e = sum(m["e"] for m in used)
    var = sum(m["v"] for m in used)
    q = (t - e) ** 2 / var
    # pooled within-stratum correlation: residuals about each stratum's means, stacked
    ru, rv = [], []
    for c, m in zip(strata, per):
        if not m["used"]:
            continue
        u, v = expand(c, row_scores, col_scores)
        ru.append(u - u.mean())
        rv.append(v - v.mean())
    ru = np.concatenate(ru)
    rv = np.concatenate(rv)
    r_within = float(np.sum(ru * rv) / math.sqrt(np.sum(ru * ru) * np.sum(rv * rv)))
    return {
        "row_scores": row_scores,
        "col_scores": col_scores,
        "strata": [c.tolist() for c in strata],
        "per_stratum": per,
        "n": int(sum(m["n"] for m in per)),
        "strata_used": len(used),
        "t": t,
        "e": e,
        "v": var,
        "q": q,
        "p": float(stats.chi2.sf(q, 1)),
        "log_p": float(stats.chi2.logsf(q, 1)),
        "correlation": r_within,
    }


def exact():
    counts = [[2, 1, 0], [0, 1, 1], [1, 0, 1]]
    row_scores = [0.0, 1.0, 3.0]
    col_scores = [1.0, 2.0, 5.0]
    u, v = expand(counts, row_scores, col_scores)
    ts = [float(np.dot(np.array(p), v)) for p in itertools.permutations(u)]
    m = stratum_moments(counts, row_scores, col_scores)
    return {
        "counts": counts,
        "row_scores": row_scores,
        "col_scores": col_scores,
        "orderings": len(ts),
        "mean": float(np.mean(ts)),
        "variance": float(np.var(ts)),
        "formula_e": m["e"],
        "formula_v": m["v"],
    }


def malformation():
    absent = [17066, 14464, 788, 126, 37]
    present = [48, 38, 5, 1, 1]
    scores = [0.0, 0.5, 1.5, 4.0, 7.0]
    u, v = expand([absent, present], [0.0, 1.0], scores)
    r = float(stats.pearsonr(u, v).statistic)
    n = len(u)
    q = (n - 1) * r * r
    return {"absent": absent, "present": present, "scores": scores, "n": n, "r": r, "q": q, "p": float(stats.chi2.sf(q, 1))}


def main():
    ex = exact()
    assert abs(ex["mean"] - ex["formula_e"]) < 1e-9 and abs(ex["variance"] - ex["formula_v"]) < 1e-9, ex
    doc = {
        "source": f"numpy {np.__version__}, scipy {scipy.__version__}; scripts/linear_by_linear_reference.py",
        "one_stratum": one_stratum(),
        "stratified": stratified(),
        "exact": ex,
        "malformation": malformation(),
    }
    emit_reference(doc, OUT)


if __name__ == "__main__":
    main()

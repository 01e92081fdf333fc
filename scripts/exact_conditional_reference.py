#!/usr/bin/env python3
"""Exact conditional (permutation) p-values of stratified tables, from scipy's pmfs by full enumeration.

Permuting x within each stratum keeps every stratum's margins, so the permutation distribution of
a stratified table is the product over strata of the distribution of each stratum's table given
its margins. Everything here is computed from that definition, independently of arrowaudit's code:

  2 x 2 x K   each stratum's n11 is hypergeometric given the margins:
              scipy.stats.hypergeom.pmf(k, M=n, n=first column total, N=first row total); the exact
              conditional test of a common odds ratio of 1 (Agresti 2013, Categorical Data Analysis,
              3rd ed., section 7.3) takes the distribution of S = sum_k n11k, the convolution of the
              K hypergeometric pmfs (numpy.convolve).
                p_cmh: P(|S - E[S]| >= |s - E[S]|), two-sided in the direction of sum n11k - E, the
                       exact permutation p-value of the CMH (= linear-by-linear) statistic
                p_g2:  P(G2* >= G2), G2 the stratified likelihood-ratio statistic, by enumerating every
                       combination of the n11k (the product of the strata's supports)
  r x c x K   each stratum's table given its margins, enumerated row by row, each row drawn from
              what is left of the columns: scipy.stats.multivariate_hypergeom.pmf(row, m=columns
              left, n=row total); the stratified G2 and, with scores, the linear-by-linear sum
              sum_s (T_s - E_s) (T_s = sum u_i v_j n_ij, E_s its null mean), combined over strata
              by enumerating every combination of the strata's tables
                p_g2:  P(G2* >= G2)
                p_lbl: P(|sum (T - E)*| >= |sum (T - E)|)
  williams    the exact permutation mean of G2 of single 2 x 2 tables (hypergeom pmf), beside
              Williams' (1976, Biometrika 63:33-37) factor q, which it should match to O(1/n^2)

A draw counts as reaching the observed statistic when it is >= observed - 1e-9 max(1, |observed|)
(ties up to rounding are ties; common practice).

Run:  python3 scripts/exact_conditional_reference.py          (writes test/fixtures/exact-conditional/reference.json)
      python3 scripts/exact_conditional_reference.py --print  (prints the same JSON)
"""
import itertools
import os

import numpy as np
from reference_output import emit_reference
import scipy
from scipy import stats
from scipy.special import xlogy

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "exact-conditional")


def reaches(value, observed):
    return value >= observed - 1e-9 * max(1.0, abs(observed))


def g2_of(table):
    """Likelihood-ratio G2 of one table over its non-empty rows and columns (0 ln 0 = 0)."""
    t = np.asarray(table, dtype=float)
    t = t[t.sum(axis=1) > 0][:, t.sum(axis=0) > 0]
    if t.shape[0] < 2 or t.shape[1] < 2:
        return 0.0
    e = np.outer(t.sum(axis=1), t.sum(axis=0)) / t.sum()
    return float(2 * np.sum(xlogy(t, t / e)))


def two_by_two_case(name, strata):
    """strata: [[n11, n12, n21, n22], ...]"""
    pmfs, supports, means = [], [], []
    for a, b, c, d in strata:
        row1, col1, n = a + b, a + c, a + b + c + d
        lo, hi = max(0, row1 + col1 - n), min(row1, col1)
        k = np.arange(lo, hi + 1)
        pmfs.append(stats.hypergeom.pmf(k, n, col1, row1))
        supports.append((lo, hi, row1, col1, n))
        means.append(stats.hypergeom.mean(n, col1, row1))
    # distribution of S = sum n11k: convolution of the hypergeometric pmfs
    dist = np.array([1.0])
    for p in pmfs:
        dist = np.convolve(dist, p)
    s_lo = sum(s[0] for s in supports)
    s_values = np.arange(s_lo, s_lo + len(dist))
    s_obs = sum(st[0] for st in strata)
    e_s = float(sum(means))
    dev = abs(s_obs - e_s)
    p_cmh = float(sum(pr for v, pr in zip(s_values, dist) if reaches(abs(v - e_s), dev)))
    # exact permutation p-value of the stratified G2: every combination of the n11k
    g2_obs = sum(g2_of([[a, b], [c, d]]) for a, b, c, d in strata)
    per_stratum = []
    for (lo, hi, row1, col1, n), p in zip(supports, pmfs):
        vals = []
        for k, pk in zip(range(lo, hi + 1), p):
            tab = [[k, row1 - k], [col1 - k, n - row1 - col1 + k]]
            vals.append((g2_of(tab), float(pk)))
        per_stratum.append(vals)
    p_g2 = 0.0
    total = 0.0
    for combo in itertools.product(*per_stratum):
        pr = float(np.prod([c[1] for c in combo]))
        total += pr
        if reaches(sum(c[0] for c in combo), g2_obs):
            p_g2 += pr
    return {
        "name": name,
        "strata": strata,
        "n11_sum": int(s_obs),
        "n11_mean": e_s,
        "n11_sum_support": [int(s_values[0]), int(s_values[-1])],
        "n11_sum_pmf": [float(v) for v in dist],
        "g2": g2_obs,
        "p_cmh": p_cmh,
        "p_g2": p_g2,
        "total_probability": total,
    }


def tables_with_margins(rows, cols):
    """Every table with the given margins and its probability under the permutation (multivariate
    hypergeometric) distribution, row by row from scipy.stats.multivariate_hypergeom."""
    out = []

    def rec(i, left, prefix, prob):
        if i == len(rows) - 1:
            if sum(left) == rows[i]:
                out.append((prefix + [list(left)], prob))
            return
        # every composition of rows[i] into at most left[j] per column
        def comps(j, need, cur):
            if j == len(left) - 1:
                if need <= left[j]:
                    yield cur + [need]
                return
            for v in range(0, min(need, left[j]) + 1):
                yield from comps(j + 1, need - v, cur + [v])
        for row in comps(0, rows[i], []):
            pr = stats.multivariate_hypergeom.pmf(x=row, m=list(left), n=rows[i]) if sum(left) > 0 else 1.0
            if pr <= 0:
                continue
            rec(i + 1, [l - v for l, v in zip(left, row)], prefix + [row], prob * float(pr))

    rec(0, list(cols), [], 1.0)
    return out


def rc_case(name, strata, row_scores=None, col_scores=None):
    """strata: list of r x c count matrices (lists of rows); optional scores for the linear-by-linear sum."""
    per_stratum = []
    g2_obs = 0.0
    lbl_obs = 0.0
    for k, t in enumerate(strata):
        t = np.asarray(t, dtype=float)
        rows, cols = [int(v) for v in t.sum(axis=1)], [int(v) for v in t.sum(axis=0)]
        n = sum(rows)
        g2_obs += g2_of(t)
        vals = []
        if row_scores is not None:
            u, v = np.asarray(row_scores[k], float), np.asarray(col_scores[k], float)
            e = (u @ np.asarray(rows)) * (v @ np.asarray(cols)) / n
            lbl_obs += float(u @ t @ v - e)
        for tab, pr in tables_with_margins(rows, cols):
            tab = np.asarray(tab, dtype=float)
            d = float(u @ tab @ v - e) if row_scores is not None else 0.0
            vals.append((g2_of(tab), d, pr))
        per_stratum.append(vals)
    p_g2 = 0.0
    p_lbl = 0.0
    total = 0.0
    count = 0
    for combo in itertools.product(*per_stratum):
        pr = float(np.prod([c[2] for c in combo]))
        total += pr
        count += 1
        if reaches(sum(c[0] for c in combo), g2_obs):
            p_g2 += pr
        if row_scores is not None and reaches(abs(sum(c[1] for c in combo)), abs(lbl_obs)):
            p_lbl += pr
    out = {
        "name": name,
        "strata": [np.asarray(t).astype(int).tolist() for t in strata],
        "g2": g2_obs,
        "p_g2": p_g2,
        "combinations": count,
        "total_probability": total,
    }
    if row_scores is not None:
        out.update({"row_scores": row_scores, "col_scores": col_scores, "lbl_sum": lbl_obs, "p_lbl": p_lbl})
    return out


def williams_rows():
    rows = []
    for row1, row2, col1, col2 in [(50, 50, 50, 50), (30, 120, 60, 90), (20, 80, 30, 70)]:
        n = row1 + row2
        lo, hi = max(0, row1 + col1 - n), min(row1, col1)
        mean = 0.0
        for k in range(lo, hi + 1):
            pk = stats.hypergeom.pmf(k, n, col1, row1)
            mean += pk * g2_of([[k, row1 - k], [col1 - k, row2 - col1 + k]])
        q = 1 + (n * (1 / row1 + 1 / row2) - 1) * (n * (1 / col1 + 1 / col2) - 1) / (6 * n)
        rows.append({"margins": [row1, row2, col1, col2], "exact_mean_g2": mean, "williams_q": q})
    return rows


def main():
    two = [
        two_by_two_case("moderate", [[3, 5, 2, 9], [4, 2, 1, 6], [2, 7, 5, 3]]),
        two_by_two_case("associated", [[6, 1, 2, 7], [5, 2, 1, 6], [4, 3, 2, 8]]),
        two_by_two_case("rare x", [[1, 9, 0, 30], [0, 12, 2, 25], [2, 8, 1, 40], [0, 5, 1, 20]]),
        two_by_two_case("one-sided support", [[2, 0, 3, 10], [1, 1, 0, 12], [3, 2, 4, 6], [0, 4, 2, 9], [5, 0, 6, 1]]),
    ]
    rc = [
        rc_case(
            "nominal 3 x 3 in 2 strata",
            [[[3, 1, 0], [1, 2, 2], [0, 1, 3]], [[2, 0, 1], [1, 3, 0], [0, 2, 2]]],
        ),
        rc_case(
            "ordinal 3 x 4 in 2 strata, unequal scores",
            [[[3, 1, 0, 1], [1, 2, 1, 0], [0, 1, 2, 1]], [[2, 1, 0, 0], [0, 2, 1, 1], [1, 0, 1, 3]]],
            row_scores=[[0, 1, 3], [0, 1, 3]],
            col_scores=[[1, 2, 4, 8], [1, 2, 4, 8]],
        ),
    ]
    doc = {
        "source": "scripts/exact_conditional_reference.py (scipy.stats.hypergeom, scipy.stats.multivariate_hypergeom, full enumeration)",
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "two_by_two": two,
        "r_by_c": rc,
        "williams": williams_rows(),
    }
    emit_reference(doc, OUT)


if __name__ == "__main__":
    main()

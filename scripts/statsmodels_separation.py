"""Reference values for the regression likelihood-ratio test under separation.

Writes into test/fixtures/statsmodels/:
  separation-null.csv        binary y that level z = "c" predicts perfectly (quasi-complete separation in
                             the null model), x associated with y in the other rows
  separation-full.csv        binary y = x (complete separation in the full model only) and binary y2
                             that is never 1 when x = 1 (an empty cell: quasi-complete in the full model only)
  separation-empty-cell.csv  5-category y by 6-level x with one empty cell of the x-by-y table
  separation-df.csv          binary yb and 3-category ym whose separation in the null model (yb = 1 and
                             ym never "w" when z = "c") leaves one added parameter that the data cannot
                             estimate (x = "r" occurs only when z = "c")
  separation-ref.json        for every claim: statsmodels' fits with growing iteration limits, the
                             limit of the likelihood ratio computed exactly, and the degrees of freedom

The limits are computed without any iteration running away, from the models that remain when the
rows (or categories of rows) predicted with certainty are taken out (Albert & Anderson 1984,
Biometrika 71:1-10, for the binary case; Geyer 2009, Electronic Journal of Statistics 3:259-289, in
general): those contribute 0 to the log-likelihood at its supremum.
  - binary response: statsmodels Logit on the rows that are not separated, with the columns that
    are constant there dropped;
  - multinomial response: the baseline-category logit written as a Poisson log-linear model with
    one intercept per row (the "Poisson trick": the Poisson log-likelihood at its maximum over the
    row intercepts is the multinomial one minus the number of rows; Baker 1994, "The
    multinomial-Poisson transformation", The Statistician 43:495-504), fitted by
    statsmodels GLM(Poisson) on the (row, category) pairs that are not certain, so a category that
    can no longer occur in a row is simply absent. GLM solves with a pseudo-inverse, and its
    df_model counts the rank of the design, which gives the degrees of freedom of the test on the
    null model's face.

Run:  python3 scripts/statsmodels_separation.py   (needs numpy and statsmodels; writes the fixtures)
"""
import json
import os
import warnings

import numpy as np
import statsmodels
import statsmodels.api as sm
from statsmodels.tools.sm_exceptions import SingularMatrixWarning

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "statsmodels")
MAXITER = [25, 50, 100, 200, 400]


def dummies(codes, levels):
    """0/1 columns for every level but the first (the baseline), as regression-lr builds them."""
    return [(codes == k).astype(float) for k in range(1, levels)]


def design(n, blocks):
    return np.column_stack([np.ones(n)] + blocks)


def sequence(model_class, y, X0, X1, method):
    """statsmodels fits of both models with growing iteration limits (warnings silenced)."""
    rows = []
    for it in MAXITER:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            f0 = model_class(y, X0).fit(disp=0, method=method, maxiter=it)
            f1 = model_class(y, X1).fit(disp=0, method=method, maxiter=it)
        rows.append({"maxiter": it, "llf_null": float(f0.llf), "llf_full": float(f1.llf), "lr": float(2 * (f1.llf - f0.llf))})
    return rows


def logit_limit(y, X, keep):
    """Supremum of the logistic log-likelihood: Logit on the rows `keep` (the others are fitted with
    certainty at the limit, contributing 0), columns constant among them dropped."""
    Xk = X[keep]
    cols = [0] + [j for j in range(1, X.shape[1]) if np.ptp(Xk[:, j]) > 0]
    f = sm.Logit(y[keep], Xk[:, cols]).fit(disp=0, method="newton", tol=1e-14, maxiter=200)
    assert f.mle_retvals["converged"], "the limiting model must have a finite estimate"
    return float(f.llf)


def poisson_form(X, K, allowed, y=None):
    """Design (row intercepts, then the coefficients of categories 1..K−1) and counts of the
    Poisson form of the multinomial logit on the (row, category) pairs `allowed`."""
    n, p = X.shape
    rows, resp = [], []
    for i in range(n):
        for k in range(K):
            if not allowed[i, k]:
                continue
            row = np.zeros(n + p * (K - 1))
            row[i] = 1.0
            if k > 0:
                row[n + (k - 1) * p:n + k * p] = X[i]
            rows.append(row)
            if y is not None:
                assert allowed[i, y[i]]
                resp.append(1.0 if y[i] == k else 0.0)
    return np.array(rows), np.array(resp)


def mnlogit_limit(y, X, K, allowed):
    """Supremum of the multinomial log-likelihood on the (row, category) pairs `allowed` (n × K):
    Poisson GLM with one intercept per row, log mu_ik = alpha_i + x_i . beta_k (beta_0 = 0), whose
    maximised log-likelihood plus n is the multinomial one."""
    D, yy = poisson_form(X, K, allowed, y)
    with warnings.catch_warnings():
        # rank-deficient on purpose where a coefficient acts only on pairs that are not allowed
        warnings.simplefilter("ignore", SingularMatrixWarning)
        f = sm.GLM(yy, D, family=sm.families.Poisson()).fit(tol=1e-14, maxiter=300)
    return float(f.llf + X.shape[0])


def mnlogit_rank(X, K, allowed):
    """Dimension of the multinomial model on the pairs `allowed`: rank of its Poisson design
    (numpy.linalg.matrix_rank) minus the n row intercepts."""
    D, _ = poisson_form(X, K, allowed)
    return int(np.linalg.matrix_rank(D)) - X.shape[0]


def write_csv(name, header, columns):
    with open(os.path.join(OUT, name), "w") as f:
        f.write(",".join(header) + "\n")
        for vals in zip(*columns):
            f.write(",".join(v if isinstance(v, str) else repr(float(v)) for v in vals) + "\n")


def claim_logit(y, X0, X1, keep0, keep1, x, yname, given):
    """A binary-response claim: statsmodels sequences, the exact limit and the degrees of freedom
    on the null model's face (rank of the full design on the rows the null model leaves uncertain
    minus that of the null design; the nominal count when the null model is not separated)."""
    l0 = logit_limit(y, X0, keep0)
    l1 = logit_limit(y, X1, keep1)
    rank = np.linalg.matrix_rank
    return {
        "x": x, "y": yname, "given": given, "model": "logistic",
        "statsmodels": {"newton": sequence(sm.Logit, y, X0, X1, "newton"), "bfgs": sequence(sm.Logit, y, X0, X1, "bfgs")},
        "limit": {"llf_null": l0, "llf_full": l1, "lr": 2 * (l1 - l0)},
        "df_nominal": X1.shape[1] - X0.shape[1],
        "df": int(rank(X1[keep0]) - rank(X0[keep0])),
    }


def claim_mnlogit(y, K, X0, X1, allowed0, allowed1, x, yname, given):
    """A multinomial claim: statsmodels sequences, the exact limit and the degrees of freedom on the
    null model's face (dimension of the full model on the pairs the null model leaves uncertain
    minus that of the null model)."""
    l0 = mnlogit_limit(y, X0, K, allowed0)
    l1 = mnlogit_limit(y, X1, K, allowed1)
    mn = lambda yy, XX: sm.MNLogit(yy, XX)
    return {
        "x": x, "y": yname, "given": given, "model": "multinomial",
        "statsmodels": {"newton": sequence(mn, y, X0, X1, "newton"), "bfgs": sequence(mn, y, X0, X1, "bfgs")},
        "limit": {"llf_null": l0, "llf_full": l1, "lr": 2 * (l1 - l0)},
        "df_nominal": (X1.shape[1] - X0.shape[1]) * (K - 1),
        "df": mnlogit_rank(X1, K, allowed0) - mnlogit_rank(X0, K, allowed0),
    }


def probe_null():
    """Quasi-complete separation in the null model: z = "c" implies y = 1."""
    rng = np.random.default_rng(3)
    n = 90
    z = rng.integers(0, 3, n)
    x = rng.integers(0, 3, n)
    c = rng.normal(size=n)
    eta = -1.2 + 2.4 * (x == 1) + 1.4 * (x == 2) + 0.4 * c
    y = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(int)
    y[z == 2] = 1
    write_csv("separation-null.csv", ["z", "x", "c", "y"], [[("abc")[v] for v in z], [("pqr")[v] for v in x], c, [str(v) for v in y]])
    keep = z != 2
    claims = []
    for given, blocks in ((["z", "c"], dummies(z, 3) + [c]), (["z"], dummies(z, 3))):
        X0 = design(n, blocks)
        X1 = design(n, blocks + dummies(x, 3))
        claims.append(claim_logit(y, X0, X1, keep, keep, "x", "y", given))
    return {"file": "separation-null.csv", "types": {"z": "nominal", "x": "nominal", "c": "continuous", "y": "binary"}, "claims": claims}


def probe_full():
    """Separation in the full model only: y = x (complete), y2 = 0 whenever x = 1 (quasi-complete)."""
    rng = np.random.default_rng(5)
    n = 60
    x = rng.integers(0, 2, n)
    z = rng.integers(0, 3, n)
    c = rng.normal(size=n)
    y = x.copy()
    y2 = np.where(x == 1, 0, (rng.random(n) < 1 / (1 + np.exp(-(0.3 + 0.5 * c)))).astype(int))
    write_csv("separation-full.csv", ["x", "z", "c", "y", "y2"], [[("pq")[v] for v in x], [("abc")[v] for v in z], c, [str(v) for v in y], [str(v) for v in y2]])
    everyone = np.ones(n, dtype=bool)
    claims = []
    for resp, yy, keep1 in (("y", y, np.zeros(n, dtype=bool)), ("y2", y2, x == 0)):
        for given, blocks in ((["c"], [c]), (["z"], dummies(z, 3))):
            X0 = design(n, blocks)
            X1 = design(n, blocks + dummies(x, 2))
            if keep1.any():
                claims.append(claim_logit(yy, X0, X1, everyone, keep1, "x", resp, given))
            else:
                # complete separation in the full model: its log-likelihood tends to 0
                l0 = logit_limit(yy, X0, everyone)
                claims.append({
                    "x": "x", "y": resp, "given": given, "model": "logistic",
                    "statsmodels": {"newton": sequence(sm.Logit, yy, X0, X1, "newton"), "bfgs": sequence(sm.Logit, yy, X0, X1, "bfgs")},
                    "limit": {"llf_null": l0, "llf_full": 0.0, "lr": -2 * l0},
                    "df_nominal": 1, "df": 1,
                })
    return {"file": "separation-full.csv", "types": {"x": "binary", "z": "nominal", "c": "continuous", "y": "binary", "y2": "binary"}, "claims": claims}


def probe_empty_cell():
    """A 5-category y by a 6-level x with one empty cell (x = "f", y = "v3")."""
    rng = np.random.default_rng(11)
    n = 600
    x = rng.integers(0, 6, n)
    z = rng.integers(0, 3, n)
    c = rng.normal(size=n)
    B = rng.normal(scale=0.6, size=(6, 5))
    B[:, 0] = 0
    eta = B[x] + np.outer(c, [0, 0.5, -0.3, 0.2, 0.4]) + np.outer(z == 1, [0, 0.3, 0, -0.2, 0])
    pr = np.exp(eta)
    pr /= pr.sum(axis=1, keepdims=True)
    y = (rng.random(n)[:, None] > pr.cumsum(axis=1)).sum(axis=1)
    y[(x == 5) & (y == 3)] = 0
    write_csv("separation-empty-cell.csv", ["x", "z", "c", "y"], [[("abcdef")[v] for v in x], [("abc")[v] for v in z], c, ["v%d" % v for v in y]])
    allowed0 = np.ones((n, 5), dtype=bool)
    allowed1 = allowed0.copy()
    allowed1[x == 5, 3] = False
    claims = []
    for given, blocks in ((["c"], [c]), (["z"], dummies(z, 3))):
        X0 = design(n, blocks)
        X1 = design(n, blocks + dummies(x, 6))
        claims.append(claim_mnlogit(y, 5, X0, X1, allowed0, allowed1, "x", "y", given))
    return {"file": "separation-empty-cell.csv", "types": {"x": "nominal", "z": "nominal", "c": "continuous", "y": "nominal"}, "claims": claims}


def probe_df():
    """Separation in the null model that leaves an added parameter without data: z = "c" implies
    yb = 1 and ym != "w"; x = "r" occurs only when z = "c"."""
    rng = np.random.default_rng(17)
    n = 240
    z = rng.integers(0, 3, n)
    x = np.where(z == 2, rng.integers(0, 3, n), rng.integers(0, 2, n))
    c = rng.normal(size=n)
    eta = -0.8 + 1.6 * (x == 1) + 0.5 * c
    yb = (rng.random(n) < 1 / (1 + np.exp(-eta))).astype(int)
    yb[z == 2] = 1
    e = np.column_stack([np.zeros(n), 0.2 + 0.9 * (x == 1) + 0.4 * c, -0.3 + 0.7 * (x == 1) - 0.3 * c + 0.6 * (z == 1)])
    pr = np.exp(e)
    pr[z == 2, 2] = 0.0  # "w" cannot occur when z = "c"
    pr /= pr.sum(axis=1, keepdims=True)
    ym = (rng.random(n)[:, None] > pr.cumsum(axis=1)).sum(axis=1)
    write_csv("separation-df.csv", ["z", "x", "c", "yb", "ym"], [[("abc")[v] for v in z], [("pqr")[v] for v in x], c, [str(v) for v in yb], [("uvw")[v] for v in ym]])
    keep = z != 2
    allowed = np.ones((n, 3), dtype=bool)
    allowed[z == 2, 2] = False
    claims = []
    for given, blocks in ((["z", "c"], dummies(z, 3) + [c]), (["z"], dummies(z, 3))):
        X0 = design(n, blocks)
        X1 = design(n, blocks + dummies(x, 3))
        claims.append(claim_logit(yb, X0, X1, keep, keep, "x", "yb", given))
        claims.append(claim_mnlogit(ym, 3, X0, X1, allowed, allowed, "x", "ym", given))
    return {"file": "separation-df.csv", "types": {"z": "nominal", "x": "nominal", "c": "continuous", "yb": "binary", "ym": "nominal"}, "claims": claims}


if __name__ == "__main__":
    out = {
        "source": f"statsmodels {statsmodels.__version__}, numpy {np.__version__}; written by scripts/statsmodels_separation.py",
        "probes": {"null": probe_null(), "full": probe_full(), "empty_cell": probe_empty_cell(), "df": probe_df()},
    }
    with open(os.path.join(OUT, "separation-ref.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")

"""Reference values for the pooled efficient score test of logistic and multinomial claims
(test/stats/pooledScoreTest.test.ts, test/audit/siteRegressionScore.test.ts).

Data (invented, numpy.random.default_rng(20261204)), written by the plain run into
test/fixtures/pooled-score/:
  single.csv       one site, 400 rows: z continuous, c nominal (a, b, c), x binary (0, 1),
                   w nominal (p, q, r), yb binary (0, 1), ym nominal (u, v, w)
  sites-300.csv    three heterogeneous sites (column site: A, B, C), 300 rows each, same columns;
                   the intercepts and the effects of z and c differ by site, x and w depend on
                   z and c, and yb and ym depend on x and w (an association, so that the score and
                   likelihood-ratio statistics are away from 0)
  sites-3000.csv   the same design with 3,000 rows per site
  sites-edge.csv   three sites of 250 rows under the null: the level "r" of w is absent at site B,
                   and at site C every row with c = "b" has yb = 1 (quasi-complete separation of
                   the null model of yb at that site)
Reference values (reference.json, or printed with --print, which reads the committed CSVs
instead of drawing): for each claim, computed by statsmodels 0.15 / numpy on the rows as read back
from the CSV text:
  * "single": the null model (statsmodels Logit / MNLogit, method="newton", tol 1e-14) of the
    response on [1, z standardised (ddof 1), c's indicators of b and c]; its parameters embedded
    in the full design [null columns, the added side's indicators of every level but the first]
    (added coefficients 0); statsmodels' score and -hessian of the full model there (the layout,
    category by category, checked against numpy central finite differences of statsmodels'
    loglike); the efficient score and information of the added block (numpy Schur complement),
    the score statistic U' I_eff^-1 U; for logistic claims also statsmodels
    GLM(Binomial).score_test(exog_extra=added) as a second source; the full model's
    log-likelihood and LR = 2(llf_full - llf_null).
  * "stacked": for each data set and claim, the score statistic of the stacked rows' model with
    the intercept, z and c's indicators interacted with site (one set per site) computed as above,
    and the LR of the additive model [1, added, z, c's indicators, site's indicators] against the
    same without the added columns (statsmodels).
  * "edge": the limit reference for yb _||_ w | z, c on sites-edge.csv: the score statistic of
    the interacted model on the rows the null model leaves uncertain (site C's rows with c = "b"
    removed, and with them that site's c = b column), as above.
Run:  python3 scripts/pooled_score_reference.py          (draws the data, writes CSVs and reference.json)
      python3 scripts/pooled_score_reference.py --print  (reads the committed CSVs, prints the reference)
"""
import os
import sys
import warnings

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from reference_output import emit_reference  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "pooled-score")
LEVELS = {"c": ["a", "b", "c"], "x": ["0", "1"], "w": ["p", "q", "r"], "yb": ["0", "1"], "ym": ["u", "v", "w"]}


def categorical(rng, logits, labels):
    """One draw per row from the softmax of the columns of logits."""
    pr = np.exp(logits - logits.max(axis=1, keepdims=True))
    pr /= pr.sum(axis=1, keepdims=True)
    u = rng.random(len(pr))
    idx = (u[:, None] > pr.cumsum(axis=1)).sum(axis=1)
    return np.array(labels)[np.minimum(idx, len(labels) - 1)]


def draw_site(rng, n, s, effect):
    """One site's rows; s shifts the intercepts and the effects of z and c (heterogeneity)."""
    z = np.round(rng.normal(0.3 * s, 1.0 + 0.2 * s, n), 6)
    c = categorical(rng, np.column_stack([np.zeros(n), 0.3 * s + 0.2 * z, -0.4 + 0.1 * s - 0.3 * z]), LEVELS["c"])
    cb = (c == "b").astype(float)
    cc = (c == "c").astype(float)
    x = categorical(rng, np.column_stack([np.zeros(n), -0.2 + 0.6 * z - 0.5 * cb + 0.4 * cc]), LEVELS["x"])
    w = categorical(rng, np.column_stack([np.zeros(n), 0.3 * z + 0.5 * cb, -0.3 - 0.4 * z + 0.6 * cc]), LEVELS["w"])
    xb = (x == "1").astype(float)
    wq = (w == "q").astype(float)
    wr = (w == "r").astype(float)
    yb = categorical(rng, np.column_stack([np.zeros(n), -0.5 + 0.4 * s + (0.5 - 0.3 * s) * z + (0.7 - 0.5 * s) * cb - 0.4 * cc + effect * xb]), LEVELS["yb"])
    ym = categorical(rng, np.column_stack([
        np.zeros(n),
        0.2 * s + (0.4 + 0.2 * s) * z - 0.5 * cb + effect * wq,
        -0.3 - 0.3 * s - 0.5 * z + (0.6 - 0.4 * s) * cc + effect * wr,
    ]), LEVELS["ym"])
    return pd.DataFrame({"z": z, "c": c, "x": x, "w": w, "yb": yb, "ym": ym})


def write_data():
    rng = np.random.default_rng(20261204)
    os.makedirs(OUT, exist_ok=True)
    draw_site(rng, 400, 0, 0.5).to_csv(os.path.join(OUT, "single.csv"), index=False)
    for n in (300, 3000):
        frames = [draw_site(rng, n, s, 0.25).assign(site=name) for s, name in enumerate("ABC")]
        pd.concat(frames, ignore_index=True).to_csv(os.path.join(OUT, f"sites-{n}.csv"), index=False)
    frames = []
    for s, name in enumerate("ABC"):
        f = draw_site(rng, 250, s, 0.0).assign(site=name)
        if name == "B":
            f.loc[f["w"] == "r", "w"] = "q"  # level r absent at B
        if name == "C":
            f.loc[f["c"] == "b", "yb"] = "1"  # c = b predicts yb = 1 with certainty at C
        frames.append(f)
    pd.concat(frames, ignore_index=True).to_csv(os.path.join(OUT, "sites-edge.csv"), index=False)


def read(name):
    return pd.read_csv(os.path.join(OUT, name), dtype={"c": str, "x": str, "w": str, "yb": str, "ym": str, "site": str})


def dummies(col, labels):
    return np.column_stack([(col == l).astype(float) for l in labels[1:]])


def codes(col, labels):
    return np.array([labels.index(v) for v in col])


def fit_null(y, X, K):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if K == 2:
            return sm.Logit(y, X).fit(method="newton", maxiter=200, tol=1e-14, disp=0)
        return sm.MNLogit(y, X).fit(method="newton", maxiter=200, tol=1e-14, disp=0)


def model_of(y, X, K):
    return sm.Logit(y, X) if K == 2 else sm.MNLogit(y, X)


def score_test(y, N, A, K, check_layout=False):
    """statsmodels' null fit on N, score and information of [N, A] there, the efficient block of A."""
    f0 = fit_null(y, N, K)
    p0 = N.shape[1]
    a = A.shape[1]
    p = p0 + a
    q = K - 1
    b0 = np.asarray(f0.params).reshape(p0, q, order="F") if K > 2 else np.asarray(f0.params).reshape(p0, 1)
    full = np.zeros((p, q))
    full[:p0, :] = b0
    theta = full.ravel(order="F")  # category by category
    F = np.column_stack([N, A])
    mod = model_of(y, F, K)
    U = np.asarray(mod.score(theta)).ravel()
    I = -np.asarray(mod.hessian(theta))
    if check_layout:
        h = 1e-5
        fd = np.array([(mod.loglike(theta + h * e) - mod.loglike(theta - h * e)) / (2 * h) for e in np.eye(len(theta))])
        assert np.allclose(fd, U, rtol=1e-5, atol=1e-5), "score layout differs from finite differences"
    added = [k * p + j for k in range(q) for j in range(p0, p)]
    nuis = [k * p + j for k in range(q) for j in range(p0)]
    Iaa = I[np.ix_(added, added)]
    Iab = I[np.ix_(added, nuis)]
    Ibb = I[np.ix_(nuis, nuis)]
    Ieff = Iaa - Iab @ np.linalg.solve(Ibb, Iab.T)
    Ueff = U[added] - Iab @ np.linalg.solve(Ibb, U[nuis])
    stat = float(Ueff @ np.linalg.solve(Ieff, Ueff))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        f1 = model_of(y, F, K).fit(method="newton", maxiter=200, tol=1e-14, disp=0)
    out = {
        "theta": theta.tolist(), "score": U.tolist(), "information": I.tolist(),
        "efficient_score": Ueff.tolist(), "efficient_information": Ieff.tolist(), "statistic": stat,
        "llf_null": float(f0.llf), "llf_full": float(f1.llf), "lr": float(2 * (f1.llf - f0.llf)),
    }
    if K == 2:
        glm = sm.GLM(y, N, family=sm.families.Binomial()).fit(tol=1e-14)
        st = glm.score_test(params_constrained=glm.params, exog_extra=A)
        out["glm_score_test"] = float(np.asarray(st[0]).ravel()[0])
    return out


CLAIMS = [
    {"name": "logistic", "response": "yb", "added": "x", "x": "x", "y": "yb", "given": ["z", "c"]},
    {"name": "logistic3", "response": "yb", "added": "w", "x": "w", "y": "yb", "given": ["z", "c"]},
    {"name": "multinomial", "response": "ym", "added": "w", "x": "w", "y": "ym", "given": ["z", "c"]},
]


def single():
    d = read("single.csv")
    z = d["z"].to_numpy()
    zs = (z - z.mean()) / z.std(ddof=1)
    N = np.column_stack([np.ones(len(d)), zs, dummies(d["c"], LEVELS["c"])])
    out = {}
    for cl in CLAIMS:
        K = len(LEVELS[cl["response"]])
        y = codes(d[cl["response"]], LEVELS[cl["response"]])
        r = score_test(y, N, dummies(d[cl["added"]], LEVELS[cl["added"]]), K, check_layout=True)
        out[cl["name"]] = {**cl, "n": len(d), **r}
    return out


def interacted(d, keep_cols=None):
    """[per site: 1, z, c=b, c=c] with all-zero columns dropped."""
    cols = []
    for s in sorted(d["site"].unique()):
        ind = (d["site"] == s).to_numpy().astype(float)
        cols += [ind, ind * d["z"].to_numpy()] + [ind * (d["c"] == l).to_numpy().astype(float) for l in LEVELS["c"][1:]]
    X = np.column_stack(cols)
    return X[:, np.abs(X).sum(axis=0) > 0]


def stacked():
    out = {}
    for n in (300, 3000):
        d = read(f"sites-{n}.csv")
        for cl in CLAIMS:
            if cl["name"] == "logistic3":
                continue
            K = len(LEVELS[cl["response"]])
            y = codes(d[cl["response"]], LEVELS[cl["response"]])
            A = dummies(d[cl["added"]], LEVELS[cl["added"]])
            r = score_test(y, interacted(d), A, K)
            base = np.column_stack([np.ones(len(d)), d["z"].to_numpy(), dummies(d["c"], LEVELS["c"]), dummies(d["site"], ["A", "B", "C"])])
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                l0 = model_of(y, base, K).fit(method="newton", maxiter=200, tol=1e-14, disp=0).llf
                l1 = model_of(y, np.column_stack([base, A]), K).fit(method="newton", maxiter=200, tol=1e-14, disp=0).llf
            out[f"{cl['name']}-{n}"] = {**cl, "n": len(d), "statistic": r["statistic"], "additive_lr": float(2 * (l1 - l0)), **({"glm_score_test": r["glm_score_test"]} if "glm_score_test" in r else {})}
    return out


def edge():
    d = read("sites-edge.csv")
    cl = CLAIMS[1]
    keep = ~((d["site"] == "C") & (d["c"] == "b"))
    e = d[keep].reset_index(drop=True)
    y = codes(e["yb"], LEVELS["yb"])
    r = score_test(y, interacted(e), dummies(e["w"], LEVELS["w"]), 2)
    return {"logistic3": {**cl, "n": int(len(d)), "rows_uncertain": int(keep.sum()), "statistic": r["statistic"], "glm_score_test": r["glm_score_test"]}}


def main():
    if "--print" not in sys.argv:
        write_data()
    doc = {
        "source": f"statsmodels {statsmodels.__version__}, numpy {np.__version__} (scripts/pooled_score_reference.py)",
        "levels": LEVELS,
        "single": single(),
        "stacked": stacked(),
        "edge": edge(),
    }
    emit_reference(doc, OUT)


if __name__ == "__main__":
    main()

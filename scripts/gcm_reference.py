#!/usr/bin/env python3
"""Reference values for the generalised covariance measure test (`gcm`, `gcm-rank`) and its parts.

An independent implementation, written from the description of the method (not from the
TypeScript code): every regression is a least-squares fit on the row matrix
(numpy.linalg.lstsq on the intercept and the columns, centred), never from covariances; knots
are numpy.quantile (its default, linear interpolation between order statistics); tails and
quantiles come from scipy.stats, and from mpmath (50 digits) where scipy's tails underflow.

The method as implemented here: sides are the value (gcm-rank: mid-ranks over the variable's
observed rows) or, for a nominal side, indicators of the levels present among the complete rows
but the first; the adjustment columns of S are level indicators (categorical members) and the
nested basis of each continuous member (linear; natural cubic spline terms at the quartile knots;
hinges at the odd 2^(l+1)-th quantiles), knots from the member's observed values; levels are added
one at a time (row path: up to the largest level with at least ROWS_PER_PARAMETER complete rows per
parameter, stopping two levels past both sides' GCV minimum; moment path: every level given),
aliased or constant columns dropped; the level used is one above the larger of the two sides' GCV
minima. With the residuals e of both sides at that level, R_i = e_x,i (x) e_y,i, and the variance of
R is Sigma = (1/n) sum_i V_x,i (x) V_y,i - Rbar Rbar' with V the side's conditional covariance
under the claim (side_variance); W = sum(R)' Sigma^-1 sum(R) / n, scaled by (n - 1 - p)/n, referred
to Student's t on n - 2 - p df (one component) or F(q, n - 1 - p - q) (q components).

Writes into test/fixtures/gcm/ (or --out DIR):
  shapes.csv, small.csv  seeded invented data (see make_shapes / make_small)
  claims.json            per claim, method and path: level chosen, parameters kept, statistic,
                         df, p, log p, effect, interval, residual correlation, GCV per level and
                         the linear-adjustment check; the untestable claims with their n
  basis.json             numpy.quantile of sorted samples and the nested basis (knots, terms,
                         term values at probe points by the spline formula below)
  spline_span.json       the level 0 + 1 basis against patsy's natural cubic regression spline
                         cr(x, knots=[q25, q50, q75], lower_bound=min, upper_bound=max): the
                         fitted values of both (numpy.linalg.lstsq), their largest difference and
                         the rank of the joined bases
  nested.json            covariances of a generated design and, level by level, the parameters
                         kept, the responses' residual covariance, GCV and the coefficients
  statistic.json         generalised covariance statistics from generated residual products,
                         and intervals of residual correlations (scipy.stats.t / f, mpmath)
  gram.json              Gram matrices of generated columns, with and without a row index
                         (math.fsum of the products)
  tails.json             F upper tails (scipy.stats.f.sf / logsf; mpmath below 1e-300) and
                         chi-square upper quantiles (scipy.stats.chi2.isf; log-tail round trips
                         by mpmath.gammainc down to log p = -5000)
  effect.json            noncentral chi-square interval bounds (scipy.optimize.brentq on
                         scipy.stats.ncx2.sf at 0.05 and 0.975), mapped by sqrt(1 - exp(-l/n))

Rerun with `python3 scripts/gcm_reference.py`; the output is the same byte for byte (seeded
numpy.random.default_rng generators, no clock). Versions are recorded in claims.json.
"""
import argparse
import csv
import io
import json
import math
import os

import mpmath as mp
import numpy as np
import patsy
import scipy
import statsmodels
from scipy import optimize, stats
from residual_correlation_inversion import invert_residual_correlation

HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT_OUT = os.path.join(HERE, "..", "test", "fixtures", "gcm")
mp.mp.dps = 50

ALIAS_TOLERANCE = 1e-9  # a column is aliased when its residual sum of squares <= 1e-9 of its own
COMPONENT_TOLERANCE = 1e-10  # a residual product is redundant when its pivot <= 1e-10 of the largest variance
ROWS_PER_PARAMETER = 10
FIT_FLOOR = 1e-6  # fitted probabilities are clipped to [1e-6, 1 - 1e-6] in a categorical side's variance
MAX_LEVEL = 5
GCV_TIE = 1e-12  # a later level is better only when its GCV is below (1 - 1e-12) times the best so far


# ------------------------------------------------------------------------------------------
# Tails and quantiles

def log_t_two_sided(t, df):
    """ln P(|T| >= |t|), T ~ t(df): scipy where the tail is a normal double, else mpmath."""
    p = float(2 * stats.t.sf(abs(t), df))
    if p > 1e-300:
        return p, float(math.log(2) + stats.t.logsf(abs(t), df))
    tm, dfm = mp.mpf(abs(t)), mp.mpf(df)
    lp = mp.log(mp.betainc(dfm / 2, mp.mpf(1) / 2, 0, dfm / (dfm + tm * tm), regularized=True))
    return p, float(lp)


def log_f_upper(f, d1, d2):
    """P(F >= f) and its log, F ~ F(d1, d2): scipy.stats.f.sf / logsf, mpmath below 1e-300."""
    p = float(stats.f.sf(f, d1, d2))
    if p > 1e-300:
        return p, float(stats.f.logsf(f, d1, d2))
    fm, a, b = mp.mpf(f), mp.mpf(d2) / 2, mp.mpf(d1) / 2
    x = mp.mpf(d2) / (mp.mpf(d2) + mp.mpf(d1) * fm)
    return p, float(mp.log(mp.betainc(a, b, 0, x, regularized=True)))


def mp_log_chi2_upper(x, df):
    q = mp.gammainc(mp.mpf(df) / 2, mp.mpf(x) / 2, mp.inf, regularized=True)
    return mp.log(q)


def chi2_upper_quantile_from_log(log_p, df):
    """The x with ln P(chi2(df) >= x) = log_p: scipy.stats.chi2.isf, or mpmath root-finding deep in the tail."""
    if log_p > math.log(1e-300):
        return float(stats.chi2.isf(math.exp(log_p), df))
    target = mp.mpf(log_p)
    x0 = -2 * log_p
    root = mp.findroot(lambda x: mp_log_chi2_upper(x, df) - target, mp.mpf(x0))
    return float(root)


def ncx2_noncentrality(x, df, target):
    """lambda >= 0 with P(chi2(df, lambda) >= x) = target (0 when the central tail is already >= target)."""
    if stats.chi2.sf(x, df) >= target:
        return 0.0
    hi = max(1.0, x)
    while stats.ncx2.sf(x, df, hi) < target:
        hi *= 2
    return float(optimize.brentq(lambda lam: stats.ncx2.sf(x, df, lam) - target, 0.0, hi, xtol=1e-14, rtol=1e-15, maxiter=500))


def effect_map(lam, n):
    return math.sqrt(-math.expm1(-lam / n))


# ------------------------------------------------------------------------------------------
# The nested basis

def quantiles(sorted_values, ps):
    return [float(v) for v in np.quantile(sorted_values, ps)]  # numpy default: method="linear"


def nested_basis(observed, max_level=MAX_LEVEL):
    """Terms by level: [("linear",)], spline terms (knots, j) of level 1, hinges of levels 2.."""
    v = np.sort(np.asarray(observed, dtype=float))
    levels = [[("linear",)]]
    if max_level == 0 or len(v) == 0:
        return levels
    lo, hi = quantiles(v, [0.0, 1.0])
    knots = []
    for t in quantiles(v, [0, 0.25, 0.5, 0.75, 1]):
        if not knots or t > knots[-1]:
            knots.append(t)
    levels.append([("spline", tuple(knots), j) for j in range(len(knots) - 2)])
    used = set(knots)
    for level in range(2, max_level + 1):
        parts = 2 ** (level + 1)
        hinges = []
        for t in quantiles(v, [j / parts for j in range(1, parts, 2)]):
            if not (lo < t < hi) or t in used:
                continue
            used.add(t)
            hinges.append(("hinge", t))
        levels.append(hinges)
    return levels


def term_values(term, s):
    """Value of a basis term at s (an array): Harrell's restricted cubic spline term over (t_K - t_1)^2."""
    s = np.asarray(s, dtype=float)
    if term[0] == "linear":
        return s.copy()
    if term[0] == "hinge":
        return np.maximum(s - term[1], 0.0)
    _, t, j = term
    K = len(t)
    cube = lambda u: np.where(u > 0, u, 0.0) ** 3
    tj, tk1, tk = t[j], t[K - 2], t[K - 1]
    val = cube(s - tj) - cube(s - tk1) * (tk - tj) / (tk - tk1) + cube(s - tk) * (tk1 - tj) / (tk - tk1)
    return val / (tk - t[0]) ** 2


def term_json(term):
    if term[0] == "linear":
        return {"kind": "linear"}
    if term[0] == "hinge":
        return {"kind": "hinge", "knot": term[1]}
    return {"kind": "spline", "knots": list(term[1]), "j": term[2]}


# ------------------------------------------------------------------------------------------
# Least squares on the row matrix

def residuals(X, Y):
    """Residuals of the columns of Y on [1, X] by numpy.linalg.lstsq (columns centred first)."""
    Yc = Y - Y.mean(axis=0)
    if X.shape[1] == 0:
        return Yc
    Xc = X - X.mean(axis=0)
    coef = np.linalg.lstsq(Xc, Yc, rcond=None)[0]
    return Yc - Xc @ coef


def condition_number(X):
    """2-norm condition number of the centred columns scaled to unit length (numpy.linalg.cond); 1 without columns."""
    if X.shape[1] == 0:
        return 1.0
    Xc = X - X.mean(axis=0)
    return float(np.linalg.cond(Xc / np.linalg.norm(Xc, axis=0)))


def first_min(scores):
    best, best_score = 0, math.inf
    for level, g in enumerate(scores):
        if g < best_score * (1 - GCV_TIE):
            best, best_score = level, g
    return best


def gcv(rss, n, p):
    return math.inf if p >= n else rss / n / (1 - p / n) ** 2


def keep_components(sigma):
    """Components kept in order: the pivot of each new one (its variance left after the kept ones) above 1e-10 of the largest diagonal."""
    q = sigma.shape[0]
    maxdiag = max(sigma[a, a] for a in range(q))
    keep = []
    for a in range(q):
        trial = keep + [a]
        sub = sigma[np.ix_(trial, trial)]
        pivot = sigma[a, a]
        if keep:
            s_ka = sigma[np.ix_(keep, [a])]
            pivot = sigma[a, a] - float((s_ka.T @ np.linalg.solve(sigma[np.ix_(keep, keep)], s_ka))[0, 0])
        if sigma[a, a] > COMPONENT_TOLERANCE * maxdiag and pivot > COMPONENT_TOLERANCE * max(np.diag(sub)):
            keep.append(a)
    return keep


def gcm_statistic(n, p, sumR, sigma):
    """The statistic of the method description from sum(R) and Sigma; None when untestable."""
    nu = n - 2 - p
    if nu < 1:
        return None
    keep = keep_components(sigma)
    k = len(keep)
    S = sigma[np.ix_(keep, keep)]
    s = sumR[keep]
    W = float(s @ np.linalg.solve(S, s)) / n
    w_adj = W * (n - 1 - p) / n
    out = {"components": k, "w": W, "w_adj": w_adj}
    if k == 1:
        t = math.copysign(math.sqrt(w_adj), s[0])
        pv, lp = log_t_two_sided(t, nu)
        out.update(statistic=t, df=nu, p=pv, log_p=lp)
        return out
    df2 = nu - k + 1
    f = w_adj * df2 / (k * nu)
    pv, lp = log_f_upper(f, k, df2)
    out.update(statistic=w_adj, df=k, f=f, df2=df2, p=pv, log_p=lp)
    return out


def correlation_interval(r, t, nu, n, params, level=0.95):
    z = math.atanh(max(-1 + 1e-15, min(1 - 1e-15, r)))
    crit = float(stats.t.ppf((1 + level) / 2, nu))
    se = abs(z / t) if (z != 0 and t != 0 and math.isfinite(t)) else 1 / math.sqrt(max(1, n - params - 3))
    return [math.tanh(z - crit * se), math.tanh(z + crit * se)]


def adf_interval(ex, ey, r, t, p_value, nu, n, params, level=0.95):
    """The residual-correlation interval: {rho : (r - rho)^2 <= k^2 s^2(rho)}, k = scipy.stats.t.ppf,
    s^2(rho) = s0^2 w(rho) + f/n (A(rho) - A(0) w(rho)), f = n/(n - 1 - p), s0 = |r/t|, A(rho) the
    variance (numpy.var) of the influence values u v - rho (u^2 + v^2)/2 of the standardised residuals,
    w = 1 on the far side of 0 from r, (1 - rho/r)^2 between 0 and r, 0 beyond r. The part of the
    set holding r is found by a grid walk outward from r and scipy.optimize.brentq at the first
    sign change; when p >= 1 - level the far side's part that holds 0 is joined."""
    u = ex / math.sqrt(float(np.mean(ex * ex)))
    v = ey / math.sqrt(float(np.mean(ey * ey)))
    uv, w2 = u * v, (u * u + v * v) / 2
    A = lambda rho: float(np.var(uv - rho * w2))
    k = float(stats.t.ppf(1 - (1 - level) / 2, nu))
    return invert_residual_correlation(r, abs(r / t), A, k, n / (n - 1 - params), n, p_value >= 1 - level, 2e-3)


# ------------------------------------------------------------------------------------------
# Tables

class Col:
    """A column as the project types it: numbers (NaN missing) or level codes (-1 missing) with levels."""

    def __init__(self, name, kind, cells):
        self.name, self.type = name, kind
        missing = [c is None for c in cells]
        self.observed = ~np.array(missing)
        if kind == "continuous":
            self.values = np.array([np.nan if c is None else float(c) for c in cells])
            self.codes = None
            return
        labels = sorted({c for c in cells if c is not None}, key=lambda c: (isinstance(c, str), c))
        self.levels = labels
        index = {l: i for i, l in enumerate(labels)}
        self.codes = np.array([-1 if c is None else index[c] for c in cells])
        numeric = all(not isinstance(l, str) for l in labels)
        # binary and ordinal with numeric levels score their numbers; text levels (and nominal) their index
        if numeric and kind != "nominal":
            self.values = np.array([np.nan if c is None else float(c) for c in cells])
        else:
            self.values = np.array([np.nan if c < 0 else float(c) for c in self.codes])


def read_csv(text, types):
    rows = list(csv.reader(io.StringIO(text)))
    header, body = rows[0], rows[1:]
    table = {}
    for j, name in enumerate(header):
        cells = []
        for r in body:
            cell = r[j]
            if cell == "":
                cells.append(None)
            elif types[name] == "nominal" and not _is_number(cell):
                cells.append(cell)
            else:
                cells.append(float(cell))
        table[name] = Col(name, types[name], cells)
    return table, len(body)


def _is_number(s):
    try:
        float(s)
        return True
    except ValueError:
        return False


def write_csv(path, columns, order):
    n = len(columns[order[0]])
    with open(path, "w", newline="") as fh:
        fh.write(",".join(order) + "\n")
        for i in range(n):
            cells = []
            for name in order:
                v = columns[name][i]
                if v is None or (isinstance(v, float) and math.isnan(v)):
                    cells.append("")
                elif isinstance(v, str):
                    cells.append(v)
                elif isinstance(v, (int, np.integer)):
                    cells.append(str(int(v)))
                else:
                    cells.append("%.12g" % float(v))  # 12 significant digits; the reference reads the file back
            fh.write(",".join(cells) + "\n")


def masked(values, mask):
    out = np.array(values, dtype=float)
    out[mask] = np.nan
    return out


def make_shapes():
    """1,500 invented rows: skewed and nonlinear confounding, binary, ordinal and nominal variables, missing values."""
    rng = np.random.default_rng(20250301)
    n = 1500
    z = np.exp(rng.normal(0, 0.8, n))  # skewed member of S
    z_miss = rng.uniform(size=n) < 0.04
    w = rng.uniform(-2, 2, n)
    u = rng.normal(size=n)
    u_miss = rng.uniform(size=n) < 0.10
    g = 1 + np.searchsorted(np.cumsum([0.4, 0.3, 0.2]), rng.uniform(size=n) * 0.95 + 0.05 * (z > 2))  # codes 1..4
    g = np.minimum(g, 4)
    lz = np.log(z)
    x = lz ** 2 + 0.5 * w + rng.normal(0, 0.5, n)  # quadratic in log z
    y = 1.2 * (z > 1.5) + 0.3 * g + rng.normal(0, 0.7, n)  # threshold in z
    y2 = y + 0.12 * x  # depends on x given z
    strong = x + rng.normal(0, 0.25, n) * (1 + 0.5 * np.abs(lz))  # strongly dependent, heteroscedastic
    sig = lambda t: 1 / (1 + np.exp(-t))
    xb = (rng.uniform(size=n) < sig(1.5 * (z > 1) - 0.5)).astype(int)
    yb = (rng.uniform(size=n) < sig(z - 1.2 + 0.4 * (g == 3))).astype(int)
    yb_miss = rng.uniform(size=n) < 0.05
    # nominal side: four text levels whose shares move with z
    logits = np.column_stack([np.zeros(n), 0.8 * lz, -0.6 * lz, 0.3 * (g - 2)])
    pr = np.exp(logits)
    pr /= pr.sum(axis=1, keepdims=True)
    region_code = (rng.uniform(size=n)[:, None] > np.cumsum(pr, axis=1)).sum(axis=1)
    region = [["east", "north", "south", "west"][c] for c in region_code]
    region_miss = rng.uniform(size=n) < 0.03
    colour = [["blue", "green", "red"][c] for c in rng.integers(0, 3, n)]
    site = 1 + rng.integers(0, 3, n)  # integer codes of a nominal member (declared nominal)
    # ordinal side with scores 1, 2, 3, 5 related to z and site
    stage_raw = np.clip(np.floor(lz + 0.5 * (site == 2) + rng.normal(0, 0.6, n) + 1.5), 0, 3).astype(int)
    stage = np.array([1, 2, 3, 5])[stage_raw]
    # zero-inflated member: its quartiles and low quantiles coincide at 0
    h = np.where(rng.uniform(size=n) < 0.6, 0.0, np.exp(rng.normal(0, 1, n)))
    xh = np.sqrt(h) + rng.normal(0, 0.4, n)
    yh = (h > 1) + rng.normal(0, 0.5, n)
    # e with y3 missing above its 80th percentile: the upper hinges of e are zero on the complete rows
    e = rng.normal(size=n)
    x3 = np.sin(2 * e) + rng.normal(0, 0.4, n)
    y3 = 0.5 * e ** 2 + rng.normal(0, 0.5, n)
    y3_miss = e > np.quantile(e, 0.8)
    z2 = 2 * z + 1  # an exact affine copy of z: all its columns are aliased with z's
    zoff = z + 1e5  # z on a large offset: the test is invariant to it
    # nominal side whose third level occurs only where z is missing: one indicator on the complete rows
    pair = np.where(z_miss, "r", np.where(rng.uniform(size=n) < sig(lz), "q", "p"))
    # nominal side whose first level occurs only where z is missing
    tri_draw = rng.uniform(size=n)
    tri = np.where(z_miss, "a", np.where(tri_draw < 0.2 + 0.2 * (z > 1), "b", np.where(tri_draw < 0.7, "c", "d")))
    const1 = np.ones(n)
    late = masked(rng.normal(size=n), ~z_miss)  # observed only where z is missing
    cols = {
        "x": x, "y": y, "y2": y2, "strong": strong, "w": w,
        "z": masked(z, z_miss), "z2": masked(z2, z_miss), "zoff": masked(zoff, z_miss), "u": masked(u, u_miss),
        "g": [int(v) for v in g], "site": [int(v) for v in site],
        "xb": [int(v) for v in xb], "yb": [None if m else int(v) for v, m in zip(yb, yb_miss)],
        "region": [None if m else r for r, m in zip(region, region_miss)], "colour": colour,
        "stage": [int(v) for v in stage], "h": h, "xh": xh, "yh": yh,
        "e": e, "x3": x3, "y3": masked(y3, y3_miss), "const1": const1, "late": late, "pair": [str(v) for v in pair],
        "tri": [str(v) for v in tri],
    }
    types = {
        "x": "continuous", "y": "continuous", "y2": "continuous", "strong": "continuous", "w": "continuous",
        "z": "continuous", "z2": "continuous", "zoff": "continuous", "u": "continuous", "g": "ordinal", "site": "nominal",
        "xb": "binary", "yb": "binary", "region": "nominal", "colour": "nominal", "stage": "ordinal",
        "h": "continuous", "xh": "continuous", "yh": "continuous", "e": "continuous", "x3": "continuous",
        "y3": "continuous", "const1": "continuous", "late": "continuous", "pair": "nominal", "tri": "nominal",
    }
    return cols, types


def make_small():
    """300 invented rows: few rows per parameter, so the level cap bites."""
    rng = np.random.default_rng(20250302)
    n = 300
    a = rng.normal(size=n)
    b = rng.uniform(0, 10, n)
    c = rng.gamma(2.0, 1.0, n)
    c_miss = rng.uniform(size=n) < 0.10
    d = rng.normal(size=n)
    x = np.sin(1.5 * a) + 0.1 * b + 0.2 * c + rng.normal(0, 0.5, n)
    y = 0.3 * a ** 2 + (b > 6) + rng.normal(0, 0.5, n)
    x_miss = rng.uniform(size=n) < 0.03
    f, k, m = rng.normal(size=(3, n))  # unrelated members: seven members leave too few rows for level 1
    cols = {"x": masked(x, x_miss), "y": y, "a": a, "b": b, "c": masked(c, c_miss), "d": d, "f": f, "k": k, "m": m}
    types = {k: "continuous" for k in cols}
    return cols, types


# ------------------------------------------------------------------------------------------
# The method

def gcm_claim(table, nrows, x, y, given, method, path, moment_level=3, filt=None):
    """Reference outcome of one claim (see the module docstring and the method description)."""
    filt = np.ones(nrows, dtype=bool) if filt is None else filt
    names = [x, y] + list(given)
    complete = filt.copy()
    for v in names:
        complete &= table[v].observed
    n = int(complete.sum())
    out = {"n": n}
    if n == 0:
        out["untestable"] = "no complete row"
        return out
    cat = lambda c: c.type in ("binary", "ordinal", "nominal")
    present = {v: sorted(set(table[v].codes[complete].tolist())) for v in names if cat(table[v])}

    # sides, and how each enters the variance: "two" (a scored column with exactly two values
    # a < b over all its variable's observed rows, or a single level indicator), "nominal"
    # (several level indicators) or "plain"
    def side_columns(v):
        col = table[v]
        if col.type == "nominal":
            return [(col.codes[complete] == code).astype(float) for code in present[v][1:]], None
        vals = col.values
        if method == "gcm-rank":
            ranks = np.full(nrows, np.nan)
            ok = filt & col.observed
            ranks[ok] = stats.rankdata(col.values[ok], method="average")
            vals = ranks
        distinct = np.unique(vals[~np.isnan(vals)])
        return [vals[complete]], (tuple(float(d) for d in distinct) if len(distinct) == 2 else None)

    def side_kind(cols, two, nominal):
        if len(cols) > 1:
            return ("nominal",)
        if nominal:
            return ("two", 0.0, 1.0)
        return ("two",) + two if two is not None else ("plain",)

    cx, two_x = side_columns(x)
    cy, two_y = side_columns(y)
    sx = [c for c in cx if np.ptp(c) > 0]
    sy = [c for c in cy if np.ptp(c) > 0]
    if not sx:
        out["untestable"] = "x constant"
        return out
    if not sy:
        out["untestable"] = "y constant"
        return out
    kind_x = side_kind(sx, two_x, table[x].type == "nominal")
    kind_y = side_kind(sy, two_y, table[y].type == "nominal")
    qx, qy = len(sx), len(sy)
    Ysides = np.column_stack(sx + sy)

    # adjustment columns by level
    bases = {}
    for v in given:
        if not cat(table[v]):
            bases[v] = nested_basis(table[v].values[filt & table[v].observed])
            if path == "moments":
                bases[v] = bases[v][: moment_level + 1]
    by_level = [[] for _ in range(MAX_LEVEL + 1)]
    made = {v: [0] * (MAX_LEVEL + 1) for v in given}
    n_indicators = 0
    for v in given:
        col = table[v]
        if cat(col):
            if path == "moments" and col.type == "binary":
                cols = [col.values[complete]]  # the score: the same span as its indicator
            elif path == "moments":
                cols = [(col.codes[complete] == code).astype(float) for code in range(1, len(col.levels))]
            else:
                cols = [(col.codes[complete] == code).astype(float) for code in present[v][1:]]
            by_level[0].extend(cols)
            made[v][0] = len(cols)
            n_indicators += len(cols)
        else:
            s = col.values[complete]
            for level, terms in enumerate(bases[v]):
                made[v][level] = len(terms)
                for term in terms:
                    by_level[level].append(term_values(term, s))
    if path == "rows":
        if not bases:
            cap = 0
        else:
            cap = 0
            for level in range(1, MAX_LEVEL + 1):
                cols = 1 + n_indicators + sum(sum(len(t) for t in b[: level + 1]) for b in bases.values())
                if cols > n / ROWS_PER_PARAMETER:
                    break
                cap = level
    else:
        cap = max([lvl for b in bases.values() for lvl in range(1, len(b)) if b[lvl]] + [0])

    kept = []
    snaps = []
    bx = by = 0
    constant = [0] * (cap + 1)
    for level in range(cap + 1):
        for c in by_level[level]:
            cc = c - c.mean()
            ss = float(cc @ cc)
            if np.ptp(c) == 0 or ss == 0:
                constant[level] += 1
                continue
            res = residuals(np.column_stack(kept) if kept else np.empty((n, 0)), c[:, None])[:, 0]
            if float(res @ res) <= ALIAS_TOLERANCE * ss:
                continue
            kept.append(c)
        X = np.column_stack(kept) if kept else np.empty((n, 0))
        E = residuals(X, Ysides)
        p = len(kept) + 1
        snaps.append({"kept": len(kept), "E": E, "X": X,
                      "gcv_x": gcv(float((E[:, :qx] ** 2).sum()), n, p),
                      "gcv_y": gcv(float((E[:, qx:] ** 2).sum()), n, p)})
        bx = first_min([s["gcv_x"] for s in snaps])
        by = first_min([s["gcv_y"] for s in snaps])
        if path == "rows" and level >= bx + 2 and level >= by + 2:
            break
    level = min(len(snaps) - 1, max(bx, by) + 1)
    snap = snaps[level]
    E, params = snap["E"], snap["kept"]
    Ex, Ey = E[:, :qx], E[:, qx:]
    R = (Ex[:, :, None] * Ey[:, None, :]).reshape(n, qx * qy)
    sumR = R.sum(axis=0)
    fitted = Ysides - E
    Vx = side_variance(kind_x, Ex, fitted[:, :qx])
    Vy = side_variance(kind_y, Ey, fitted[:, qx:])
    Rbar = sumR / n
    sigma = np.einsum("tac,tbd->abcd", Vx, Vy).reshape(qx * qy, qx * qy) / n - np.outer(Rbar, Rbar)
    st = gcm_statistic(n, params, sumR, sigma)
    if st is None:
        out["untestable"] = "no degrees of freedom"
        return out
    out.update({
        "level": level, "max_level": cap, "level_x": bx, "level_y": by, "parameters": params,
        "levels_computed": len(snaps), "kept_by_level": [s["kept"] for s in snaps],
        "gcv_x": [s["gcv_x"] for s in snaps], "gcv_y": [s["gcv_y"] for s in snaps],
        "q": [qx, qy], "sum_r": sumR.tolist(),
        "adjustment": [{"variable": v, "columns": sum(made[v][: level + 1]) if not cat(table[v]) else made[v][0]} for v in given],
        "dropped": sum(len(by_level[l]) for l in range(level + 1)) - params,
        "constant_columns": sum(constant[: level + 1]),
        # level indicators of a nominal side that the moment path's columns hold (every level but
        # the column's first) beyond those of the levels present among the complete rows but the
        # first present: constant (an absent level) or redundant (the first level absent)
        "extra_side_columns": sum(len(table[v].levels) - len(present[v]) for v in (x, y) if table[v].type == "nominal") if path == "moments" else 0,
        "condition": condition_number(snaps[level]["X"]),
    })
    out.update({k: v for k, v in st.items() if k not in ("w",)})
    if st["components"] == 1:
        r = float(Ex[:, 0] @ Ey[:, 0] / math.sqrt((Ex[:, 0] @ Ex[:, 0]) * (Ey[:, 0] @ Ey[:, 0])))
        out["r"] = r
        out["effect"] = r
        out["ci"] = adf_interval(Ex[:, 0], Ey[:, 0], r, st["statistic"], st["p"], st["df"], n, params)
    else:
        k = st["components"]
        w = chi2_upper_quantile_from_log(min(0.0, st["log_p"]), k)
        out["chi2_equivalent"] = w
        out["effect"] = effect_map(max(0.0, w - k), n)
        out["ci"] = [effect_map(ncx2_noncentrality(w, k, 0.05), n), effect_map(ncx2_noncentrality(w, k, 0.975), n)]
    out["linear"] = linear_check(snaps[0], qx, qy, n)
    return out


def side_variance(kind, E, fitted):
    """Per row, the side's conditional covariance under the claim (n x k x k): e e' for a plain
    column; (b - a)^2 pi (1 - pi) for a two-valued one, pi = (fitted - a)/(b - a) clipped to
    [FIT_FLOOR, 1 - FIT_FLOOR]; diag(pi) - pi pi' for level indicators, pi the fitted
    probabilities floored at FIT_FLOOR and scaled down to sum to 1 - FIT_FLOOR when they exceed it
    (binomial and multinomial variances)."""
    n, k = E.shape
    if kind[0] == "plain":
        return E[:, :, None] * E[:, None, :]
    if kind[0] == "two":
        a, b = kind[1], kind[2]
        pi = np.clip((fitted[:, 0] - a) / (b - a), FIT_FLOOR, 1 - FIT_FLOOR)
        return ((b - a) ** 2 * pi * (1 - pi))[:, None, None]
    pi = np.maximum(fitted, FIT_FLOOR)
    total = pi.sum(axis=1, keepdims=True)
    pi = np.where(total > 1 - FIT_FLOOR, pi * (1 - FIT_FLOOR) / total, pi)
    return np.einsum("ta,ab->tab", pi, np.eye(k)) - pi[:, :, None] * pi[:, None, :]


def linear_check(snap, qx, qy, n):
    """The level-0 fit's classic test: the partial-correlation t test on n - 2 - p0 df (one product);
    for several, (n - 1) * the sum of squared canonical correlations of the residuals on qx*qy df."""
    E, p0 = snap["E"], snap["kept"]
    nu = n - 2 - p0
    Ex, Ey = E[:, :qx], E[:, qx:]
    if qx == 1 and qy == 1:
        r = float(Ex[:, 0] @ Ey[:, 0] / math.sqrt((Ex[:, 0] @ Ex[:, 0]) * (Ey[:, 0] @ Ey[:, 0])))
        t = r * math.sqrt(nu / (1 - r * r))
        pv, lp = log_t_two_sided(t, nu)
        return {"statistic": t, "df": nu, "p": pv, "log_p": lp, "effect": r}
    # canonical correlations: singular values of the whitened cross-product (numpy.linalg.svd)
    Qx, _ = np.linalg.qr(Ex)
    Qy, _ = np.linalg.qr(Ey)
    rho = np.linalg.svd(Qx.T @ Qy, compute_uv=False)
    trace = float((rho ** 2).sum())
    df = qx * qy
    w = (n - 1) * trace
    pv = float(stats.chi2.sf(w, df))
    return {"statistic": w, "df": df, "p": pv, "log_p": float(stats.chi2.logsf(w, df)),
            "effect": effect_map(max(0.0, w - df), n), "statistic_n_times_trace": n * trace}


# ------------------------------------------------------------------------------------------
# Topics

SHAPES_CLAIMS = [
    ("x", "y", ["z"]),
    ("x", "y2", ["z"]),
    ("xb", "yb", ["z", "g"]),
    ("region", "y", ["z"]),
    ("region", "stage", ["z", "site"]),
    ("x", "w", []),
    ("y", "w", []),
    ("x", "y", ["z", "u"]),
    ("xh", "yh", ["h"]),
    ("x", "strong", ["z"]),
    ("region", "xb", ["g"]),
    ("region", "colour", ["z"]),
    ("x3", "y3", ["e"]),
    ("x", "y", ["z", "z2"]),
    ("stage", "y", ["site", "w"]),
    ("pair", "x", ["z"]),
    ("tri", "y", ["z"]),
    ("x", "y", ["zoff"]),
    ("y", "pair", ["w", "g"]),
]
SHAPES_RANK = [("x", "y", ["z"]), ("xb", "yb", ["z", "g"]), ("region", "y", ["z"]), ("x", "y", ["z", "u"]), ("stage", "y", ["site", "w"])]
SHAPES_FILTERED = [("x", "y", ["z"]), ("x", "y", ["z", "u"]), ("x", "w", [])]
LISTWISE = ["x", "y", "z", "u", "w", "yb"]
SHAPES_UNTESTABLE = [("const1", "x", ["z"]), ("x", "const1", []), ("late", "x", ["z"])]
SMALL_CLAIMS = [("x", "y", ["a"]), ("x", "y", ["a", "b"]), ("x", "y", ["a", "b", "c"]), ("x", "y", ["a", "b", "c", "d"]),
                ("x", "y", ["a", "b", "c", "d", "f", "k", "m"]), ("x", "y", [])]


def topic_claims(out_dir):
    shapes_cols, shapes_types = make_shapes()
    small_cols, small_types = make_small()
    datasets = {"shapes": (shapes_cols, shapes_types), "small": (small_cols, small_types)}
    results = []
    tables = {}
    for name, (cols, types) in datasets.items():
        path = os.path.join(out_dir, f"{name}.csv")
        write_csv(path, cols, list(cols))
        with open(path) as fh:
            tables[name] = read_csv(fh.read(), types)  # the numbers as written, parsed by float()

    def run(data, claims, methods, paths, filt_name=None):
        table, nrows = tables[data]
        filt = None
        if filt_name == "listwise":
            filt = np.ones(nrows, dtype=bool)
            for v in LISTWISE:
                filt &= table[v].observed
        for x, y, given in claims:
            for method in methods:
                for path in paths:
                    res = gcm_claim(table, nrows, x, y, given, method, path, filt=filt)
                    results.append({"data": data, "x": x, "y": y, "given": given, "method": method, "path": path,
                                    "filter": filt_name, **({"moment_level": 3} if path == "moments" else {}), **res})

    run("shapes", SHAPES_CLAIMS, ["gcm"], ["rows", "moments"])
    run("shapes", SHAPES_RANK, ["gcm-rank"], ["rows", "moments"])
    run("shapes", SHAPES_FILTERED, ["gcm", "gcm-rank"], ["rows"], "listwise")
    run("shapes", SHAPES_UNTESTABLE, ["gcm"], ["rows"])
    run("small", SMALL_CLAIMS, ["gcm"], ["rows", "moments"])
    return {
        "source": "scripts/gcm_reference.py: numpy.linalg.lstsq on the row matrix, numpy.quantile knots, scipy.stats.t / f / chi2 / ncx2 / rankdata, mpmath (50 digits) below 1e-300",
        "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "mpmath": mp.__version__, "patsy": patsy.__version__, "statsmodels": statsmodels.__version__},
        "types": {"shapes": shapes_types, "small": small_types},
        "listwise": LISTWISE,
        "claims": results,
    }


def topic_basis():
    rng = np.random.default_rng(20250303)
    samples = {
        "lognormal": np.sort(np.exp(rng.normal(0, 1, 257))),
        "ties": np.sort(rng.integers(0, 6, 40).astype(float)),
        "zero_inflated": np.sort(np.where(rng.uniform(size=500) < 0.6, 0.0, rng.exponential(size=500))),
        "two_values": np.array([1.0, 1.0, 1.0, 4.0, 4.0]),
        "one_value": np.array([2.5]),
        "nine": np.arange(1.0, 10.0),
        "negative": np.sort(rng.normal(-1e3, 0.5, 123)),
    }
    probes = [j / 64 for j in range(65)] + [0.1, 1 / 3, 0.999]
    out = []
    for name, v in samples.items():
        levels = nested_basis(v, MAX_LEVEL)
        lo, hi = float(v[0]), float(v[-1])
        s = np.concatenate([np.linspace(lo - 0.2 * (hi - lo + 1), hi + 0.2 * (hi - lo + 1), 23), v[:: max(1, len(v) // 17)]])
        out.append({
            "name": name, "sorted": v.tolist(), "quantiles": [{"p": p, "q": q} for p, q in zip(probes, quantiles(v, probes))],
            "levels": [[term_json(t) for t in terms] for terms in levels],
            "probe_values": s.tolist(),
            "term_values": [[term_values(t, s).tolist() for t in terms] for terms in levels],
        })
    return {"source": "numpy.quantile (method='linear', its default); term values by the formula in scripts/gcm_reference.py (Harrell 2015, eq. 2.25, over (t_K - t_1)^2)", "samples": out}


def topic_spline_span():
    rng = np.random.default_rng(20250304)
    n = 400
    x = np.exp(rng.normal(0, 0.7, n))
    y = np.sin(1.5 * x) + 0.3 * x + rng.normal(0, 0.2, n)
    levels = nested_basis(x, 1)
    ours = np.column_stack([np.ones(n)] + [term_values(t, x) for terms in levels for t in terms])
    lo, q25, q50, q75, hi = quantiles(np.sort(x), [0, 0.25, 0.5, 0.75, 1])
    cr = np.asarray(patsy.dmatrix("cr(x, knots=k, lower_bound=lo, upper_bound=hi) - 1", {"x": x, "k": [q25, q50, q75], "lo": lo, "hi": hi}))
    cr1 = np.column_stack([np.ones(n), cr])
    fit_ours = ours @ np.linalg.lstsq(ours, y, rcond=None)[0]
    fit_cr = cr1 @ np.linalg.lstsq(cr1, y, rcond=None)[0]
    return {
        "source": "patsy.dmatrix('cr(x, knots=[q25, q50, q75], lower_bound=min, upper_bound=max) - 1') plus an intercept, fitted by numpy.linalg.lstsq; scripts/gcm_reference.py",
        "x": x.tolist(), "y": y.tolist(), "knots": [lo, q25, q50, q75, hi],
        "fitted_patsy": fit_cr.tolist(),
        "rank_ours": int(np.linalg.matrix_rank(ours)), "rank_patsy": int(np.linalg.matrix_rank(cr1)),
        "rank_joined": int(np.linalg.matrix_rank(np.column_stack([ours, cr]))),
        "max_abs_fitted_difference": float(np.max(np.abs(fit_ours - fit_cr))),
        "fitted_scale": float(np.max(np.abs(fit_cr))),
    }


def topic_nested():
    """A generated design: level 0 (two columns), level 1 (three: one an exact combination, one
    constant, one new), level 2 (two), level 3 (none); responses: one x column and two y columns."""
    rng = np.random.default_rng(20250305)
    n = 250
    a = rng.normal(size=n)
    b = rng.exponential(size=n)
    c1 = a + 2 * b  # aliased with a and b
    c2 = np.ones(n)  # constant
    c3 = np.maximum(a - 0.3, 0.0)
    d1 = a * b
    d2 = np.sin(3 * a)
    cols = [a, b, c1, c2, c3, d1, d2]
    col_level = [0, 0, 1, 1, 1, 2, 2]
    x = np.sin(2 * a) + 0.5 * b + rng.normal(0, 0.3, n)
    y1 = a * b + rng.normal(0, 0.5, n)
    y2 = (a > 0).astype(float) + 0.2 * rng.normal(size=n)
    resp = [x, y1, y2]
    allc = np.column_stack(cols + resp)
    cov = np.cov(allc, rowvar=False, ddof=1)
    A = len(cols)
    kept = []
    levels = []
    for level in range(4):
        for j in [j for j in range(A) if col_level[j] == level]:
            c = cols[j]
            cc = c - c.mean()
            ss = float(cc @ cc)
            if np.ptp(c) == 0 or ss == 0:
                continue
            res = residuals(np.column_stack([cols[k] for k in kept]) if kept else np.empty((n, 0)), c[:, None])[:, 0]
            if float(res @ res) <= ALIAS_TOLERANCE * ss:
                continue
            kept.append(j)
        X = np.column_stack([cols[k] for k in kept]) if kept else np.empty((n, 0))
        E = residuals(X, np.column_stack(resp))
        Xc = X - X.mean(axis=0)
        coef = np.linalg.lstsq(Xc, np.column_stack(resp) - np.column_stack(resp).mean(axis=0), rcond=None)[0] if kept else np.empty((0, 3))
        p = len(kept) + 1
        levels.append({
            "kept": len(kept), "kept_columns": list(kept),
            "residual": (E.T @ E / (n - 1)).ravel().tolist(),
            "gcv_x": gcv(float((E[:, :1] ** 2).sum()), n, p),
            "gcv_y": gcv(float((E[:, 1:] ** 2).sum()), n, p),
            "coefficients": coef.T.tolist(),
        })
    return {
        "source": "numpy.cov(ddof=1) of the columns; residuals by numpy.linalg.lstsq on [1, kept columns] (centred); GCV = RSS/n/(1 - p/n)^2; scripts/gcm_reference.py",
        "n": n, "columns": A, "q": 3, "qx": 1, "column_level": col_level, "cov": cov.ravel().tolist(), "levels": levels,
        "best_x": first_min([l["gcv_x"] for l in levels]), "best_y": first_min([l["gcv_y"] for l in levels]),
    }


def topic_statistic():
    rng = np.random.default_rng(20250306)
    cases = []

    def add(label, n, p, R):
        sumR = R.sum(axis=0)
        D = R - sumR / n
        sigma = D.T @ D / n
        st = gcm_statistic(n, p, sumR, sigma)
        case = {"label": label, "n": n, "params": p, "sum_r": sumR.tolist(), "sigma": sigma.ravel().tolist()}
        if st is None:
            case["untestable"] = True
        else:
            case.update({k: v for k, v in st.items()})
        cases.append(case)

    n = 200
    add("one component, null", n, 3, (rng.normal(size=n) * rng.normal(size=n))[:, None])
    add("one component, negative", n, 0, (rng.normal(size=n) * (rng.normal(size=n) - 0.3))[:, None] - 0.05)
    e = rng.normal(size=1000)
    add("one component, deep tail", 1000, 5, (e * (e + 0.05 * rng.normal(size=1000)))[:, None])
    add("two components", 300, 4, rng.normal(size=(300, 2)) @ np.array([[1.0, 0.4], [0.0, 0.8]]) + np.array([0.15, -0.05]))
    add("six components", 500, 10, rng.normal(size=(500, 6)) + 0.08)
    base = rng.normal(size=(400, 2)) + 0.1
    add("redundant third component", 400, 2, np.column_stack([base, base[:, 0] - 2 * base[:, 1]]))
    z = rng.normal(size=(2000, 3))
    add("three components, deep tail", 2000, 6, z + np.array([1.5, 0.9, -1.2]))
    add("no degrees of freedom", 5, 3, rng.normal(size=(5, 1)))
    intervals = []
    for r, t, nu, nn, p in [(0.2, 2.5, 200, 250, 3), (-0.35, -4.1, 90, 100, 8), (0.05, 0.9, 997, 1000, 1), (0.6, 12.0, 40, 45, 3),
                            (0.0, 0.0, 50, 60, 8), (-0.01, -0.2, 5, 10, 3), (0.9, 30.0, 1000, 1005, 3)]:
        intervals.append({"r": r, "t": t, "nu": nu, "n": nn, "params": p, "ci": correlation_interval(r, t, nu, nn, p),
                          "p": float(2 * stats.t.sf(abs(t), nu))})
    critical = [{"nu": nu, "c": float(stats.t.isf(0.025, nu))} for nu in [1, 2, 3, 5, 10, 40, 96, 200, 997, 1434, 10000, 1000000]]
    return {"source": "numpy.linalg.solve for W, scipy.stats.t.sf / f.sf / logsf (mpmath below 1e-300), scipy.stats.t.ppf for the intervals, scipy.stats.t.isf(0.025, nu) for the critical values; scripts/gcm_reference.py",
            "cases": cases, "intervals": intervals, "critical": critical}


def topic_gram():
    rng = np.random.default_rng(20250307)
    rows = 700
    X = np.column_stack([rng.normal(size=rows), 1e4 + rng.normal(size=rows), rng.exponential(size=rows) * 1e-3,
                         rng.integers(0, 2, rows).astype(float), np.ones(rows), rng.normal(size=rows) ** 3, -rng.uniform(size=rows)])
    index = np.sort(rng.choice(rows, 333, replace=False))
    shuffled = rng.permutation(rows)[:517]

    def fsum_gram(M):
        k = M.shape[1]
        return [[math.fsum(M[:, a] * M[:, b]) for b in range(k)] for a in range(k)]

    return {"source": "math.fsum of the elementwise products (numpy arrays); scripts/gcm_reference.py",
            "columns": X.T.tolist(), "index": index.tolist(), "shuffled": shuffled.tolist(),
            "gram": fsum_gram(X), "gram_index": fsum_gram(X[index]), "gram_shuffled": fsum_gram(X[shuffled]),
            "gram_first5": fsum_gram(X[:, :5]), "gram_one_row": fsum_gram(X[[3]])}


def topic_tails():
    f_cases = []
    for f, d1, d2 in [(3.0, 4, 20), (0.5, 2, 10), (1.0, 1, 1), (1e3, 6, 400), (1e5, 6, 400), (1e8, 3, 50), (2.2, 3, 1e5),
                      (25.0, 2, 3000), (400.0, 5, 2000), (1e-3, 3, 7), (7.5, 10, 12), (1e12, 2, 30), (60.0, 4, 997)]:
        p, lp = log_f_upper(f, d1, d2)
        f_cases.append({"f": f, "d1": d1, "d2": d2, "p": p, "log_p": lp,
                        "source": "scipy.stats.f.sf / logsf" if p > 1e-300 else "scipy.stats.f.sf (p); mpmath.betainc, 50 digits (log_p)"})
    isf = []
    for p in [0.5, 0.2, 0.05, 1e-3, 1e-10, 1e-50, 1e-200, 1e-300]:
        for df in [1, 2, 3, 6, 25]:
            isf.append({"log_p": math.log(p), "df": df, "x": float(stats.chi2.isf(p, df))})
    round_trip = []
    for x, df in [(1500, 1), (1500, 3), (3000, 2), (5000, 6), (9990, 1), (10000, 4), (10020, 12), (2000, 25)]:
        round_trip.append({"x": x, "df": df, "log_p": float(mp_log_chi2_upper(x, df))})
    return {"source": "scipy.stats.f.sf / logsf (mpmath.betainc at 50 digits where the tail is below 1e-300); scipy.stats.chi2.isf; mpmath.gammainc (50 digits) for the log-tail round trips; scripts/gcm_reference.py",
            "f": f_cases, "chi2_isf": isf, "chi2_round_trip": round_trip}


def topic_effect():
    cases = []
    for lr, df, n in [(12.6, 4, 500), (3.0, 6, 500), (9.488, 4, 300), (9.4877, 4, 300), (30.0, 2, 1000), (5.99, 2, 200),
                      (6.0, 2, 200), (150.0, 6, 1500), (2000.0, 3, 5000), (0.5, 3, 100), (11.07, 5, 250), (40.0, 12, 800)]:
        lo = ncx2_noncentrality(lr, df, 0.05)
        hi = ncx2_noncentrality(lr, df, 0.975)
        cases.append({"lr": lr, "df": df, "n": n, "p": float(stats.chi2.sf(lr, df)), "lambda_lower": lo, "lambda_upper": hi,
                      "ci": [effect_map(lo, n), effect_map(hi, n)], "effect": effect_map(max(0.0, lr - df), n)})
    return {"source": "scipy.optimize.brentq on scipy.stats.ncx2.sf (targets 0.05 and 0.975; 0 where scipy.stats.chi2.sf is already above), mapped by sqrt(1 - exp(-lambda/n)); scripts/gcm_reference.py",
            "cases": cases}


COMPACT = {"basis", "gram", "spline_span"}  # long arrays of numbers: one line
TOPICS = {
    "claims": topic_claims, "basis": topic_basis, "spline_span": topic_spline_span, "nested": topic_nested,
    "statistic": topic_statistic, "gram": topic_gram, "tails": topic_tails, "effect": topic_effect,
}


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--out", default=DEFAULT_OUT)
    ap.add_argument("--only", choices=sorted(TOPICS))
    args = ap.parse_args()
    os.makedirs(args.out, exist_ok=True)
    for name, fn in TOPICS.items():
        if args.only and name != args.only:
            continue
        data = fn(args.out) if name == "claims" else fn()
        with open(os.path.join(args.out, f"{name}.json"), "w") as fh:
            if name in COMPACT:
                json.dump(data, fh, separators=(",", ":"), allow_nan=False)
            else:
                json.dump(data, fh, indent=1, allow_nan=False)
            fh.write("\n")


if __name__ == "__main__":
    main()

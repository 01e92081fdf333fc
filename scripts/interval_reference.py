#!/usr/bin/env python3
"""Reference values for the intervals that agree with their tests, from numpy and scipy.

  adf           seeded residual pairs (e_x, e_y), 60 rows each, and the ADF variance of their
                correlation at rho = -0.5, 0, 0.3, 0.8: numpy.var of the influence values
                u v - rho (u^2 + v^2)/2 of the residuals standardised by their mean squares
                (Steiger & Hakstian 1982)
  intervals     residual-correlation intervals: the set {rho : (r - rho)^2 <= k^2 s^2(rho)} with
                k = scipy.stats.t.ppf(1 - alpha/2, nu), s^2(rho) = s0^2 w(rho) + f/n (A(rho) - A(0) w(rho)),
                f = n/(n - 1 - params), A(rho) = c0 + c1 rho + c2 rho^2, w = 1 on the far side of 0
                from r, (1 - rho/r)^2 between 0 and r, 0 beyond; the part that holds r found by a
                grid walk (step 1e-3) and scipy.optimize.brentq, joined with the part that holds 0
                when p >= alpha (p = 2 scipy.stats.t.sf(|r/s0|, nu))
  coverage      true residual correlations of the coverage scenarios (test/helpers/cohortScenarios.ts
                with dependence d), each E[Cov(x, y | S)] / sqrt(E[Var(x | S)] E[Var(y | S)]):
                heavy tails (x = s + t3, y = s + t3' + d x): d / sqrt(1 + d^2) in closed form (the two
                t3 errors have the same variance); lognormal: closed form from the lognormal moments
                averaged over s ~ N(0, 1) (E exp(k s) = exp(k^2/2)); binary (x, y logistic in
                s ~ Gamma(2, 1), y also in 2x - 1): scipy.integrate.quad over the gamma density of
                the conditional covariance p_x (1 - p_x)(p_1 - p_0) and variances; and the exact
                central 99% band of a Binomial(400, 0.95) count (scipy.stats.binom.ppf / isf)

Run:  python3 scripts/interval_reference.py          (writes test/fixtures/intervals/reference.json)
      python3 scripts/interval_reference.py --print  (prints the same JSON)
"""
import math
import os

import numpy as np
from reference_output import emit_reference
from residual_correlation_inversion import invert_residual_correlation
import scipy
from scipy import integrate, stats
from scipy.special import expit

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "test", "fixtures", "intervals")


def adf_cases():
    rng = np.random.default_rng(20261203)
    out = []
    for shape in ("normal", "t3", "binary"):
        if shape == "normal":
            ex = rng.standard_normal(60)
            ey = 0.4 * ex + rng.standard_normal(60)
        elif shape == "t3":
            ex = rng.standard_t(3, 60)
            ey = 0.3 * ex + rng.standard_t(3, 60)
        else:
            ex = (rng.random(60) < 0.3) - 0.3
            ey = (rng.random(60) < 0.2 + 0.4 * (ex > 0)) - 0.35
        ex = ex - ex.mean()
        ey = ey - ey.mean()
        u = ex / math.sqrt(float(np.mean(ex * ex)))
        v = ey / math.sqrt(float(np.mean(ey * ey)))
        var = {str(rho): float(np.var(u * v - rho * (u * u + v * v) / 2)) for rho in (-0.5, 0.0, 0.3, 0.8)}
        out.append({"shape": shape, "ex": ex.tolist(), "ey": ey.tolist(), "variance": var})
    return out


def interval(r, se0, adf, nu, n, params, alpha):
    c0, c1, c2 = adf
    k = float(stats.t.ppf(1 - alpha / 2, nu))
    A = lambda rho: c0 + c1 * rho + c2 * rho * rho
    p = float(2 * stats.t.sf(abs(r / se0), nu)) if se0 > 0 and r != 0 else 1.0
    return p, invert_residual_correlation(r, se0, A, k, n / (n - 1 - params), n, p >= alpha, 1e-3)


def interval_cases():
    rows = []
    for r, se0, adf, nu, n, params, alpha in [
        (0.29, 0.045, (1.4, -0.9, 0.9), 492, 500, 6, 0.05),
        (0.29, 0.045, (1.4, -0.9, 0.9), 492, 500, 6, 0.01),
        (-0.19, 0.05, (1.3, 0.5, 0.6), 493, 500, 5, 0.05),
        (0.08, 0.045, (1.0, -0.1, 0.5), 493, 500, 5, 0.05),
        (0.12, 0.06, (1.6, -0.4, 1.2), 290, 300, 8, 0.05),
        (0.12, 0.06, (1.6, -0.4, 1.2), 290, 300, 8, 0.01),
        (0.6, 0.03, (0.9, -1.2, 1.1), 1990, 2000, 8, 0.05),
        (0.05, 0.04, (0.7, -0.05, 0.3), 590, 600, 8, 0.05),
    ]:
        p, ci = interval(r, se0, adf, nu, n, params, alpha)
        rows.append({"r": r, "se0": se0, "adf": list(adf), "nu": nu, "n": n, "params": params, "alpha": alpha, "p": p, "ci": ci})
    return rows


def binary_truth(a0, a1, b0, b1, d):
    g = lambda s: s * math.exp(-s)  # Gamma(2, 1) density
    px = lambda s: expit(a0 + a1 * s)
    p1 = lambda s: expit(b0 + b1 * s + d)
    p0 = lambda s: expit(b0 + b1 * s - d)
    py = lambda s: px(s) * p1(s) + (1 - px(s)) * p0(s)
    q = lambda h: integrate.quad(lambda s: g(s) * h(s), 0, np.inf, limit=400, epsabs=1e-14, epsrel=1e-12)[0]
    cov = q(lambda s: px(s) * (1 - px(s)) * (p1(s) - p0(s)))
    vx = q(lambda s: px(s) * (1 - px(s)))
    vy = q(lambda s: py(s) * (1 - py(s)))
    return cov / math.sqrt(vx * vy)


def lognormal_truth(d):
    # log x = 0.5 + 0.8 s + 0.5 e1, log y = 0.8 s + 0.5 e2 + d log x, s, e1, e2 ~ N(0, 1)
    kx, ky = 0.8, 0.8 + 0.8 * d
    sx2, sy2, sxy = 0.25, 0.25 + 0.25 * d * d, 0.25 * d
    e = lambda k: math.exp(k * k / 2)  # E exp(k s)
    cov = math.exp(0.5 + 0.5 * d + (sx2 + sy2) / 2) * math.expm1(sxy) * e(kx + ky)
    vx = math.exp(1 + sx2) * math.expm1(sx2) * e(2 * kx)
    vy = math.exp(d + sy2) * math.expm1(sy2) * e(2 * ky)
    return cov / math.sqrt(vx * vy)


def coverage():
    return {
        "heavy-tails": {"d": 0.303, "truth": 0.303 / math.sqrt(1 + 0.303 ** 2)},
        "lognormal": {"d": 0.5, "truth": lognormal_truth(0.5)},
        "binary-logistic": {"d": 1.0, "truth": binary_truth(-1, 0.8, -0.5, 0.6, 1.0)},
        "binary-logistic-strong": {"d": 0.5, "truth": binary_truth(-4, 2.5, -3, 2, 0.5)},
        "band_400": [int(stats.binom.ppf(0.005, 400, 0.95)), int(stats.binom.isf(0.005, 400, 0.95))],
    }


def main():
    doc = {
        "source": f"numpy {np.__version__}, scipy {scipy.__version__}; scripts/interval_reference.py",
        "adf": adf_cases(),
        "intervals": interval_cases(),
        "coverage": coverage(),
    }
    emit_reference(doc, OUT)


if __name__ == "__main__":
    main()

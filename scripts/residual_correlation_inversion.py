"""The residual-correlation interval as the set {rho : (r - rho)^2 <= k^2 s^2(rho)}, shared by the
reference scripts beside it: s^2(rho) = s0^2 w(rho) + f/n (A(rho) - A(0) w(rho)), w = 1 on the far
side of 0 from r, (1 - rho/r)^2 between 0 and r, 0 beyond r (Steiger & Hakstian 1982 for the ADF
variance A). The part of the set holding r is found by a grid walk outward from r and
scipy.optimize.brentq at the first sign change; when the test accepts rho = 0 (p >= alpha) the far
side's part that holds 0 is joined (inverting tests: Casella & Berger 2002, section 9.2.1)."""
from scipy import optimize


def invert_residual_correlation(r, se0, A, k, f, n, accept_zero, step):
    """[lo, hi] of the set above; A is the variance function rho -> A(rho), k the critical t,
    f = n/(n - 1 - params), accept_zero whether p >= alpha, step the grid walk's step."""
    A0 = A(0.0)
    sgn = -1.0 if r < 0 else 1.0
    rr = abs(r)

    def weight(rho):
        x = sgn * rho
        return 1.0 if x <= 0 else (1 - x / rr) ** 2 if x < rr else 0.0

    g = lambda rho: (r - rho) ** 2 - k * k * (se0 * se0 * weight(rho) + f / n * (A(rho) - A0 * weight(rho)))

    def walk(start, direction):
        a = start
        while True:
            b = a + direction * step
            if (direction > 0 and b >= 1) or (direction < 0 and b <= -1):
                b = float(direction)
                return optimize.brentq(g, a, b, xtol=1e-15, rtol=1e-15) if g(b) > 0 else b
            if g(b) > 0:
                return optimize.brentq(g, a, b, xtol=1e-15, rtol=1e-15)
            a = b

    hi = walk(r, sgn)
    lo = walk(r, -sgn)
    if accept_zero and sgn * lo > 0:
        lo = walk(0.0, -sgn)
    return sorted([lo, hi])

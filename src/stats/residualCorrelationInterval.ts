/**
 * The confidence interval of a residual correlation tested by the generalised covariance measure,
 * by inverting a family of studentised tests of H(ρ0): ρ = ρ0 whose member at ρ0 = 0 is the
 * measure's own test.
 *
 * Terms. e_x and e_y are the residuals of x and y after their regressions on S; u = e_x/σ_x and
 * v = e_y/σ_y the standardised residuals; r = mean(uv) the *residual correlation*. Its influence
 * function at a correlation ρ0 is ψ_i(ρ0) = u_i v_i − ρ0 (u_i² + v_i²)/2, so the asymptotically
 * distribution-free (ADF) variance of √n (r − ρ0) is
 *   A(ρ0) = Var(uv) − ρ0 Cov(uv, u² + v²) + ρ0² Var(u² + v²)/4 = c0 + c1 ρ0 + c2 ρ0²,
 * with no assumption on the fourth moments of the residuals (Steiger & Hakstian 1982, British
 * Journal of Mathematical and Statistical Psychology 35:208–215; Browne & Shapiro 1986, same
 * journal 39:193–208, for the ADF covariance of correlations). The generalised covariance
 * measure's t statistic T = r/s0 on ν df uses a variance s0² of its own under the claim: the
 * empirical Var(uv) for scored sides, a model-based one (π(1 − π) at the fitted probability) for a
 * two-valued side (Shah & Peters 2020, Annals of Statistics 48:1514–1538). The variance of the
 * test of H(ρ0) is
 *   s²(ρ0) = s0² w(ρ0) + (f/n)(A(ρ0) − c0 w(ρ0)),   f = n/(n − 1 − p),
 * where the weight w is 1 on the far side of 0 from r, (1 − ρ0/r)² between 0 and r, and 0 beyond
 * r: at ρ0 = 0 it is s0², the test's own variance, so the test of H(0) *is* the generalised
 * covariance measure's test; at and beyond the estimate it is the ADF variance, which describes
 * r under the alternative (the model-based variance of two-valued sides does not: x and y are
 * then dependent given S). Writing k for the two-sided critical value of Student's t on ν df at
 * α = 1 − level, the interval is the set {ρ0 : (r − ρ0)² ≤ k² s²(ρ0)} (the test-inversion
 * interval of Casella & Berger 2002, Statistical Inference, 2nd ed., §9.2.1, with a variance
 * that depends on ρ0 as in Wilson's score interval), whose ends solve a quadratic on each of the
 * three pieces of w. Of that set the interval is the connected part holding r, widened to 0 when
 * the test of H(0) does not reject; so it excludes 0 exactly when p < α.
 */
import { studentTTwoSided } from "./pvalues.js";
import { studentTCritical } from "./quantiles.js";

/** The moments of the standardised residuals behind the ADF variance A(ρ0) = c0 + c1 ρ0 + c2 ρ0². */
export interface ResidualCorrelationVariance {
  /** The null standard error s0 of r that the test used: r/T (see the module comment). */
  se0: number;
  /** [c0, c1, c2] of A(ρ0) per row: Var(uv), −Cov(uv, u² + v²), Var(u² + v²)/4. */
  adf: [number, number, number];
}

/**
 * The coefficients [c0, c1, c2] of the ADF variance of a correlation, A(ρ0) = c0 + c1 ρ0 + c2 ρ0²,
 * from the sums over m rows of the residuals scaled by any fixed factors (u = a·e_x, v = b·e_y):
 * Σu², Σv², Σuv, Σu²v², Σu³v, Σuv³, Σu⁴, Σv⁴. The residuals are standardised by their mean
 * squares first, so the scale factors do not matter. Returns undefined when a side does not vary
 * or a sum is not finite. Cost: O(1).
 * Source: Steiger & Hakstian (1982), British Journal of Mathematical and Statistical Psychology
 * 35:208–215 (the ADF variance of a correlation from fourth-order moments).
 * @example adfCoefficients(4, { uu: 4, vv: 4, uv: 0, uuvv: 4, uuuv: 0, uvvv: 0, uuuu: 4, vvvv: 4 }) // [1, 0, 0]
 */
export function adfCoefficients(m: number, s: { uu: number; vv: number; uv: number; uuvv: number; uuuv: number; uvvv: number; uuuu: number; vvvv: number }): [number, number, number] | undefined {
  const su = s.uu / m;
  const sv = s.vv / m;
  if (!(su > 0 && sv > 0 && m > 0)) return undefined;
  const r = s.uv / m / Math.sqrt(su * sv);
  const uuvv = s.uuvv / m / (su * sv);
  const uuuv = s.uuuv / m / (su * Math.sqrt(su * sv));
  const uvvv = s.uvvv / m / (sv * Math.sqrt(su * sv));
  const uuuu = s.uuuu / m / (su * su);
  const vvvv = s.vvvv / m / (sv * sv);
  // standardised: mean(u²) = mean(v²) = 1, so mean(u² + v²) = 2
  const c0 = uuvv - r * r;
  const c1 = 2 * r - uuuv - uvvv;
  const c2 = (uuuu + 2 * uuvv + vvvv - 4) / 4;
  const out: [number, number, number] = [Math.max(0, c0), c1, Math.max(0, c2)];
  return out.every(Number.isFinite) ? out : undefined;
}

/** g(x) = A x² + B x + C on one piece of the weight. */
type Quadratic = [number, number, number];

function evaluate(q: Quadratic, x: number): number {
  return (q[0] * x + q[1]) * x + q[2];
}

/** Real roots of A x² + B x + C (ascending), by the cancellation-free formula; a linear or constant g too. */
function roots(q: Quadratic): number[] {
  const [A, B, C] = q;
  const scale = Math.max(Math.abs(A), Math.abs(B), Math.abs(C));
  if (scale === 0) return [];
  if (Math.abs(A) <= 1e-14 * scale) return B !== 0 ? [-C / B] : [];
  const disc = B * B - 4 * A * C;
  if (disc < 0) return [];
  const qq = -0.5 * (B + (B >= 0 ? 1 : -1) * Math.sqrt(disc));
  const a = qq / A;
  const b = qq !== 0 ? C / qq : a;
  return a < b ? [a, b] : [b, a];
}

/**
 * Walking from `from` towards `to` on a piece where g(from) ≤ 0, the first point where g turns
 * positive, or undefined when g stays ≤ 0 up to `to`.
 */
function firstExit(q: Quadratic, from: number, to: number): number | undefined {
  const up = to > from;
  const inside = roots(q).filter((x) => (up ? x > from && x <= to : x < from && x >= to));
  inside.sort((a, b) => (up ? a - b : b - a));
  const ends = [...inside, to];
  for (let i = 0; i < inside.length; i++) {
    const mid = (inside[i]! + ends[i + 1]!) / 2;
    const probe = mid === inside[i] ? inside[i]! + (up ? 1e-12 : -1e-12) : mid;
    if (evaluate(q, probe) > 0) return inside[i]!;
  }
  return undefined;
}

/**
 * Residual-correlation interval of the generalised covariance measure: the test-inversion interval
 * of the module comment at confidence `level`, for the residual correlation r, its test's p-value
 * p on ν df, n rows and `params` adjustment columns, and the null standard error s0 and ADF
 * coefficients of `variance`. The interval lies in [−1, 1], contains r, and excludes 0 exactly
 * when p < 1 − level. Cost: about 60 incomplete-beta evaluations (the critical value).
 * Sources: Steiger & Hakstian (1982), British Journal of Mathematical and Statistical Psychology
 * 35:208–215 (ADF variance); Shah & Peters (2020), Annals of Statistics 48:1514–1538 (the test at
 * ρ0 = 0); Casella & Berger (2002), Statistical Inference, 2nd ed., §9.2.1 (inverting tests).
 * @throws {RangeError} when r is not in [−1, 1], ν or n is not positive, level or p is out of range, or a variance is negative
 * @example residualCorrelationInterval(0.3, 2.83e-5, 200, 205, 3, { se0: 0.07, adf: [0.9, -0.5, 0.4] }) // ≈ [0.1724, 0.4213] (p of t = 0.3/0.07 on 200 df)
 */
export function residualCorrelationInterval(r: number, p: number, nu: number, n: number, params: number, variance: ResidualCorrelationVariance, level = 0.95): [number, number] {
  if (!(r >= -1 && r <= 1)) throw new RangeError(`residual correlation must be in [-1, 1], got ${r}`);
  if (!(nu > 0 && n > params + 1)) throw new RangeError(`need positive degrees of freedom, got ν = ${nu}, n = ${n}, ${params} adjustment columns`);
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be between 0 and 1, got ${level}`);
  if (!(p >= 0 && p <= 1)) throw new RangeError(`p-value must be in [0, 1], got ${p}`);
  const { se0 } = variance;
  const [c0, c1raw, c2] = variance.adf;
  if (!(se0 >= 0 && c0 >= 0 && c2 >= 0) || !Number.isFinite(c1raw)) throw new RangeError(`variances must be finite and ≥ 0, got s0 = ${se0}, ADF [${variance.adf.join(", ")}]`);
  const alpha = 1 - level;
  const k = studentTCritical(alpha, nu);
  const f = n / (n - 1 - params);
  // work with x = s·ρ0 so that the estimate rr = |r| is ≥ 0
  const s = r < 0 ? -1 : 1;
  const rr = Math.abs(r);
  const c1 = s * c1raw;
  const K = (k * k * f) / n;
  const k2 = k * k;
  // g(x) = (rr − x)² − k² s²(x) on the three pieces of the weight
  const beyond: Quadratic = [1 - K * c2, -2 * rr - K * c1, rr * rr - K * c0];
  const farSide: Quadratic = [1 - K * c2, -2 * rr - K * c1, rr * rr - k2 * se0 * se0];
  let upper = firstExit(beyond, rr, 1) ?? 1;
  let lower: number;
  const reject = p < alpha;
  if (rr > 0) {
    const beta = 1 - (k2 * (se0 * se0 - (f * c0) / n)) / (rr * rr);
    const between: Quadratic = [beta - K * c2, -2 * rr * beta - K * c1, rr * rr * beta - K * c0];
    lower = firstExit(between, rr, 0) ?? firstExit(farSide, 0, -1) ?? -1;
  } else {
    lower = firstExit(farSide, 0, -1) ?? -1;
  }
  if (!reject && lower > 0) lower = firstExit(farSide, 0, -1) ?? -1; // H(0) accepted: the set holds 0 and its side
  if (!reject && lower > 0) lower = 0; // rounding at the boundary
  if (reject && lower <= 0) lower = Math.min(rr, Number.MIN_VALUE); // rounding at the boundary: p < α decides
  lower = Math.min(lower, rr);
  upper = Math.max(upper, rr);
  const lo = Math.max(-1, lower);
  const hi = Math.min(1, upper);
  return s < 0 ? [-hi, -lo] : [lo, hi];
}

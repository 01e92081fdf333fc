/**
 * Quantile functions (inverse cumulative distribution functions).
 *
 * Terms. The p-quantile of a distribution with cumulative distribution function F is the x
 * with F(x) = p. `normalQuantile` is Wichura's algorithm AS 241 (PPND16): rational
 * approximations in three ranges with relative error about 1e-16 (Wichura 1988, Applied
 * Statistics 37:477–484). `chiSquareQuantile` solves F(x) = p for the chi-square distribution
 * by Newton's method on the log of the nearer tail against ln x, started from the Wilson–Hilferty cube-root
 * approximation (Wilson & Hilferty 1931, PNAS 17:684–688) and safeguarded by bisection.
 */
import { logGamma, logRegularizedGammaQ, regularizedGammaP, studentTTwoSided } from "./pvalues.js";

/** Wichura (1988) AS 241 coefficients, PPND16. */
const A = [3.387132872796366608, 133.14166789178437745, 1971.5909503065514427, 13731.693765509461125, 45921.953931549871457, 67265.770927008700853, 33430.575583588128105, 2509.0809287301226727];
const B = [1, 42.313330701600911252, 687.1870074920579083, 5394.1960214247511077, 21213.794301586595867, 39307.89580009271061, 28729.085735721942674, 5226.495278852545925];
const C = [1.42343711074968357734, 4.6303378461565452959, 5.7694972214606914055, 3.64784832476320460504, 1.27045825245236838258, 0.24178072517745061177, 0.0227238449892691845833, 7.7454501427834140764e-4];
const D = [1, 2.05319162663775882187, 1.6763848301838038494, 0.68976733498510000455, 0.14810397642748007459, 0.0151986665636164571966, 5.475938084995344946e-4, 1.05075007164441684324e-9];
const E = [6.6579046435011037772, 5.4637849111641143699, 1.7848265399172913358, 0.29656057182850489123, 0.026532189526576123093, 0.0012426609473880784386, 2.71155556874348757815e-5, 2.01033439929228813265e-7];
const F = [1, 0.59983220655588793769, 0.13692988092273580531, 0.0148753612908506148525, 7.868691311456132591e-4, 1.8463183175100546818e-5, 1.4215117583164458887e-7, 2.04426310338993978564e-15];

function poly(c: readonly number[], x: number): number {
  let s = 0;
  for (let i = c.length - 1; i >= 0; i--) s = s * x + c[i]!;
  return s;
}

/**
 * Standard normal quantile Φ⁻¹(p) by Wichura's AS 241 (PPND16), relative error about 1e-16.
 * Returns −Infinity at p = 0 and +Infinity at p = 1. Cost: O(1).
 * Source: Wichura (1988), "Algorithm AS 241: The percentage points of the normal distribution",
 * Applied Statistics 37:477–484.
 * @throws {RangeError} when p is not in [0, 1]
 * @example normalQuantile(0.975) // ≈ 1.959963984540054
 */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError(`probability must be in [0, 1], got ${p}`);
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  const q = p - 0.5;
  if (Math.abs(q) <= 0.425) {
    const r = 0.180625 - q * q;
    return (q * poly(A, r)) / poly(B, r);
  }
  let r = q < 0 ? p : 1 - p;
  r = Math.sqrt(-Math.log(r));
  let val: number;
  if (r <= 5) {
    r -= 1.6;
    val = poly(C, r) / poly(D, r);
  } else {
    r -= 5;
    val = poly(E, r) / poly(F, r);
  }
  return q < 0 ? -val : val;
}

/**
 * Chi-square quantile: the x with P(χ²(df) ≤ x) = p. Newton's method on the log of the
 * nearer tail (lower tail for p ≤ ½, upper tail 1 − p otherwise, so extreme upper quantiles keep
 * their accuracy), from the Wilson–Hilferty start, with a bisection safeguard; relative
 * accuracy about 1e-14. Returns 0 at p = 0 and Infinity at p = 1. Cost: a few dozen
 * incomplete-gamma evaluations.
 * Sources: Wilson & Hilferty (1931), PNAS 17:684–688 (start); Press et al. (2007), Numerical
 * Recipes 3rd ed., §9.4 (safeguarded Newton).
 * @throws {RangeError} when p is not in [0, 1] or df is not positive and finite
 * @example chiSquareQuantile(0.95, 1) // ≈ 3.841458820694124 (NIST/SEMATECH e-Handbook §1.3.6.7.4: 3.841)
 */
export function chiSquareQuantile(p: number, df: number): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError(`probability must be in [0, 1], got ${p}`);
  if (!(df > 0 && Number.isFinite(df))) throw new RangeError(`chi-square df must be a positive finite number, got ${df}`);
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  const useUpper = p > 0.5;
  return solveChiSquare(useUpper ? Math.log1p(-p) : Math.log(p), useUpper, df, normalQuantile(p));
}

/**
 * Chi-square quantile from the log of an upper-tail probability: the x with
 * ln P(χ²(df) ≥ x) = logUpper, accurate where the tail is far below the double range (the
 * chi-square equivalent of a p-value given as its log). Same method as {@link chiSquareQuantile}.
 * Cost: a few dozen incomplete-gamma evaluations.
 * @throws {RangeError} when logUpper is positive or NaN, or df is not positive and finite
 * @example chiSquareUpperQuantileLog(Math.log(0.05), 1) // ≈ 3.841458820694124
 */
export function chiSquareUpperQuantileLog(logUpper: number, df: number): number {
  if (!(logUpper <= 0)) throw new RangeError(`log of a probability must be ≤ 0, got ${logUpper}`);
  if (!(df > 0 && Number.isFinite(df))) throw new RangeError(`chi-square df must be a positive finite number, got ${df}`);
  if (logUpper === 0) return 0;
  if (logUpper === -Infinity) return Infinity;
  if (logUpper > -Math.LN2) return chiSquareQuantile(-Math.expm1(logUpper), df);
  // start: the upper tail is about exp(−x/2)·(x/2)^(df/2−1)/Γ(df/2), so x ≈ −2 ln p for small p
  const start = logUpper > -700 ? normalQuantile(-Math.expm1(logUpper)) : Math.sqrt(-2 * logUpper);
  return solveChiSquare(logUpper, true, df, start);
}

/** Safeguarded Newton for ln(tail(x)) = logTarget (upper or lower tail) from the Wilson–Hilferty start with normal deviate z. */
function solveChiSquare(logTarget: number, useUpper: boolean, df: number, z: number): number {
  const a = df / 2;
  // g(x) = ln(tail(x)) − ln(target); increasing in x for the lower tail, decreasing for the upper.
  const logTail = (x: number): number => (useUpper ? logRegularizedGammaQ(a, x / 2) : Math.log(regularizedGammaP(a, x / 2)));
  const logDensity = (x: number): number => (a - 1) * Math.log(x / 2) - x / 2 - logGamma(a) - Math.LN2;
  const g = (x: number): number => logTail(x) - logTarget;
  // Wilson–Hilferty start
  const h = 2 / (9 * df);
  let x = df * Math.max(1 - h + z * Math.sqrt(h), 0.01) ** 3;
  if (!(x > 0) || !Number.isFinite(x)) x = df;
  // bracket [lo, hi] with g(lo), g(hi) of opposite signs
  const sgn = useUpper ? -1 : 1; // g increases with x when sgn = 1
  let lo = x;
  let hi = x;
  while (sgn * g(lo) > 0) {
    lo /= 2;
    if (lo < 1e-300) return 0;
  }
  while (sgn * g(hi) < 0) hi *= 2;
  x = Math.min(Math.max(x, lo), hi);
  for (let it = 0; it < 400; it++) {
    const gx = g(x);
    if (gx === 0) return x;
    if (sgn * gx < 0) lo = x;
    else hi = x;
    // Newton in u = ln x: dg/du = x · (±density/tail), nearly constant near 0 and far out
    const slope = sgn * Math.exp(Math.log(x) + logDensity(x) - logTail(x));
    let next = x * Math.exp(-gx / slope);
    if (!(next > lo && next < hi) || !Number.isFinite(next)) next = Math.sqrt(lo * hi); // geometric bisection
    if (Math.abs(next - x) <= 1e-15 * x) return next;
    x = next;
    if (hi - lo <= 1e-15 * hi) return x;
  }
  return x;
}

/**
 * Two-sided critical value of Student's t: the smallest double c > 0 with P(|T| ≥ c) ≤ alpha for
 * T ~ t(ν) by {@link studentTTwoSided} itself (the function behind the test's p-value), so that
 * |t| exceeds c exactly when that p-value is below alpha (jStat's inverse, used before, was off by
 * up to 2.5e-8 relative, enough for an interval to exclude 0 at p slightly above alpha). Found by
 * Newton's method on ln P from the normal critical value to a few parts in 10¹³, then bisection
 * of a bracket of ±4e-12 around it to adjacent doubles; where Newton does not get there or the
 * bracket does not hold the root, by bisection bracketed from below by the normal critical value
 * ({@link studentTCriticalByBisection}, the same double). Cost: about 20 incomplete-beta
 * evaluations (about 60 by bisection alone).
 * Source: Abramowitz & Stegun (1964), Handbook of Mathematical Functions, §26.7 (the t tail as an
 * incomplete beta function, and the density); Newton's method and bisection (common practice).
 * @example studentTCritical(0.05, 10) // ≈ 2.228138851986 (scipy.stats.t.isf(0.025, 10))
 */
export function studentTCritical(alpha: number, nu: number): number {
  const p = (t: number) => studentTTwoSided(t, nu);
  const logAlpha = Math.log(alpha);
  // ln of the density's constant: Γ((ν+1)/2) / (Γ(ν/2) √(νπ))
  const logC = logGamma((nu + 1) / 2) - logGamma(nu / 2) - 0.5 * Math.log(nu * Math.PI);
  let t = normalQuantile(1 - alpha / 2);
  for (let it = 0; it < 30 && Number.isFinite(t) && t > 0; it++) {
    const pt = p(t);
    if (!(pt > 0)) break;
    // d ln P / dt = −2 f(t) / P(t)
    const logSlope = Math.log(2) + logC - ((nu + 1) / 2) * Math.log1p((t * t) / nu) - Math.log(pt);
    const next = t + (Math.log(pt) - logAlpha) / Math.exp(logSlope);
    if (!(next > 0) || !Number.isFinite(next)) break;
    const close = Math.abs(next - t) <= NEWTON_CLOSE * next;
    t = next;
    if (close) {
      // a bracket of a few parts in 10^12 around the root, halved to adjacent doubles
      const lo = t * (1 - NEWTON_BRACKET);
      const hi = t * (1 + NEWTON_BRACKET);
      if (p(lo) > alpha && p(hi) <= alpha) return bisectCritical(p, alpha, lo, hi);
      break;
    }
  }
  return studentTCriticalByBisection(alpha, nu);
}

/**
 * Newton's steps smaller than this (relative) end the iteration. Not smaller: above about 10⁴ df
 * the p-value's own rounding (a few parts in 10¹²) keeps the steps from shrinking below 10⁻¹², and
 * a threshold under that sent nine calls in ten of a pooled audit through 30 steps and then the
 * whole bisection; from a step of 10⁻¹¹ the root is inside the bracket below, which is checked.
 */
const NEWTON_CLOSE = 1e-11;
/** Half-width (relative) of the bracket the bisection then halves. */
const NEWTON_BRACKET = 4e-12;

/** The smallest double in (lo, hi] with p ≤ alpha, given p(lo) > alpha ≥ p(hi), by bisection to adjacent doubles. */
function bisectCritical(p: (t: number) => number, alpha: number, lo: number, hi: number): number {
  for (let it = 0; it < 200; it++) {
    const mid = lo + (hi - lo) / 2;
    if (mid <= lo || mid >= hi) break;
    if (p(mid) > alpha) lo = mid;
    else hi = mid;
  }
  return hi;
}

/**
 * {@link studentTCritical} by bisection on {@link studentTTwoSided}, bracketed from below by the
 * normal critical value (which every t critical value exceeds), to adjacent doubles.
 * Cost: about 60 incomplete-beta evaluations.
 * @example studentTCriticalByBisection(0.05, 10) // the same double as studentTCritical(0.05, 10)
 */
export function studentTCriticalByBisection(alpha: number, nu: number): number {
  let lo = normalQuantile(1 - alpha / 2);
  while (studentTTwoSided(lo, nu) <= alpha && lo > 1e-300) lo /= 2;
  let hi = 2 * lo;
  while (studentTTwoSided(hi, nu) > alpha) hi *= 2;
  return bisectCritical((t) => studentTTwoSided(t, nu), alpha, lo, hi);
}


/**
 * Tail-accurate p-values. Upper tails come from the regularized incomplete gamma and
 * beta functions with their upper-tail option (never as 1 − cdf), so a p-value far out
 * in the tail keeps its relative accuracy instead of rounding to 0. Where even that
 * underflows (below about 1e-308), `log…` variants give the natural log of the p-value.
 */
import gammainc from "@stdlib/math-base-special-gammainc";
import betainc from "@stdlib/math-base-special-betainc";
import erfc from "@stdlib/math-base-special-erfc";

/**
 * Upper tail of the chi-square distribution, P(X ≥ x) for X ~ χ²(df).
 * Computed as the regularized upper incomplete gamma Q(df/2, x/2). Cost: O(1).
 * @example chiSquareUpper(3.841458820694124, 1) // ≈ 0.05
 */
export function chiSquareUpper(x: number, df: number): number {
  if (!(df > 0)) throw new RangeError(`chi-square df must be positive, got ${df}`);
  if (Number.isNaN(x)) return NaN;
  if (x <= 0) return 1;
  return gammainc(x / 2, df / 2, true, true);
}

/**
 * Two-sided p-value of Student's t: P(|T| ≥ |t|) for T ~ t(df),
 * computed as I_{df/(df+t²)}(df/2, 1/2) (regularized incomplete beta), never as 1 − cdf.
 */
export function studentTTwoSided(t: number, df: number): number {
  if (!(df > 0)) throw new RangeError(`t df must be positive, got ${df}`);
  if (Number.isNaN(t)) return NaN;
  if (!Number.isFinite(t)) return 0;
  const x = df / (df + t * t);
  return betainc(x, df / 2, 0.5, true, false);
}

/** Two-sided normal p-value P(|Z| ≥ |z|) = erfc(|z|/√2). */
export function normalTwoSided(z: number): number {
  if (Number.isNaN(z)) return NaN;
  return erfc(Math.abs(z) / Math.SQRT2);
}

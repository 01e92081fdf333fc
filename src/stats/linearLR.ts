/**
 * Gaussian likelihood-ratio test of nested linear models.
 *
 * Terms: the *full model* regresses y on all p columns of X (row-major m × p); the *null model*
 * on its first p0 columns. With residual sums of squares RSS1 (full) and RSS0 (null), the maximized
 * Gaussian log-likelihoods (variance estimated by RSS/m) differ by (m/2)·ln(RSS0/RSS1), so the
 * *likelihood-ratio statistic* is LR = m·ln(RSS0/RSS1), asymptotically χ²(p − p0) under the null
 * model (Wilks 1938, Annals of Mathematical Statistics 9:60–62). Both fits use Householder QR.
 */
import { leastSquaresQR } from "./linalg.js";

export interface LinearLRResult {
  /** m·ln(RSS0/RSS1). */
  lr: number;
  /** p − p0. */
  df: number;
  rss0: number;
  rss1: number;
  /** Full-model coefficients. */
  coef: Float64Array;
  /** Maximized Gaussian log-likelihoods of the null and full models. */
  logLik0: number;
  logLik1: number;
}

/** Maximized Gaussian log-likelihood of a least-squares fit: −(m/2)(ln(2π RSS/m) + 1). */
function gaussianLogLik(rss: number, m: number): number {
  return -(m / 2) * (Math.log((2 * Math.PI * rss) / m) + 1);
}

/**
 * Gaussian likelihood-ratio statistic m·ln(RSS0/RSS1) of the first p0 columns of X against all
 * p columns. Returns `undefined` when either design is rank deficient, m ≤ p, or the full model
 * fits exactly (RSS1 = 0). Cost: O(m·p²).
 * Source: Wilks (1938), Ann. Math. Statist. 9:60–62; QR as in Golub & Van Loan (2013) §5.2.
 * @throws RangeError when sizes disagree or p0 is not in 1..p−1
 * @example
 * // y = x exactly plus noise-free offset except one point
 * linearLR(new Float64Array([1, 0, 1, 1, 1, 2, 1, 3]), 4, 2, 1, [0, 1, 2, 4])?.lr
 */
export function linearLR(X: Float64Array, m: number, p: number, p0: number, y: ArrayLike<number>): LinearLRResult | undefined {
  if (X.length !== m * p) throw new RangeError(`design has ${X.length} entries, expected ${m}×${p}`);
  if (y.length !== m) throw new RangeError(`response has ${y.length} entries, expected ${m}`);
  if (!(Number.isInteger(p0) && p0 >= 1 && p0 < p)) throw new RangeError(`null model columns p0 must be in 1..${p - 1}, got ${p0}`);
  if (m <= p) return undefined;
  const full = leastSquaresQR(X, m, p, y);
  if (!full) return undefined;
  const X0 = new Float64Array(m * p0);
  for (let i = 0; i < m; i++) for (let j = 0; j < p0; j++) X0[i * p0 + j] = X[i * p + j]!;
  const nul = leastSquaresQR(X0, m, p0, y);
  if (!nul) return undefined;
  const rss1 = full.rss;
  // The null model is nested: its RSS cannot be smaller (rounding aside).
  const rss0 = Math.max(nul.rss, rss1);
  if (!(rss1 > 0)) return undefined;
  const lr = m * Math.log1p((rss0 - rss1) / rss1);
  return { lr, df: p - p0, rss0, rss1, coef: full.coef, logLik0: gaussianLogLik(rss0, m), logLik1: gaussianLogLik(rss1, m) };
}

/**
 * Significance test and confidence interval for a partial correlation.
 *
 * Terms. r is a sample partial correlation of two variables given c conditioning design
 * columns, computed from n complete cases. Under joint normality and a true partial
 * correlation of 0, t = r·√((n − 2 − c)/(1 − r²)) follows Student's t on n − 2 − c degrees
 * of freedom exactly (Fisher 1924, Metron 3:329–332; Anderson 2003, An Introduction to
 * Multivariate Statistical Analysis, 3rd ed., Theorem 4.3.1 with §4.3.3). The confidence
 * interval uses Fisher's z = atanh(r), approximately normal with standard error
 * 1/√(n − c − 3) (Fisher 1921, Metron 1:3–32), transformed back with tanh.
 */
import { logStudentTTwoSided, studentTTwoSided } from "./pvalues.js";

/** The 0.975 quantile of the standard normal distribution, to double precision (NIST/SEMATECH e-Handbook §1.3.6.7.1 gives 1.96). */
export const Z_975 = 1.959963984540054;

export interface PartialCorrelationTestResult {
  /** Student's t statistic. */
  t: number;
  /** Degrees of freedom n − 2 − c. */
  df: number;
  /** Two-sided p-value, never exactly 0 (Number.MIN_VALUE when it underflows; see log_p). */
  p: number;
  /** Natural log of the two-sided p-value, finite and exact where p underflows. */
  log_p: number;
  /** 95% Fisher-z confidence interval of the partial correlation. */
  ci: [number, number];
}

/** Largest double below 1: an observed |r| of exactly 1 is evaluated here, so t and log p stay finite. */
const R_MAX = 1 - 2 ** -53;

/**
 * Partial correlation t test: the exact t test of zero partial correlation,
 * t = r·√((n − 2 − c)/(1 − r²)) on n − 2 − c df, two-sided p from the tail-accurate incomplete
 * beta (log p exact below the double range), and the 95% confidence interval
 * tanh(atanh(r) ± 1.959963984540054/√(n − c − 3)) ([−1, 1] when n − c − 3 = 0).
 * An |r| of exactly 1 is evaluated at the largest double below 1, so the statistic and log p
 * are finite bounds. Returns `{ reason }` when n − 2 − c < 1 (no degrees of freedom are left).
 * Cost: O(1).
 * Source: Fisher (1924), Metron 3:329–332; Fisher (1921), Metron 1:3–32.
 * @throws {RangeError} when r is not in [−1, 1] or n, c are not non-negative integers
 * @example partialCorrelationTest(0.711879, 37, 2) // { t ≈ 5.82, df: 33, ... } (Penn State STAT 505 §6.3)
 */
export function partialCorrelationTest(r: number, n: number, c: number): PartialCorrelationTestResult | { reason: string } {
  if (!(Number.isFinite(r) && r >= -1 && r <= 1)) throw new RangeError(`partial correlation must be in [-1, 1], got ${r}`);
  if (!(Number.isInteger(n) && n >= 0)) throw new RangeError(`sample size must be a non-negative integer, got ${n}`);
  if (!(Number.isInteger(c) && c >= 0)) throw new RangeError(`number of conditioning columns must be a non-negative integer, got ${c}`);
  const df = n - 2 - c;
  if (df < 1) {
    return { reason: `${n} complete case${n === 1 ? "" : "s"} leave no degrees of freedom for a partial correlation given ${c} column${c === 1 ? "" : "s"}; it needs at least ${c + 3}` };
  }
  const rc = Math.max(-R_MAX, Math.min(R_MAX, r));
  // 1 − r² as (1 − r)(1 + r) keeps its relative accuracy near |r| = 1.
  const t = rc * Math.sqrt(df / ((1 - rc) * (1 + rc)));
  const log_p = logStudentTTwoSided(t, df);
  const p0 = studentTTwoSided(t, df);
  const p = p0 > 1e-280 ? p0 : Math.max(Math.exp(log_p), Number.MIN_VALUE);
  const ciDf = n - c - 3;
  let ci: [number, number];
  if (ciDf <= 0) ci = [-1, 1];
  else {
    const z = Math.atanh(rc);
    const half = Z_975 / Math.sqrt(ciDf);
    ci = [Math.tanh(z - half), Math.tanh(z + half)];
  }
  return { t, df, p, log_p, ci };
}

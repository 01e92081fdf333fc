/**
 * Gaussian likelihood-ratio test of nested linear models.
 *
 * Terms: the *full model* regresses y on all p columns of X (row-major m × p); the *null model*
 * on its first p0 columns. With residual sums of squares RSS1 (full) and RSS0 (null), the maximized
 * Gaussian log-likelihoods (variance estimated by RSS/m) differ by (m/2)·ln(RSS0/RSS1), so the
 * *likelihood-ratio statistic* is LR = m·ln(RSS0/RSS1), asymptotically χ²(p − p0) under the null
 * model (Wilks 1938, Annals of Mathematical Statistics 9:60–62).
 * Both fits come from one *row-updating QR factorization by Givens rotations* (Gentleman 1973,
 * IMA Journal of Applied Mathematics 12:329–336; Golub & Van Loan 2013, Matrix Computations,
 * 4th ed., §5.1.8 and §6.5): each row of [X | y] is rotated into the p × p triangle R and the
 * rotated response z = Qᵀy, one row at a time, so the pass reads X once in row order and keeps
 * only O(p²) numbers. The residual left over from each row adds to RSS1, and because the first p0
 * columns of R and z are those of the null model's factorization, RSS0 = RSS1 + Σ_{j ≥ p0} z_j².
 * A column is *aliased* (rank deficiency) when its diagonal in R falls below 1e-10 of its norm.
 */

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
 * Gaussian likelihood-ratio statistic m·ln(RSS0/RSS1) = m·ln(1 + Σ_{j≥p0} z_j²/RSS1) of the first
 * p0 columns of X against all p columns, from one Givens row-updating QR pass. Returns
 * `undefined` when the design is rank deficient, m ≤ p, or the full model fits exactly
 * (RSS1 = 0). Cost: O(m·p²) time in one pass over the rows, O(p²) memory.
 * Sources: Wilks (1938), Ann. Math. Statist. 9:60–62; Gentleman (1973), IMA J. Appl. Math.
 * 12:329–336; Golub & Van Loan (2013) §5.1.8.
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
  const R = new Float64Array(p * p);
  const z = new Float64Array(p);
  const colNorm2 = new Float64Array(p);
  const a = new Float64Array(p);
  let rss1 = 0;
  for (let i = 0, off = 0; i < m; i++, off += p) {
    for (let j = 0; j < p; j++) {
      const v = X[off + j]!;
      a[j] = v;
      colNorm2[j] = colNorm2[j]! + v * v;
    }
    let b = y[i]!;
    let absorbed = false;
    for (let j = 0; j < p; j++) {
      const aj = a[j]!;
      if (aj === 0) continue;
      const rj = j * p;
      const r = R[rj + j]!;
      if (r === 0) {
        // empty pivot row: the remaining row becomes row j of R
        for (let k = j; k < p; k++) R[rj + k] = a[k]!;
        z[j] = b;
        absorbed = true;
        break;
      }
      const h = Math.sqrt(r * r + aj * aj);
      const c = r / h;
      const s = aj / h;
      R[rj + j] = h;
      for (let k = j + 1; k < p; k++) {
        const t = R[rj + k]!;
        const u = a[k]!;
        R[rj + k] = c * t + s * u;
        a[k] = c * u - s * t;
      }
      const t = z[j]!;
      z[j] = c * t + s * b;
      b = c * b - s * t;
    }
    if (!absorbed) rss1 += b * b;
  }
  for (let j = 0; j < p; j++) {
    if (!(Math.abs(R[j * p + j]!) > 1e-10 * Math.sqrt(colNorm2[j]!)) || colNorm2[j] === 0) return undefined;
  }
  const coef = new Float64Array(p);
  for (let j = p - 1; j >= 0; j--) {
    let s = z[j]!;
    for (let k = j + 1; k < p; k++) s -= R[j * p + k]! * coef[k]!;
    coef[j] = s / R[j * p + j]!;
  }
  let extra = 0;
  for (let j = p0; j < p; j++) extra += z[j]! * z[j]!;
  const rss0 = rss1 + extra;
  if (!(rss1 > 0)) return undefined;
  const lr = m * Math.log1p(extra / rss1);
  return { lr, df: p - p0, rss0, rss1, coef, logLik0: gaussianLogLik(rss0, m), logLik1: gaussianLogLik(rss1, m) };
}

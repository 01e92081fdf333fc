/**
 * Partial correlation from a covariance matrix.
 *
 * Terms. For design columns i and j and a conditioning set G of other columns, the *partial
 * correlation* r_{ij·G} is the correlation of the residuals of i and j after their least-squares
 * regressions on G (with intercept). With S the covariance over the ordered columns (G, i, j)
 * and S = L Lᵀ its Cholesky factorization, the trailing 2×2 block of L, [[a, 0], [b, c]], holds
 * the conditional (residual) covariance [[a², ab], [ab, b² + c²]], so r_{ij·G} = b / √(b² + c²).
 * A *pivot* is the squared diagonal entry of L of a column after scaling S to unit diagonal:
 * it equals 1 − R² of that column on the columns before it, the share of its variance left
 * unexplained. Source: Anderson (2003), An Introduction to Multivariate Statistical Analysis,
 * 3rd ed., Wiley, §2.5 (partial correlation from the conditional covariance); Golub & Van Loan
 * (2013), Matrix Computations, 4th ed., Alg. 4.2.1 (Cholesky).
 */
import { scaledCovarianceOf } from "./scaledCovariance.js";

/** Why a partial correlation is not defined, with the design column (index into the matrix) at fault. */
export type PartialCorrelationProblem =
  /** Column `column` (i, j or a member of the given set) has zero variance. */
  | { reason: "constant"; column: number }
  /** Given column `column` is (to `tol`) a linear function of the given columns before it. */
  | { reason: "collinear-given"; column: number }
  /** Column `column` (i or j) is (to `tol`) a linear function of the given columns. */
  | { reason: "collinear-with-given"; column: number };

export type PartialCorrelationResult = { r: number } | PartialCorrelationProblem;

/**
 * Partial correlation with reason: r_{ij·G} of design columns i and j given the columns `given`,
 * from a k×k covariance matrix (row-major; any positive scaling, e.g. Bessel-corrected), by a
 * Cholesky factorization of the correlation matrix over (given, i, j). Reports why it is
 * undefined instead: a constant column, a collinear conditioning set, or i or j explained by
 * the given columns up to a fraction `tol` of its variance (1 − R² < tol). A covariance from the
 * pattern moments carries its scaled twin (`scaledCovariance.ts`), which is read instead: the
 * same correlations (a correlation does not change when a column is scaled), finite even where
 * the columns' variances overflow or underflow the double range.
 * Cost: O(g³/3) for g = given.length, reading O(g²) entries of `cov`.
 * Source: Anderson (2003), An Introduction to Multivariate Statistical Analysis, 3rd ed., §2.5.
 * @throws {RangeError} when i, j or a given index is outside 0..k−1, i equals j, or an index repeats;
 *   when a variance is not finite in a covariance without a scaled twin
 * @example partialCorrelationWithReason(new Float64Array([1, 0.5, 0.5, 1]), 2, 0, 1, []) // { r: 0.5 }
 */
export function partialCorrelationWithReason(
  cov: ArrayLike<number>,
  k: number,
  i: number,
  j: number,
  given: readonly number[],
  tol = 1e-10,
): PartialCorrelationResult {
  const order = [...given, i, j];
  const seen = new Set<number>();
  for (const v of order) {
    if (!Number.isInteger(v) || v < 0 || v >= k) throw new RangeError(`column index ${v} is outside 0..${k - 1}; pass indices of the covariance matrix`);
    if (seen.has(v)) throw new RangeError(`column index ${v} appears twice among i, j and given; pass distinct columns`);
    seen.add(v);
  }
  if (cov.length < k * k) throw new RangeError(`covariance has ${cov.length} entries, fewer than k² = ${k * k}; pass a row-major k×k matrix`);
  cov = scaledCovarianceOf(cov)?.cov ?? cov;
  const m = order.length;
  const sd = new Float64Array(m);
  for (let u = 0; u < m; u++) {
    const v = cov[order[u]! * k + order[u]!]!;
    if (!Number.isFinite(v)) throw new RangeError(`variance of column ${order[u]} is ${v}; the covariance must be finite`);
    if (!(v > 0)) return { reason: "constant", column: order[u]! };
    sd[u] = Math.sqrt(v);
  }
  // Cholesky of the correlation matrix over `order`, lower triangle, row-major m×m.
  const L = new Float64Array(m * m);
  const g = given.length;
  let pivotJGivenG = NaN;
  for (let col = 0; col < m; col++) {
    let d = 1;
    for (let q = 0; q < col; q++) d -= L[col * m + q]! ** 2;
    if (col === m - 1) {
      // pivot of j on G alone (not on i): b² + c² in the notation above
      let dg = 1;
      for (let q = 0; q < g; q++) dg -= L[col * m + q]! ** 2;
      pivotJGivenG = dg;
    }
    if (col < g && !(d > tol)) return { reason: "collinear-given", column: order[col]! };
    if (col === g && !(d > tol)) return { reason: "collinear-with-given", column: i };
    if (col === m - 1) {
      if (!(pivotJGivenG > tol)) return { reason: "collinear-with-given", column: j };
      // c² may round to ≤ 0 when i and j are perfectly related given G: r is then ±1.
      const b = L[col * m + g]!;
      const c2 = Math.max(d, 0);
      const r = b / Math.sqrt(b * b + c2);
      return { r: Math.max(-1, Math.min(1, r)) };
    }
    const ljj = Math.sqrt(d);
    L[col * m + col] = ljj;
    for (let row = col + 1; row < m; row++) {
      let s = cov[order[row]! * k + order[col]!]! / (sd[row]! * sd[col]!);
      for (let q = 0; q < col; q++) s -= L[row * m + q]! * L[col * m + q]!;
      L[row * m + col] = s / ljj;
    }
  }
  /* c8 ignore next */
  throw new Error("unreachable");
}

/**
 * Partial correlation r_{ij·G} of design columns i and j given `given`, from a k×k row-major
 * covariance matrix; `undefined` when it is not defined (constant column, collinear
 * conditioning set, i or j a linear function of the given columns). See
 * {@link partialCorrelationWithReason} for the reason. Cost: O(g³/3) for g = given.length.
 * Source: Anderson (2003), An Introduction to Multivariate Statistical Analysis, 3rd ed., §2.5.
 * @throws {RangeError} when an index is outside 0..k−1 or repeats
 * @example partialCorrelation(new Float64Array([1, 0.5, 0.5, 1]), 2, 0, 1, []) // 0.5
 */
export function partialCorrelation(cov: ArrayLike<number>, k: number, i: number, j: number, given: readonly number[], tol = 1e-10): number | undefined {
  const res = partialCorrelationWithReason(cov, k, i, j, given, tol);
  return "r" in res ? res.r : undefined;
}

/**
 * Gaussian likelihood-ratio test of nested linear models, from a covariance matrix.
 *
 * Terms: the *response* is one design column; the *null model* regresses it on an intercept and
 * the `given` design columns, the *full model* adds the `added` columns. With residual sums of
 * squares RSS0 and RSS1 over the same n complete rows, LR = n·ln(RSS0/RSS1) (Wilks 1938, Annals
 * of Mathematical Statistics 9:60–62), asymptotically χ² on the number of added columns.
 * Because RSS/(n − 1) is the residual variance, a Schur complement of the covariance, both come
 * from one Cholesky factorization of the covariance ordered [given, added, response]: the squared
 * entries of the response's row of L, summed over the first t columns, are the variance those t
 * columns explain (Golub & Van Loan 2013, Matrix Computations, 4th ed., Alg. 4.2.1). A column is
 * *aliased* when its pivot falls below `tol` times its variance; it is dropped and not counted.
 * The LR does not change when a column is multiplied by a positive constant, so a covariance
 * from the pattern moments is read through its scaled twin (`scaledCovariance.ts`): the same
 * numbers bit for bit where the covariance is representable, finite ones where its entries
 * overflowed or underflowed the double range.
 * Cost: O(d³) for d design columns, independent of the number of rows.
 */
import { scaledCovarianceOf } from "./scaledCovariance.js";
import { timesPowerOfTwo } from "./powerOfTwoScale.js";

export interface GaussianLRResult {
  lr: number;
  /** Non-aliased added columns. */
  df: number;
  /** Non-aliased given columns. */
  givenKept: number;
  /** Residual variances (RSS/(n − 1)) of the null and full models (±Infinity or 0 where they leave the double range). */
  residualVarianceNull: number;
  residualVarianceFull: number;
  /** Sign of the response's partial covariance with the added column, for 1-df tests (0 otherwise). */
  sign: -1 | 0 | 1;
}

/**
 * Gaussian LR of `added` given `given` for response `resp`, from a k×k covariance (row-major)
 * of n complete rows. Returns `undefined` when the response is constant or the full model fits
 * exactly (residual variance ≤ `tol` of the response's variance).
 * @example
 * // y = x + noise: LR = −n·ln(1 − r²) with r the correlation of x and y
 * gaussianLRFromMoments(new Float64Array([1, 0.5, 0.5, 1]), 2, 100, 1, [], [0])!.lr // 100·ln(1/0.75)
 */
export function gaussianLRFromMoments(covIn: ArrayLike<number>, k: number, n: number, resp: number, given: readonly number[], added: readonly number[], tol = 1e-10): GaussianLRResult | undefined {
  const twin = scaledCovarianceOf(covIn);
  const cov = twin?.cov ?? covIn;
  // the response's residual variances are reported in its own units
  const unscale = (v: number): number => (twin ? timesPowerOfTwo(v, -2 * twin.exponent[resp]!) : v);
  const order = [...given, ...added];
  const L: Float64Array[] = []; // rows of the kept columns' Cholesky factor
  const kept: number[] = [];
  let givenKept = 0;
  for (let t = 0; t < order.length; t++) {
    const j = order[t]!;
    const row = new Float64Array(kept.length + 1);
    for (let u = 0; u < kept.length; u++) {
      let s = cov[j * k + kept[u]!]!;
      for (let v = 0; v < u; v++) s -= row[v]! * L[u]![v]!;
      row[u] = s / L[u]![u]!;
    }
    const vjj = cov[j * k + j]!;
    let d = vjj;
    for (let u = 0; u < kept.length; u++) d -= row[u]! * row[u]!;
    if (!(vjj > 0) || !(d > tol * vjj)) continue;
    row[kept.length] = Math.sqrt(d);
    kept.push(j);
    L.push(row);
    if (t < given.length) givenKept++;
  }
  const vrr = cov[resp * k + resp]!;
  if (!(vrr > 0)) return undefined;
  // The response's row of L against the kept columns.
  const lr_: number[] = [];
  for (let u = 0; u < kept.length; u++) {
    let s = cov[resp * k + kept[u]!]!;
    for (let v = 0; v < u; v++) s -= lr_[v]! * L[u]![v]!;
    lr_.push(s / L[u]![u]!);
  }
  let explainedNull = 0;
  for (let u = 0; u < givenKept; u++) explainedNull += lr_[u]! ** 2;
  let explainedAdded = 0;
  for (let u = givenKept; u < kept.length; u++) explainedAdded += lr_[u]! ** 2;
  const v0 = vrr - explainedNull;
  const v1 = v0 - explainedAdded;
  if (!(v1 > tol * vrr)) return undefined;
  const df = kept.length - givenKept;
  const last = lr_[kept.length - 1] ?? 0;
  return {
    lr: n * Math.log1p(explainedAdded / v1),
    df,
    givenKept,
    residualVarianceNull: unscale(v0),
    residualVarianceFull: unscale(v1),
    sign: df === 1 ? (last > 0 ? 1 : last < 0 ? -1 : 0) : 0,
  };
}

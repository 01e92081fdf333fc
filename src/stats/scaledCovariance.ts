/**
 * Covariance matrices that carry their exactly scaled twin.
 *
 * Terms. The *scaled twin* of the covariance matrix C of columns x_1..x_k holds the means and the
 * covariance of the scaled columns 2^(e_j)·x_j, e_j the column's scale exponent
 * (`powerOfTwoScale.ts`; any exponents that bring the columns' values near 1): C'_jk = 2^(e_j + e_k)·C_jk, but computed from the scaled values, so it is
 * finite and exact where C itself overflowed to ±Infinity (values of 1e155 or more) or underflowed
 * to 0 or lost digits among the subnormal numbers (values near 1e-310). The pattern moments attach
 * the twin to every covariance they return. Functions whose result does not change when a column
 * is multiplied by a positive constant (correlations, partial correlations, likelihood ratios of
 * linear models) read the twin when there is one: the same numbers as from C bit for bit wherever
 * C is representable (powers of two scale without rounding), and finite ones where it is not.
 */

/** Means and covariance of the scaled columns 2^exponent[j]·x_j. */
export interface ScaledCovariance {
  /** Means of the scaled columns. */
  readonly means: Float64Array;
  /** Covariance of the scaled columns, row-major k × k, on the same scale (divisor) as the matrix it is attached to. */
  readonly cov: Float64Array;
  /** The scale exponent of each column. */
  readonly exponent: Int32Array;
  /**
   * The point each column's sums were shifted by, in the same units, when known: cov_jj + (mean_j −
   * shift_j)² is the second moment the sums were computed from, which bounds the rounding error of
   * cov_jj (Chan, Golub & LeVeque 1983).
   */
  readonly shifts?: Float64Array;
}

const twins = new WeakMap<object, ScaledCovariance>();

/**
 * Attach the scaled twin to a covariance matrix (the array object itself: views and copies do not
 * carry it). Cost: O(1).
 * @throws RangeError when the twin's size does not match
 * @example attachScaledCovariance(cov, { means, cov: scaledCov, exponent })
 */
export function attachScaledCovariance(cov: Float64Array, twin: ScaledCovariance): void {
  const k = twin.exponent.length;
  if (twin.cov.length !== cov.length || twin.cov.length !== k * k || twin.means.length !== k) {
    throw new RangeError(`scaled twin of ${twin.exponent.length} columns does not fit a covariance of ${cov.length} entries; pass k exponents, k means and k² entries`);
  }
  twins.set(cov, twin);
}

/**
 * The scaled twin attached to this covariance array, if any. Cost: O(1).
 * @example scaledCovarianceOf(moments.cov)?.cov // finite even where moments.cov overflowed
 */
export function scaledCovarianceOf(cov: ArrayLike<number>): ScaledCovariance | undefined {
  return typeof cov === "object" && cov !== null ? twins.get(cov) : undefined;
}

/**
 * Sufficient statistics for linear methods, grouped by missing-data pattern.
 *
 * A *design column* is a numeric column as it enters a linear model: a continuous,
 * binary or ordinal variable as its score, or one 0/1 dummy per non-reference level of a
 * nominal variable (reference = first level). A *pattern* is the set of variables observed
 * in a row. Per pattern we keep the row count, the sums and the cross-products of the design
 * columns (shifted by a per-column constant for numerical stability), so that the covariance
 * of any set of variables over the rows complete on them is a sum over the patterns in which
 * they are all observed: no claim re-reads the rows.
 */
export interface DesignColumn {
  /** `name` for a scored variable, `name=level` for a nominal dummy. */
  name: string;
  /** The data variable it comes from. */
  source: string;
}

export interface Moments {
  /** Complete cases used. */
  n: number;
  /** Design columns of the requested variables, in request order (nominal dummies expanded in level order). */
  design: DesignColumn[];
  /** Means of the design columns. */
  means: Float64Array;
  /** Bessel-corrected covariance matrix (divided by n − 1), row-major, design.length². */
  cov: Float64Array;
}

export interface PatternMoments {
  /** Number of distinct missing-data patterns among the rows. */
  readonly patterns: number;
  /** Rows complete on every variable the moments were built over. */
  readonly completeRows: number;
  /**
   * Each missing-data pattern: the variables it observes (in the order the moments were built
   * over) and its row count (rows left out by a row filter are not in any pattern).
   */
  patternList(): ReadonlyArray<{ observed: readonly string[]; rows: number }>;
  /**
   * Moments of the design columns of `variables` over the rows where all of them are observed.
   * Cost: O(P · d²) for P patterns and d design columns; independent of the number of rows.
   */
  momentsFor(variables: readonly string[]): Moments;
}

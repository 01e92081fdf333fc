/**
 * Sufficient statistics for linear methods, grouped by missing-data pattern.
 *
 * A *design column* is a numeric column as it enters a linear model: a continuous,
 * binary or ordinal variable as its score, or one 0/1 dummy per non-reference level of a
 * nominal variable (reference = first level). On request a variable has further design
 * columns: 0/1 indicators of the levels of a binary or ordinal variable (so that it can enter a
 * conditioning set as categories, never as a score), the mid-ranks of a scored variable, and the
 * flexible basis terms of a continuous variable (`stats/flexibleBasis.ts`). A *pattern* is the
 * set of variables observed in a row. Per pattern we keep the row count, the sums and the
 * cross-products of the design columns (shifted by a per-column constant for numerical
 * stability), so that the covariance of any set of columns over the rows complete on their
 * variables is a sum over the patterns in which they are all observed: no claim re-reads the rows.
 */
import type { BasisTerm } from "../stats/flexibleBasis.js";

/** What a design column holds: the variable's score, a level indicator, its mid-rank, or a basis term. */
export type DesignColumnKind = "score" | "indicator" | "rank" | "basis";

export interface DesignColumn {
  /** `name` for a score, `name=level` for an indicator, `name:rank`, or the basis term's label. */
  name: string;
  /** The data variable it comes from. */
  source: string;
  kind: DesignColumnKind;
  /** Level code of an indicator. */
  code?: number;
  /** Basis term and its hierarchy level (1 or more) for a basis column. */
  term?: BasisTerm;
  basisLevel?: number;
}

/** A design column with its index, for {@link PatternMoments.momentsForColumns}. */
export interface IndexedDesignColumn {
  index: number;
  column: DesignColumn;
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
  /**
   * Every design column of a variable (score, indicators, rank, basis terms), with the index to
   * pass to {@link momentsForColumns}. Cost: O(columns of the variable).
   */
  columnsOf(variable: string): readonly IndexedDesignColumn[];
  /**
   * Moments of the given design columns (in the order given) over the rows where all their
   * variables are observed. Cost: O(P · d²); independent of the number of rows.
   */
  momentsForColumns(indices: readonly number[]): Moments;
}

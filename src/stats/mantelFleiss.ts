/**
 * The Mantel–Fleiss criterion for the χ²(1) approximation of the Cochran–Mantel–Haenszel test.
 *
 * Terms: in a 2 × 2 stratum with first-row total a, first-column total b and total n, the count
 * n11 ranges over [L, U] with L = max(0, a + b − n) and U = min(a, b) when the margins are
 * fixed, and its null (hypergeometric) mean is E = a·b/n. Over strata the sum Σ n11 ranges over
 * [Σ L, Σ U] around Σ E. The *Mantel–Fleiss gaps* are Σ E − Σ L and Σ U − Σ E, the distances in
 * counts from the null mean of Σ n11 to the ends of its range. Mantel and Fleiss ask both to be
 * at least 5 before the statistic is referred to χ²(1): a sum that cannot move 5 counts away
 * from its mean on one side is too discrete or skewed for the normal approximation (Mantel &
 * Fleiss 1980, American Journal of Epidemiology 112:129–134 — from memory). Strata with a single
 * row or column (one level of x or y seen) have L = E = U and add nothing.
 */

/** One stratum's 2 × 2 margins: first-row total, first-column total and the total count. */
export interface TwoByTwoMargins {
  row1: number;
  col1: number;
  total: number;
}

export interface MantelFleissResult {
  /** Σ E − Σ L: counts from the null mean of Σ n11 down to its smallest possible value. */
  lowerGap: number;
  /** Σ U − Σ E: counts from the null mean up to its largest possible value. */
  upperGap: number;
  /** Whether both gaps are at least {@link MANTEL_FLEISS_MIN_GAP}. */
  holds: boolean;
}

/** Counts each side of Σ E that Σ n11 must be able to reach (Mantel & Fleiss 1980). */
export const MANTEL_FLEISS_MIN_GAP = 5;

/**
 * Mantel–Fleiss gaps of a set of 2 × 2 strata and whether the criterion holds (both gaps ≥ 5).
 * Cost: O(strata).
 * Source: Mantel, N. & Fleiss, J. L. (1980), Minimum expected cell size requirements for the
 * Mantel–Haenszel one-degree-of-freedom chi-square test and a related rapid procedure, American
 * Journal of Epidemiology 112:129–134 (from memory).
 * @throws RangeError when a margin is not a finite non-negative number or exceeds its total
 * @example mantelFleiss([{ row1: 20, col1: 30, total: 100 }]) // { lowerGap: 6, upperGap: 14, holds: true }
 */
export function mantelFleiss(strata: readonly TwoByTwoMargins[]): MantelFleissResult {
  let lowerGap = 0;
  let upperGap = 0;
  strata.forEach((s, k) => {
    const { row1: a, col1: b, total: n } = s;
    if (![a, b, n].every((v) => Number.isFinite(v) && v >= 0) || a > n || b > n) {
      throw new RangeError(`stratum ${k}: margins ${a}, ${b} of total ${n} must be finite, non-negative and at most the total; pass counts`);
    }
    if (n === 0) return;
    const e = (a * b) / n;
    lowerGap += e - Math.max(0, a + b - n);
    upperGap += Math.min(a, b) - e;
  });
  return { lowerGap, upperGap, holds: lowerGap >= MANTEL_FLEISS_MIN_GAP && upperGap >= MANTEL_FLEISS_MIN_GAP };
}

/** A stratum's x × y table with the level codes of its rows and columns (the compact tables of `audit/methods/groupRows.ts`). */
export interface CodedTable {
  rows: number;
  cols: number;
  counts: ArrayLike<number>;
  xCodes: ArrayLike<number>;
  yCodes: ArrayLike<number>;
}

/**
 * The 2 × 2 margins of each stratum when x and y have exactly two levels over all strata, with
 * the first row and column the lower level code of x and of y in every stratum (so that Σ n11
 * counts the same cell throughout); `undefined` otherwise. Strata that see one level of x or y
 * are kept (their gaps are 0). Cost: O(Σ r_s·c_s).
 * @example binaryStrataMargins([{ rows: 2, cols: 2, counts: [5, 15, 25, 55], xCodes: [1, 0], yCodes: [0, 1] }]) // [{ row1: 80, col1: 30, total: 100 }]
 */
export function binaryStrataMargins(tables: readonly CodedTable[]): TwoByTwoMargins[] | undefined {
  const xs = new Set<number>();
  const ys = new Set<number>();
  for (const t of tables) {
    for (let i = 0; i < t.rows; i++) xs.add(t.xCodes[i]!);
    for (let j = 0; j < t.cols; j++) ys.add(t.yCodes[j]!);
  }
  if (xs.size !== 2 || ys.size !== 2) return undefined;
  const x1 = Math.min(...xs);
  const y1 = Math.min(...ys);
  return tables.map((t) => {
    let row1 = 0;
    let col1 = 0;
    let total = 0;
    for (let i = 0; i < t.rows; i++) {
      for (let j = 0; j < t.cols; j++) {
        const v = t.counts[i * t.cols + j]!;
        total += v;
        if (t.xCodes[i] === x1) row1 += v;
        if (t.yCodes[j] === y1) col1 += v;
      }
    }
    return { row1, col1, total };
  });
}

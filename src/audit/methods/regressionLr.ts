/**
 * Test method `regression-lr`: x ⫫ y | given for any mix of variable types, by a
 * likelihood-ratio test of nested regression models.
 *
 * Terms: the *response* is one side of the claim, the *added side* the other. The *null model*
 * regresses the response on an intercept and the given variables; the *full model* adds the
 * added side. LR = 2(ℓ1 − ℓ0) is referred to χ² on the number of added (non-aliased) parameters
 * (Wilks 1938, Annals of Mathematical Statistics 9:60–62).
 * - Response choice: the continuous side when there is one (y first); else an ordinal side (y
 *   first), modelled through its scores; both give a Gaussian linear model, LR = n·ln(RSS0/RSS1),
 *   computed from the pattern-grouped moments (`ctx.moments`) at a cost independent of the number
 *   of rows. In these linear models the added side enters as its score (binary, ordinal) or
 *   dummies (nominal); members of the given set that are binary enter as their score (its
 *   indicator), ordinal and nominal ones as indicators of their levels, as in the partial
 *   correlations (`claimMoments`). Otherwise a side with exactly two observed levels
 *   (y first) → logistic regression; else the side with fewer observed levels (y on ties) →
 *   multinomial (baseline-category) logit. *An ordinal response is treated as scores (no
 *   proportional-odds model)*: the test then asks whether the added side shifts its mean.
 * - Predictors of logistic and multinomial models: a continuous variable enters as one column
 *   (centred and scaled, which changes no likelihood); a categorical variable (binary, ordinal or
 *   nominal) as 0/1 dummies for its observed levels except the first observed one (levels with no
 *   complete row get no column).
 *   Columns aliased with earlier ones (pivots below 1e-9 of their scale in a Cholesky sweep of the
 *   Gram matrix) are dropped, given columns first, so the df counts only identifiable parameters.
 * - Grouping: when the response and every predictor are categorical, identical complete rows are
 *   grouped into weighted counts first and the models are fitted to the groups (a small weighted
 *   fit whatever the number of rows). Otherwise the fit is row by row, on a design in factor form
 *   (`FactorDesign`: rows with the same categorical predictors share a cell, so a pass costs
 *   O(d²) per row for d continuous given whatever the number of dummies). The null model's
 *   columns are the full model's without the added block (same rows, cells and dense buffer).
 * - Warm start: with more than 60,000 fitting rows both models are first fitted to a tenth of
 *   the rows (at least 20,000, at most 100,000) drawn at random (with replacement) from the
 *   stream of (`ctx.seed`, the claim); the fits on all rows start there (the first Newton step
 *   with the subsample's information matrix scaled to all rows) and stop by the same convergence
 *   criterion as from any start, or, once the information computed at the current iterate
 *   predicts a gain below 1e-8 relative, with that last Newton step taken on paper (ℓ + ½gᵀδ, the
 *   maximum of the quadratic model; `NewtonOptions.finalStep`), whose error, of the order of the
 *   gain times the step, stays near 1e-13 relative. So the estimates, ℓ0, ℓ1 and LR are the
 *   maximum-likelihood ones of all rows (to that criterion), only reached in fewer passes (2–3
 *   per model instead of 5–8). The full model starts at the subsample's full fit, its shared
 *   coefficients moved by as much as the null model's moved on all rows.
 * - Separation (a combination of predictors fits some rows, or some categories of some rows,
 *   with certainty, so some coefficients run to infinity): the fits follow the likelihood to its
 *   supremum, which is finite (`FitStatus` "limit" in `logisticRegression.ts`: extrapolation
 *   along the diverging coefficients and frozen directions, not a penalised likelihood), and
 *   LR = 2(ℓ1 − ℓ0) is taken at the two suprema, the limit of the statistic as both fits go on.
 *   `details.separation` gives each model's separation ("none", "quasi-complete", "complete"),
 *   `details.fixed_at_limit` the coefficients that ran to ±∞ (or that no row left uncertain can
 *   estimate), and a warning says so in words. Degrees of freedom: when only the full model
 *   separates (for instance an empty cell of the x × y table), the null model's estimate exists
 *   and df is the nominal count: the coefficient that runs to −∞ is estimated at its limit (a
 *   2 × 2 table with an empty cell has 1 df, not 0). When the null model separates, the test is
 *   that of the two models restricted to what the null model leaves uncertain (Geyer 2009,
 *   Electronic Journal of Statistics 3:259–289): df is the difference of the ranks of the two
 *   information matrices at the null model's limit, so added parameters that act only on rows
 *   already fitted with certainty are dropped (`details.df_nominal`, `details.not_identifiable`
 *   and a warning say which). Complete separation in the null model leaves nothing to test (both
 *   models fit every row with certainty: LR ≡ 0 on 0 df) and gives `{ ok: false, reason }`, as
 *   does a null-model separation that leaves no added parameter estimable. Complete separation in
 *   the full model only is tested: ℓ1 → 0, so LR → −2ℓ0, with a warning that the chi-square
 *   p-value is a rough guide there.
 * - Outcomes: a singular information matrix that separation does not explain (aliased columns),
 *   an exact linear fit, a single observed level or constant added side, or too few rows for the
 *   parameters give `{ ok: false, reason }`; non-convergence within 50 Newton iterations gives a
 *   `warnings` entry and the test goes on at the last iterate. The p-value is always asymptotic
 *   (permutations are not used by this method; see `stratified-chisq` for the permutation test).
 * - Effect: sign·√(1 − exp(−LR/n)) for 1-df tests, signed by the added coefficient; for more df,
 *   √(1 − exp(−max(0, LR − df)/n)) (`lrEffect`); the interval at confidence 1 − alpha (`--alpha`)
 *   agrees with the test at alpha (`lrEffectInterval`: the signed root ± z_{1−α/2} for 1 df,
 *   noncentral chi-square inversion with a one-sided lower end at alpha for more, Steiger 1990).
 */
import type { Column, Table } from "../../data/Table.js";
import { CATEGORICAL_TYPES } from "../../data/Table.js";
import { lrEffect, lrEffectInterval } from "../../stats/effectScale.js";
import { gaussianLRFromMoments } from "../../stats/gaussianLRFromMoments.js";
import { scaleExponent } from "../../stats/powerOfTwoScale.js";
import { scaledCovarianceOf } from "../../stats/scaledCovariance.js";
import { designCrossProduct, logisticRegressionDesign, type FactorDesign, type LogisticFit } from "../../stats/logisticRegression.js";
import { multinomialLogitDesign, type MultinomialFit } from "../../stats/multinomialLogit.js";
import { chiSquareUpper, logChiSquareUpper } from "../../stats/pvalues.js";
import { createRng, streamKeyOfClaim } from "../../stats/rng.js";
import type { MethodResult, TestContext, TestMethod } from "../TestMethod.js";
import type { Claim, TestOutcome } from "../types.js";
import { claimMoments, missingIndicatorsReason } from "./claimMoments.js";
import { linearAdjustment } from "./adjustmentDetails.js";
import { groupRows } from "./groupRows.js";

type ModelKind = "logistic" | "multinomial";

/** Fits on more rows than this start from a fit on a random subsample of them. */
const WARM_START_ROWS = 60_000;
/** Rows of that subsample: a tenth of the rows, within these bounds. */
const START_SUBSAMPLE_MIN = 20_000;
const START_SUBSAMPLE_MAX = 100_000;
/**
 * Predicted gain (relative to |ℓ| + 0.1) below which a fit on all rows ends with its last Newton
 * step taken on paper (`NewtonOptions.finalStep`). The error of ℓ there is of the order of the
 * gain times the step's size: on the 120 row-level fits of the 1,000,000-row benchmark it was at
 * most 1.6e-13 relative with this threshold (7e-12 with 1e-7, 4e-14 with 1e-9).
 */
const FINAL_STEP_GAIN = 1e-8;

function isCategorical(c: Column): boolean {
  return CATEGORICAL_TYPES.has(c.type) && c.codes !== undefined && c.levels !== undefined;
}

/** Observed levels (codes with at least one complete row, weighted) in code order. Cost: O(m). */
function observedLevels(codes: Int32Array, nLevels: number, weights: Float64Array | undefined, m: number): number[] {
  const seen = new Float64Array(nLevels);
  if (weights) for (let i = 0; i < m; i++) seen[codes[i]!] = seen[codes[i]!]! + weights[i]!;
  else countCodes(codes, seen, m);
  return presentLevels(seen);
}

/** The levels with a positive count, in code order. */
function presentLevels(counts: Float64Array | Uint8Array): number[] {
  const out: number[] = [];
  for (let l = 0; l < counts.length; l++) if (counts[l]! > 0) out.push(l);
  return out;
}

function countCodes(codes: Int32Array, seen: Float64Array, m: number): void {
  for (let i = 0; i < m; i++) seen[codes[i]!]++;
}

/**
 * Keep the columns of a Gram matrix (p × p) that are not aliased with earlier ones: a Cholesky
 * sweep in column order that skips a column whose pivot falls below `tol` times its diagonal.
 * Cost: O(p³).
 */
export function independentColumns(G: Float64Array, p: number, tol = 1e-9): number[] {
  // L rows for kept columns only (L[k] has entries for kept columns in order).
  const kept: number[] = [];
  const L: Float64Array[] = [];
  for (let j = 0; j < p; j++) {
    const row = new Float64Array(kept.length + 1);
    for (let t = 0; t < kept.length; t++) {
      let s = G[j * p + kept[t]!]!;
      for (let u = 0; u < t; u++) s -= row[u]! * L[t]![u]!;
      row[t] = s / L[t]![t]!;
    }
    let d = G[j * p + j]!;
    for (let t = 0; t < kept.length; t++) d -= row[t]! * row[t]!;
    if (!(d > tol * G[j * p + j]!) || !(G[j * p + j]! > 0)) continue;
    row[kept.length] = Math.sqrt(d);
    kept.push(j);
    L.push(row);
  }
  return kept;
}

/** Widest mixed-radix key range served by the reused lookup array of `cellsOf`. */
const CELL_LIMIT = 1 << 22;
/** Reused lookup from key to dense id, −1 where unused (entries reset after each use). */
let cellMap = new Int32Array(0);

/**
 * Renumber keys in [0, range) densely in order of first appearance, in place in `ids` (range at
 * most CELL_LIMIT: the reused lookup array, reset through the list of keys met). Cost: O(m + ids).
 */
function renumberInPlace(ids: Int32Array, m: number, range: number): number {
  if (cellMap.length < range) cellMap = new Int32Array(Math.max(range, 1024)).fill(-1);
  const map = cellMap;
  const firstKey: number[] = [];
  for (let i = 0; i < m; i++) {
    const k = ids[i]!;
    let id = map[k]!;
    if (id < 0) {
      id = firstKey.length;
      map[k] = id;
      firstKey.push(k);
    }
    ids[i] = id;
  }
  for (const k of firstKey) map[k] = -1;
  return firstKey.length;
}

/** Renumber wide keys densely in order of first appearance through a hash map, into `ids`. Cost: O(m). */
function renumberWide(keys: Float64Array, m: number, ids: Int32Array): number {
  const map = new Map<number, number>();
  for (let i = 0; i < m; i++) {
    const k = keys[i]!;
    let id = map.get(k);
    if (id === undefined) map.set(k, (id = map.size));
    ids[i] = id;
  }
  return map.size;
}

/** ids[i] = ids[i]·L + codes[i]. */
function mixIn(ids: Int32Array, codes: Int32Array, L: number, m: number): void {
  for (let i = 0; i < m; i++) ids[i] = ids[i]! * L + codes[i]!;
}

/**
 * Cells of the rows: one id per distinct combination of the codes of the given factors, numbered
 * densely in order of first appearance. Mixed-radix keys, renumbered whenever their range would
 * pass 2^22 (a reused lookup array), or through a hash map when even the renumbered range is too
 * wide. `premixed`: the keys of the first `factors` factors, already mixed into `ids` (range
 * at most 2^22). Cost: O(m·f) for f factors.
 */
function cellsOf(
  codes: readonly Int32Array[], levels: readonly number[], m: number, premixed?: { ids: Int32Array; range: number; factors: number },
): { cellOf: Int32Array; cells: number; firstRow: Int32Array } {
  const ids = premixed ? premixed.ids : new Int32Array(m);
  let range = premixed ? premixed.range : 1;
  for (let f = premixed ? premixed.factors : 0; f < codes.length; f++) {
    const L = Math.max(1, levels[f]!);
    const cf = codes[f]!;
    if (range * L > CELL_LIMIT && range > 1) range = renumberInPlace(ids, m, range);
    if (range * L > CELL_LIMIT) {
      const keys = new Float64Array(m);
      for (let i = 0; i < m; i++) keys[i] = ids[i]! * L + cf[i]!;
      range = renumberWide(keys, m, ids);
    } else {
      mixIn(ids, cf, L, m);
      range *= L;
    }
  }
  const cells = m === 0 ? 0 : renumberInPlace(ids, m, range);
  const firstRow = new Int32Array(cells).fill(-1);
  for (let i = 0; i < m; i++) if (firstRow[ids[i]!]! < 0) firstRow[ids[i]!] = i;
  return { cellOf: ids, cells, firstRow };
}

/** Reused row mask and row index of `completeRows`. */
let keepScratch = new Uint8Array(0);
let idxScratch = new Int32Array(0);
/** Per column, the rows where it is missing (found once per column and table length). */
const missingRowsMemo = new WeakMap<Column, { rows: number; missing: Int32Array }>();

/** The rows (below `rows`) where a column is missing: code < 0, or a value that is not finite. Cost: O(rows) the first time. */
function missingRowsOf(col: Column, isCat: boolean, rows: number): Int32Array {
  const memo = missingRowsMemo.get(col);
  if (memo && memo.rows === rows) return memo.missing;
  const found: number[] = [];
  if (isCat) {
    const codes = col.codes!;
    for (let r = 0; r < rows; r++) if (codes[r]! < 0) found.push(r);
  } else {
    const values = col.values;
    for (let r = 0; r < rows; r++) if (!Number.isFinite(values[r]!)) found.push(r);
  }
  const missing = Int32Array.from(found);
  missingRowsMemo.set(col, { rows, missing });
  return missing;
}

/**
 * Indices of the rows where every column is observed (code ≥ 0 or a finite value) and the filter
 * lets the row through: a view of a reused buffer, valid until the next call. Cost: O(rows·k) the
 * first time a column is met, then O(rows + its missing rows).
 */
function completeRows(cols: readonly Column[], isCat: readonly boolean[], rows: number, rowFilter: Uint8Array | undefined): Int32Array {
  if (keepScratch.length < rows) {
    keepScratch = new Uint8Array(rows);
    idxScratch = new Int32Array(rows);
  }
  const keep = keepScratch;
  if (rowFilter) copyFilter(keep, rowFilter, rows);
  else keep.fill(1, 0, rows);
  for (let k = 0; k < cols.length; k++) {
    const missing = missingRowsOf(cols[k]!, isCat[k]!, rows);
    for (let t = 0; t < missing.length; t++) keep[missing[t]!] = 0;
  }
  const idx = idxScratch;
  let t = 0;
  for (let r = 0; r < rows; r++) {
    idx[t] = r;
    t += keep[r]!;
  }
  return idx.subarray(0, t);
}

function copyFilter(keep: Uint8Array, filter: Uint8Array, rows: number): void {
  for (let r = 0; r < rows; r++) keep[r] = filter[r] !== 0 ? 1 : 0;
}

/**
 * codes[idx[t]] for every t, and the codes met (in code order). When `mix` is given, also
 * mix.ids[t] = mix.ids[t]·L + code (mixed-radix cell keys, L the column's number of levels).
 * Cost: O(n).
 */
function gatherCodes(codes: Int32Array, idx: Int32Array, nLevels: number, mix?: { ids: Int32Array; L: number }): { out: Int32Array; present: number[] } {
  const n = idx.length;
  const out = new Int32Array(n);
  if (nLevels <= 31) {
    // the codes met as bits of one integer: no memory traffic per row
    let bits = 0;
    if (mix) {
      const ids = mix.ids;
      const L = mix.L;
      for (let t = 0; t < n; t++) {
        const c = codes[idx[t]!]!;
        out[t] = c;
        ids[t] = ids[t]! * L + c;
        bits |= 1 << c;
      }
    } else {
      for (let t = 0; t < n; t++) {
        const c = codes[idx[t]!]!;
        out[t] = c;
        bits |= 1 << c;
      }
    }
    const present: number[] = [];
    for (let l = 0; l < nLevels; l++) if ((bits >>> l) & 1) present.push(l);
    return { out, present };
  }
  const seen = new Uint8Array(nLevels);
  for (let t = 0; t < n; t++) {
    const c = codes[idx[t]!]!;
    out[t] = c;
    if (seen[c] === 0) seen[c] = 1;
  }
  if (mix) mixIn(mix.ids, out, mix.L, n);
  return { out, present: presentLevels(seen) };
}

/**
 * raw[t·stride + a] = values[idx[t]]·2^e, e the scale exponent of the values on these rows
 * (`stats/powerOfTwoScale.ts`: the scaled values are at most 1 in magnitude, so their squares
 * neither overflow nor underflow);
 * returns their mean and their sum of squared deviations, from sums shifted by the first value (no
 * division per row). Standardising undoes the scale, so the model columns are those of the
 * unscaled values. Cost: O(n).
 */
function gatherStrided(raw: Float64Array, values: Float64Array, idx: Int32Array, a: number, stride: number): [number, number] {
  const n = idx.length;
  if (n === 0) return [0, 0];
  // the scale of the complete rows themselves: a value of 1e200 on a row left out does not make the others underflow
  let top = 0;
  for (let t = 0; t < n; t++) top = Math.max(top, Math.abs(values[idx[t]!]!));
  const f = 2 ** scaleExponent(top);
  const shift = values[idx[0]!]! * f;
  let s = 0;
  let ss = 0;
  for (let t = 0, at = a; t < n; t++, at += stride) {
    const v = values[idx[t]!]! * f;
    raw[at] = v;
    const e = v - shift;
    s += e;
    ss += e * e;
  }
  const meanShift = s / n;
  return [shift + meanShift, Math.max(0, ss - s * meanShift)];
}

/**
 * Centre and scale column a of a row-major buffer, given its mean and sum of squared deviations,
 * by the Bessel-corrected standard deviation; false, leaving it as it is, when it is constant.
 * Cost: O(m).
 */
function standardizeStrided(raw: Float64Array, a: number, stride: number, m: number, mean: number, ss: number): boolean {
  const sd = Math.sqrt(ss / Math.max(1, m - 1));
  if (!(sd > 0) || !Number.isFinite(sd)) return false;
  const inv = 1 / sd;
  for (let i = 0, at = a; i < m; i++, at += stride) raw[at] = (raw[at]! - mean) * inv;
  return true;
}

/** A model column: an indicator (intercept or dummy) or a dense (continuous) column. */
interface ModelColumn {
  label: string;
  /** Factor index (−1 for the intercept) and level code for an indicator; dense column for a continuous one. */
  factor?: number;
  level?: number;
  dense?: number;
}

/**
 * A factor design over kept model columns (indicators first in label order, then dense ones).
 * `denseKept` lists the kept dense columns of the raw buffer `dense` (m × dAll).
 */
function buildDesign(
  columns: readonly ModelColumn[], kept: readonly number[], factorCodes: readonly Int32Array[],
  cells: { cellOf: Int32Array; cells: number; firstRow: Int32Array }, dense: Float64Array, dAll: number, m: number,
): FactorDesign {
  const indicators = kept.filter((j) => columns[j]!.dense === undefined).map((j) => columns[j]!);
  const denseKept = kept.filter((j) => columns[j]!.dense !== undefined).map((j) => columns[j]!.dense!);
  const d = denseKept.length;
  let X = dense;
  if (d !== dAll || denseKept.some((a, t) => a !== t)) {
    X = new Float64Array(m * d);
    for (let i = 0; i < m; i++) for (let t = 0; t < d; t++) X[i * d + t] = dense[i * dAll + denseKept[t]!]!;
  }
  const cellStart = new Int32Array(cells.cells + 1);
  const list: number[] = [];
  for (let c = 0; c < cells.cells; c++) {
    const r = cells.firstRow[c]!;
    indicators.forEach((col, j) => {
      if (col.factor! < 0 || factorCodes[col.factor!]![r] === col.level) list.push(j);
    });
    cellStart[c + 1] = list.length;
  }
  return { rows: m, dense: X, denseColumns: d, factorColumns: indicators.length, cellOf: cells.cellOf, cellStart, cellColumns: Int32Array.from(list) };
}

/** The rows `pick` of a design (same cells), their outcomes and weights. */
function subDesign(D: FactorDesign, y: Int32Array, w: Float64Array | undefined, pick: Int32Array): { D: FactorDesign; y: Int32Array; w: Float64Array | undefined } {
  const s = pick.length;
  const d = D.denseColumns;
  const X = new Float64Array(s * d);
  const cellOf = new Int32Array(s);
  const ys = new Int32Array(s);
  const ws = w ? new Float64Array(s) : undefined;
  for (let t = 0; t < s; t++) {
    const i = pick[t]!;
    for (let a = 0; a < d; a++) X[t * d + a] = D.dense[i * d + a]!;
    cellOf[t] = D.cellOf[i]!;
    ys[t] = y[i]!;
    if (ws) ws[t] = w![i]!;
  }
  return { D: { ...D, rows: s, dense: X, cellOf }, y: ys, w: ws };
}

/** Coefficients of the null model placed in the full model's layout (added coefficients 0). */
function embedNull(coef: ArrayLike<number>, q: number, pf0: number, pf1: number, d: number): Float64Array {
  const p0 = pf0 + d;
  const p1 = pf1 + d;
  const out = new Float64Array(q * p1);
  for (let k = 0; k < q; k++) {
    for (let j = 0; j < pf0; j++) out[k * p1 + j] = coef[k * p0 + j]!;
    for (let a = 0; a < d; a++) out[k * p1 + pf1 + a] = coef[k * p0 + pf0 + a]!;
  }
  return out;
}

/** The full model's index of each null-model parameter (category by category; the added coefficients are the others). */
function nullImage(q: number, pf0: number, pf1: number, d: number): Int32Array {
  const p0 = pf0 + d;
  const p1 = pf1 + d;
  const out = new Int32Array(q * p0);
  for (let k = 0; k < q; k++) {
    for (let j = 0; j < pf0; j++) out[k * p0 + j] = k * p1 + j;
    for (let a = 0; a < d; a++) out[k * p0 + pf0 + a] = k * p1 + pf1 + a;
  }
  return out;
}

/**
 * Degrees of freedom of the likelihood-ratio test when the null model's likelihood reaches its
 * supremum only at infinity (separation in the null model). Geyer (2009, Electronic Journal of
 * Statistics 3:259–289, hypothesis tests in the completion of an exponential family): the test is
 * then that of the two models conditioned on what the null model predicts with certainty (its
 * limiting conditional models); the statistic is the usual 2(ℓ1 − ℓ0) at the suprema, but the df
 * is the difference of the dimensions of the two conditional models. Those dimensions are the
 * ranks of the information matrices at the null model's limit: P0 minus the null fit's frozen
 * parameters, and P1 minus the parameters frozen when the full model's information is factored at
 * that same point (`probeFrozen`, from a zero-iteration fit started there). An added parameter
 * frozen there acts only on rows (or categories of rows) already fitted with certainty, so the
 * data cannot estimate it. When only the full model separates, the null model's estimate exists
 * and df stays the nominal one (the added coefficient that runs to infinity, such as that of an
 * empty cell of the x × y table, is estimated at its limit: Geyer 2009). Cost: O(P).
 */
function dfOnNullFace(nullFrozen: number, probeFrozen: Int32Array, P0: number, P1: number, image: Int32Array): { df: number; dropped: number[] } {
  const isNull = new Uint8Array(P1);
  for (const j of image) isNull[j] = 1;
  const dropped = [...probeFrozen].filter((j) => isNull[j] === 0);
  return { df: Math.max(0, (P1 - probeFrozen.length) - (P0 - nullFrozen)), dropped };
}

/**
 * Labels of a model's parameters in the order of its coefficients: indicator columns, then dense
 * ones (the factor design's order), category after category for a multinomial response
 * (`resp` given, its observed levels `respLevels`, the first the baseline).
 */
function parameterLabels(columns: readonly ModelColumn[], kept: readonly number[], resp: Column | undefined, respLevels: readonly number[]): string[] {
  const order = [...kept.filter((j) => columns[j]!.dense === undefined), ...kept.filter((j) => columns[j]!.dense !== undefined)].map((j) => columns[j]!.label);
  if (!resp) return order;
  return respLevels.slice(1).flatMap((l) => order.map((label) => `${label} (${resp.name}=${resp.levels![l]})`));
}

/**
 * The parameters a fit froze (see `FitStatus` "limit"), as "label → +∞" or "label → −∞" when the
 * coefficient ran out to that side (beyond ±5, where the fit's extrapolation starts; in practice
 * it is far beyond), else "label (not estimable)": its value no longer matters because every row
 * it acts on is already fitted with certainty through the other coefficients.
 */
function atLimit(f: LogisticFit | MultinomialFit, labels: readonly string[]): string[] {
  return [...f.frozen].map((j) => {
    const b = f.coef[j]!;
    return Math.abs(b) >= 5 ? `${labels[j]!} → ${b > 0 ? "+∞" : "−∞"}` : `${labels[j]!} (not estimable)`;
  });
}

/**
 * The warning for a fit that separated or did not converge, in words (undefined otherwise).
 * Complete separation reaches this for the full model only (in the null model the claim is
 * untestable): ℓ1 → 0 from below, so LR → −2ℓ0.
 */
function fitWarning(label: "null" | "full", f: LogisticFit | MultinomialFit, names: readonly string[], resp: string, predictors: readonly string[]): string | undefined {
  if (f.separation === "complete") {
    return `complete separation in the ${label} model: "${resp}" is predicted perfectly by ${quoted(predictors)}; LR taken at the limit of the likelihood (ℓ1 → 0, so LR → −2ℓ0), and its chi-square p-value is a rough guide here`;
  }
  if (f.separation === "quasi-complete") {
    const what = f.separatedRows > 0
      ? `${f.separatedRows} of ${f.rows} fitted rows predicted with probability → 1`
      : `some categories of "${resp}" have fitted probability → 0 in some rows`;
    const at = atLimit(f, names);
    return `quasi-complete separation in the ${label} model: ${what}${at.length ? ` (${at.join(", ")})` : ""}; LR taken at the limit of the likelihood`;
  }
  if (f.status === "not-converged") return `the ${label} model of "${resp}" did not converge in ${f.iterations} Newton iterations; LR taken at the last iterate`;
  return undefined;
}

function singularInformation(label: string, resp: string): MethodResult {
  return { ok: false, reason: `the information matrix of the ${label} model of "${resp}" is singular; the claim cannot be tested with these data` };
}

function quoted(names: readonly string[]): string {
  return names.map((s) => `"${s}"`).join(", ");
}

/**
 * Regression likelihood-ratio test of one claim (see the module comment).
 * Cost: linear models O(patterns) from the moments; logistic and multinomial models
 * O(rows·k) to gather the complete rows, then per pass over them O(rows·q·d) (O(rows·q²·d²)
 * while the information matrix is renewed), d continuous given, q = categories − 1; 2–3
 * passes per model on all rows after the warm start on a subsample (grouped data: O(G) per pass
 * for G groups).
 * Source: Wilks (1938); McCullagh & Nelder (1989), Generalized Linear Models, 2nd ed.; Agresti
 * (2013), Categorical Data Analysis, 3rd ed., §8.1; Albert & Anderson (1984), Biometrika 71:1–10,
 * and Geyer (2009), Electronic Journal of Statistics 3:259–289 (separation).
 * @example
 * const r = runRegressionLr({ x: "region", y: "sbp", given: ["age"] }, ctx);
 * if (r.ok) r.outcome.df; // number of region levels − 1
 */
export function runRegressionLr(claim: Claim, ctx: TestContext): MethodResult {
  const names = [claim.x, claim.y, ...claim.given];
  const cols: Column[] = [];
  for (const name of names) {
    const col = ctx.table.column(name);
    if (!col) return { ok: false, reason: `variable "${name}" is not a column of the data` };
    cols.push(col);
  }
  const [xCol, yCol, ...givenCols] = cols as [Column, Column, ...Column[]];
  const rows = ctx.table.rows;

  // Continuous or ordinal response: Gaussian linear models from the pattern moments.
  const scoredResponse = [yCol, xCol].find((c) => c.type === "continuous") ?? [yCol, xCol].find((c) => c.type === "ordinal");
  if (scoredResponse) return linearFromMoments(claim, scoredResponse, scoredResponse === yCol ? xCol : yCol, ctx);

  // Binary or nominal response (both sides are binary or nominal here): chosen below from the observed levels.
  const isCat = cols.map(isCategorical);
  for (const k of [0, 1]) {
    if (!isCat[k]) return { ok: false, reason: `"${cols[k]!.name}" is ${cols[k]!.type} but has no level codes; declare it or re-read the data` };
  }
  const allCategorical = isCat.every(Boolean);
  const warnings: string[] = [];

  // Fitting rows: groups of identical complete rows, or complete rows. Per column: its codes
  // (categorical) or its place among the continuous columns in the row-major buffer `raw`.
  let m: number;
  let n: number;
  let weights: Float64Array | undefined;
  const codes: (Int32Array | undefined)[] = [];
  const contIndex = cols.map(() => -1);
  let dAll = 0;
  let raw = new Float64Array(0);
  let means = new Float64Array(0);
  let sumSquares = new Float64Array(0);
  let premixed: { ids: Int32Array; range: number; factors: number } | undefined;
  const levelMemo = new Map<number, number[]>(); // observed levels of categorical columns
  if (allCategorical) {
    const g = groupRows(cols, rows, ctx.rowFilter);
    m = g.groups;
    n = g.n;
    weights = g.counts;
    cols.forEach((_, k) => codes.push(g.codes[k]!));
  } else {
    const idx = completeRows(cols, isCat, rows, ctx.rowFilter);
    n = idx.length;
    m = n;
    cols.forEach((c, k) => {
      if (!isCat[k]) contIndex[k] = dAll++;
    });
    raw = new Float64Array(n * dAll);
    means = new Float64Array(dAll);
    sumSquares = new Float64Array(dAll);
    // The given categorical columns (the first factors of the cells) are mixed into cell keys
    // as they are gathered, while the keys' range stays within the lookup array's.
    premixed = { ids: new Int32Array(n), range: 1, factors: 0 };
    let mixing = true;
    for (let k = 0; k < cols.length; k++) {
      const c = cols[k]!;
      if (isCat[k]) {
        const L = Math.max(1, c.levels!.length);
        const mix = k >= 2 && mixing && premixed.range * L <= CELL_LIMIT ? { ids: premixed.ids, L } : undefined;
        if (k >= 2 && !mix) mixing = false;
        const got = gatherCodes(c.codes!, idx, c.levels!.length, mix);
        if (mix) {
          premixed.range *= L;
          premixed.factors++;
        }
        codes.push(got.out);
        levelMemo.set(k, got.present);
      } else {
        codes.push(undefined);
        [means[contIndex[k]!], sumSquares[contIndex[k]!]] = gatherStrided(raw, c.values, idx, contIndex[k]!, dAll);
      }
    }
  }
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted(names)} observed` };

  const levelsOf = (k: number): number[] => {
    let l = levelMemo.get(k);
    if (!l) levelMemo.set(k, (l = observedLevels(codes[k]!, cols[k]!.levels!.length, weights, m)));
    return l;
  };
  let [respK, addedK] = [1, 0];
  {
    const ly = levelsOf(1).length;
    const lx = levelsOf(0).length;
    if (ly !== 2 && (lx === 2 || lx < ly)) [respK, addedK] = [0, 1];
  }
  const resp = cols[respK]!;
  const added = cols[addedK]!;
  const respLevels = levelsOf(respK);
  if (respLevels.length < 2) {
    return { ok: false, reason: `"${resp.name}" has a single observed level among the ${n} complete rows; the claim cannot be tested` };
  }
  const kind: ModelKind = respLevels.length === 2 ? "logistic" : "multinomial";

  // Model columns in label order: intercept, the given blocks, the added block. A continuous
  // variable is one dense column (centred and scaled in `raw`); a categorical one gives a dummy
  // per observed level but the first. Factors: the categorical given, then the added side.
  const columns: ModelColumn[] = [{ label: "(intercept)", factor: -1 }];
  const factorK: number[] = [];
  const blockColumns = (k: number): number => {
    const c = cols[k]!;
    if (isCat[k]) {
      const f = factorK.length;
      factorK.push(k);
      const obs = levelsOf(k);
      for (const l of obs.slice(1)) columns.push({ label: `${c.name}=${c.levels![l]}`, factor: f, level: l });
      return obs.length - 1;
    }
    const a = contIndex[k]!;
    if (!standardizeStrided(raw, a, dAll, m, means[a]!, sumSquares[a]!)) return 0;
    columns.push({ label: c.name, dense: a });
    return 1;
  };
  for (let k = 2; k < cols.length; k++) {
    if (blockColumns(k) === 0) warnings.push(`"${cols[k]!.name}" is constant among the complete rows and was left out of the models`);
  }
  const baseCount = columns.length;
  if (blockColumns(addedK) === 0) {
    return { ok: false, reason: `"${added.name}" is constant among the ${n} complete rows; the claim cannot be tested` };
  }
  const factorCodes = factorK.map((k) => codes[k]!);
  const cells = cellsOf(factorCodes, factorK.map((k) => cols[k]!.levels!.length), m, premixed);

  // Aliasing: Cholesky sweep of the Gram matrix in label order (one pass over the rows).
  const all = columns.map((_, j) => j);
  const provisional = buildDesign(columns, all, factorCodes, cells, raw, dAll, m);
  const Gd = designCrossProduct(provisional, weights);
  const pAll = columns.length;
  const paramOf = new Int32Array(pAll);
  {
    let f = 0;
    let dn = provisional.factorColumns;
    columns.forEach((c, j) => (paramOf[j] = c.dense === undefined ? f++ : dn++));
  }
  const G = new Float64Array(pAll * pAll);
  for (let a = 0; a < pAll; a++) for (let b = 0; b < pAll; b++) G[a * pAll + b] = Gd[paramOf[a]! * pAll + paramOf[b]!]!;
  const kept = independentColumns(G, pAll);
  const keptBase = kept.filter((j) => j < baseCount);
  const p0 = keptBase.length;
  const p = kept.length;
  const q = kind === "multinomial" ? respLevels.length - 1 : 1;
  // Added parameters: one per added column, for each non-baseline response category.
  let df = (p - p0) * q;
  const droppedBase = baseCount - p0;
  if (droppedBase > 0) warnings.push(`${droppedBase} column${droppedBase > 1 ? "s" : ""} of the given set aliased with others and dropped`);
  if (df === 0) {
    return { ok: false, reason: `"${added.name}" is determined by ${claim.given.length ? quoted(claim.given) : "the intercept"} among the complete rows (aliased); the claim cannot be tested` };
  }
  if (n <= p * q + 1) {
    return { ok: false, reason: `${n} complete rows are too few for the ${p * q} parameters of the full model; collect more data or use a smaller set` };
  }
  const D1 = buildDesign(columns, kept, factorCodes, cells, raw, dAll, m);
  const D0 = buildDesign(columns, keptBase, factorCodes, cells, raw, dAll, m);
  const d = D1.denseColumns;
  const pf0 = D0.factorColumns;
  const pf1 = D1.factorColumns;

  let lr: number;
  let addedCoef: number | undefined;
  const details: Record<string, unknown> = {
    model: kind,
    response: resp.name,
    added: added.name,
    parameters_null: p0 * q,
    parameters_full: p * q,
    columns: kept.map((j) => columns[j]!.label),
    grouped: allCategorical,
    fitted_rows: m,
    adjustment: claim.given.map((g, k) => (isCat[k + 2] ? { variable: g, entered: "indicators" } : { variable: g, entered: "linear" })),
    sides: [
      { variable: resp.name, model: `${kind === "logistic" ? "logistic" : "multinomial logistic"} regression on the other side and the adjustment` },
      { variable: added.name, model: isCat[addedK] ? "indicators of its levels, added to the model" : "its values, added to the model" },
    ],
  };
  {
    const rc = codes[respK]!;
    const recode = new Int32Array(resp.levels!.length).fill(-1);
    respLevels.forEach((l, i) => (recode[l] = i));
    const y = new Int32Array(m);
    for (let i = 0; i < m; i++) y[i] = recode[rc[i]!]!;
    const K = respLevels.length;
    const fit = (D: FactorDesign, yy: Int32Array, w: Float64Array | undefined, start?: Float64Array, information?: Float64Array, maxIter?: number): LogisticFit | MultinomialFit => {
      const opts = { weights: w, start, information, maxIter, ...(start && D.rows === m ? { finalStep: FINAL_STEP_GAIN } : {}) };
      return kind === "logistic" ? logisticRegressionDesign(D, yy, opts) : multinomialLogitDesign(D, yy, K, opts);
    };
    const usable = (f: LogisticFit | MultinomialFit) => f.status === "converged" && Number.isFinite(f.logLik) && f.coef.every(Number.isFinite);
    // Warm start: both models fitted first to a seeded random subsample of the rows; the fits on
    // all rows start there (with the subsample's information, scaled to all rows, for their first
    // step) and run to the same convergence criterion, so the estimates are the maximum-likelihood
    // ones of all rows whatever the subsample.
    let start0: Float64Array | undefined;
    let start1: Float64Array | undefined;
    let info0: Float64Array | undefined;
    let info1: Float64Array | undefined;
    let sub0: LogisticFit | MultinomialFit | undefined;
    if (m > WARM_START_ROWS) {
      const rng = createRng(ctx.seed, `regression-lr start\u0000${streamKeyOfClaim(claim)}`);
      const pick = new Int32Array(Math.min(START_SUBSAMPLE_MAX, Math.max(START_SUBSAMPLE_MIN, Math.round(m / 10))));
      for (let t = 0; t < pick.length; t++) pick[t] = rng.nextInt(m);
      pick.sort();
      const s1 = subDesign(D1, y, weights, pick);
      const s0: FactorDesign = { ...D0, rows: s1.D.rows, dense: s1.D.dense, cellOf: s1.D.cellOf };
      let scale = m / pick.length;
      if (weights && s1.w) {
        let all = 0;
        let part = 0;
        for (let i = 0; i < m; i++) all += weights[i]!;
        for (let t = 0; t < pick.length; t++) part += s1.w[t]!;
        scale = all / part;
      }
      sub0 = fit(s0, s1.y, s1.w);
      if (usable(sub0)) {
        start0 = sub0.coef as Float64Array;
        info0 = sub0.information.map((v) => v * scale);
        const sub1 = fit(s1.D, s1.y, s1.w, embedNull(sub0.coef, q, pf0, pf1, d));
        if (usable(sub1)) {
          start1 = sub1.coef as Float64Array;
          info1 = sub1.information.map((v) => v * scale);
        }
      }
    }
    const f0 = fit(D0, y, weights, start0, info0);
    if (f0.status === "singular") return singularInformation("null", resp.name);
    if (f0.separation === "complete") {
      // ℓ0 → 0, and the full model (which contains the null) cannot do better: LR ≡ 0 on no identifiable parameter
      return { ok: false, reason: `complete separation in the null model: "${resp.name}" is predicted perfectly by ${claim.given.length ? quoted(claim.given) : "the intercept"}; the likelihood-ratio test does not apply` };
    }
    let s1 = embedNull(f0.coef, q, pf0, pf1, d);
    const labels1 = parameterLabels(columns, kept, kind === "multinomial" ? resp : undefined, respLevels);
    const labels0 = parameterLabels(columns, keptBase, kind === "multinomial" ? resp : undefined, respLevels);
    if (f0.status === "limit") {
      // The null model's supremum lies at infinity: the test is that of the models restricted to
      // the rows (and categories) it leaves uncertain, so df is the difference of the ranks of the
      // two information matrices there (Geyer 2009; see `dfOnNullFace`).
      const probe = fit(D1, y, weights, s1, undefined, 0);
      const face = dfOnNullFace(f0.frozen.length, probe.frozen, q * p0, q * p, nullImage(q, pf0, pf1, d));
      const notIdentifiable = face.dropped.map((j) => labels1[j]!);
      if (face.df !== df) {
        details.df_nominal = df;
        details.not_identifiable = notIdentifiable;
        const k = df - face.df;
        warnings.push(`${k} of the ${df} added parameters act only on rows that the null model already predicts with certainty${notIdentifiable.length ? ` (${notIdentifiable.join(", ")})` : ""} and cannot be estimated: df ${face.df} instead of ${df}`);
        df = face.df;
      }
      if (df === 0) {
        return { ok: false, reason: `"${added.name}" varies only among rows whose "${resp.name}" ${claim.given.length ? quoted(claim.given) : "the intercept"} already predict${claim.given.length === 1 ? "s" : ""} with certainty (separation in the null model); the claim cannot be tested with these data` };
      }
    }
    if (start1 && sub0) {
      // the subsample's added coefficients, and its other coefficients moved as the null model's moved
      const shift = embedNull(f0.coef.map((v, j) => v - sub0!.coef[j]!), q, pf0, pf1, d);
      s1 = start1.map((v, j) => v + shift[j]!);
    }
    const f1 = fit(D1, y, weights, s1, start1 ? info1 : undefined);
    if (f1.status === "singular") return singularInformation("full", resp.name);
    if (kind === "logistic") addedCoef = f1.coef[pf1 - 1];
    for (const [label, f, names] of [["null", f0, labels0], ["full", f1, labels1]] as const) {
      const warning = fitWarning(label, f, names, resp.name, [added.name, ...claim.given]);
      if (warning) warnings.push(warning);
    }
    details.separation = { null: f0.separation, full: f1.separation };
    if (f0.frozen.length + f1.frozen.length > 0) {
      details.fixed_at_limit = { null: atLimit(f0, labels0), full: atLimit(f1, labels1) };
    }
    lr = 2 * (f1.logLik - f0.logLik);
    Object.assign(details, { loglik_null: f0.logLik, loglik_full: f1.logLik, iterations: [f0.iterations, f1.iterations], row_passes: [f0.passes, f1.passes] });
  }
  if (!Number.isFinite(lr)) return { ok: false, reason: `the likelihood-ratio statistic of "${added.name}" is not finite; the claim cannot be tested with these data` };
  let sign: -1 | 0 | 1 = 1;
  if (df === 1 && addedCoef !== undefined && Number.isFinite(addedCoef)) sign = addedCoef > 0 ? 1 : addedCoef < 0 ? -1 : 0;
  if (addedCoef !== undefined && df === 1) details.added_coefficient = addedCoef;
  const outcome = lrOutcome(lr, df, n, sign, details, warnings, ctx.alpha ?? 0.05);
  return { ok: true, outcome };
}

/** Gaussian LR of the linear models of a continuous or ordinal (scored) response, from `ctx.moments`. */
function linearFromMoments(claim: Claim, resp: Column, added: Column, ctx: TestContext): MethodResult {
  const m = claimMoments(ctx.moments, ctx.table, [resp.name, added.name], claim.given);
  if (!m) return { ok: false, reason: missingIndicatorsReason(claim.given) };
  const k = m.design.length;
  const n = m.n;
  const names = [claim.x, claim.y, ...claim.given];
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted(names)} observed` };
  const idx = (source: string) => m.design.flatMap((d, i) => (d.source === source ? [i] : []));
  const respIdx = idx(resp.name)[0]!;
  const addedIdx = idx(added.name);
  const givenIdx = claim.given.flatMap(idx);
  // variances in the moments' scaled units (`stats/scaledCovariance.ts`): a variance that
  // underflows the double range is not a constant column
  const scaledCov = scaledCovarianceOf(m.cov)?.cov ?? m.cov;
  if (!(scaledCov[respIdx * k + respIdx]! > 0)) {
    return { ok: false, reason: `"${resp.name}" is constant among the ${n} complete rows; the claim cannot be tested` };
  }
  if (addedIdx.every((i) => !(scaledCov[i * k + i]! > 0))) {
    return { ok: false, reason: `"${added.name}" is constant among the ${n} complete rows; the claim cannot be tested` };
  }
  const fit = gaussianLRFromMoments(m.cov, k, n, respIdx, givenIdx, addedIdx);
  if (!fit) return { ok: false, reason: `the linear model of "${resp.name}" fits exactly among the ${n} complete rows; the claim cannot be tested` };
  const warnings: string[] = [];
  const droppedBase = givenIdx.length - fit.givenKept;
  if (droppedBase > 0) warnings.push(`${droppedBase} column${droppedBase > 1 ? "s" : ""} of the given set aliased with others (or empty levels) and dropped`);
  if (fit.df === 0) {
    return { ok: false, reason: `"${added.name}" is determined by ${claim.given.length ? quoted(claim.given) : "the intercept"} among the complete rows (aliased); the claim cannot be tested` };
  }
  const p = 1 + fit.givenKept + fit.df;
  if (n <= p + 1) {
    return { ok: false, reason: `${n} complete rows are too few for the ${p} parameters of the full model; collect more data or use a smaller set` };
  }
  const details: Record<string, unknown> = {
    model: "linear",
    response: resp.name,
    ...(resp.type === "ordinal" ? { response_scored: true } : {}),
    added: added.name,
    parameters_null: 1 + fit.givenKept,
    parameters_full: p,
    fitted_from: "moments",
    // in the response's units; left out where they leave the double range (values of 1e155 or more, or near 1e-310)
    ...([fit.residualVarianceNull, fit.residualVarianceFull].every((v) => v >= 2 ** -1022 && v < Infinity)
      ? { residual_variance_null: fit.residualVarianceNull, residual_variance_full: fit.residualVarianceFull }
      : {}),
    adjustment: linearAdjustment(ctx.table, claim.given),
    sides: [
      { variable: resp.name, model: `linear regression of the ${resp.type === "ordinal" ? "scores" : "values"} on the other side and the adjustment (least squares from the pattern moments)` },
      { variable: added.name, model: added.type === "nominal" ? "indicators of its levels, added to the model" : "its scores, added to the model" },
    ],
  };
  return { ok: true, outcome: lrOutcome(fit.lr, fit.df, n, fit.sign, details, warnings, ctx.alpha ?? 0.05) };
}

/** The common tail of every regression LR: p-value, log p, effect and its interval at confidence 1 − alpha (also used by `poolSiteSummaries`). */
export function lrOutcome(lrIn: number, df: number, n: number, sign: -1 | 0 | 1, details: Record<string, unknown>, warnings: string[], alpha: number): TestOutcome {
  const lr = lrIn < 0 ? 0 : lrIn; // rounding: the full model's likelihood cannot be lower
  const pAsym = chiSquareUpper(lr, df);
  const logP = logChiSquareUpper(lr, df);
  const effect = lrEffect(lr, df, n, sign);
  const ci = lrEffectInterval(lr, df, n, sign, 1 - alpha);
  return {
    test: "regression-lr",
    n,
    statistic: lr,
    df,
    p: pAsym > 0 ? pAsym : Number.MIN_VALUE,
    log_p: logP,
    effect,
    ci,
    p_method: "asymptotic",
    details,
    ...(warnings.length ? { warnings } : {}),
  };
}

/**
 * Rough work of a claim on the rows (see `TestMethod.rowWork`): 0 for the linear models fitted
 * from the moments (a continuous or ordinal side); the grouping of the rows when every variable
 * is categorical; else the gathering of the rows and about six Newton passes (q categories − 1,
 * d continuous given). Cost: O(k).
 */
export function regressionRowWork(claim: Claim, table: Table): number {
  const cols = [claim.y, claim.x, ...claim.given].map((name) => table.column(name));
  if (cols.some((c) => c === undefined)) return 0;
  const [yCol, xCol] = cols as [Column, Column];
  if ([yCol, xCol].some((c) => c.type === "continuous" || c.type === "ordinal")) return 0;
  const k = cols.length;
  const d = cols.slice(2).filter((c) => c!.type === "continuous").length;
  if (d === 0) return table.rows * k;
  const levels = (c: Column) => Math.max(2, c.levels?.length ?? 2);
  const q = yCol.type === "binary" || xCol.type === "binary" ? 1 : Math.min(levels(yCol), levels(xCol)) - 1;
  return table.rows * (k + 6 * q * (d + 2) + (q * (q + 1) * (d + 1) * (d + 2)) / 2);
}

/** The `regression-lr` test method: accepts every mix of variable types. */
export const regressionLr: TestMethod = {
  name: "regression-lr",
  accepts(): boolean {
    return true;
  },
  run: runRegressionLr,
  rowWork: regressionRowWork,
};

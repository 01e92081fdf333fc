/**
 * Test methods `gcm` and `gcm-rank`: x ⫫ y | S by the generalised covariance measure with
 * flexible adjustment for the conditioning set.
 *
 * Terms (see `stats/generalisedCovariance.ts`, `stats/nestedAdjustment.ts` and
 * `stats/flexibleBasis.ts`).
 * - *Sides.* x and y each enter as one column (continuous, binary or ordinal: the score; `gcm-rank`:
 *   the mid-rank of the value among the variable's observed values) or, when nominal, as 0/1
 *   indicators of their levels but the first. Each side is regressed on S by least squares, which
 *   for a binary side is a linear-probability model on the flexible adjustment below: the test
 *   needs the conditional mean of each side, not a linear model of it.
 * - *Adjustment.* A categorical member of S (binary, ordinal or nominal) enters as indicators of
 *   its levels, never as a score. A continuous member enters through its nested basis: the linear
 *   term (level 0), natural cubic spline terms at its minimum, quartiles and maximum (level 1), and
 *   hinges at ever finer quantiles (levels 2 to 5). The level used for a claim is chosen by
 *   generalised cross-validation: the level minimising GCV for x and the one for y are found, and
 *   the higher of the two is used for both sides (the same projection for both, so the sum of the
 *   residual products is x'(I − H)y).
 * - *Two ways to the same statistic.* In tables of at most `ROW_PATH_MAX_ROWS` rows the claim's
 *   complete rows are read (the *row path*): the adjustment columns' covariances are computed
 *   level by level, up to a level cap that keeps at least 10 rows per parameter (level 5 at most),
 *   and the search stops two levels past the best level of both sides. In larger tables the
 *   covariances come from the pattern moments (the *moment path*; the audit builds the indicator
 *   and basis columns it needs, up to a level set by a compute budget), so the regressions cost
 *   nothing per row; the variance of the residual products then needs a pass over rows: all the
 *   claim's complete rows up to `VARIANCE_SAMPLE_ROWS`, else those among a seeded random sample of
 *   that many rows of the table (the same sample for every claim, drawn from the stream of
 *   (`ctx.seed`, "gcm variance rows")). A sample whose residuals' mean square strays from their
 *   variance over all the claim's rows by more than a factor SAMPLE_VARIANCE_RATIO (it missed rows
 *   that dominate them, such as one value of 1e10 among values near 1) sends the claim to its rows.
 * - *Effect.* For one residual product, the residual correlation r (the partial correlation
 *   after flexible adjustment), with the interval of `residualCorrelationInterval` at confidence
 *   1 − alpha (`ctx.alpha`): the inversion of studentised tests of ρ = ρ0 whose variance is the
 *   test's own at ρ0 = 0 and the asymptotically distribution-free variance of a correlation at
 *   and beyond r (Steiger & Hakstian 1982), from fourth-order sums of the residuals over the
 *   variance rows (`details.interval_variance`); when those are unusable, Fisher's z interval with
 *   the test's standard error (`gcmCorrelationInterval`). For several products (a nominal side),
 *   √(1 − exp(−max(0, W − q)/n)) on the common scale (`lrEffect`), with W the chi-square value on
 *   q df whose upper tail is the test's p-value, and the interval of `lrEffectCIAtAlpha` (lower
 *   end the one-sided inversion at alpha). Every interval excludes 0 exactly when p < alpha.
 * - *Scaling.* Every column enters multiplied by a power of two that brings its largest |value|
 *   into [0.5, 1) (`stats/powerOfTwoScale.ts`; basis terms with their knots scaled alike, on the
 *   moment path the scale the pattern moments used), which changes no digit of the statistic but
 *   keeps every square, cube and product finite: values of 1e155 or more and distinct values near
 *   1e-310 are tested like any others.
 * - *Linear check.* The details also carry the classic test with linear adjustment (continuous
 *   members of S as straight lines, equal variances assumed: the partial-correlation t test, or for
 *   a nominal side its chi-square analogue (n − 1)·Σ canonical correlations² on q df), so that the audit
 *   can say where the verdict depends on the adjustment.
 */
import type { Column, Table } from "../../data/Table.js";
import { CATEGORICAL_TYPES } from "../../data/Table.js";
import type { IndexedDesignColumn, Moments } from "../../data/Moments.js";
import { midRanks } from "../../data/rankColumns.js";
import { lrEffect, lrEffectCIAtAlpha } from "../../stats/effectScale.js";
import { chiSquareUpperQuantileLog } from "../../stats/quantiles.js";
import { fillBasisValues, flexibleBasis, MAX_BASIS_LEVEL, scaleBasisTerm, scaleBasisTermByExponent, type BasisTerm, type VariableBasis } from "../../stats/flexibleBasis.js";
import { gcmCorrelationInterval, gcmStatistic, type GcmStatisticResult } from "../../stats/generalisedCovariance.js";
import { adfCoefficients, residualCorrelationInterval, type ResidualCorrelationVariance } from "../../stats/residualCorrelationInterval.js";
import { gramMatrix } from "../../stats/gramMatrix.js";
import { bestLevel, CONSTANT_TOLERANCE, NestedAdjustment } from "../../stats/nestedAdjustment.js";
import { chiSquareUpper, logChiSquareUpper, logStudentTTwoSided, studentTTwoSided } from "../../stats/pvalues.js";
import { createRng } from "../../stats/rng.js";
import { columnScaleExponent, scaleExponent, timesPowerOfTwo } from "../../stats/powerOfTwoScale.js";
import { scaledCovarianceOf } from "../../stats/scaledCovariance.js";
import { cholesky, choleskySolve } from "../../stats/linalg.js";
import type { ClaimTypes, MethodResult, TestContext, TestMethod } from "../TestMethod.js";
import type { AdjustmentEntry } from "./adjustmentDetails.js";
import type { Claim, TestName, TestOutcome } from "../types.js";

/** Tables with at most this many rows (after any row filter) are tested on the rows. */
export const ROW_PATH_MAX_ROWS = 20_000;
/** Rows behind the variance of the residual products on the moment path (all when fewer). */
export const VARIANCE_SAMPLE_ROWS = 20_000;
/**
 * Levels added to the cross-validated choice (undersmoothing): the test needs the product of the
 * two regressions' errors to vanish faster than 1/√n (Shah & Peters 2020, Theorem 6), a stricter
 * demand than the prediction error that cross-validation balances against variance.
 */
export const UNDERSMOOTH_LEVELS = 1;
/** At least this many complete rows per parameter of the adjustment on the row path. */
export const ROWS_PER_PARAMETER = 10;

/** One adjustment or side column of a claim: how to read its value in a row. */
export interface ClaimColumn {
  variable: string;
  /** Level of the hierarchy (0 for indicators and linear terms). */
  level: number;
  column: Column;
  /** Indicator of this level code, if an indicator. */
  code?: number;
  /** Basis term applied to the values, if a spline or hinge term. */
  term?: BasisTerm;
  /** Values to read instead of the column's (mid-ranks), if any. */
  values?: Float64Array;
  /** Design column in the pattern moments (moment path). */
  index?: number;
}

function quoted(names: readonly string[]): string {
  return names.map((s) => `"${s}"`).join(", ");
}

function isMissing(c: Column, i: number): boolean {
  if (c.codes && CATEGORICAL_TYPES.has(c.type)) return c.codes[i]! < 0;
  const v = c.values[i]!;
  return v !== v;
}

// ---------------------------------------------------------------------------------------------
// Per-column caches: the nested basis (knots from all observed values within the row filter) and
// whole-column mid-ranks. Keyed by the column object and the row filter.

const basisMemo = new WeakMap<Column, { rows: Int32Array; basis: VariableBasis }>();
const rankMemo = new WeakMap<Column, { filter: Uint8Array | undefined; ranks: Float64Array }>();

/**
 * The nested basis of a continuous column up to level 5, its knots the quantiles of the column's
 * observed values among `rows` (the variance sample of {@link varianceSample}: every row within
 * the row filter up to VARIANCE_SAMPLE_ROWS rows, else a seeded random sample of that many).
 * Cached per column and rows. Cost: O(m log m) for m sampled values, the first time.
 */
export function columnBasis(col: Column, rows: Int32Array): VariableBasis {
  const memo = basisMemo.get(col);
  if (memo && memo.rows === rows) return memo.basis;
  const v = col.values;
  const vals = new Float64Array(rows.length);
  let m = 0;
  for (let t = 0; t < rows.length; t++) {
    const x = v[rows[t]!]!;
    if (x === x) vals[m++] = x;
  }
  const basis = flexibleBasis(vals.subarray(0, m).sort(), MAX_BASIS_LEVEL);
  basisMemo.set(col, { rows, basis });
  return basis;
}

/** Whole-column mid-ranks (within the row filter), cached per column and filter. Cost: O(n log n) the first time. */
function columnRanks(col: Column, rowFilter?: Uint8Array): Float64Array {
  const memo = rankMemo.get(col);
  if (memo && memo.filter === rowFilter) return memo.ranks;
  const ranks = midRanks(col.values, rowFilter);
  rankMemo.set(col, { filter: rowFilter, ranks });
  return ranks;
}

/** Number of basis columns of a continuous member up to `level` (linear term included). */
function basisColumnsUpTo(basis: VariableBasis, level: number): number {
  let k = 0;
  for (let l = 0; l <= level && l < basis.levels.length; l++) k += basis.levels[l]!.length;
  return k;
}

/**
 * Highest level of the hierarchy whose adjustment keeps at least ROWS_PER_PARAMETER complete rows
 * per parameter: 1 + categorical indicators + Σ basis columns ≤ n / ROWS_PER_PARAMETER.
 */
export function rowPathLevelCap(n: number, indicatorColumns: number, bases: readonly VariableBasis[]): number {
  if (bases.length === 0) return 0;
  let level = 0;
  for (let l = 1; l <= MAX_BASIS_LEVEL; l++) {
    const cols = 1 + indicatorColumns + bases.reduce((s, b) => s + basisColumnsUpTo(b, l), 0);
    if (cols > n / ROWS_PER_PARAMETER) break;
    level = l;
  }
  return level;
}

// ---------------------------------------------------------------------------------------------

export interface Layout {
  /** Adjustment columns of every level up to the cap, in level order. */
  adjustment: ClaimColumn[];
  /** x then y side columns (one, or one per level but the first of a nominal side). */
  sides: [ClaimColumn[], ClaimColumn[]];
  entered: Array<{ variable: string; entered: "indicators" | "spline" | "linear"; levelCounts: number[] }>;
  cap: number;
}

/** Columns of a side: the score (or rank), or indicators of the observed levels but the first. */
function sideColumns(col: Column, present: readonly number[] | undefined, rank: boolean, rowFilter?: Uint8Array): ClaimColumn[] {
  if (col.type === "nominal") {
    return present!.slice(1).map((code) => ({ variable: col.name, level: 0, column: col, code }));
  }
  return [{ variable: col.name, level: 0, column: col, ...(rank ? { values: columnRanks(col, rowFilter) } : {}) }];
}

/** The adjustment columns of the given members up to `cap` (categorical: indicators of the present levels but the first). */
function adjustmentColumns(given: readonly Column[], present: ReadonlyMap<Column, readonly number[]>, cap: number, sample: Int32Array): Pick<Layout, "adjustment" | "entered"> {
  const adjustment: ClaimColumn[] = [];
  const entered: Layout["entered"] = [];
  const byLevel: ClaimColumn[][] = Array.from({ length: cap + 1 }, () => []);
  for (const col of given) {
    if (CATEGORICAL_TYPES.has(col.type) && col.codes) {
      const codes = present.get(col)!.slice(1);
      for (const code of codes) byLevel[0]!.push({ variable: col.name, level: 0, column: col, code });
      entered.push({ variable: col.name, entered: "indicators", levelCounts: [codes.length] });
      continue;
    }
    const basis = columnBasis(col, sample);
    const counts: number[] = [];
    for (let l = 0; l <= cap; l++) {
      const terms = basis.levels[l] ?? [];
      counts.push(terms.length);
      for (const term of terms) {
        byLevel[l]!.push(term.kind === "linear" ? { variable: col.name, level: 0, column: col } : { variable: col.name, level: l, column: col, term });
      }
    }
    entered.push({ variable: col.name, entered: cap > 0 ? "spline" : "linear", levelCounts: counts });
  }
  for (const cols of byLevel) adjustment.push(...cols);
  return { adjustment, entered };
}

/** Complete rows of the columns (code ≥ 0, or a value that is not NaN) within the filter. Cost: O(rows · k). */
function completeRows(cols: readonly Column[], rows: number, rowFilter?: Uint8Array): Int32Array {
  const keep = new Uint8Array(rows);
  if (rowFilter) for (let i = 0; i < rows; i++) keep[i] = rowFilter[i] !== 0 ? 1 : 0;
  else keep.fill(1);
  for (const c of cols) for (let i = 0; i < rows; i++) if (keep[i] && isMissing(c, i)) keep[i] = 0;
  let m = 0;
  for (let i = 0; i < rows; i++) m += keep[i]!;
  const idx = new Int32Array(m);
  for (let i = 0, t = 0; i < rows; i++) if (keep[i]) idx[t++] = i;
  return idx;
}

/** Codes present among the rows, in code order. */
function presentCodes(col: Column, idx: Int32Array): number[] {
  const seen = new Uint8Array(col.levels!.length);
  const codes = col.codes!;
  for (let t = 0; t < idx.length; t++) seen[codes[idx[t]!]!] = 1;
  const out: number[] = [];
  seen.forEach((s, c) => {
    if (s) out.push(c);
  });
  return out;
}

// ---------------------------------------------------------------------------------------------

export interface Fitted {
  fit: NestedAdjustment;
  n: number;
  /** Response columns kept (side columns that vary), x first. */
  qx: number;
  qy: number;
  level: number;
  bestX: number;
  bestY: number;
  /** Kept adjustment columns at the chosen level. */
  params: number;
  /** Adjustment columns (index into the layout's adjustment list) of the kept columns, in order. */
  keptColumns: number[];
}

/** Level choice from the snapshots: the higher of the two sides' GCV minima. */
function chooseLevel(fit: NestedAdjustment, qx: number, q: number): { level: number; bestX: number; bestY: number } {
  const bestX = bestLevel(fit, 0, qx);
  const bestY = bestLevel(fit, qx, q);
  return { level: Math.min(fit.snapshots.length - 1, Math.max(bestX, bestY) + UNDERSMOOTH_LEVELS), bestX, bestY };
}

/**
 * The columns' values on the rows behind the variance of the residual products, in one buffer:
 * column c's value at row position i is `data[c.offset + i]`, read at positions `index[t]` (or t
 * when there is no index) for t < rows; `mean` is the mean of the n complete rows that centres
 * it. `adjustment(j)` for adjustment column j of the layout, `side(r)` for the r-th side column
 * kept (x's first), with `shift` (its buffer value plus `shift` is the value itself) and, for a
 * side with two values a < b, `twoPoint: [a, b]`.
 */
export interface VarianceRows {
  rows: number;
  /**
   * Whether the rows are a sample of the claim's complete rows (moment path): the sample must
   * then reproduce each side's residual variance (see {@link SAMPLE_VARIANCE_RATIO}).
   */
  sampled?: boolean;
  index?: Int32Array;
  data(): Float64Array;
  adjustment(j: number): { offset: number; mean: number };
  side(r: number): SideValues;
}

export interface SideValues {
  offset: number;
  mean: number;
  shift: number;
  twoPoint?: [number, number];
  /** The exponent e of the buffer's units: buffer value plus `shift` is the value times 2^e. */
  exponent?: number;
}

/**
 * On the moment path the residuals' mean square over the variance sample must lie within this
 * factor of their variance over all complete rows (from the moments), side column by side column;
 * otherwise the sample misses rows that dominate the residuals (a value of 1e10 among values near
 * 1, say), its variance of the products would not describe their sum, and the claim is tested on
 * its rows instead, at most at the basis level the moments hold. For a sample of 20,000 rows of
 * light-tailed data the ratio is within 1 ± 0.05.
 */
export const SAMPLE_VARIANCE_RATIO = 4;

/** Fitted probabilities are kept inside [FIT_FLOOR, 1 − FIT_FLOOR] in the variance of a categorical side. */
const FIT_FLOOR = 1e-6;

/**
 * The variance of the residual products under the claim, Σ_t V_x,t ⊗ V_y,t − m·R̄R̄ᵀ over the m
 * variance rows, with R̄ = sumR/n. Under x ⫫ y | S the conditional covariance of R = e_x ⊗ e_y
 * given S factorises into that of e_x times that of e_y, so each side contributes its own
 * conditional covariance V: for a side with two values a < b, (b − a)²·π(1 − π) at its fitted
 * probability π (the model variance of a binary variable, steadier than e² in small samples of
 * rare or nearly determined outcomes); for a nominal side (several indicators), the multinomial
 * covariance diag(π) − ππᵀ of its fitted level probabilities; otherwise the squared residual e²
 * (so for two continuous sides this is the empirical Σ (R_t − R̄)² of the covariance measure).
 * Fitted probabilities are clipped to [FIT_FLOOR, 1 − FIT_FLOOR]. Residuals are
 * e_r = (side_r − μ_r) − Σ_k β_rk (col_k − μ_k); all columns sit in one buffer, so every read is
 * of one typed array. `squares` receives Σ_t e_r² per side column. Cost: O(m · (p·q + qq²)).
 * Sources: Shah & Peters (2020), Annals of Statistics 48:1514–1538 (the statistic); the variances
 * of the binomial and multinomial distributions (common practice). With `centre` false the sum
 * Σ_t V_x,t ⊗ V_y,t is returned as it is (a site summary's sum, centred once the sites are pooled).
 */
export function residualProductScatter(values: VarianceRows, beta: readonly Float64Array[], columns: readonly number[], qx: number, qy: number, meanR: Float64Array, squares: Float64Array, adf?: AdfSums, centre = true): Float64Array {
  const q = qx + qy;
  const qq = qx * qy;
  const p = columns.length;
  const m = values.rows;
  const sides = Array.from({ length: q }, (_, r) => values.side(r));
  const cols = columns.map((j) => values.adjustment(j));
  const data = values.data();
  const index = values.index;
  const offs = Int32Array.from(cols, (c) => c.offset);
  const sideOffs = Int32Array.from(sides, (c) => c.offset);
  // residual r = side_r − c_r − Σ_k B[r·p + k]·col_k, c_r = μ_r − Σ_k β_rk μ_k
  const B = new Float64Array(q * p);
  const c = new Float64Array(q);
  for (let r = 0; r < q; r++) {
    let cr = sides[r]!.mean;
    for (let k = 0; k < p; k++) {
      B[r * p + k] = beta[r]![k]!;
      cr -= beta[r]![k]! * cols[k]!.mean;
    }
    c[r] = cr;
  }
  const scatter = new Float64Array(qq * qq);
  if (q === 2) {
    // one product, the common case: residuals and variances in locals
    const o0 = sideOffs[0]!;
    const o1 = sideOffs[1]!;
    const c0 = c[0]!;
    const c1 = c[1]!;
    const [a0, b0] = sides[0]!.twoPoint ?? [NaN, NaN];
    const [a1, b1] = sides[1]!.twoPoint ?? [NaN, NaN];
    const two0 = sides[0]!.twoPoint !== undefined;
    const two1 = sides[1]!.twoPoint !== undefined;
    const s0 = sides[0]!.shift;
    const s1 = sides[1]!.shift;
    let acc = 0;
    let sq0 = 0;
    let sq1 = 0;
    // sums of the scaled residuals u = e0·g0, v = e1·g1 for the ADF variance of their correlation
    const g0 = adf?.scale[0] ?? 0;
    const g1 = adf?.scale[1] ?? 0;
    let uv = 0;
    let uuvv = 0;
    let uuuv = 0;
    let uvvv = 0;
    let uuuu = 0;
    let vvvv = 0;
    for (let t = 0; t < m; t++) {
      const i = index ? index[t]! : t;
      const d0 = data[o0 + i]!;
      const d1 = data[o1 + i]!;
      let e0 = d0 - c0;
      let e1 = d1 - c1;
      for (let k = 0; k < p; k++) {
        const v = data[offs[k]! + i]!;
        e0 -= B[k]! * v;
        e1 -= B[p + k]! * v;
      }
      sq0 += e0 * e0;
      sq1 += e1 * e1;
      if (adf) {
        const u = e0 * g0;
        const v = e1 * g1;
        const uu = u * u;
        const vv = v * v;
        const w = u * v;
        uv += w;
        uuvv += uu * vv;
        uuuv += uu * w;
        uvvv += w * vv;
        uuuu += uu * uu;
        vvvv += vv * vv;
      }
      const v0 = two0 ? twoPointVariance(d0 + s0 - e0, a0, b0) : e0 * e0;
      const v1 = two1 ? twoPointVariance(d1 + s1 - e1, a1, b1) : e1 * e1;
      acc += v0 * v1;
    }
    scatter[0] = centre ? acc - m * meanR[0]! * meanR[0]! : acc;
    squares[0] = sq0;
    squares[1] = sq1;
    if (adf) adf.sums = { uu: sq0 * g0 * g0, vv: sq1 * g1 * g1, uv, uuvv, uuuv, uvvv, uuuu, vvvv };
    return scatter;
  }
  const e = new Float64Array(q);
  const Vx = new Float64Array(qx * qx);
  const Vy = new Float64Array(qy * qy);
  for (let t = 0; t < m; t++) {
    const i = index ? index[t]! : t;
    for (let r = 0; r < q; r++) e[r] = data[sideOffs[r]! + i]! - c[r]!;
    for (let k = 0; k < p; k++) {
      const v = data[offs[k]! + i]!;
      for (let r = 0; r < q; r++) e[r] = e[r]! - B[r * p + k]! * v;
    }
    for (let r = 0; r < q; r++) squares[r] = squares[r]! + e[r]! * e[r]!;
    sideCovariance(Vx, e, 0, qx, sides, data, sideOffs, i);
    sideCovariance(Vy, e, qx, qy, sides, data, sideOffs, i);
    // scatter[(a,b),(c,d)] += Vx[a,c]·Vy[b,d]
    for (let a = 0; a < qx; a++) {
      for (let b = 0; b < qy; b++) {
        const row = (a * qy + b) * qq;
        for (let cc = 0; cc < qx; cc++) {
          const vx = Vx[a * qx + cc]!;
          for (let dd = 0; dd < qy; dd++) scatter[row + cc * qy + dd] = scatter[row + cc * qy + dd]! + vx * Vy[b * qy + dd]!;
        }
      }
    }
  }
  if (centre) for (let a = 0; a < qq; a++) for (let b = 0; b < qq; b++) scatter[a * qq + b] = scatter[a * qq + b]! - m * meanR[a]! * meanR[b]!;
  return scatter;
}

/**
 * Sums over the variance rows of the residuals scaled by `scale` (u = e_x·scale[0], v =
 * e_y·scale[1], chosen near 1/σ so that fourth powers stay in range), for the ADF variance of the
 * residual correlation (`adfCoefficients`); filled by {@link residualProductScatter} for one product.
 */
export interface AdfSums {
  scale: [number, number];
  sums?: { uu: number; vv: number; uv: number; uuvv: number; uuuv: number; uvvv: number; uuuu: number; vvvv: number };
}

/** (b − a)²·π(1 − π) for the fitted value μ of a variable with values a < b, π = (μ − a)/(b − a) clipped. */
function twoPointVariance(mu: number, a: number, b: number): number {
  const w = b - a;
  let pi = (mu - a) / w;
  pi = pi < FIT_FLOOR ? FIT_FLOOR : pi > 1 - FIT_FLOOR ? 1 - FIT_FLOOR : pi;
  return w * w * pi * (1 - pi);
}

/**
 * The conditional covariance of one side's residuals at a row, into V (k × k): the empirical
 * e eᵀ for one scored column, the two-point variance for one two-valued column, and for several
 * indicator columns (a nominal side) diag(π) − ππᵀ of the fitted probabilities π = value − e,
 * clipped and scaled so that they sum to at most 1 − FIT_FLOOR.
 */
export function sideCovariance(V: Float64Array, e: Float64Array, from: number, k: number, sides: readonly SideValues[], data: Float64Array, offs: Int32Array, i: number): void {
  if (k === 1) {
    const sd = sides[from]!;
    const er = e[from]!;
    V[0] = sd.twoPoint ? twoPointVariance(data[offs[from]! + i]! + sd.shift - er, sd.twoPoint[0], sd.twoPoint[1]) : er * er;
    return;
  }
  const pi = new Float64Array(k);
  let total = 0;
  for (let r = 0; r < k; r++) {
    const fitted = data[offs[from + r]! + i]! + sides[from + r]!.shift - e[from + r]!;
    pi[r] = fitted < FIT_FLOOR ? FIT_FLOOR : fitted;
    total += pi[r]!;
  }
  if (total > 1 - FIT_FLOOR) for (let r = 0; r < k; r++) pi[r] = (pi[r]! * (1 - FIT_FLOOR)) / total;
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) V[a * k + b] = (a === b ? pi[a]! : 0) - pi[a]! * pi[b]!;
}

/** What {@link outcomeOf} returns when a variance sample fails the check of SAMPLE_VARIANCE_RATIO. */
const UNREPRESENTATIVE_SAMPLE = Symbol("unrepresentative variance sample");

/**
 * The residual-product statistic from a fitted nested adjustment and the columns' centred values
 * on the rows that give the variance (see the module comment). Cost: O(m · (p + q²)) for m
 * variance rows, p kept adjustment columns and q side columns.
 */
function outcomeOf(
  name: TestName,
  claim: Claim,
  layout: Layout,
  f: Fitted,
  values: VarianceRows,
  pathDetails: Record<string, unknown>,
  alpha: number,
): MethodResult | typeof UNREPRESENTATIVE_SAMPLE {
  const { fit, n, qx, qy, level } = f;
  const q = qx + qy;
  const snap = fit.snapshots[level]!;
  const kept = snap.kept;
  const beta = Array.from({ length: q }, (_, r) => fit.coefficients(r, kept));
  // Σ R over the n rows from the residual covariances (Bessel scale × (n − 1)).
  const qq = qx * qy;
  const sumR = new Float64Array(qq);
  for (let a = 0; a < qx; a++) for (let b = 0; b < qy; b++) sumR[a * qy + b] = (n - 1) * snap.residual[a * q + qx + b]!;
  // The variance of the residual products over the variance rows.
  const m = values.rows;
  const meanR = sumR.map((v) => v / n);
  const squares = new Float64Array(q);
  // one product: also the sums behind the ADF variance of the residual correlation, on residuals
  // scaled by their standard deviations over all n rows
  const adf: AdfSums | undefined = qq === 1 ? { scale: [1 / Math.sqrt(snap.residual[0]!), 1 / Math.sqrt(snap.residual[q * q - 1]!)] } : undefined;
  const sigma = residualProductScatter(values, beta, f.keptColumns.slice(0, kept), qx, qy, meanR, squares, adf);
  if (values.sampled && !sampleRepresents(f, squares, m)) return UNREPRESENTATIVE_SAMPLE;
  for (let a = 0; a < qq; a++) {
    for (let b = 0; b <= a; b++) {
      const v = sigma[a * qq + b]! / m;
      sigma[a * qq + b] = v;
      sigma[b * qq + a] = v;
    }
  }
  const res = gcmTestFromSums({ n, params: kept, qx, qy, residual: snap.residual, sumR, sigma, m, ...(adf?.sums ? { adf: adf.sums } : {}) }, alpha);
  if ("reason" in res) return { ok: false, reason: res.reason };
  const { test, effect, ci, r, interval } = res;

  // Linear check: the level-0 fit with equal variances assumed.
  const lin = fit.snapshots[0]!;
  const linear = linearCheck(lin.residual, qx, qy, n, lin.kept);

  const entered: AdjustmentEntry[] = layout.entered.map((en) => ({
    variable: en.variable,
    entered: en.entered === "spline" && level === 0 ? "linear" : en.entered,
    columns: en.levelCounts.slice(0, level + 1).reduce((s, c) => s + c, 0),
  }));
  const details: Record<string, unknown> = {
    ...(r !== undefined ? { r } : {}),
    ...(interval ? { interval_variance: interval } : {}),
    adjustment: entered,
    flexibility: { level, max_level: layout.cap, level_x: f.bestX, level_y: f.bestY, parameters: kept },
    sides: [claim.x, claim.y].map((v, s) => ({ variable: v, model: sideModel(layout.sides[s]![0]!.column, name) })),
    ...(test.f !== undefined ? { f: test.f, df_f: [test.df, test.df2] } : {}),
    components: test.components,
    variance_rows: m,
    linear_adjustment: linear,
    ...pathDetails,
  };
  const warnings: string[] = [];
  const dropped = layout.adjustment.filter((c) => c.level <= level).length - kept;
  if (dropped > 0) warnings.push(`${dropped} adjustment column${dropped > 1 ? "s" : ""} of ${quoted(claim.given)} aliased with others (or constant among the complete rows) and dropped`);
  if (test.components < qq) warnings.push(`${qq - test.components} of ${qq} residual products are redundant with the others and were left out`);
  const outcome: TestOutcome = {
    test: name,
    n,
    statistic: test.statistic,
    df: test.df,
    p: test.p,
    log_p: test.log_p,
    effect,
    ci,
    p_method: "asymptotic",
    details,
    ...(warnings.length ? { warnings } : {}),
  };
  return { ok: true, outcome };
}

/**
 * Whether sampled variance rows represent a claim's rows: each side's residual mean square over
 * the m sampled rows (`squares`, Σ e² per side column) within a factor SAMPLE_VARIANCE_RATIO of
 * its residual variance over all n rows (see the module comment). Cost: O(q).
 */
export function sampleRepresents(f: Fitted, squares: ArrayLike<number>, m: number): boolean {
  const q = f.qx + f.qy;
  const snap = f.fit.snapshots[f.level]!;
  for (let r = 0; r < q; r++) {
    const full = (snap.residual[r * q + r]! * (f.n - 1)) / f.n;
    const ratio = squares[r]! / m / full;
    if (full > 0 && !(ratio >= 1 / SAMPLE_VARIANCE_RATIO && ratio <= SAMPLE_VARIANCE_RATIO)) return false;
  }
  return true;
}

/**
 * The sums over a claim's complete rows that its test is computed from: what {@link outcomeOf}
 * gives {@link gcmTestFromSums} on one table, and what pooled site summaries give it from the
 * sums of the sites' (`audit/poolSiteSummaries.ts`).
 */
export interface GcmTestSums {
  /** Complete cases behind the sum of the residual products. */
  n: number;
  /** Adjustment columns in the regressions (intercept excluded). */
  params: number;
  /** Side columns of x and of y (one, or one per level but the reference of a nominal side). */
  qx: number;
  qy: number;
  /** Bessel-corrected covariance of the q = qx + qy side residuals over the n rows (q × q row-major). */
  residual: ArrayLike<number>;
  /** Σ_i R_i over the n rows (qx·qy components, x's index major). */
  sumR: ArrayLike<number>;
  /** Covariance of the residual products under the claim (qx·qy square), as `gcmStatistic` takes it. */
  sigma: ArrayLike<number>;
  /** Rows behind `sigma` and `adf`. */
  m: number;
  /** One product: the sums behind the ADF variance of the residual correlation (`adfCoefficients`), in any fixed scale of each side. */
  adf?: { uu: number; vv: number; uv: number; uuvv: number; uuuv: number; uvvv: number; uuuu: number; vvvv: number };
}

/** The test, effect and interval of {@link gcmTestFromSums}. */
export interface GcmTestResult {
  test: GcmStatisticResult;
  effect: number;
  ci: [number, number];
  /** The residual correlation (one product). */
  r?: number;
  /** The variances behind its interval, when the ADF sums were usable. */
  interval?: ResidualCorrelationVariance;
}

/**
 * The generalised covariance measure's statistic, p-value, effect and interval at confidence
 * 1 − alpha from the sums of {@link GcmTestSums} (see the module comment: the residual
 * correlation with `residualCorrelationInterval` for one product, `lrEffect` with
 * `lrEffectCIAtAlpha` for several). Returns `{ reason }` as `gcmStatistic` does.
 * Cost: O(q³) plus about 60 incomplete-beta evaluations.
 * Source: Shah & Peters (2020), Annals of Statistics 48:1514–1538; Steiger & Hakstian (1982),
 * British Journal of Mathematical and Statistical Psychology 35:208–215 (the interval's variance).
 * @example gcmTestFromSums({ n: 100, params: 2, qx: 1, qy: 1, residual: [1, 0.2, 0.2, 1], sumR: [19.8], sigma: [1], m: 100 }, 0.05).effect // 0.2
 */
export function gcmTestFromSums(s: GcmTestSums, alpha: number): GcmTestResult | { reason: string } {
  const { n, qx, qy, params: kept, sigma, m } = s;
  const q = qx + qy;
  const qq = qx * qy;
  const test = gcmStatistic({ n, params: kept, sumR: s.sumR, sigma });
  if ("reason" in test) return { reason: test.reason };
  // Effect: the residual correlation (one product) or the common LR-type scale (several).
  let effect: number;
  let ci: [number, number];
  let r: number | undefined;
  let interval: ResidualCorrelationVariance | undefined;
  if (qq === 1 && test.components === 1) {
    const vx = s.residual[0]!;
    const vy = s.residual[q * q - 1]!;
    r = Math.max(-1, Math.min(1, s.residual[1]! / Math.sqrt(vx * vy)));
    effect = r;
    // the null standard error of r that the test used: r/T, or from its parts when r is 0
    const se0 = r !== 0 && test.statistic !== 0 ? Math.abs(r / test.statistic) : Math.sqrt(sigma[0]! / (n - 1 - kept)) * (n / (n - 1)) / Math.sqrt(vx * vy);
    const coef = s.adf ? adfCoefficients(m, s.adf) : undefined;
    if (coef && Number.isFinite(se0)) {
      interval = { se0, adf: coef };
      ci = residualCorrelationInterval(r, test.p, test.df, n, kept, interval, 1 - alpha);
    } else ci = gcmCorrelationInterval(r, test.statistic, test.df, n, kept, 1 - alpha);
  } else {
    // on the chi-square scale of the test's own p-value (its F reference), so that the interval's
    // lower end is above 0 exactly when p < alpha
    const w = chiSquareUpperQuantileLog(Math.min(0, test.log_p), test.df);
    effect = lrEffect(w, test.df, n);
    ci = lrEffectCIAtAlpha(w, test.df, n, 1 - alpha);
  }
  return { test, effect, ci, ...(r !== undefined ? { r } : {}), ...(interval ? { interval } : {}) };
}

function sideModel(col: Column, name: TestName): string {
  const what = name === "gcm-rank" && col.type !== "nominal" ? "mid-ranks" : col.type === "nominal" ? "level indicators" : col.type === "binary" ? "0/1 outcome (linear probability)" : "scores";
  return `least squares of the ${what} on the adjustment`;
}

/** The classic test of a claim with linear adjustment (see {@link linearCheck}). */
export interface LinearCheck {
  statistic: number;
  df: number;
  p: number;
  log_p: number;
  /** On the common effect scale: the partial correlation (one product) or √(1 − exp(−max(0, W − df)/n)). */
  effect: number;
}

/**
 * The classic test with the level-0 (linear) adjustment and equal variances: the partial
 * correlation t test on n − 2 − p df for one product; for several, (n − 1)·Σ canonical
 * correlations² (the score statistic of multivariate normal regression) on qx·qy df, from the
 * residual covariance (q × q, any common scale). Cost: O(q³).
 */
export function linearCheck(residual: Float64Array, qx: number, qy: number, n: number, p: number): LinearCheck | undefined {
  const q = qx + qy;
  const nu = n - 2 - p;
  if (!(nu >= 1)) return undefined;
  if (qx === 1 && qy === 1) {
    const vx = residual[0]!;
    const vy = residual[3]!;
    if (!(vx > 0 && vy > 0)) return undefined;
    const r = Math.max(-1 + 1e-16, Math.min(1 - 1e-16, residual[1]! / Math.sqrt(vx * vy)));
    const t = r * Math.sqrt(nu / (1 - r * r));
    return { statistic: t, df: nu, p: studentTTwoSided(t, nu), log_p: logStudentTTwoSided(t, nu), effect: r };
  }
  const Sx = new Float64Array(qx * qx);
  const Sy = new Float64Array(qy * qy);
  for (let a = 0; a < qx; a++) for (let b = 0; b < qx; b++) Sx[a * qx + b] = residual[a * q + b]!;
  for (let a = 0; a < qy; a++) for (let b = 0; b < qy; b++) Sy[a * qy + b] = residual[(qx + a) * q + qx + b]!;
  const Lx = cholesky(Sx, qx, 1e-12);
  const Ly = cholesky(Sy, qy, 1e-12);
  if (!Lx || !Ly) return undefined;
  // tr(Sx⁻¹ Cxy Sy⁻¹ Cyx)
  let tr = 0;
  const Cxy = (a: number, b: number) => residual[a * q + qx + b]!;
  const SyInvCyx: Float64Array[] = [];
  for (let a = 0; a < qx; a++) SyInvCyx.push(choleskySolve(Ly, qy, Array.from({ length: qy }, (_, b) => Cxy(a, b))));
  for (let b = 0; b < qx; b++) {
    // column b of Cxy Sy⁻¹ Cyx, then Sx⁻¹ of it, diagonal entry b
    const col = Array.from({ length: qx }, (_, a) => {
      let s = 0;
      for (let c = 0; c < qy; c++) s += Cxy(a, c) * SyInvCyx[b]![c]!;
      return s;
    });
    tr += choleskySolve(Lx, qx, col)[b]!;
  }
  const w = (n - 1) * tr;
  const df = qx * qy;
  return { statistic: w, df, p: chiSquareUpper(w, df), log_p: logChiSquareUpper(w, df), effect: lrEffect(w, df, n) };
}

// ---------------------------------------------------------------------------------------------
// Row path


/**
 * An exact key of what a claim column computes from its source array: the indicator's code, or
 * the basis term with its knots written in full (`String` of a double round-trips), so columns
 * whose labels round to the same text never share a cache entry.
 */
function termKey(c: ClaimColumn): string {
  if (c.code !== undefined) return `=${c.code}`;
  const t = c.term;
  if (!t || t.kind === "linear") return "";
  return t.kind === "hinge" ? `h${String(t.knot)}` : `s${t.j}:${t.knots.map(String).join(",")}`;
}

/** A column of ones of the given length (cached), whose products with other columns are their sums. */
let onesCache = new Float64Array(0);
function onesColumn(rows: number): Float64Array {
  if (onesCache.length !== rows) onesCache = new Float64Array(rows).fill(1);
  return onesCache;
}

/** Per column, each claim column's values on every row, shifted by their mean (NaN where missing). */
const shiftedMemo = new WeakMap<object, Map<string, Float64Array>>();
/** The shift subtracted from each cached array of `shiftedValues`. */
const shiftOf = new WeakMap<Float64Array, number>();

/**
 * The power of two a claim column's values are multiplied by on the row path: 1 for an
 * indicator, else 2^e for the scale exponent e of the array read (`stats/powerOfTwoScale.ts`).
 * Cost: O(rows) the first time per array.
 */
function rowPathFactor(c: ClaimColumn): number {
  return 2 ** rowPathExponent(c);
}

/** The exponent of {@link rowPathFactor}. */
function rowPathExponent(c: ClaimColumn): number {
  return c.code !== undefined ? 0 : columnScaleExponent(c.values ?? c.column.values);
}

/**
 * A claim column's values on every row of the table, scaled by {@link rowPathFactor} and minus
 * their mean over the observed rows (the shift keeps the cross-products well conditioned; Chan,
 * Golub & LeVeque 1983), NaN where the variable is missing. Cached per column and term, so claims
 * read each term once. Cost: O(rows) the first time.
 */
function shiftedValues(c: ClaimColumn): Float64Array {
  // keyed by the array read (the column, or its mid-ranks under a given row filter) and the exact term
  const source: object = c.values ?? c.column;
  let byTerm = shiftedMemo.get(source);
  if (!byTerm) shiftedMemo.set(source, (byTerm = new Map()));
  const key = termKey(c);
  let v = byTerm.get(key);
  if (v) return v;
  const rows = c.column.values.length;
  v = new Float64Array(rows);
  if (c.code !== undefined) {
    const codes = c.column.codes!;
    for (let i = 0; i < rows; i++) v[i] = codes[i]! < 0 ? NaN : codes[i] === c.code ? 1 : 0;
  } else {
    const f = rowPathFactor(c);
    const src = c.values ?? c.column.values;
    for (let i = 0; i < rows; i++) v[i] = src[i]! * f;
    if (c.term) fillBasisValues(scaleBasisTerm(c.term, f), v, v);
  }
  let sum = 0;
  let count = 0;
  for (let i = 0; i < rows; i++) {
    const x = v[i]!;
    if (x === x) {
      sum += x;
      count++;
    }
  }
  const mean = count > 0 ? sum / count : 0;
  for (let i = 0; i < rows; i++) v[i] = v[i]! - mean;
  byTerm.set(key, v);
  shiftOf.set(v, mean);
  return v;
}

/** The two values of a side column when it takes exactly two (a < b) on its variable's observed rows. */
const twoValuesMemo = new WeakMap<object, [number, number] | null>();

/**
 * [a, b] when a side column takes exactly two distinct values a < b over every observed row of
 * its variable (a binary variable, a nominal side with one indicator, their mid-ranks), times
 * 2^e (the scale of the values they are compared with); else undefined. Cached per column and
 * kind. Cost: O(rows) the first time.
 */
function twoValues(c: ClaimColumn, e: number): [number, number] | undefined {
  if (c.code !== undefined) return [0, 1];
  const source: object = c.values ?? c.column;
  let found = twoValuesMemo.get(source);
  if (found === undefined) {
    const v = c.values ?? c.column.values;
    let a = NaN;
    let b = NaN;
    found = null;
    let i = 0;
    for (; i < v.length; i++) {
      const x = v[i]!;
      if (x !== x || x === a || x === b) continue;
      if (a !== a) a = x;
      else if (b !== b) b = x;
      else break;
    }
    if (i === v.length && b === b) found = a < b ? [a, b] : [b, a];
    twoValuesMemo.set(source, found);
  }
  return found ? [timesPowerOfTwo(found[0], e), timesPowerOfTwo(found[1], e)] : undefined;
}

/** The exponent e of a shifted array: its entries plus its shift are the column's values times 2^e. */
const exponentOfShifted = new WeakMap<Float64Array, number>();

/** Below this share of their second moment about the shift, a column's variance on a claim's rows has lost over half its digits. */
const CANCELLATION_SHARE = 2 ** -26;
/** A column's second moment on a claim's rows below this is near the bottom of the double range. */
const TINY_SECOND_MOMENT = 2 ** -400;

/**
 * Whether a shifted column (`shiftedValues`) is fit for a claim's rows, from its Gram entries
 * there: its sum of squares `gg` and its sum `s` over the n rows. Not fit when its variance there
 * is below CANCELLATION_SHARE of its second moment about the shift (the shift, the mean of the
 * whole column, lies far from these rows: one value of 1e20 among values near 1 on a row the
 * claim leaves out), or when the second moment is below TINY_SECOND_MOMENT (the column's scale
 * was set by such a value, and squares of the values here may have underflowed to 0) unless every
 * value on these rows is 0. Cost: O(1), or O(n) when the second moment is tiny.
 */
function fitForRows(gg: number, s: number, vec: Float64Array, idx: Int32Array): boolean {
  const n = idx.length;
  if (gg >= TINY_SECOND_MOMENT) return gg - (s * s) / n >= CANCELLATION_SHARE * gg;
  for (let t = 0; t < n; t++) if (vec[idx[t]!] !== 0) return false;
  return true;
}

/**
 * A claim column's values shifted and scaled for the claim's rows alone (for a column not
 * {@link fitForRows}): at the rows of `idx`, (u − m)·2^g with u the values scaled as on the row
 * path, m their mean over these rows and 2^g the power of two that brings the largest |u − m| into
 * [0.5, 1); 0 elsewhere. Its shift (m·2^g) and exponent are recorded as for `shiftedValues`.
 * Cost: O(rows).
 */
function claimShiftedValues(c: ClaimColumn, idx: Int32Array, rows: number): Float64Array {
  const n = idx.length;
  const u = new Float64Array(n);
  const e0 = rowPathExponent(c);
  if (c.code !== undefined) {
    const codes = c.column.codes!;
    for (let t = 0; t < n; t++) u[t] = codes[idx[t]!] === c.code ? 1 : 0;
  } else {
    const f = 2 ** e0;
    const src = c.values ?? c.column.values;
    for (let t = 0; t < n; t++) u[t] = src[idx[t]!]! * f;
    if (c.term) fillBasisValues(scaleBasisTerm(c.term, f), u, u);
  }
  let sum = 0;
  for (let t = 0; t < n; t++) sum += u[t]!;
  const m = n > 0 ? sum / n : 0;
  let top = 0;
  for (let t = 0; t < n; t++) top = Math.max(top, Math.abs(u[t]! - m));
  const g = top > 0 ? scaleExponent(top) : 0;
  const k = 2 ** g;
  const v = new Float64Array(rows);
  for (let t = 0; t < n; t++) v[idx[t]!] = (u[t]! - m) * k;
  shiftOf.set(v, m * k);
  exponentOfShifted.set(v, e0 + g);
  return v;
}

/** A claim fitted on its complete rows: the layout, the nested fit with its chosen level, and the columns' values on those rows. */
export interface RowFit {
  layout: Layout;
  f: Fitted;
  values: VarianceRows;
  /** The side columns kept (those that vary), x's first: `values.side(r)` is the r-th. */
  sides: ClaimColumn[];
}

function runRowPath(name: TestName, claim: Claim, cols: Column[], ctx: TestContext, maxLevel = MAX_BASIS_LEVEL): MethodResult {
  const fitted = fitRowPath(name, claim, cols, ctx, maxLevel);
  if (!("layout" in fitted)) return fitted;
  // all the claim's rows, not a sample: outcomeOf does not check them
  return outcomeOf(name, claim, fitted.layout, fitted.f, fitted.values, { path: "rows" }, ctx.alpha ?? 0.05) as MethodResult;
}

/**
 * The row path up to the fit (see the module comment), or why the claim cannot be tested; for
 * the site sums of `siteSummary.ts` too. Cost: O(n · p²).
 */
export function fitRowPath(name: TestName, claim: Claim, cols: Column[], ctx: TestContext, maxLevel = MAX_BASIS_LEVEL): RowFit | MethodResult {
  const [xCol, yCol, ...given] = cols as [Column, Column, ...Column[]];
  const idx = completeRows(cols, ctx.table.rows, ctx.rowFilter);
  const n = idx.length;
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted([claim.x, claim.y, ...claim.given])} observed` };
  const present = new Map<Column, number[]>();
  for (const c of cols) if (CATEGORICAL_TYPES.has(c.type) && c.codes) present.set(c, presentCodes(c, idx));
  const rank = name === "gcm-rank";
  const sides: [ClaimColumn[], ClaimColumn[]] = [sideColumns(xCol, present.get(xCol), rank, ctx.rowFilter), sideColumns(yCol, present.get(yCol), rank, ctx.rowFilter)];
  const indicatorCount = given.reduce((s, c) => s + (present.has(c) ? present.get(c)!.length - 1 : 0), 0);
  const sample = varianceSample(ctx.table, ctx.seed, ctx.rowFilter);
  const bases = given.filter((c) => !present.has(c)).map((c) => columnBasis(c, sample));
  const cap = Math.min(maxLevel, rowPathLevelCap(n, indicatorCount, bases));
  const { adjustment, entered } = adjustmentColumns(given, present, cap, sample);
  const layout: Layout = { adjustment, sides, entered, cap };

  // Columns on the claim's rows: covariances from the Gram matrix of the shifted values with a
  // column of ones (whose products are the sums S), C_ab = (G_ab − S_a S_b / n)/(n − 1); the rows
  // are read in place through the claim's row index.
  const ones = onesColumn(ctx.table.rows);
  const sideAll = [...sides[0], ...sides[1]];
  const sideVals = sideAll.map(shiftedValues);
  let sideGram = gramMatrix([...sideVals, ones], idx);
  const sq = sideAll.length;
  const sideSum = (r: number) => sideGram[r * (sq + 1) + sq]!;
  // columns whose whole-column shift or scale does not suit these rows get their own
  let refit = false;
  sideAll.forEach((c, r) => {
    if (fitForRows(sideGram[r * (sq + 1) + r]!, sideSum(r), sideVals[r]!, idx)) return;
    sideVals[r] = claimShiftedValues(c, idx, ctx.table.rows);
    refit = true;
  });
  if (refit) sideGram = gramMatrix([...sideVals, ones], idx);
  const varies = sideAll.map((_, r) => {
    const g = sideGram[r * (sq + 1) + r]!;
    return g - (sideSum(r) * sideSum(r)) / n > 1e-14 * g;
  });
  const qx = sides[0].filter((_, r) => varies[r]).length;
  const qy = sides[1].filter((_, r) => varies[sides[0].length + r]).length;
  if (qx === 0) return { ok: false, reason: `"${claim.x}" is constant among the ${n} complete rows; the claim cannot be tested` };
  if (qy === 0) return { ok: false, reason: `"${claim.y}" is constant among the ${n} complete rows; the claim cannot be tested` };
  const respVals = sideVals.filter((_, r) => varies[r]);
  const respCols = sideAll.filter((_, r) => varies[r]);
  const q = respVals.length;
  // Level by level: the Gram matrix of every column so far, the sides and the ones (recomputed
  // per level: the levels roughly double, so this costs about 4/3 of one Gram of the last level);
  // the new columns join the nested fit; stop two levels past the best level of both sides.
  const A = adjustment.length;
  const vectors: Float64Array[] = [];
  let sums = new Float64Array(0);
  let respSums = new Float64Array(q);
  let fit: NestedAdjustment | undefined;
  let j = 0;
  let bestX = 0;
  let bestY = 0;
  // levels up to `gramLevel` have their Gram computed; the first call covers levels 0–2 at once
  // (the search reaches level 2 whenever the best level is 0)
  let gramLevel = -1;
  let G: Float64Array = new Float64Array(0);
  let d = 0;
  const sum = (a: number) => G[a * d + d - 1]!;
  const cov = (a: number, b: number) => (G[a * d + b]! - (sum(a) * sum(b)) / n) / (n - 1);
  let gramCols = 0;
  for (let level = 0; level <= cap; level++) {
    const from = j;
    for (; j < A && adjustment[j]!.level === level; j++);
    if (level > gramLevel) {
      gramLevel = level === 0 ? Math.min(cap, 2) : level;
      const fromCol = gramCols;
      while (gramCols < A && adjustment[gramCols]!.level <= gramLevel) vectors.push(shiftedValues(adjustment[gramCols++]!));
      const all = [...vectors, ...respVals, ones];
      d = all.length;
      G = gramMatrix(all, idx);
      // as for the sides: the new columns that do not suit these rows get their own shift and scale
      let again = false;
      for (let a = fromCol; a < gramCols; a++) {
        if (fitForRows(G[a * d + a]!, G[a * d + d - 1]!, all[a]!, idx)) continue;
        vectors[a] = all[a] = claimShiftedValues(adjustment[a]!, idx, ctx.table.rows);
        again = true;
      }
      if (again) G = gramMatrix(all, idx);
    }
    // the sides sit after the gram's adjustment columns
    const side = (r: number) => gramCols + r;
    sums = Float64Array.from({ length: j }, (_, a) => sum(a));
    respSums = Float64Array.from({ length: q }, (_, r) => sum(side(r)));
    if (!fit) {
      const respCov = new Float64Array(q * q);
      for (let a = 0; a < q; a++) for (let b = 0; b < q; b++) respCov[a * q + b] = cov(side(a), side(b));
      fit = new NestedAdjustment(n, respCov, q);
    }
    for (let c = from; c < j; c++) {
      const prev = new Float64Array(c);
      for (const k of fit.keptColumns) prev[k] = cov(c, k);
      const withResp = new Float64Array(q);
      for (let r = 0; r < q; r++) withResp[r] = cov(c, side(r));
      fit.addColumn(prev, cov(c, c), withResp, G[c * d + c]! / (n - 1));
    }
    fit.endLevel();
    ({ bestX, bestY } = chooseLevel(fit, qx, q));
    if (level >= bestX + 2 && level >= bestY + 2) break; // two levels past both sides' best: stop
  }
  const { level } = chooseLevel(fit!, qx, q);
  const f: Fitted = { fit: fit!, n, qx, qy, level, bestX, bestY, params: fit!.snapshots[level]!.kept, keptColumns: fit!.keptColumns };
  // the chosen level's columns and the sides on the claim's rows, in one buffer for the variance pass
  const used = f.keptColumns.slice(0, f.params);
  const slot = new Map<number, number>();
  used.forEach((c, k) => slot.set(c, k));
  const buffer = new Float64Array((used.length + q) * n);
  const place = (vals: Float64Array, at: number) => {
    for (let t = 0; t < n; t++) buffer[at + t] = vals[idx[t]!]!;
  };
  used.forEach((c, k) => place(vectors[c]!, k * n));
  respVals.forEach((v, k) => place(v, (used.length + k) * n));
  const values: VarianceRows = {
    rows: n,
    data: () => buffer,
    adjustment: (c) => ({ offset: slot.get(c)! * n, mean: sums[c]! / n }),
    side: (r) => {
      const c = respCols[r]!;
      const exponent = exponentOfShifted.get(respVals[r]!) ?? rowPathExponent(c);
      const two = twoValues(c, exponent);
      return { offset: (used.length + r) * n, mean: respSums[r]! / n, shift: shiftOf.get(respVals[r]!)!, exponent, ...(two ? { twoPoint: two } : {}) };
    },
  };
  return { layout, f, values, sides: respCols };
}

// ---------------------------------------------------------------------------------------------
// Moment path

/** The seeded sample of rows behind the variance on the moment path (sorted), per table, seed and filter. */
const sampleMemo = new WeakMap<Table, { seed: number; filter: Uint8Array | undefined; rows: Int32Array }>();

/**
 * Rows of the table (within the filter) that give the variance of the residual products: all of
 * them when there are at most VARIANCE_SAMPLE_ROWS, else a uniform random sample of that many
 * (without replacement; selection sampling, Knuth 1997, TAOCP vol. 2, 3rd ed., §3.4.2 Algorithm S)
 * from the stream of (seed, "gcm variance rows"). Cost: O(rows).
 */
export function varianceSample(table: Table, seed: number, rowFilter?: Uint8Array): Int32Array {
  const memo = sampleMemo.get(table);
  if (memo && memo.seed === seed && memo.filter === rowFilter) return memo.rows;
  const all: number[] = [];
  let N = 0;
  for (let i = 0; i < table.rows; i++) if (!rowFilter || rowFilter[i] !== 0) N++;
  let out: Int32Array;
  if (N <= VARIANCE_SAMPLE_ROWS) {
    for (let i = 0; i < table.rows; i++) if (!rowFilter || rowFilter[i] !== 0) all.push(i);
    out = Int32Array.from(all);
  } else {
    const rng = createRng(seed, "gcm variance rows");
    out = new Int32Array(VARIANCE_SAMPLE_ROWS);
    let chosen = 0;
    let seen = 0;
    for (let i = 0; i < table.rows && chosen < VARIANCE_SAMPLE_ROWS; i++) {
      if (rowFilter && rowFilter[i] === 0) continue;
      if ((N - seen) * rng.nextFloat() < VARIANCE_SAMPLE_ROWS - chosen) out[chosen++] = i;
      seen++;
    }
  }
  sampleMemo.set(table, { seed, filter: rowFilter, rows: out });
  return out;
}

/** The moment columns of a claim, or undefined when the moments lack a column the claim needs. */
function momentLayout(name: TestName, cols: Column[], ctx: TestContext): Layout | undefined {
  const [xCol, yCol, ...given] = cols as [Column, Column, ...Column[]];
  const of = (c: Column): readonly IndexedDesignColumn[] => ctx.moments.columnsOf(c.name);
  const rank = name === "gcm-rank";
  const side = (c: Column): ClaimColumn[] | undefined => {
    const list = of(c);
    if (c.type === "nominal") {
      return list.filter((d) => d.column.kind === "indicator").map((d) => ({ variable: c.name, level: 0, column: c, code: d.column.code!, index: d.index }));
    }
    const want = rank ? "rank" : "score";
    const d = list.find((d) => d.column.kind === want);
    if (!d) return undefined;
    return [{ variable: c.name, level: 0, column: c, index: d.index, ...(rank ? { values: columnRanks(c, ctx.rowFilter) } : {}) }];
  };
  const sx = side(xCol);
  const sy = side(yCol);
  if (!sx || !sy) return undefined;
  const byLevel: ClaimColumn[][] = Array.from({ length: MAX_BASIS_LEVEL + 1 }, () => []);
  const entered: Layout["entered"] = [];
  let cap = 0;
  for (const c of given) {
    const list = of(c);
    if (CATEGORICAL_TYPES.has(c.type) && c.codes) {
      let ind: ClaimColumn[];
      if (c.type === "binary") {
        const d = list.find((d) => d.column.kind === "score");
        if (!d) return undefined;
        ind = [{ variable: c.name, level: 0, column: c, index: d.index }];
      } else {
        ind = list.filter((d) => d.column.kind === "indicator").map((d) => ({ variable: c.name, level: 0, column: c, code: d.column.code!, index: d.index }));
        if (ind.length === 0 && c.levels!.length > 1) return undefined;
      }
      byLevel[0]!.push(...ind);
      entered.push({ variable: c.name, entered: "indicators", levelCounts: [ind.length] });
      continue;
    }
    const score = list.find((d) => d.column.kind === "score");
    if (!score) return undefined;
    byLevel[0]!.push({ variable: c.name, level: 0, column: c, index: score.index });
    const counts = [1];
    for (const d of list) {
      if (d.column.kind !== "basis") continue;
      const l = d.column.basisLevel!;
      byLevel[l]!.push({ variable: c.name, level: l, column: c, term: d.column.term!, index: d.index });
      counts[l] = (counts[l] ?? 0) + 1;
      cap = Math.max(cap, l);
    }
    entered.push({ variable: c.name, entered: "spline", levelCounts: counts });
  }
  for (const e of entered) {
    if (e.entered === "spline") {
      for (let l = 0; l <= cap; l++) e.levelCounts[l] = e.levelCounts[l] ?? 0;
      if (cap === 0) e.entered = "linear";
    }
  }
  return { adjustment: byLevel.slice(0, cap + 1).flat(), sides: [sx, sy], entered, cap };
}

/**
 * Moments in the units the pattern moments added them in (each design column times 2^e:
 * `stats/scaledCovariance.ts`), finite where the unscaled ones overflow or underflow; moments
 * without a scaled twin are taken as they are (exponent 0).
 */
function scaledMoments(m: Moments): { means: Float64Array; cov: Float64Array; exponent: Int32Array; shifts?: Float64Array } {
  return scaledCovarianceOf(m.cov) ?? { means: m.means, cov: m.cov, exponent: new Int32Array(m.means.length) };
}

/**
 * Per pattern moments, the mean and variance of each design column over all its variable's
 * observed rows (for moments without a scaled twin, whose units are the data's).
 */
const overallMemo = new WeakMap<object, Map<number, { mean: number; variance: number }>>();

function overallMoments(ctx: TestContext): (index: number) => { mean: number; variance: number } {
  let memo = overallMemo.get(ctx.moments as object);
  if (!memo) overallMemo.set(ctx.moments as object, (memo = new Map()));
  const cache = memo;
  return (index) => {
    let o = cache.get(index);
    if (!o) {
      const mm = ctx.moments.momentsForColumns([index]);
      o = { mean: mm.means[0]!, variance: mm.n > 1 && mm.cov[0]! > 0 ? mm.cov[0]! : 0 };
      cache.set(index, o);
    }
    return o;
  };
}

/**
 * What the moment path gives: the claim's result, or that the claim is to be tested on its rows
 * (the moments lack a column it needs; or its variance sample does not represent its rows, and
 * then at most at the flexibility level the moments hold, which keeps the cost within their
 * compute budget).
 */
type MomentPathResult = MethodResult | { useRows: true; maxLevel?: number };

function runMomentPath(name: TestName, claim: Claim, cols: Column[], ctx: TestContext): MomentPathResult {
  const fitted = fitMomentPath(name, claim, cols, ctx);
  if (!("layout" in fitted)) return fitted;
  const { layout, f, values } = fitted;
  // the moments' rows are tested on the rows when the sample does not represent them
  const out = outcomeOf(name, claim, layout, f, values, { path: "moments", variance_sample: values.rows < f.n }, ctx.alpha ?? 0.05);
  return out === UNREPRESENTATIVE_SAMPLE ? { useRows: true, maxLevel: layout.cap } : out;
}

/**
 * The moment path up to the fit (see the module comment): the claim's layout and nested fit from
 * the pattern moments, and its variance rows (the sampled rows complete on the claim); or why the
 * claim cannot be tested; or that it is to be fitted on its rows (the moments lack a column it
 * needs). Whether the variance rows represent the claim's rows is judged afterwards, from their
 * residuals ({@link sampleRepresents}). Also for the site sums of `siteSummary.ts`.
 * Cost: O(P · d²) for P missing-data patterns, plus the sampled columns once per audit.
 */
export function fitMomentPath(name: TestName, claim: Claim, cols: Column[], ctx: TestContext): RowFit | MethodResult | { useRows: true } {
  const layout = momentLayout(name, cols, ctx);
  if (!layout) return { useRows: true };
  const { adjustment } = layout;
  const sideList = [...layout.sides[0], ...layout.sides[1]];
  const idx = [...adjustment.map((c) => c.index!), ...sideList.map((c) => c.index!)];
  const moments = ctx.moments.momentsForColumns(idx);
  const n = moments.n;
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted([claim.x, claim.y, ...claim.given])} observed` };
  // the fit and the variance pass work in the moments' scaled units (see `scaledMoments`)
  const m = scaledMoments(moments);
  const exponentOf = (a: number): number => m.exponent[a]!;
  const A = adjustment.length;
  const d = idx.length;
  const cov = (a: number, b: number) => m.cov[a * d + b]!;
  // Side columns that vary among the complete rows. Each column's scale bounds the rounding error
  // of its variance on the complete rows: the second moment about the point its sums were shifted
  // by, cov + (mean − shift)² (moments without shifts: its variance over all its variable's
  // observed rows plus the squared distance of its mean here from its overall mean, as those
  // moments' shifts are near the overall means); a variance below CONSTANT_TOLERANCE of it is a
  // column constant on the complete rows.
  const shifts = m.shifts;
  // (moments with a twin always carry its shifts; the overall moments serve those without one)
  const overall = shifts ? undefined : overallMoments(ctx);
  const columnScale = (a: number): number => {
    if (shifts) return cov(a, a) + (m.means[a]! - shifts[a]!) ** 2;
    const o = overall!(idx[a]!);
    return o.variance + (m.means[a]! - o.mean) ** 2;
  };
  const keepSide = sideList.map((_, r) => cov(A + r, A + r) > CONSTANT_TOLERANCE * columnScale(A + r));
  // a nominal side whose reference level is absent from the complete rows: its indicators sum to
  // 1 there, so the first one present is the reference instead (as on the row path)
  for (const [from, to] of [[0, layout.sides[0].length], [layout.sides[0].length, sideList.length]] as const) {
    const present: number[] = [];
    for (let r = from; r < to; r++) if (keepSide[r] && sideList[r]!.code !== undefined) present.push(r);
    const share = present.reduce((t, r) => t + m.means[A + r]!, 0);
    if (present.length > 0 && share > 1 - 1e-9) keepSide[present[0]!] = false;
  }
  const qx = layout.sides[0].filter((_, r) => keepSide[r]).length;
  const qy = layout.sides[1].filter((_, r) => keepSide[layout.sides[0].length + r]).length;
  if (qx === 0) return { ok: false, reason: `"${claim.x}" is constant among the ${n} complete rows; the claim cannot be tested` };
  if (qy === 0) return { ok: false, reason: `"${claim.y}" is constant among the ${n} complete rows; the claim cannot be tested` };
  const respPos = sideList.map((_, r) => A + r).filter((_, r) => keepSide[r]);
  const q = respPos.length;
  const respCov = new Float64Array(q * q);
  for (let a = 0; a < q; a++) for (let b = 0; b < q; b++) respCov[a * q + b] = cov(respPos[a]!, respPos[b]!);
  const fit = new NestedAdjustment(n, respCov, q);
  let j = 0;
  for (let level = 0; level <= layout.cap; level++) {
    for (; j < A && adjustment[j]!.level === level; j++) {
      const prev = new Float64Array(j);
      for (let k = 0; k < j; k++) prev[k] = cov(j, k);
      fit.addColumn(prev, cov(j, j), respPos.map((r) => cov(j, r)), columnScale(j));
    }
    fit.endLevel();
  }
  const { level, bestX, bestY } = chooseLevel(fit, qx, q);
  const f: Fitted = { fit, n, qx, qy, level, bestX, bestY, params: fit.snapshots[level]!.kept, keptColumns: fit.keptColumns };
  // Variance rows: the sample's rows complete on the claim, the columns' values read from the
  // per-audit cache of sampled columns and centred by the means of the n complete rows.
  const cache = sampleCache(ctx);
  const complete = cache.completeOn(cols);
  const m2 = complete.length;
  if (m2 < 3) return { ok: false, reason: `too few sampled rows (${m2}) have all of ${quoted([claim.x, claim.y, ...claim.given])} observed to estimate the variance` };
  const sidesKept = sideList.filter((_, r) => keepSide[r]);
  const values: VarianceRows = {
    rows: m2,
    ...(m2 < n ? { sampled: true } : {}),
    ...(m2 !== cache.size ? { index: complete } : {}),
    data: () => cache.data(),
    adjustment: (j) => ({ offset: cache.offset(adjustment[j]!, exponentOf(j)), mean: m.means[j]! }),
    side: (r) => {
      const e = exponentOf(respPos[r]!);
      const two = twoValues(sidesKept[r]!, e);
      return { offset: cache.offset(sidesKept[r]!, e), mean: m.means[respPos[r]!]!, shift: 0, ...(two ? { twoPoint: two } : {}) };
    },
  };
  return { layout, f, values, sides: sidesKept };
}

/** Per-audit values of sampled columns (the variance sample's rows), keyed by the pattern moments. */
interface SampleCache {
  /** Rows in the sample. */
  size: number;
  /** Positions (into the sample) of the sampled rows complete on all the columns. */
  completeOn(cols: readonly Column[]): Int32Array;
  /** Where a claim column's values times 2^e on every sampled row start in `data()` (NaN where its variable is missing). */
  offset(c: ClaimColumn, e: number): number;
  /** The buffer of the sampled columns (a new one after `offset` has added columns). */
  data(): Float64Array;
}

const sampleCaches = new WeakMap<object, SampleCache>();

function sampleCache(ctx: TestContext): SampleCache {
  const key = ctx.moments as object;
  let cache = sampleCaches.get(key);
  if (cache) return cache;
  const sample = varianceSample(ctx.table, ctx.seed, ctx.rowFilter);
  const M = sample.length;
  const words = (M + 31) >>> 5;
  const observed = new Map<Column, Int32Array>();
  const observedOf = (c: Column): Int32Array => {
    let o = observed.get(c);
    if (!o) {
      o = new Int32Array(words);
      for (let t = 0; t < M; t++) if (!isMissing(c, sample[t]!)) o[t >>> 5] |= 1 << (t & 31);
      observed.set(c, o);
    }
    return o;
  };
  const all = new Int32Array(M);
  for (let t = 0; t < M; t++) all[t] = t;
  const byColumn = new Map<string, number>();
  let buffer = new Float64Array(M * 16);
  let used = 0;
  cache = {
    size: M,
    completeOn(cols) {
      const masks = cols.map(observedOf);
      const and = new Int32Array(words).fill(-1);
      for (const mk of masks) for (let w = 0; w < words; w++) and[w] &= mk[w]!;
      let count = 0;
      for (let t = 0; t < M; t++) count += (and[t >>> 5]! >>> (t & 31)) & 1;
      if (count === M) return all;
      const out = new Int32Array(count);
      for (let t = 0, u = 0; t < M; t++) if ((and[t >>> 5]! >>> (t & 31)) & 1) out[u++] = t;
      return out;
    },
    offset(c, e) {
      const k = `${c.variable}\u0000${c.values ? "rank" : "value"}\u0000${termKey(c)}\u0000${e}`;
      let at = byColumn.get(k);
      if (at === undefined) {
        if ((used + 1) * M > buffer.length) {
          const grown = new Float64Array(buffer.length * 2);
          grown.set(buffer);
          buffer = grown;
        }
        at = used++ * M;
        const view = buffer.subarray(at, at + M);
        if (c.code !== undefined) {
          const codes = c.column.codes!;
          for (let t = 0; t < M; t++) {
            const code = codes[sample[t]!]!;
            view[t] = code < 0 ? NaN : code === c.code ? 1 : 0;
          }
        } else {
          const src = c.values ?? c.column.values;
          if (e >= -1022 && e <= 1023) {
            const f = 2 ** e; // a double: the product is timesPowerOfTwo(v, e)
            for (let t = 0; t < M; t++) view[t] = src[sample[t]!]! * f;
          } else for (let t = 0; t < M; t++) view[t] = timesPowerOfTwo(src[sample[t]!]!, e);
          if (c.term) fillBasisValues(scaleBasisTermByExponent(c.term, e), view, view);
          // a categorical column's missing cells are marked by codes, not by NaN values
          if (c.column.codes && CATEGORICAL_TYPES.has(c.column.type)) for (let t = 0; t < M; t++) if (c.column.codes[sample[t]!]! < 0) view[t] = NaN;
        }
        byColumn.set(k, at);
      }
      return at;
    },
    data: () => buffer,
  };
  sampleCaches.set(key, cache);
  return cache;
}

// ---------------------------------------------------------------------------------------------

/**
 * Generalised covariance measure test of one claim (see the module comment): the row path for
 * tables of at most ROW_PATH_MAX_ROWS rows (or when the moments lack a column it needs), else the
 * moment path.
 * Cost: row path O(n · p²) for n complete rows and p adjustment columns reached; moment path
 * O(P · d²) for P missing-data patterns, plus O(min(n, VARIANCE_SAMPLE_ROWS) · p) for the variance.
 * Source: Shah & Peters (2020), Annals of Statistics 48:1514–1538; Harrell (2015), Regression
 * Modeling Strategies, 2nd ed., §2.4; Craven & Wahba (1979), Numerische Mathematik 31:377–403.
 * @example
 * const r = runGcm("gcm", { x: "crp", y: "smoker", given: ["age", "sex"] }, ctx);
 * if (r.ok) r.outcome.details.flexibility; // the adjustment level chosen
 */
export function runGcm(name: TestName, claim: Claim, ctx: TestContext): MethodResult {
  return runGcmOn(usesRowPath(ctx.table, ctx.rowFilter) ? "rows" : "moments", name, claim, ctx);
}

/**
 * {@link runGcm} on a chosen path: "moments" falls back to the rows when the moments lack a
 * column the claim needs (for tests that compare the two paths on one table).
 * Cost: as runGcm.
 */
export function runGcmOn(path: "rows" | "moments", name: TestName, claim: Claim, ctx: TestContext): MethodResult {
  const cols = claimColumns(claim, ctx.table);
  if (!Array.isArray(cols)) return cols;
  if (path === "moments") {
    const viaMoments = runMomentPath(name, claim, cols, ctx);
    if (!("useRows" in viaMoments)) return viaMoments;
    return runRowPath(name, claim, cols, ctx, viaMoments.maxLevel);
  }
  return runRowPath(name, claim, cols, ctx);
}

/** The claim's columns, x, y, then S, or why they cannot be read (also for `siteSummary.ts`). */
export function claimColumns(claim: Claim, table: Table): Column[] | { ok: false; reason: string } {
  const cols: Column[] = [];
  for (const v of [claim.x, claim.y, ...claim.given]) {
    const col = table.column(v);
    if (!col) return { ok: false, reason: `variable "${v}" is not a column of the data` };
    if (CATEGORICAL_TYPES.has(col.type) && (!col.codes || !col.levels)) return { ok: false, reason: `"${v}" is ${col.type} but has no level codes; declare it or re-read the data` };
    cols.push(col);
  }
  return cols;
}

/** Whether claims of this table are tested on the rows (at most ROW_PATH_MAX_ROWS rows within the filter). */
export function usesRowPath(table: Table, rowFilter?: Uint8Array): boolean {
  if (table.rows <= ROW_PATH_MAX_ROWS) return true;
  if (!rowFilter) return false;
  let k = 0;
  for (let i = 0; i < rowFilter.length; i++) if (rowFilter[i] !== 0 && ++k > ROW_PATH_MAX_ROWS) return false;
  return true;
}

/**
 * Rough row work of a claim on the row path (see `TestMethod.rowWork`); 0 on the moment path. It
 * sees the table, not a row filter: a filtered table of more than ROW_PATH_MAX_ROWS rows that the
 * filter brings below it reports 0 and its claims stay on the main thread (only scheduling differs).
 */
function gcmRowWork(claim: Claim, table: Table): number {
  if (table.rows > ROW_PATH_MAX_ROWS) return 0;
  const p = 1 + 8 * claim.given.length;
  return table.rows * (claim.given.length + 2 + (p * p) / 2);
}

function acceptsAny(_types: ClaimTypes): boolean {
  return true;
}

/** The `gcm` test method: every mix of variable types (the default for claims with a continuous variable). */
export const gcm: TestMethod = {
  name: "gcm",
  accepts: acceptsAny,
  run: (claim, ctx) => runGcm("gcm", claim, ctx),
  rowWork: gcmRowWork,
};

/** The `gcm-rank` test method (`--method rank`): the same test on the mid-ranks of scored sides. */
export const gcmRank: TestMethod = {
  name: "gcm-rank",
  accepts: acceptsAny,
  run: (claim, ctx) => runGcm("gcm-rank", claim, ctx),
  rowWork: gcmRowWork,
};

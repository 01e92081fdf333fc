/**
 * Weighted binary logistic regression by Newton–Raphson (equivalently iteratively reweighted
 * least squares, since the logit link is canonical) with step halving.
 *
 * Terms: row i has predictors x_i (a row of the m × p matrix X, row-major), outcome y_i ∈ {0, 1}
 * and weight w_i ≥ 0 (a count when identical rows are grouped). With η_i = x_i·β and
 * μ_i = 1/(1 + e^{−η_i}) the *log-likelihood* is ℓ(β) = Σ w_i [y_i η_i − ln(1 + e^{η_i})],
 * its gradient Xᵀ W (y − μ) and its (negative) Hessian, the *information matrix*,
 * Xᵀ diag(w μ (1 − μ)) X (McCullagh & Nelder 1989, Generalized Linear Models, 2nd ed., §4.4).
 * A Newton step δ solves I δ = gradient (Cholesky); it is halved until ℓ does not decrease.
 * *Convergence*: the change of ℓ is below 1e-10·(|ℓ| + 0.1) and every coefficient moved by less
 * than 1e-7·max(1, |β_j|); or, without a further pass, the next step δ (from the information
 * computed on the rows at this or a nearby iterate) would move every coefficient by less than
 * 1e-7·max(1, |β_j|) and its predicted gain gᵀδ is below 1e-12·(|ℓ| + 0.1): for concave ℓ the
 * gap to the maximum is ½ gᵀH⁻¹g ≈ ½ gᵀδ, so ℓ at the current iterate (already computed) is
 * within far less than 1e-10 relative of the maximum. On request (`finalStep`), a fit may also
 * end with its last Newton step taken on paper: from an information computed at the current
 * iterate, a step moving no coefficient by more than 1e-3 relative and predicting a gain below
 * the threshold ends the fit at β + δ with ℓ + ½gᵀδ, the maximum of the quadratic model; the error of
 * that value comes from the terms beyond the quadratic and is of the order of the gain times
 * the step's size. *Separation* (Albert & Anderson 1984, Biometrika 71:1–10): the
 * maximum likelihood estimate does not exist because a combination of predictors classifies
 * some rows perfectly; the coefficients then grow without bound along a *direction of recession*
 * while ℓ rises towards its supremum, which is finite (at most 0). A *separated row* is one whose
 * observed outcome is fitted with probability above 1 − 1e-9. Separation is *complete* when
 * every row with positive weight is separated, *quasi-complete* when some are (or, in the
 * multinomial model, when some category's probability goes to 0 in some rows: Lesaffre & Albert
 * 1989, JRSS B 51:109–116).
 *
 * *The fit at the limit.* Under separation this module does not stop at a singular information
 * matrix or at an iteration limit: it follows the likelihood to its supremum, the limit that ℓ
 * approaches as the coefficients go to infinity (the maximum of the likelihood in the completion
 * of the exponential family: Geyer 2009, Electronic Journal of Statistics 3:259–289). Two things
 * make this fast and exact to working precision. (1) *Extrapolation*: when a full Newton step
 * moves large coefficients further out (|β_j + δ_j| ≥ 5, moving by at least 0.5 away from 0),
 * their steps are doubled (2δ_j, 4δ_j, … up to 4096δ_j, the other coefficients taking their
 * Newton step) while ℓ keeps rising. Along a direction of
 * recession Newton moves a bounded distance per iteration while the gap to the supremum shrinks by
 * a constant factor (about e), so plain Newton needs some 25 passes for 1e-10; doubling drives the
 * fitted probabilities of the separated rows to 0 or 1 in floating point within a few passes.
 * (2) *Frozen directions*: when the information matrix is singular although the design is not
 * (its columns, weighted by the row weights, are linearly independent: normalised Cholesky pivots
 * above 1e-9), the singularity comes from rows whose weights μ(1 − μ) vanished: the Cholesky
 * factor skips the pivots below 1e-13 of the largest diagonal entry and the step leaves those
 * parameters where they are (at their limit, where the rows they act on are fitted with
 * certainty), while the others converge as usual. The fit then ends with status `"limit"`, the
 * frozen parameters listed in `frozen`; its ℓ is the supremum to working precision. A frozen
 * parameter must have a negligible Newton gain g_j²/I_jj ≤ 1e-8·(|ℓ| + 0.1) at the end, else the
 * information was singular for another reason and the status is `"singular"`. A singular design
 * (aliased columns) stays `"singular"`. This is the maximum of the likelihood itself, not of a
 * penalised likelihood (Firth 1993, Biometrika 80:27–38, would also give finite estimates, but
 * its penalty changes ℓ of every fit, separated or not, so its likelihood ratio is not the limit
 * of 2(ℓ1 − ℓ0)). The rank of the information at the end (parameters minus frozen ones) is the
 * dimension of the model that the data identify at the limit, which a likelihood-ratio test
 * needs for its degrees of freedom (Geyer 2009, on hypothesis tests when the null model's estimate
 * lies in the completion). (3) *Push*: when the loop reaches the supremum (predicted gain below
 * 1e-12 relative) with only large coefficients still moving out, as under complete separation
 * where every weight vanishes alike and no pivot stands out, those coefficients are moved 4096
 * steps out at once, kept there if ℓ does not fall, and the information is factored there, so
 * that its frozen directions are those of the limit.
 *
 * *Factor form* of a design (`FactorDesign`): the columns are split into *indicator columns*
 * (0/1, such as an intercept or the dummies of categorical predictors) and *dense columns*
 * (numbers, stored row-major). Rows with the same indicator pattern form a *cell*; the design
 * lists each cell's indicator columns once and each row's cell. The information matrix
 * Σ v_i z_i z_iᵀ then needs, per row, only the dense products Σ v_i x_i x_iᵀ and the cell sums
 * Σ_{i∈c} v_i and Σ_{i∈c} v_i x_i: O(d²) per row for d dense columns, whatever the number of
 * indicator columns; the indicator blocks are assembled from the cell sums afterwards.
 */
import { cholesky } from "./linalg.js";

/**
 * How a Newton fit ended: `"converged"` at the maximum-likelihood estimate; `"limit"` at the
 * supremum of ℓ under separation, with the parameters in `frozen` at their limit (see the module
 * comment); `"not-converged"` when the iterations ran out; `"singular"` when the information
 * matrix was singular for another reason than separation (for instance aliased columns).
 */
export type FitStatus = "converged" | "limit" | "not-converged" | "singular";
export type Separation = "none" | "quasi-complete" | "complete";

export interface LogisticFit {
  coef: Float64Array;
  /** Log-likelihood at `coef` (at the supremum's approach under separation). */
  logLik: number;
  iterations: number;
  /** Passes over the rows (each gives ℓ and the gradient at one point, and the information while steps are large). */
  passes: number;
  status: FitStatus;
  separation: Separation;
  /** Rows (with positive weight) whose observed outcome is fitted with probability > 1 − 1e-9 (counted at the limit or when the fit did not converge; 0 otherwise). */
  separatedRows: number;
  /** Rows with positive weight. */
  rows: number;
  /** The last information matrix computed (P × P, at or near `coef`; zeros when none was). */
  information: Float64Array;
  /**
   * Parameters left at their limit by the last factorisation of the information (its pivot
   * vanished because the rows they act on are fitted with certainty); empty without separation.
   */
  frozen: Int32Array;
}

export interface NewtonOptions {
  /** Row weights (default 1). */
  weights?: ArrayLike<number>;
  /** Starting coefficients (default 0). */
  start?: ArrayLike<number>;
  /** Newton iterations allowed (default 50). */
  maxIter?: number;
  /**
   * How the row passes run: "unrolled" (default when the model is small enough) uses a loop body
   * generated for the model's numbers of dense columns and categories, with its sums in local
   * variables; "loop" uses the generic loops. Both compute the same sums in the same order of rows.
   */
  kernel?: "unrolled" | "loop";
  /**
   * An approximation of the information matrix at `start` (P × P, e.g. a subsample's, scaled to
   * the rows), used for the first Newton step instead of a pass that computes it, and kept for
   * the following (chord) steps while the coefficients move by less than 1e-3. The estimates do
   * not depend on it: convergence is judged on the change of the rows' log-likelihood and the steps.
   */
  information?: ArrayLike<number>;
  /**
   * Finish with a last Newton step taken on paper: when the information was just computed at
   * the current iterate β and the step δ it gives has a predicted gain gᵀδ below this (relative
   * to |ℓ| + 0.1) and moves every coefficient by less than 1e-3·max(1, |β_j|), the fit ends at
   * β + δ with ℓ(β) + ½gᵀδ, the maximum of the quadratic model, instead of making the pass that
   * would confirm it (see `newtonLoop`). Off by default.
   */
  finalStep?: number;
}

/**
 * A design matrix in factor form (see the module comment). Parameter j < `factorColumns` is
 * indicator column j; parameter `factorColumns` + a is dense column a.
 */
export interface FactorDesign {
  /** Number of rows m. */
  rows: number;
  /** Dense columns, row-major m × `denseColumns`. */
  dense: Float64Array;
  denseColumns: number;
  /** Number of indicator columns. */
  factorColumns: number;
  /** The cell (0 … cells − 1) of each row. */
  cellOf: Int32Array;
  /** Cell c's indicator columns are cellColumns[cellStart[c] … cellStart[c + 1] − 1]; length cells + 1. */
  cellStart: Int32Array;
  cellColumns: Int32Array;
}

/**
 * The factor form of a row-major m × p matrix: every column dense, one cell without indicator
 * columns. No copy: `dense` is `X`. Cost: O(m) for the cell index.
 * @throws RangeError when X does not have m·p entries
 * @example
 * designFromRowMajor(new Float64Array([1, 2, 1, 3]), 2, 2).denseColumns // 2
 */
export function designFromRowMajor(X: Float64Array, m: number, p: number): FactorDesign {
  if (X.length !== m * p) throw new RangeError(`design has ${X.length} entries, expected ${m}×${p}`);
  return { rows: m, dense: X, denseColumns: p, factorColumns: 0, cellOf: new Int32Array(m), cellStart: new Int32Array([0, 0]), cellColumns: new Int32Array(0) };
}

/** Check a factor design's sizes and indices. Cost: O(m + entries). */
export function checkDesign(D: FactorDesign): void {
  const { rows: m, denseColumns: d, factorColumns: pf, cellOf, cellStart, cellColumns } = D;
  if (!(Number.isInteger(m) && m >= 0)) throw new RangeError(`design rows must be a non-negative integer, got ${m}`);
  if (D.dense.length !== m * d) throw new RangeError(`dense part has ${D.dense.length} entries, expected ${m}×${d}`);
  if (cellOf.length !== m) throw new RangeError(`cell index has ${cellOf.length} entries, expected ${m}`);
  const C = cellStart.length - 1;
  if (C < 0 || cellStart[0] !== 0 || cellStart[C] !== cellColumns.length) throw new RangeError(`cell starts must run from 0 to the ${cellColumns.length} cell columns`);
  for (let c = 0; c < C; c++) if (!(cellStart[c + 1]! >= cellStart[c]!)) throw new RangeError(`cell starts decrease at cell ${c}`);
  for (let u = 0; u < cellColumns.length; u++) {
    const j = cellColumns[u]!;
    if (!(j >= 0 && j < pf)) throw new RangeError(`cell column ${j} is outside 0..${pf - 1}`);
  }
  for (let i = 0; i < m; i++) {
    const c = cellOf[i]!;
    if (!(c >= 0 && c < C)) throw new RangeError(`row ${i} is in cell ${c}, outside 0..${C - 1}`);
  }
}

/**
 * Cell sums of weighted cross-products, for `nb` weight sets at once (one per information block):
 * T[c·nb + b] = Σ_{i∈c} v_ib, S[(c·nb + b)·d + a] = Σ_{i∈c} v_ib x_ia and
 * DD[b·d² + a·d + a′] = Σ_i v_ib x_ia x_ia′ (a ≤ a′).
 */
export interface CellSums {
  T: Float64Array;
  S: Float64Array;
  DD: Float64Array;
}

/** Zeroed cell sums for a design and `nb` weight sets. */
export function createCellSums(D: FactorDesign, nb: number): CellSums {
  const C = D.cellStart.length - 1;
  const d = D.denseColumns;
  return { T: new Float64Array(C * nb), S: new Float64Array(C * nb * d), DD: new Float64Array(nb * d * d) };
}

/**
 * Assemble the symmetric p × p cross-product of weight set `b` (of `nb`) from cell sums into
 * `B` (row-major, both triangles). Cost: O(Σ_c (k_c² + k_c·d) + d²), k_c the indicators of cell c.
 */
export function assembleCrossProduct(D: FactorDesign, sums: CellSums, b: number, nb: number, B: Float64Array): Float64Array {
  const pf = D.factorColumns;
  const d = D.denseColumns;
  const p = pf + d;
  const { cellStart, cellColumns } = D;
  const C = cellStart.length - 1;
  B.fill(0);
  for (let c = 0; c < C; c++) {
    const t = sums.T[c * nb + b]!;
    const s0 = (c * nb + b) * d;
    const end = cellStart[c + 1]!;
    for (let u = cellStart[c]!; u < end; u++) {
      const j = cellColumns[u]!;
      for (let u2 = u; u2 < end; u2++) {
        const k = cellColumns[u2]!;
        const at = j <= k ? j * p + k : k * p + j;
        B[at] = B[at]! + t;
      }
      for (let a = 0; a < d; a++) B[j * p + pf + a] = B[j * p + pf + a]! + sums.S[s0 + a]!;
    }
  }
  const dd = b * d * d;
  for (let a = 0; a < d; a++) for (let a2 = a; a2 < d; a2++) B[(pf + a) * p + pf + a2] = sums.DD[dd + a * d + a2]!;
  for (let j = 0; j < p; j++) for (let k = j + 1; k < p; k++) B[k * p + j] = B[j * p + k]!;
  return B;
}

/**
 * Weighted cross-product Zᵀ diag(v) Z (p × p, both triangles) of a design in factor form, in
 * parameter order (indicator columns first). Used for Gram matrices (v = weights, or 1 when
 * `v` is undefined). Cost: O(m·d² + Σ_c k_c²).
 * Source: the information matrix of a generalised linear model, McCullagh & Nelder (1989), §2.5.
 * @example
 * // an intercept (indicator) and one dense column x = [1, 2]: [[2, 3], [3, 5]]
 * designCrossProduct({ rows: 2, dense: new Float64Array([1, 2]), denseColumns: 1, factorColumns: 1,
 *   cellOf: new Int32Array(2), cellStart: new Int32Array([0, 1]), cellColumns: new Int32Array([0]) });
 */
export function designCrossProduct(D: FactorDesign, v?: ArrayLike<number>): Float64Array {
  const { rows: m, dense: X, denseColumns: d, cellOf } = D;
  const sums = createCellSums(D, 1);
  const { T, S, DD } = sums;
  const kernel = d <= 12 ? crossProductKernel(d, v !== undefined) : undefined;
  if (kernel) kernel(m, X, cellOf, v, T, S, DD);
  else {
    for (let i = 0, off = 0; i < m; i++, off += d) {
      const vi = v ? v[i]! : 1;
      if (vi === 0) continue;
      const c = cellOf[i]!;
      T[c] = T[c]! + vi;
      for (let a = 0, sa = c * d; a < d; a++) {
        const va = vi * X[off + a]!;
        S[sa + a] = S[sa + a]! + va;
        for (let a2 = a, at = a * d + a; a2 < d; a2++, at++) DD[at] = DD[at]! + va * X[off + a2]!;
      }
    }
  }
  const p = D.factorColumns + d;
  return assembleCrossProduct(D, sums, 0, 1, new Float64Array(p * p));
}

type CrossProductKernel = (m: number, X: Float64Array, cellOf: Int32Array, v: ArrayLike<number> | undefined, T: Float64Array, S: Float64Array, DD: Float64Array) => void;
const crossProductKernels = new Map<string, CrossProductKernel>();

/** The cell sums of `designCrossProduct` with the loops over d dense columns unrolled and the dense sums in local variables (same arithmetic). */
function crossProductKernel(d: number, weighted: boolean): CrossProductKernel {
  const key = `${d},${weighted}`;
  let k = crossProductKernels.get(key);
  if (k) return k;
  const A = Array.from({ length: d }, (_, a) => a);
  const L: string[] = [];
  for (const a of A) for (let a2 = a; a2 < d; a2++) L.push(`let h${a}_${a2} = 0;`);
  L.push(`for (let i = 0, off = 0; i < m; i++, off += ${d}) {`);
  L.push(weighted ? "const vi = v[i]; if (vi === 0) continue;" : "const vi = 1;");
  L.push("const c = cellOf[i];", "T[c] += vi;");
  for (const a of A) L.push(`const x${a} = X[off + ${a}];`, `const v${a} = vi * x${a};`, `S[c * ${d} + ${a}] += v${a};`);
  for (const a of A) for (let a2 = a; a2 < d; a2++) L.push(`h${a}_${a2} += v${a} * x${a2};`);
  L.push("}");
  for (const a of A) for (let a2 = a; a2 < d; a2++) L.push(`DD[${a * d + a2}] = h${a}_${a2};`);
  k = new Function("m", "X", "cellOf", "v", "T", "S", "DD", L.join("\n")) as CrossProductKernel;
  crossProductKernels.set(key, k);
  return k;
}

/**
 * Weighted cross-product Xᵀ diag(v) X (row-major p × p, both triangles filled) of a row-major
 * m × p matrix. Each row's non-zero entries are gathered first, so dummy columns cost nothing
 * where they are 0, and only the upper triangle is accumulated. `idx` and `val` are scratch of
 * length ≥ p. Cost: O(m·p + Σ_i nz_i²) ≤ O(m·p²), nz_i the non-zeros of row i.
 * Source: the information matrix of a generalised linear model, McCullagh & Nelder (1989), §2.5.
 * @example
 * const H = new Float64Array(4);
 * weightedCrossProduct(new Float64Array([1, 0, 1, 2]), 2, 2, new Float64Array([1, 3]), H, new Int32Array(2), new Float64Array(2));
 * // H = [4, 6, 6, 12]
 */
export function weightedCrossProduct(
  X: Float64Array, m: number, p: number, v: ArrayLike<number>, H: Float64Array, idx: Int32Array, val: Float64Array,
): Float64Array {
  H.fill(0);
  for (let i = 0, off = 0; i < m; i++, off += p) {
    const vi = v[i]!;
    if (vi === 0) continue;
    let nz = 0;
    for (let j = 0; j < p; j++) {
      const x = X[off + j]!;
      if (x !== 0) {
        idx[nz] = j;
        val[nz] = x;
        nz++;
      }
    }
    for (let a = 0; a < nz; a++) {
      const va = vi * val[a]!;
      const row = idx[a]! * p;
      for (let b = a; b < nz; b++) H[row + idx[b]!] = H[row + idx[b]!]! + va * val[b]!;
    }
  }
  for (let j = 0; j < p; j++) for (let k = j + 1; k < p; k++) H[k * p + j] = H[j * p + k]!;
  return H;
}

/**
 * Information matrices are recomputed only while the coefficients still move by more than this
 * (relative): closer to the optimum the last one is reused (a chord step), which converges at a
 * rate proportional to the distance moved since it was computed.
 */
export const CHORD_MOVE = 1e-3;

/**
 * Newton's loop stops without a further pass when the predicted gain gᵀδ of the next step is
 * below this (relative to |ℓ| + 0.1) and the step is below the coefficient tolerance: the gap
 * to the maximum, ≈ ½ gᵀδ, is then a hundredth of the ℓ tolerance 1e-10 or less.
 */
export const CONVERGED_GAIN = 1e-12;

/** Largest relative coefficient move of a final step taken on paper (`NewtonOptions.finalStep`). */
export const FINAL_STEP_MOVE = 1e-3;

/**
 * Multinomial passes shift a row's linear predictors by their maximum only when it exceeds this:
 * below, no e^η overflows and η_y − ln Σ_l e^{η_l} loses at most a few ulp(30) ≈ 4e-15 to rounding,
 * so the baseline's exponential is skipped; above (rows fitted with near certainty, as under
 * separation), the shift keeps each row's ℓ at or below 0 with full relative precision.
 */
export const SHIFT_ABOVE = 30;

/** Products of the factors 1 + t (each in (1, 2]) are turned into one logarithm when they pass this. */
const PRODUCT_FLUSH = 1e280;

/**
 * Table-driven exponential (Tang 1989, "Table-driven implementation of the exponential function
 * in IEEE floating-point arithmetic", ACM TOMS 15(2):144–157): with k = round(64x/ln 2),
 * x = k·(ln 2)/64 + r (Cody–Waite reduction with ln 2 split in a 32-bit head and a tail, as in
 * fdlibm, so k·head is exact), |r| ≤ (ln 2)/128, and e^x = 2^⌊k/64⌋ · 2^{(k mod 64)/64} · e^r with
 * e^r − 1 by its Taylor polynomial of degree 5 (truncation below 4e-17). Both powers of two come
 * from tables. Within 2 ulp of e^x; arguments outside (−708, 709) and NaN go to Math.exp. About
 * three times faster than Math.exp in V8, which matters with one to K − 1 exponentials per row.
 */
const EXP_TABLE = Float64Array.from({ length: 64 }, (_, j) => 2 ** (j / 64));
const EXP_POW2 = Float64Array.from({ length: 2046 }, (_, i) => 2 ** (i - 1022));

/** Statements that set `dst` (declared by the caller) to e^{arg}; `ET` and `EP` name the two tables. */
function expStatements(dst: string, arg: string): string {
  const inv = 64 / Math.LN2;
  const hi = 6.93147180369123816490e-1 / 64; // fdlibm ln2_hi (32 significant bits) / 64
  const lo = 1.90821492927058770002e-10 / 64; // fdlibm ln2_lo / 64
  return `{ const xx = ${arg};
  if (!(xx > -708 && xx < 709)) ${dst} = Math.exp(xx);
  else {
    const kf = (xx * ${inv} + 6755399441055744) - 6755399441055744;
    const kk = kf | 0;
    const rr = (xx - kf * ${hi}) - kf * ${lo};
    const pp = rr * (1 + rr * (0.5 + rr * (${1 / 6} + rr * (${1 / 24} + rr * ${1 / 120}))));
    const tt = ET[kk & 63];
    ${dst} = EP[(kk >> 6) + 1022] * (tt + tt * pp);
  } }`;
}

/**
 * e^x by the table-driven method above (the same operations as the unrolled row passes, so the
 * loop and unrolled passes agree bit for bit). Cost: O(1).
 * Source: Tang (1989), ACM TOMS 15(2):144–157; Cody & Waite (1980), Software Manual for the Elementary Functions.
 * @example expByTable(1) // 2.718281828459045
 */
export const expByTable: (x: number) => number = new Function("ET", "EP", `return function expByTable(x) { let y; ${expStatements("y", "x")} return y; };`)(EXP_TABLE, EXP_POW2);

/**
 * Row-pass kernels generated for fixed numbers of categories q (1: logistic) and dense columns d:
 * the loops over categories and columns are unrolled and the dense sums kept in local variables,
 * which halves the cost of a pass in V8. Arguments: (m, X, cellOf, y, w, beta, cellEta, R, gd,
 * withInfo, T, S, DD, out, pf) with pf the indicator columns; returns ℓ and writes the separated rows into out[0]. The arithmetic is
 * that of `logisticPass` and `multinomialPass`, term by term.
 */
export type RowKernel = (
  m: number, X: Float64Array, cellOf: Int32Array, y: ArrayLike<number>, w: ArrayLike<number> | undefined, beta: Float64Array,
  cellEta: Float64Array, R: Float64Array, gd: Float64Array, withInfo: boolean, T: Float64Array, S: Float64Array, DD: Float64Array, out: Float64Array,
  pf: number,
) => number;

const kernels = new Map<string, RowKernel>();

/** Largest unrolled body (statements per row, roughly) for which a kernel is generated. */
const MAX_UNROLLED = 600;

/** The generated kernel for (q, d, weighted), or undefined when it would be too large. Kernels are cached and shared by fits. */
export function rowKernel(q: number, d: number, weighted: boolean): RowKernel | undefined {
  const nb = (q * (q + 1)) / 2;
  if (nb * (1 + d + (d * (d + 1)) / 2) + q * (2 * d + 4) > MAX_UNROLLED) return undefined;
  const key = `${q},${d},${weighted}`;
  let k = kernels.get(key);
  if (!k) {
    k = generateKernel(q, d, weighted);
    warmUp(k, q, d, weighted);
    kernels.set(key, k);
  }
  return k;
}

/**
 * Run a new kernel once on a small synthetic input that takes every branch (exponentials out of
 * the table's range, the overflow shift, separated rows, product flushes, zero weights, with and
 * without the information), so that V8 optimises it with complete type feedback instead of
 * de-optimising in the middle of a pass over a million rows. Cost: O(4000·d²·q²), once per kernel.
 */
function warmUp(k: RowKernel, q: number, d: number, weighted: boolean): void {
  const m = 4000;
  const C = 8;
  const nb = (q * (q + 1)) / 2;
  const levels = [-800, 0, 0, 40, 750, 0, 400, -40];
  const cellEta = new Float64Array(C * q);
  for (let c = 0; c < C; c++) for (let j = 0; j < q; j++) cellEta[c * q + j] = levels[c]! * (j % 2 ? -1 : 1);
  const cellOf = Int32Array.from({ length: m }, (_, i) => i % C);
  const y = Int32Array.from({ length: m }, (_, i) => (i >> 3) % (q + 1));
  const w = weighted ? Float64Array.from({ length: m }, (_, i) => (i % 7 === 0 ? 0 : 1)) : undefined;
  const T = new Float64Array(C * nb);
  const S = new Float64Array(C * nb * d);
  for (const withInfo of [true, false, true, false]) {
    k(m, new Float64Array(m * d), cellOf, y, w, new Float64Array(q * d), cellEta, new Float64Array(C * q), new Float64Array(q * d), withInfo, T, S, new Float64Array(nb * d * d), new Float64Array(1), 0);
  }
}

function generateKernel(q: number, d: number, weighted: boolean): RowKernel {
  const nb = (q * (q + 1)) / 2;
  const W = weighted ? "wi" : "1";
  const A = Array.from({ length: d }, (_, a) => a);
  const Q = Array.from({ length: q }, (_, k) => k);
  const L: string[] = [];
  L.push(`const p = pf + ${d};`);
  for (const k of Q) for (const a of A) L.push(`const b${k}_${a} = beta[${k} * p + pf + ${a}];`);
  for (const k of Q) for (const a of A) L.push(`let g${k}_${a} = 0;`);
  const blocks: [number, number, number][] = [];
  for (let k = 0, b = 0; k < q; k++) for (let l = k; l < q; l++, b++) blocks.push([k, l, b]);
  for (const [, , b] of blocks) for (const a of A) for (let a2 = a; a2 < d; a2++) L.push(`let h${b}_${a}_${a2} = 0;`);
  L.push("let ll = 0, prod = 1, sep = 0;");
  // The loop body with or without the information sums.
  const body = (info: boolean): string[] => {
    const B: string[] = [];
    if (weighted) B.push("const wi = w[i];", "if (wi === 0) continue;");
    B.push("const c = cellOf[i];");
    for (const a of A) B.push(`const x${a} = X[off + ${a}];`);
    const lin = (k: number) => `cellEta[c * ${q} + ${k}]` + A.map((a) => ` + x${a} * b${k}_${a}`).join("");
    B.push("const yi = y[i];");
    if (q === 1) {
      B.push(`const e = ${lin(0)};`);
      B.push("let t;", expStatements("t", "e < 0 ? e : -e"), "const inv = 1 / (1 + t);", "const tinv = t * inv;", "let mu;");
      B.push(`if (e >= 0) { mu = inv; ll += ${W} * (yi * e - e); if (yi === 1 && tinv < 1e-9) sep++; }`);
      B.push(`else { mu = tinv; ll += ${W} * yi * e; if (yi === 0 && tinv < 1e-9) sep++; }`);
      if (weighted) B.push("ll -= wi * Math.log1p(t);");
      else B.push("prod *= 1 + t;", "if (prod > 1e280) { ll -= Math.log(prod); prod = 1; }");
      B.push(`const r0 = ${W} * (yi - mu);`, "R[c] += r0;");
      for (const a of A) B.push(`g0_${a} += r0 * x${a};`);
      if (info) {
        B.push(`const v0 = ${W} * tinv * inv;`, "T[c] += v0;");
        for (const a of A) B.push(`S[c * ${d} + ${a}] += v0 * x${a};`);
        for (const a of A) for (let a2 = a; a2 < d; a2++) B.push(`h0_${a}_${a2} += v0 * x${a} * x${a2};`);
      }
      return B;
    }
    B.push("let mx = 0;");
    for (const k of Q) B.push(`const e${k} = ${lin(k)};`, `if (e${k} > mx) mx = e${k};`);
    B.push(`if (mx < ${SHIFT_ABOVE}) mx = 0;`, "let base = 1;", `if (mx !== 0) ${expStatements("base", "-mx")}`);
    for (const k of Q) B.push(`let x${k}e;`, expStatements(`x${k}e`, `e${k} - mx`));
    B.push(`const se = base${Q.map((k) => ` + x${k}e`).join("")};`);
    const pick = (vals: string[], zero: string) => vals.reduceRight((acc, v, k) => `yi === ${k + 1} ? ${v} : ${acc}`, zero);
    B.push(`ll += ${W} * ((yi === 0 ? 0 : ${pick(Q.map((k) => `e${k}`), "0")}) - mx);`);
    if (weighted) B.push("ll -= wi * Math.log(se);");
    else B.push("if (!(se < 1e150)) ll -= Math.log(se); else { prod *= se; if (prod > 1e150) { ll -= Math.log(prod); prod = 1; } }");
    B.push("const inv = 1 / se;");
    B.push(`if ((yi === 0 ? base : ${pick(Q.map((k) => `x${k}e`), "0")}) * inv > ${1 - 1e-9}) sep++;`);
    for (const k of Q) {
      B.push(`const p${k} = x${k}e * inv;`, `const r${k} = ${W} * ((yi === ${k + 1} ? 1 : 0) - p${k});`, `R[c * ${q} + ${k}] += r${k};`);
      for (const a of A) B.push(`g${k}_${a} += r${k} * x${a};`);
    }
    if (info) {
      for (const [k, l, b] of blocks) {
        B.push(k === l ? `const v${b} = ${W} * p${k} * (1 - p${k});` : `const v${b} = -${W} * p${k} * p${l};`);
        B.push(`T[c * ${nb} + ${b}] += v${b};`);
        for (const a of A) B.push(`S[(c * ${nb} + ${b}) * ${d} + ${a}] += v${b} * x${a};`);
        for (const a of A) for (let a2 = a; a2 < d; a2++) B.push(`h${b}_${a}_${a2} += v${b} * x${a} * x${a2};`);
      }
    }
    return B;
  };
  L.push("if (withInfo) {");
  L.push(`for (let i = 0, off = 0; i < m; i++, off += ${d}) {`, ...body(true), "}");
  L.push("} else {");
  L.push(`for (let i = 0, off = 0; i < m; i++, off += ${d}) {`, ...body(false), "}");
  L.push("}");
  L.push("ll -= Math.log(prod);");
  for (const k of Q) for (const a of A) L.push(`gd[${k * d + a}] = g${k}_${a};`);
  L.push("if (withInfo) {");
  for (const [, , b] of blocks) for (const a of A) for (let a2 = a; a2 < d; a2++) L.push(`DD[${b * d * d + a * d + a2}] = h${b}_${a}_${a2};`);
  L.push("}");
  L.push("out[0] = sep;", "return ll;");
  const make = new Function("ET", "EP", `return function rowKernel(m, X, cellOf, y, w, beta, cellEta, R, gd, withInfo, T, S, DD, out, pf) {\n${L.join("\n")}\n};`);
  return make(EXP_TABLE, EXP_POW2) as RowKernel;
}

/** Scratch of one logistic likelihood pass. */
interface LogisticScratch {
  cellEta: Float64Array;
  R: Float64Array;
  gd: Float64Array;
  sums: CellSums;
  /** Rows whose observed outcome is fitted with probability above 1 − 1e-9, at the last pass. */
  separated: number;
  kernel: RowKernel | undefined;
  out: Float64Array;
}

/**
 * One pass over the rows at coefficients `beta`: ℓ(β) (returned), the gradient Zᵀ W (y − μ)
 * into `g`, the separated rows into `s.separated` and, when `withInfo`, the cell sums of the
 * information matrix with weights w μ (1 − μ) into `s.sums`. One exponential per row: with
 * t = e^{−|η|}, ln(1 + e^η) = max(η, 0) + ln(1 + t), μ = 1/(1 + t) or t/(1 + t) and
 * μ(1 − μ) = t/(1 + t)²; the logarithms of unweighted rows are taken of running products of 1 + t.
 * Cost: O(m·d) plus O(m·d²) with the information, d dense columns.
 */
function logisticPass(D: FactorDesign, y: ArrayLike<number>, w: ArrayLike<number> | undefined, beta: Float64Array, g: Float64Array, withInfo: boolean, s: LogisticScratch): number {
  const { dense: X, denseColumns: d, factorColumns: pf, cellOf, cellStart, cellColumns } = D;
  let m = D.rows;
  const C = cellStart.length - 1;
  const { cellEta, R, gd } = s;
  const { T, S, DD } = s.sums;
  for (let c = 0; c < C; c++) {
    let e = 0;
    for (let u = cellStart[c]!; u < cellStart[c + 1]!; u++) e += beta[cellColumns[u]!]!;
    cellEta[c] = e;
  }
  R.fill(0);
  gd.fill(0);
  if (withInfo) {
    T.fill(0);
    S.fill(0);
    DD.fill(0);
  }
  let ll = 0;
  let prod = 1;
  let separated = 0;
  if (s.kernel) {
    ll = s.kernel(m, X, cellOf, y, w, beta, cellEta, R, gd, withInfo, T, S, DD, s.out, pf);
    separated = s.out[0]!;
    prod = 1;
    m = 0; // the loop below has nothing left to do
  }
  for (let i = 0, off = 0; i < m; i++, off += d) {
    const wi = w ? w[i]! : 1;
    if (wi === 0) continue;
    const c = cellOf[i]!;
    let e = cellEta[c]!;
    for (let a = 0; a < d; a++) e += X[off + a]! * beta[pf + a]!;
    const t = expByTable(e < 0 ? e : -e);
    const yi = y[i]!;
    const inv = 1 / (1 + t);
    const tinv = t * inv;
    let mu: number;
    if (e >= 0) {
      mu = inv;
      ll += wi * (yi * e - e);
      if (yi === 1 && tinv < 1e-9) separated++;
    } else {
      mu = tinv;
      ll += wi * yi * e;
      if (yi === 0 && tinv < 1e-9) separated++;
    }
    if (w) ll -= wi * Math.log1p(t);
    else {
      prod *= 1 + t;
      if (prod > PRODUCT_FLUSH) {
        ll -= Math.log(prod);
        prod = 1;
      }
    }
    const r = wi * (yi - mu);
    R[c] = R[c]! + r;
    for (let a = 0; a < d; a++) gd[a] = gd[a]! + r * X[off + a]!;
    if (withInfo) {
      const v = wi * tinv * inv;
      T[c] = T[c]! + v;
      for (let a = 0, sa = c * d; a < d; a++) {
        const va = v * X[off + a]!;
        S[sa + a] = S[sa + a]! + va;
        for (let a2 = a, at = a * d + a; a2 < d; a2++, at++) DD[at] = DD[at]! + va * X[off + a2]!;
      }
    }
  }
  ll -= Math.log(prod);
  g.fill(0);
  for (let c = 0; c < C; c++) for (let u = cellStart[c]!; u < cellStart[c + 1]!; u++) g[cellColumns[u]!] = g[cellColumns[u]!]! + R[c]!;
  for (let a = 0; a < d; a++) g[pf + a] = gd[a]!;
  s.separated = separated;
  return ll;
}

/** Check outcomes (0/1 when `logistic`, else a category index in 0..K−1) and weights; count rows with positive weight. Cost: O(m). */
function checkOutcome(m: number, y: ArrayLike<number>, w: ArrayLike<number> | undefined, K: number, logistic: boolean): number {
  if (y.length !== m) throw new RangeError(`outcome has ${y.length} entries, expected ${m}`);
  if (w && w.length !== m) throw new RangeError(`weights have ${w.length} entries, expected ${m}`);
  const bad = (i: number, yi: number) =>
    new RangeError(logistic ? `outcome at row ${i} is ${yi}; logistic regression needs 0 or 1` : `outcome at row ${i} is ${yi}; it must be a category index in 0..${K - 1}`);
  if (y instanceof Int32Array) {
    // integers already: one unsigned comparison per row (negative codes wrap above the bound)
    const bound = logistic ? 2 : K;
    for (let i = 0; i < m; i++) if (y[i]! >>> 0 >= bound) throw bad(i, y[i]!);
  } else {
    for (let i = 0; i < m; i++) {
      const yi = y[i]!;
      if (logistic ? yi !== 0 && yi !== 1 : !(Number.isInteger(yi) && yi >= 0 && yi < K)) throw bad(i, yi);
    }
  }
  if (!w) return m;
  let rows = 0;
  for (let i = 0; i < m; i++) {
    const wi = w[i]!;
    if (!(wi >= 0)) throw new RangeError(`weight at row ${i} is ${wi}; weights must be non-negative`);
    if (wi > 0) rows++;
  }
  return rows;
}
export { checkOutcome as checkOutcomeAndWeights };

/**
 * A factor of an information matrix I (P × P): its Cholesky factor L, and the parameters whose
 * pivots vanished (`frozen`, rows and columns of L left at 0) with their diagonal entries I_jj.
 */
export interface InformationFactor {
  L: Float64Array;
  frozen: Int32Array;
  frozenDiagonal: Float64Array;
}

/** Pivots of the information below this times its largest diagonal entry count as vanished (as in the plain Cholesky check). */
const PIVOT_TOL = 1e-13;
/** Normalised pivots of the design's Gram matrix below this mean aliased columns (the aliasing rule of `regression-lr`). */
const ALIAS_TOL = 1e-9;
/** Coefficients at least this large (in absolute value) that a full step moves further out by at least `OUTWARD_STEP` start an extrapolation. */
const OUTWARD_COEF = 5;
const OUTWARD_STEP = 0.5;
/** Largest multiple of a Newton step tried by the extrapolation. */
const MAX_EXTRAPOLATION = 4096;
/** A frozen parameter's Newton gain g_j²/I_jj at the end must stay below this times |ℓ| + 0.1. */
const FROZEN_GAIN = 1e-8;

/**
 * Cholesky factor of a symmetric positive semi-definite matrix that skips the pivots below
 * `tol` times its largest diagonal entry: those rows and columns of L stay 0 and their indices
 * are returned in `frozen`. Solving with it (`solveInformation`) leaves the frozen parameters
 * unchanged and solves the system of the others. Cost: O(n³).
 * Source: the Cholesky decomposition (Golub & Van Loan 2013, Matrix Computations, 4th ed., §4.2),
 * restricted to the columns it keeps.
 * @example
 * // [[4, 2, 0], [2, 1, 0], [0, 0, 9]]: the second column is aliased with the first
 * choleskyFreezing(new Float64Array([4, 2, 0, 2, 1, 0, 0, 0, 9]), 3, 1e-13).frozen // Int32Array [1]
 */
export function choleskyFreezing(a: ArrayLike<number>, n: number, tol: number): InformationFactor {
  const L = new Float64Array(n * n);
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, Math.abs(a[i * n + i]!));
  const frozen: number[] = [];
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j]!;
    for (let k = 0; k < j; k++) d -= L[j * n + k]! * L[j * n + k]!;
    if (!(d > tol * maxDiag) || !(maxDiag > 0)) {
      frozen.push(j);
      continue;
    }
    const ljj = Math.sqrt(d);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let t = a[i * n + j]!;
      for (let k = 0; k < j; k++) t -= L[i * n + k]! * L[j * n + k]!;
      L[i * n + j] = t / ljj;
    }
  }
  return { L, frozen: Int32Array.from(frozen), frozenDiagonal: Float64Array.from(frozen, (j) => a[j * n + j]!) };
}

/** Solve I x = b with a factor from `choleskyFreezing` (frozen entries of x are 0). Cost: O(n²). */
export function solveInformation(F: InformationFactor, n: number, b: ArrayLike<number>): Float64Array {
  const { L } = F;
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const lii = L[i * n + i]!;
    if (lii === 0) continue;
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= L[i * n + k]! * y[k]!;
    y[i] = s / lii;
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    const lii = L[i * n + i]!;
    if (lii === 0) continue;
    let s = y[i]!;
    for (let k = i + 1; k < n; k++) s -= L[k * n + i]! * x[k]!;
    x[i] = s / lii;
  }
  return x;
}

/**
 * Whether the p × p Gram matrix G of a design (Σ w_i z_i z_iᵀ over the rows with positive weight)
 * is rank-deficient: a column without a non-zero entry, or a pivot of the Cholesky sweep of the
 * correlation-scaled matrix G_jk/√(G_jj G_kk) below 1e-9 (the design's columns are aliased).
 * Scale-free, unlike the information's pivot rule. Cost: O(p³).
 */
export function isRankDeficient(G: ArrayLike<number>, p: number): boolean {
  const s = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    if (!(G[j * p + j]! > 0)) return true;
    s[j] = 1 / Math.sqrt(G[j * p + j]!);
  }
  const C = new Float64Array(p * p);
  for (let j = 0; j < p; j++) for (let k = 0; k < p; k++) C[j * p + k] = G[j * p + k]! * s[j]! * s[k]!;
  return choleskyFreezing(C, p, ALIAS_TOL).frozen.length > 0;
}

/**
 * The factor of an information matrix for a Newton step: its Cholesky factor when it is positive
 * definite (the usual case: nothing else is computed); else, when the design is not aliased
 * (`isAliased()` false), the factor that freezes the vanished directions (`choleskyFreezing`);
 * undefined when the design is aliased. Cost: O(P³), plus `isAliased` when the plain factor fails.
 */
export function factorInformation(H: Float64Array, P: number, isAliased: () => boolean): InformationFactor | undefined {
  const L = cholesky(H, P, PIVOT_TOL);
  if (L) return { L, frozen: NO_FROZEN, frozenDiagonal: NO_DIAGONAL };
  if (isAliased()) return undefined;
  return choleskyFreezing(H, P, PIVOT_TOL);
}
const NO_FROZEN = new Int32Array(0);
const NO_DIAGONAL = new Float64Array(0);

/** What `newtonLoop` returns. */
export interface NewtonResult {
  beta: Float64Array<ArrayBuffer>;
  ll: number;
  iterations: number;
  passes: number;
  status: FitStatus;
  /** Parameters frozen by the last factorisation (see `InformationFactor`). */
  frozen: Int32Array;
}

/**
 * The Newton–Raphson loop shared by the logistic and multinomial fits, with step halving,
 * chord steps and, under separation, extrapolation and frozen directions (module comment).
 * `pass(beta, g, withInfo)` returns ℓ(β), writes the gradient into g and, when `withInfo`, keeps
 * the information at β for `factor()`, which returns its factor (undefined when the design is
 * aliased); `factor()` is only called right after `accept()` of such a pass. `accept()` tells the
 * caller that the last pass's point is the new iterate.
 * Convergence: see the module comment.
 */
export function newtonLoop(
  P: number, beta0: Float64Array<ArrayBuffer>, maxIter: number,
  pass: (beta: Float64Array, g: Float64Array, withInfo: boolean) => number,
  factor: () => InformationFactor | undefined,
  accept: () => void,
  initialInfo?: ArrayLike<number>,
  finalStep?: number,
): NewtonResult {
  let passes = 0;
  const rowPass = pass;
  pass = (b, g, withInfo) => (passes++, rowPass(b, g, withInfo));
  let beta = beta0;
  let betaNew = new Float64Array(P);
  let g = new Float64Array(P);
  let gNew = new Float64Array(P);
  if (initialInfo && initialInfo.length !== P * P) throw new RangeError(`information has ${initialInfo.length} entries, expected ${P}×${P}`);
  const L0 = initialInfo ? cholesky(initialInfo, P, PIVOT_TOL) : undefined;
  let F: InformationFactor | undefined = L0 ? { L: L0, frozen: NO_FROZEN, frozenDiagonal: NO_DIAGONAL } : undefined;
  let ll = pass(beta, g, !F);
  accept();
  let fresh = !F; // F is the information at β (not an approximation given by the caller)
  if (!F) F = factor();
  if (!F) return { beta, ll, iterations: 1, passes, status: "singular", frozen: NO_FROZEN };
  let status: FitStatus = "not-converged";
  let it = 0;
  let ownInfo = fresh; // F was computed on the rows (at this or an earlier, nearby iterate)
  /** A pass with the information at β, taken as the iterate; false when that information is singular. */
  const refreshAtBeta = (): boolean => {
    ll = pass(beta, g, true);
    accept();
    F = factor();
    return F !== undefined;
  };
  let trial: Float64Array | undefined;
  let gTrial: Float64Array | undefined;
  let out: Uint8Array | undefined;
  let pushed = false;
  let pushedOut = false; // the push was kept: coefficients at their limit
  while (it < maxIter) {
    it++;
    const delta = solveInformation(F, P, g);
    if (ownInfo) {
      // Converged without a further pass: the step is within the tolerance on the coefficients
      // and its predicted gain gᵀδ (twice the quadratic model's ½ gᵀI⁻¹g) is negligible.
      let move = 0;
      let gain = 0;
      for (let j = 0; j < P; j++) {
        move = Math.max(move, Math.abs(delta[j]!) / Math.max(1, Math.abs(beta[j]! + delta[j]!)));
        gain += g[j]! * delta[j]!;
      }
      if (move <= 1e-7 && gain >= 0 && gain <= CONVERGED_GAIN * (Math.abs(ll) + 0.1)) {
        it--;
        status = "converged";
        break;
      }
      if (!pushed && fresh && gain >= 0 && gain <= CONVERGED_GAIN * (Math.abs(ll) + 0.1) && onlyOutward(beta, delta, P, (out ??= new Uint8Array(P)))) {
        // At the supremum but for coefficients still running out along a direction of recession
        // (complete separation leaves no other sign, as every weight vanishes alike): push them
        // out by the largest extrapolation at once, where the rows they act on are fitted with
        // certainty in floating point, and factor the information there (module comment).
        pushed = true;
        trial ??= new Float64Array(P);
        for (let j = 0; j < P; j++) trial[j] = beta[j]! + (out[j] ? MAX_EXTRAPOLATION : 0) * delta[j]!;
        const llT = pass(trial, gNew, true);
        if (llT >= ll - CONVERGED_GAIN * (Math.abs(ll) + 0.1)) {
          accept();
          betaNew.set(trial);
          [beta, betaNew, g, gNew] = [betaNew, beta, gNew, g];
          ll = llT;
          F = factor();
          if (!F) {
            status = "singular";
            break;
          }
          it--;
          status = "converged";
          pushedOut = true;
          break;
        }
        // not a direction of recession after all: back to the iterate and on with Newton
        if (!refreshAtBeta()) {
          status = "singular";
          break;
        }
        it--;
        continue;
      }
      if (finalStep !== undefined && fresh && move <= FINAL_STEP_MOVE && gain >= 0 && gain <= finalStep * (Math.abs(ll) + 0.1)) {
        // The last step on paper (see NewtonOptions.finalStep): the maximum of the quadratic model at β.
        for (let j = 0; j < P; j++) betaNew[j] = beta[j]! + delta[j]!;
        [beta, betaNew] = [betaNew, beta];
        ll += gain / 2;
        status = "converged";
        break;
      }
    }
    let step = 1;
    let llNew = -Infinity;
    let withInfo = false;
    let maxMove = 0;
    for (let h = 0; h < 40; h++) {
      maxMove = 0;
      for (let j = 0; j < P; j++) {
        betaNew[j] = beta[j]! + step * delta[j]!;
        maxMove = Math.max(maxMove, Math.abs(step * delta[j]!) / Math.max(1, Math.abs(betaNew[j]!)));
      }
      withInfo = maxMove > CHORD_MOVE || step < 1;
      llNew = pass(betaNew, gNew, withInfo);
      if (llNew >= ll - 1e-12 * Math.abs(ll)) break;
      step /= 2;
    }
    if (!(llNew >= ll - 1e-12 * Math.abs(ll))) {
      if (!fresh) {
        // retry with the information matrix at β before giving up
        if (!refreshAtBeta()) {
          status = "singular";
          break;
        }
        fresh = true;
        ownInfo = true;
        continue;
      }
      // No step improves ℓ to working precision: at the optimum when the Newton step is tiny.
      let full = 0;
      for (let j = 0; j < P; j++) full = Math.max(full, Math.abs(delta[j]!) / Math.max(1, Math.abs(beta[j]!)));
      status = full <= 1e-5 ? "converged" : "not-converged";
      break;
    }
    if (step === 1 && outward(beta, delta, P, (out ??= new Uint8Array(P)))) {
      // Separation (module comment): the coefficients moving out go s times as far (s = 2, 4, …)
      // while ℓ keeps rising, the others take their Newton step; then the best point is passed
      // again with its information (the caller's pass state must be that of the iterate).
      trial ??= new Float64Array(P);
      gTrial ??= new Float64Array(P);
      let best = 1;
      let bestLl = llNew;
      for (let s = 2; s <= MAX_EXTRAPOLATION; s *= 2) {
        for (let j = 0; j < P; j++) trial[j] = beta[j]! + (out[j] ? s : 1) * delta[j]!;
        const llT = pass(trial, gTrial, false);
        if (!(llT > bestLl)) break;
        best = s;
        bestLl = llT;
      }
      maxMove = 0;
      for (let j = 0; j < P; j++) {
        const dj = (out[j] ? best : 1) * delta[j]!;
        betaNew[j] = beta[j]! + dj;
        maxMove = Math.max(maxMove, Math.abs(dj) / Math.max(1, Math.abs(betaNew[j]!)));
      }
      withInfo = true;
      llNew = pass(betaNew, gNew, true);
    }
    accept();
    const change = Math.abs(llNew - ll);
    [beta, betaNew, g, gNew] = [betaNew, beta, gNew, g];
    ll = llNew;
    if (change <= 1e-10 * (Math.abs(ll) + 0.1) && maxMove <= 1e-7) {
      status = "converged";
      break;
    }
    if (withInfo) {
      const Fnew = factor();
      if (!Fnew) {
        it++;
        status = "singular";
        break;
      }
      F = Fnew;
      fresh = true;
      ownInfo = true;
    } else fresh = false;
  }
  const frozen = F ? F.frozen : NO_FROZEN;
  if (status === "converged" && (frozen.length > 0 || pushedOut)) {
    // At the limit, unless a frozen parameter could still gain (its information vanished for
    // another reason than separation).
    status = "limit";
    for (let t = 0; t < frozen.length; t++) {
      const gj = g[frozen[t]!]!;
      const hjj = F!.frozenDiagonal[t]!;
      if (!(gj === 0 || (hjj > 0 && (gj * gj) / hjj <= FROZEN_GAIN * (Math.abs(ll) + 0.1)))) status = "singular";
    }
  }
  return { beta, ll, iterations: it, passes, status, frozen };
}

/**
 * Whether a Newton step moves only large coefficients further out (marked in `out` as by
 * `outward`, at least one) and leaves every other coefficient within the convergence tolerance
 * (a relative move of 1e-7). Cost: O(P).
 */
function onlyOutward(beta: Float64Array, delta: Float64Array, P: number, out: Uint8Array): boolean {
  if (!outward(beta, delta, P, out)) return false;
  for (let j = 0; j < P; j++) {
    if (!out[j] && Math.abs(delta[j]!) / Math.max(1, Math.abs(beta[j]! + delta[j]!)) > 1e-7) return false;
  }
  return true;
}

/**
 * Mark in `out` the coefficients that a Newton step moves further out (|β_j + δ_j| ≥ 5, moving by
 * at least 0.5 away from 0: the sign of separation that starts an extrapolation); whether any is.
 * Cost: O(P).
 */
function outward(beta: Float64Array, delta: Float64Array, P: number, out: Uint8Array): boolean {
  let any = false;
  for (let j = 0; j < P; j++) {
    const b = beta[j]!;
    const d = delta[j]!;
    const o = Math.abs(b + d) >= OUTWARD_COEF && Math.abs(d) >= OUTWARD_STEP && b * d > 0;
    out[j] = o ? 1 : 0;
    any ||= o;
  }
  return any;
}

/**
 * Maximum-likelihood logistic regression of y on the columns of X (row-major m × p; include an
 * intercept column yourself), by Newton–Raphson with step halving. Never throws on separation
 * or non-convergence: they are reported in `separation` and `status`. Same as
 * `logisticRegressionDesign(designFromRowMajor(X, m, p), y, options)`.
 * Cost: O(m·p²) per information matrix (renewed only while steps are large), O(m·p) per other
 * pass, typically 4–8 iterations; O(p³) for each Cholesky factor.
 * Source: McCullagh & Nelder (1989), Generalized Linear Models, 2nd ed., Chapman & Hall, §4.4;
 * Albert & Anderson (1984), Biometrika 71:1–10 (separation).
 * @throws RangeError when array sizes disagree (design, outcome, weights, start), or an outcome is not 0 or 1, or a weight is negative
 * @example
 * // intercept only: coef[0] = logit(mean) = ln(1/3)
 * logisticRegression(new Float64Array([1, 1, 1, 1]), 4, 1, [1, 0, 0, 0]).coef[0] // -1.0986…
 */
export function logisticRegression(X: Float64Array, m: number, p: number, y: ArrayLike<number>, options: NewtonOptions = {}): LogisticFit {
  return logisticRegressionDesign(designFromRowMajor(X, m, p), y, options);
}

/**
 * Maximum-likelihood logistic regression on a design in factor form (parameters: indicator
 * columns, then dense columns), by Newton–Raphson with step halving; see `logisticRegression`.
 * One pass over the rows per trial point gives ℓ, the gradient and (while steps are large) the
 * information matrix together.
 * Cost: O(m·d²) per pass with the information, O(m·d) without, d dense columns, plus
 * O(Σ_c k_c²) per information assembly and O(p³) per Cholesky factor.
 * Source: McCullagh & Nelder (1989), §4.4; Albert & Anderson (1984), Biometrika 71:1–10.
 * @throws RangeError when sizes or indices disagree, an outcome is not 0 or 1, or a weight is negative
 * @example
 * // intercept as an indicator column, no dense columns: coef[0] = ln(1/3)
 * logisticRegressionDesign({ rows: 4, dense: new Float64Array(0), denseColumns: 0, factorColumns: 1,
 *   cellOf: new Int32Array(4), cellStart: new Int32Array([0, 1]), cellColumns: new Int32Array([0]) }, [1, 0, 0, 0]).coef[0]
 */
export function logisticRegressionDesign(D: FactorDesign, y: ArrayLike<number>, options: NewtonOptions = {}): LogisticFit {
  checkDesign(D);
  const m = D.rows;
  const p = D.factorColumns + D.denseColumns;
  const w = options.weights;
  const rows = checkOutcome(m, y, w, 2, true);
  const beta = options.start ? Float64Array.from(options.start) : new Float64Array(p);
  if (beta.length !== p) throw new RangeError(`start has ${beta.length} coefficients, expected ${p}`);
  const C = D.cellStart.length - 1;
  const kernel = options.kernel === "loop" ? undefined : rowKernel(1, D.denseColumns, w !== undefined);
  const s: LogisticScratch = { cellEta: new Float64Array(C), R: new Float64Array(C), gd: new Float64Array(D.denseColumns), sums: createCellSums(D, 1), separated: 0, kernel, out: new Float64Array(1) };
  let separated = 0; // at the current iterate
  const H = new Float64Array(p * p);
  let aliased: boolean | undefined;
  const isAliased = () => (aliased ??= isRankDeficient(designCrossProduct(D, w), p));
  // The information's cell sums are only read right after the pass that wrote them was accepted.
  const fit = newtonLoop(
    p, beta, options.maxIter ?? 50,
    (b, g, withInfo) => logisticPass(D, y, w, b, g, withInfo, s),
    () => factorInformation(assembleCrossProduct(D, s.sums, 0, 1, H), p, isAliased),
    () => (separated = s.separated),
    options.information,
    options.finalStep,
  );
  const { separatedRows, separation } = classifySeparation(fit, separated, rows);
  return { coef: fit.beta, logLik: fit.ll, iterations: fit.iterations, passes: fit.passes, status: fit.status, separation, separatedRows, rows, information: H, frozen: fit.frozen };
}

/**
 * Separation of a finished fit: at the limit (frozen parameters), complete when every row is
 * separated, else quasi-complete; without convergence, by the separated rows as they stand; a
 * converged fit has finite estimates, so rows fitted near 0 or 1 there are extreme, not separated.
 */
export function classifySeparation(fit: NewtonResult, separated: number, rows: number): { separatedRows: number; separation: Separation } {
  if (fit.status === "converged" || fit.status === "singular") return { separatedRows: 0, separation: "none" };
  if (fit.status === "limit") return { separatedRows: separated, separation: separated === rows ? "complete" : "quasi-complete" };
  return { separatedRows: separated, separation: separated === 0 ? "none" : separated === rows ? "complete" : "quasi-complete" };
}

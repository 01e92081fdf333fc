/**
 * Weighted multinomial (baseline-category) logit regression by Newton–Raphson with step halving.
 *
 * Terms: the outcome y_i takes one of K categories 0..K−1; category 0 is the *baseline*. With
 * coefficient vectors β_1..β_{K−1} (β_0 = 0) and η_ik = x_i·β_k, the model is
 * π_ik = e^{η_ik} / Σ_l e^{η_il}, and the *log-likelihood* is ℓ = Σ w_i (η_{i,y_i} − ln Σ_l e^{η_il})
 * (Agresti 2013, Categorical Data Analysis, 3rd ed., §8.1). Coefficients are stored category by
 * category: coef[(k − 1)·p + j] is the coefficient of column j for category k. The gradient is
 * Σ w_i (1{y_i = k} − π_ik) x_ij and the information matrix has blocks
 * Σ w_i π_ik (δ_kl − π_il) x_i x_iᵀ. Convergence, *separation* and the fit at the limit are
 * those of binary logistic regression (see `logisticRegression.ts`): a separated row's observed
 * category is fitted with probability above 1 − 1e-9; separation is also quasi-complete when a
 * category's probability goes to 0 in some rows only (a category that never occurs in a level of
 * a dummy: Lesaffre & Albert 1989, JRSS B 51:109–116), which shows as a frozen parameter (that
 * category's coefficient of the dummy, at −∞) while no whole row is separated. Designs may be given
 * in factor form (`FactorDesign`, see `logisticRegression.ts`): indicator columns grouped in
 * cells and dense columns, so the information costs O(d²) per row and block pair.
 */
import {
  assembleCrossProduct, checkDesign, classifySeparation, designCrossProduct, expByTable, checkOutcomeAndWeights, createCellSums, designFromRowMajor,
  factorInformation, isRankDeficient, newtonLoop, rowKernel, SHIFT_ABOVE,
  type CellSums, type RowKernel, type FactorDesign, type FitStatus, type NewtonOptions, type Separation,
} from "./logisticRegression.js";

export interface MultinomialFit {
  /** (K − 1)·p coefficients, category 1's first. */
  coef: Float64Array;
  categories: number;
  logLik: number;
  iterations: number;
  /** Passes over the rows (each gives ℓ and the gradient at one point, and the information while steps are large). */
  passes: number;
  status: FitStatus;
  separation: Separation;
  /** Rows whose observed category is fitted with probability > 1 − 1e-9 (counted at the limit or when the fit did not converge; 0 otherwise). */
  separatedRows: number;
  rows: number;
  /** The last information matrix computed (P × P, at or near `coef`; zeros when none was). */
  information: Float64Array;
  /** Parameters (indices into `coef`) left at their limit by the last factorisation of the information; empty without separation. */
  frozen: Int32Array;
}

/** A row is separated when its observed category is fitted with probability above this. */
const SEPARATED = 1 - 1e-9;

/** Running products of the row sums Σ_l e^{η_il} (each below 1e150) are turned into one logarithm past this. */
const PRODUCT_FLUSH = 1e150;

interface MultinomialScratch {
  /** Cell parts of the linear predictors, cells × (K − 1). */
  cellEta: Float64Array;
  /** Cell sums of the residuals, cells × (K − 1). */
  R: Float64Array;
  /** Dense part of the gradient, (K − 1) × d. */
  gd: Float64Array;
  /** Information cell sums for the (K − 1)K/2 blocks k ≤ l. */
  sums: CellSums;
  eta: Float64Array;
  ex: Float64Array;
  separated: number;
  kernel: RowKernel | undefined;
  out: Float64Array;
}

/**
 * One pass over the rows at coefficients `beta`: returns ℓ(β), writes the gradient into `g`,
 * the separated rows into `s.separated` and, when `withInfo`, the cell sums of the information
 * blocks Σ w_i π_ik (δ_kl − π_il) z_i z_iᵀ (k ≤ l) into `s.sums`. K − 1 exponentials per row; the
 * linear predictors are shifted by their maximum only when it exceeds `SHIFT_ABOVE` (30: rows
 * fitted with near certainty, where η_y − ln Σ e^η would lose precision or e^η overflow);
 * logarithms of unweighted rows are taken of running products.
 * Cost: O(m·(K−1)·d), plus O(m·K²·d²/4) with the information.
 */
function multinomialPass(
  D: FactorDesign, K: number, y: ArrayLike<number>, w: ArrayLike<number> | undefined,
  beta: Float64Array, g: Float64Array, withInfo: boolean, s: MultinomialScratch,
): number {
  const { dense: X, denseColumns: d, factorColumns: pf, cellOf, cellStart, cellColumns } = D;
  let m = D.rows;
  const C = cellStart.length - 1;
  const q = K - 1;
  const p = pf + d;
  const nb = (q * (q + 1)) / 2;
  const dd = d * d;
  const { cellEta, R, gd, eta, ex } = s;
  const { T, S, DD } = s.sums;
  for (let c = 0; c < C; c++) {
    for (let k = 0; k < q; k++) {
      let e = 0;
      for (let u = cellStart[c]!; u < cellStart[c + 1]!; u++) e += beta[k * p + cellColumns[u]!]!;
      cellEta[c * q + k] = e;
    }
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
    m = 0; // the loop below has nothing left to do
  }
  for (let i = 0, off = 0; i < m; i++, off += d) {
    const wi = w ? w[i]! : 1;
    if (wi === 0) continue;
    const c = cellOf[i]!;
    let mx = 0;
    for (let k = 0, b = pf; k < q; k++, b += p) {
      let e = cellEta[c * q + k]!;
      for (let a = 0; a < d; a++) e += X[off + a]! * beta[b + a]!;
      eta[k] = e;
      if (e > mx) mx = e;
    }
    if (mx < SHIFT_ABOVE) mx = 0; // no overflow, little rounding: skip the shift and the baseline's exponential
    const base = mx === 0 ? 1 : expByTable(-mx);
    let se = base;
    for (let k = 0; k < q; k++) {
      const e = expByTable(eta[k]! - mx);
      ex[k] = e;
      se += e;
    }
    const yi = y[i]!;
    ll += wi * ((yi === 0 ? 0 : eta[yi - 1]!) - mx);
    if (w || !(se < PRODUCT_FLUSH)) ll -= wi * Math.log(se);
    else {
      prod *= se;
      if (prod > PRODUCT_FLUSH) {
        ll -= Math.log(prod);
        prod = 1;
      }
    }
    const inv = 1 / se;
    if ((yi === 0 ? base : ex[yi - 1]!) * inv > SEPARATED) separated++;
    for (let k = 0; k < q; k++) {
      const pk = ex[k]! * inv;
      ex[k] = pk;
      const r = wi * ((yi === k + 1 ? 1 : 0) - pk);
      R[c * q + k] = R[c * q + k]! + r;
      for (let a = 0, at = k * d; a < d; a++, at++) gd[at] = gd[at]! + r * X[off + a]!;
    }
    if (withInfo) {
      for (let k = 0, b = 0; k < q; k++) {
        const pk = wi * ex[k]!;
        for (let l = k; l < q; l++, b++) {
          const v = k === l ? pk * (1 - ex[k]!) : -pk * ex[l]!;
          const cb = c * nb + b;
          T[cb] = T[cb]! + v;
          for (let a = 0, sa = cb * d; a < d; a++) {
            const va = v * X[off + a]!;
            S[sa + a] = S[sa + a]! + va;
            for (let a2 = a, at = b * dd + a * d + a; a2 < d; a2++, at++) DD[at] = DD[at]! + va * X[off + a2]!;
          }
        }
      }
    }
  }
  ll -= Math.log(prod);
  g.fill(0);
  for (let c = 0; c < C; c++) {
    for (let k = 0; k < q; k++) {
      const r = R[c * q + k]!;
      for (let u = cellStart[c]!; u < cellStart[c + 1]!; u++) g[k * p + cellColumns[u]!] = g[k * p + cellColumns[u]!]! + r;
    }
  }
  for (let k = 0; k < q; k++) for (let a = 0; a < d; a++) g[k * p + pf + a] = gd[k * d + a]!;
  s.separated = separated;
  return ll;
}

/** The information matrix (P × P, P = (K − 1)·p, both triangles) from the blocks' cell sums. */
function assembleInformation(D: FactorDesign, K: number, sums: CellSums, H: Float64Array, B: Float64Array): Float64Array {
  const q = K - 1;
  const p = D.factorColumns + D.denseColumns;
  const P = q * p;
  const nb = (q * (q + 1)) / 2;
  for (let k = 0, b = 0; k < q; k++) {
    for (let l = k; l < q; l++, b++) {
      assembleCrossProduct(D, sums, b, nb, B);
      // block (k, l) is symmetric; block (l, k) is its transpose, the same matrix
      for (let a = 0; a < p; a++) {
        for (let a2 = 0; a2 < p; a2++) {
          const v = B[a * p + a2]!;
          H[(k * p + a) * P + l * p + a2] = v;
          H[(l * p + a) * P + k * p + a2] = v;
        }
      }
    }
  }
  return H;
}

/**
 * Maximum-likelihood multinomial logit of a K-category outcome on the columns of X (row-major
 * m × p; include an intercept column yourself). Never throws on separation or non-convergence:
 * they are reported. Same as `multinomialLogitDesign(designFromRowMajor(X, m, p), y, K, options)`.
 * Cost: one likelihood pass O(m·(K−1)·p) per trial point, O(m·K²·p²/4) while the information
 * matrix is renewed (only while steps are large) and O(((K−1)p)³) for its Cholesky factor.
 * Source: Agresti (2013), Categorical Data Analysis, 3rd ed., Wiley, §8.1.
 * @throws RangeError when sizes disagree (design, outcome, weights, start), K < 2, an outcome is not an integer in 0..K−1 or a weight is negative
 * @example
 * // intercept only, y = [0, 1, 2, 2]: coef = [ln(1/1), ln(2/1)] = [0, 0.693…]
 * multinomialLogit(new Float64Array([1, 1, 1, 1]), 4, 1, [0, 1, 2, 2], 3).coef
 */
export function multinomialLogit(
  X: Float64Array, m: number, p: number, y: ArrayLike<number>, K: number, options: NewtonOptions = {},
): MultinomialFit {
  return multinomialLogitDesign(designFromRowMajor(X, m, p), y, K, options);
}

/**
 * Maximum-likelihood multinomial logit on a design in factor form (parameters per category:
 * indicator columns, then dense columns); see `multinomialLogit`. One pass per trial point gives
 * ℓ, the gradient and (while steps are large) the information matrix together.
 * Cost: O(m·(K−1)·d) per pass, O(m·K²·d²/4) with the information, d dense columns, plus
 * O(K²·Σ_c k_c²) per assembly and O(((K−1)p)³) per Cholesky factor.
 * Source: Agresti (2013), Categorical Data Analysis, 3rd ed., Wiley, §8.1.
 * @throws RangeError when sizes or indices disagree, K < 2, an outcome is not an integer in 0..K−1 or a weight is negative
 * @example
 * // intercept as an indicator column: coef = [0, ln 2]
 * multinomialLogitDesign({ rows: 4, dense: new Float64Array(0), denseColumns: 0, factorColumns: 1,
 *   cellOf: new Int32Array(4), cellStart: new Int32Array([0, 1]), cellColumns: new Int32Array([0]) }, [0, 1, 2, 2], 3).coef
 */
export function multinomialLogitDesign(D: FactorDesign, y: ArrayLike<number>, K: number, options: NewtonOptions = {}): MultinomialFit {
  checkDesign(D);
  if (!(Number.isInteger(K) && K >= 2)) throw new RangeError(`number of categories must be an integer ≥ 2, got ${K}`);
  const m = D.rows;
  const w = options.weights;
  const rows = checkOutcomeAndWeights(m, y, w, K, false);
  const q = K - 1;
  const p = D.factorColumns + D.denseColumns;
  const P = q * p;
  const beta = options.start ? Float64Array.from(options.start) : new Float64Array(P);
  if (beta.length !== P) throw new RangeError(`start has ${beta.length} coefficients, expected ${P}`);
  const C = D.cellStart.length - 1;
  const s: MultinomialScratch = {
    cellEta: new Float64Array(C * q), R: new Float64Array(C * q), gd: new Float64Array(q * D.denseColumns),
    sums: createCellSums(D, (q * (q + 1)) / 2), eta: new Float64Array(q), ex: new Float64Array(q), separated: 0,
    kernel: options.kernel === "loop" ? undefined : rowKernel(q, D.denseColumns, w !== undefined), out: new Float64Array(1),
  };
  let separated = 0;
  const H = new Float64Array(P * P);
  const B = new Float64Array(p * p);
  // every category's block has the same design: aliased when its Gram matrix is rank-deficient
  let aliased: boolean | undefined;
  const isAliased = () => (aliased ??= isRankDeficient(designCrossProduct(D, w), p));
  const fit = newtonLoop(
    P, beta, options.maxIter ?? 50,
    (b, g, withInfo) => multinomialPass(D, K, y, w, b, g, withInfo, s),
    () => factorInformation(assembleInformation(D, K, s.sums, H, B), P, isAliased),
    () => (separated = s.separated),
    options.information,
    options.finalStep,
  );
  const { separatedRows, separation } = classifySeparation(fit, separated, rows);
  return { coef: fit.beta, categories: K, logLik: fit.ll, iterations: fit.iterations, passes: fit.passes, status: fit.status, separation, separatedRows, rows, information: H, frozen: fit.frozen };
}

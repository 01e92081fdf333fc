/**
 * Weighted multinomial (baseline-category) logit regression by Newton–Raphson with step halving.
 *
 * Terms: the outcome y_i takes one of K categories 0..K−1; category 0 is the *baseline*. With
 * coefficient vectors β_1..β_{K−1} (β_0 = 0) and η_ik = x_i·β_k, the model is
 * π_ik = e^{η_ik} / Σ_l e^{η_il}, and the *log-likelihood* is ℓ = Σ w_i (η_{i,y_i} − ln Σ_l e^{η_il})
 * (Agresti 2013, Categorical Data Analysis, 3rd ed., §8.1). Coefficients are stored category by
 * category: coef[(k − 1)·p + j] is the coefficient of column j for category k. The gradient is
 * Σ w_i (1{y_i = k} − π_ik) x_ij and the information matrix has blocks
 * Σ w_i π_ik (δ_kl − π_il) x_i x_iᵀ. Convergence and *separation* are defined as for binary
 * logistic regression (see `logisticRegression.ts`): a separated row's observed category is
 * fitted with probability above 1 − 1e-9 while the fit does not converge.
 */
import { cholesky, choleskySolve } from "./linalg.js";
import type { FitStatus, NewtonOptions, Separation } from "./logisticRegression.js";

export interface MultinomialFit {
  /** (K − 1)·p coefficients, category 1's first. */
  coef: Float64Array;
  categories: number;
  logLik: number;
  iterations: number;
  status: FitStatus;
  separation: Separation;
  separatedRows: number;
  rows: number;
}

const LOG_SEPARATED = Math.log1p(-1e-9);

/** Per-row linear predictors (K − 1 per row) and the log-likelihood. */
function evaluate(
  X: Float64Array, m: number, p: number, K: number, y: ArrayLike<number>, w: ArrayLike<number> | undefined,
  beta: Float64Array, eta: Float64Array,
): number {
  const q = K - 1;
  let ll = 0;
  for (let i = 0, off = 0; i < m; i++, off += p) {
    let mx = 0;
    for (let k = 0; k < q; k++) {
      let s = 0;
      const b = k * p;
      for (let j = 0; j < p; j++) s += X[off + j]! * beta[b + j]!;
      eta[i * q + k] = s;
      if (s > mx) mx = s;
    }
    const wi = w ? w[i]! : 1;
    if (wi === 0) continue;
    let se = Math.exp(-mx);
    for (let k = 0; k < q; k++) se += Math.exp(eta[i * q + k]! - mx);
    const lse = mx + Math.log(se);
    const yi = y[i]!;
    ll += wi * ((yi === 0 ? 0 : eta[i * q + yi - 1]!) - lse);
  }
  return ll;
}

/**
 * Maximum-likelihood multinomial logit of a K-category outcome on the columns of X (include an
 * intercept column yourself). Never throws on separation or non-convergence: they are reported.
 * Cost: O(m·(K−1)²·p²) per iteration plus O(((K−1)p)³) for the Newton solve.
 * Source: Agresti (2013), Categorical Data Analysis, 3rd ed., Wiley, §8.1.
 * @throws RangeError when sizes disagree, K < 2, an outcome is not an integer in 0..K−1 or a weight is negative
 * @example
 * // intercept only, y = [0, 1, 2, 2]: coef = [ln(1/1), ln(2/1)] = [0, 0.693…]
 * multinomialLogit(new Float64Array([1, 1, 1, 1]), 4, 1, [0, 1, 2, 2], 3).coef
 */
export function multinomialLogit(
  X: Float64Array, m: number, p: number, y: ArrayLike<number>, K: number, options: NewtonOptions = {},
): MultinomialFit {
  if (X.length !== m * p) throw new RangeError(`design has ${X.length} entries, expected ${m}×${p}`);
  if (y.length !== m) throw new RangeError(`outcome has ${y.length} entries, expected ${m}`);
  if (!(Number.isInteger(K) && K >= 2)) throw new RangeError(`number of categories must be an integer ≥ 2, got ${K}`);
  const w = options.weights;
  if (w && w.length !== m) throw new RangeError(`weights have ${w.length} entries, expected ${m}`);
  let rows = 0;
  for (let i = 0; i < m; i++) {
    const yi = y[i]!;
    if (!(Number.isInteger(yi) && yi >= 0 && yi < K)) throw new RangeError(`outcome at row ${i} is ${yi}; it must be a category index in 0..${K - 1}`);
    const wi = w ? w[i]! : 1;
    if (!(wi >= 0)) throw new RangeError(`weight at row ${i} is ${wi}; weights must be non-negative`);
    if (wi > 0) rows++;
  }
  const q = K - 1;
  const P = q * p;
  const maxIter = options.maxIter ?? 50;
  let beta = options.start ? Float64Array.from(options.start) : new Float64Array(P);
  let eta = new Float64Array(m * q);
  let etaNew = new Float64Array(m * q);
  let ll = evaluate(X, m, p, K, y, w, beta, eta);
  const H = new Float64Array(P * P);
  const g = new Float64Array(P);
  const betaNew = new Float64Array(P);
  const pi = new Float64Array(q);
  const c = new Float64Array(q * q);
  let status: FitStatus = "not-converged";
  let it = 0;
  while (it < maxIter) {
    it++;
    H.fill(0);
    g.fill(0);
    for (let i = 0, off = 0; i < m; i++, off += p) {
      const wi = w ? w[i]! : 1;
      if (wi === 0) continue;
      let mx = 0;
      for (let k = 0; k < q; k++) mx = Math.max(mx, eta[i * q + k]!);
      let se = Math.exp(-mx);
      for (let k = 0; k < q; k++) {
        const e = Math.exp(eta[i * q + k]! - mx);
        pi[k] = e;
        se += e;
      }
      for (let k = 0; k < q; k++) pi[k] = pi[k]! / se;
      const yi = y[i]!;
      for (let k = 0; k < q; k++) {
        const r = wi * ((yi === k + 1 ? 1 : 0) - pi[k]!);
        for (let l = k; l < q; l++) c[k * q + l] = wi * pi[k]! * ((k === l ? 1 : 0) - pi[l]!);
        const b = k * p;
        for (let j = 0; j < p; j++) g[b + j] = g[b + j]! + r * X[off + j]!;
      }
      for (let k = 0; k < q; k++) {
        for (let j = 0; j < p; j++) {
          const xj = X[off + j]!;
          if (xj === 0) continue;
          const rowIdx = (k * p + j) * P;
          // same block: columns j..p−1 of category k
          const ckk = c[k * q + k]! * xj;
          for (let jj = j; jj < p; jj++) H[rowIdx + k * p + jj] = H[rowIdx + k * p + jj]! + ckk * X[off + jj]!;
          for (let l = k + 1; l < q; l++) {
            const ckl = c[k * q + l]! * xj;
            const base = rowIdx + l * p;
            for (let jj = 0; jj < p; jj++) H[base + jj] = H[base + jj]! + ckl * X[off + jj]!;
          }
        }
      }
    }
    for (let a = 0; a < P; a++) for (let b = a + 1; b < P; b++) H[b * P + a] = H[a * P + b]!;
    const L = cholesky(H, P, 1e-13);
    if (!L) {
      status = "singular";
      break;
    }
    const delta = choleskySolve(L, P, g);
    let step = 1;
    let llNew = -Infinity;
    for (let h = 0; h < 40; h++) {
      for (let j = 0; j < P; j++) betaNew[j] = beta[j]! + step * delta[j]!;
      llNew = evaluate(X, m, p, K, y, w, betaNew, etaNew);
      if (llNew >= ll - 1e-12 * Math.abs(ll)) break;
      step /= 2;
    }
    if (!(llNew >= ll - 1e-12 * Math.abs(ll))) {
      let full = 0;
      for (let j = 0; j < P; j++) full = Math.max(full, Math.abs(delta[j]!) / Math.max(1, Math.abs(beta[j]!)));
      status = full <= 1e-5 ? "converged" : "not-converged";
      break;
    }
    let maxMove = 0;
    for (let j = 0; j < P; j++) maxMove = Math.max(maxMove, Math.abs(step * delta[j]!) / Math.max(1, Math.abs(betaNew[j]!)));
    const change = Math.abs(llNew - ll);
    [beta, eta, etaNew] = [Float64Array.from(betaNew), etaNew, eta];
    ll = llNew;
    if (change <= 1e-10 * (Math.abs(ll) + 0.1) && maxMove <= 1e-7) {
      status = "converged";
      break;
    }
  }
  let separatedRows = 0;
  for (let i = 0; i < m; i++) {
    const wi = w ? w[i]! : 1;
    if (wi === 0) continue;
    let mx = 0;
    for (let k = 0; k < q; k++) mx = Math.max(mx, eta[i * q + k]!);
    let se = Math.exp(-mx);
    for (let k = 0; k < q; k++) se += Math.exp(eta[i * q + k]! - mx);
    const yi = y[i]!;
    const logProb = (yi === 0 ? 0 : eta[i * q + yi - 1]!) - mx - Math.log(se);
    if (logProb > LOG_SEPARATED) separatedRows++;
  }
  const separation: Separation =
    separatedRows === 0 || status === "converged" ? "none" : separatedRows === rows ? "complete" : "quasi-complete";
  return { coef: beta, categories: K, logLik: ll, iterations: it, status, separation, separatedRows, rows };
}

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

/** A row is separated when its observed category is fitted with probability above this. */
const SEPARATED = 1 - 1e-9;

/** See `CHORD_MOVE` in `logisticRegression.ts`: information matrices are renewed only while steps are larger. */
const CHORD_MOVE = 1e-3;

/**
 * One pass over the rows at coefficients `beta`: writes the fitted probabilities π_ik of
 * categories 1..K−1 into `pi` (m × (K − 1)), accumulates the gradient into `g` (zeroed here) and
 * returns ℓ(β). K − 1 exponentials and one logarithm per row (the linear predictors are shifted by
 * their maximum only when it exceeds 700, where e^η would overflow). Cost: O(m·(K−1)·p).
 */
function likelihoodPass(
  X: Float64Array, m: number, p: number, K: number, y: ArrayLike<number>, w: ArrayLike<number> | undefined,
  beta: Float64Array, pi: Float64Array, g: Float64Array, eta: Float64Array,
): number {
  const q = K - 1;
  g.fill(0);
  let ll = 0;
  for (let i = 0, off = 0; i < m; i++, off += p) {
    const wi = w ? w[i]! : 1;
    if (wi === 0) {
      for (let k = 0; k < q; k++) pi[i * q + k] = 0;
      continue;
    }
    let mx = 0;
    for (let k = 0, b = 0; k < q; k++, b += p) {
      let s = 0;
      for (let j = 0; j < p; j++) s += X[off + j]! * beta[b + j]!;
      eta[k] = s;
      if (s > mx) mx = s;
    }
    if (mx < 700) mx = 0; // no overflow: skip the shift and the baseline's exponential
    let se = mx === 0 ? 1 : Math.exp(-mx);
    for (let k = 0; k < q; k++) {
      const e = Math.exp(eta[k]! - mx);
      pi[i * q + k] = e;
      se += e;
    }
    const yi = y[i]!;
    ll += wi * ((yi === 0 ? 0 : eta[yi - 1]!) - mx - Math.log(se));
    const inv = 1 / se;
    for (let k = 0, b = 0; k < q; k++, b += p) {
      const pk = pi[i * q + k]! * inv;
      pi[i * q + k] = pk;
      const r = wi * ((yi === k + 1 ? 1 : 0) - pk);
      if (r === 0) continue;
      for (let j = 0; j < p; j++) g[b + j] = g[b + j]! + r * X[off + j]!;
    }
  }
  return ll;
}

/**
 * The information matrix (row-major P × P, P = (K − 1)·p, both triangles) from the fitted
 * probabilities: block (k, l) is Σ w_i π_ik (δ_kl − π_il) x_i x_iᵀ, itself symmetric, so only the
 * upper triangle of the blocks k ≤ l is accumulated, over each row's non-zero entries.
 * `blocks` is scratch of (K−1)K/2 · p² entries, `idx` and `val` of p. Cost: O(m·K²·p²/4).
 */
function informationMatrix(
  X: Float64Array, m: number, p: number, K: number, w: ArrayLike<number> | undefined, pi: Float64Array,
  H: Float64Array, blocks: Float64Array, idx: Int32Array, val: Float64Array,
): void {
  const q = K - 1;
  const P = q * p;
  const pp = p * p;
  blocks.fill(0);
  for (let i = 0, off = 0; i < m; i++, off += p) {
    const wi = w ? w[i]! : 1;
    if (wi === 0) continue;
    let nz = 0;
    for (let j = 0; j < p; j++) {
      const x = X[off + j]!;
      if (x !== 0) {
        idx[nz] = j;
        val[nz] = x;
        nz++;
      }
    }
    for (let k = 0, blk = 0; k < q; k++) {
      const pk = wi * pi[i * q + k]!;
      for (let l = k; l < q; l++, blk += pp) {
        const c = k === l ? pk * (1 - pi[i * q + k]!) : -pk * pi[i * q + l]!;
        for (let a = 0; a < nz; a++) {
          const ca = c * val[a]!;
          const row = blk + idx[a]! * p;
          for (let b = a; b < nz; b++) blocks[row + idx[b]!] = blocks[row + idx[b]!]! + ca * val[b]!;
        }
      }
    }
  }
  for (let k = 0, blk = 0; k < q; k++) {
    for (let l = k; l < q; l++, blk += pp) {
      for (let a = 0; a < p; a++) {
        for (let b = a; b < p; b++) {
          const v = blocks[blk + a * p + b]!;
          // block (k, l) at (a, b) and (b, a), and its transpose block (l, k)
          H[(k * p + a) * P + l * p + b] = v;
          H[(k * p + b) * P + l * p + a] = v;
          H[(l * p + a) * P + k * p + b] = v;
          H[(l * p + b) * P + k * p + a] = v;
        }
      }
    }
  }
}

/**
 * Maximum-likelihood multinomial logit of a K-category outcome on the columns of X (include an
 * intercept column yourself). Never throws on separation or non-convergence: they are reported.
 * Cost: one likelihood pass O(m·(K−1)·p) per iteration, plus O(m·K²·p²/4) for each renewed
 * information matrix (only while steps are large) and O(((K−1)p)³) for its Cholesky factor.
 * Source: Agresti (2013), Categorical Data Analysis, 3rd ed., Wiley, §8.1.
 * @throws RangeError when sizes disagree (design, outcome, weights, start), K < 2, an outcome is not an integer in 0..K−1 or a weight is negative
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
  if (beta.length !== P) throw new RangeError(`start has ${beta.length} coefficients, expected ${P}`);
  let betaNew = new Float64Array(P);
  let pi = new Float64Array(m * q);
  let piNew = new Float64Array(m * q);
  let g = new Float64Array(P);
  let gNew = new Float64Array(P);
  const H = new Float64Array(P * P);
  const blocks = new Float64Array(((q * (q + 1)) / 2) * p * p);
  const idx = new Int32Array(p);
  const val = new Float64Array(p);
  const etaRow = new Float64Array(q);
  // As for binary logistic regression: a pass that tries a step also gives the gradient and
  // fitted probabilities there; the information matrix is renewed while steps are large.
  let ll = likelihoodPass(X, m, p, K, y, w, beta, pi, g, etaRow);
  let L: Float64Array | undefined;
  let renew = true;
  let status: FitStatus = "not-converged";
  let it = 0;
  while (it < maxIter) {
    it++;
    const fresh = renew || !L;
    if (fresh) {
      informationMatrix(X, m, p, K, w, pi, H, blocks, idx, val);
      L = cholesky(H, P, 1e-13);
      if (!L) {
        status = "singular";
        break;
      }
    }
    const delta = choleskySolve(L!, P, g);
    let step = 1;
    let llNew = -Infinity;
    for (let h = 0; h < 40; h++) {
      for (let j = 0; j < P; j++) betaNew[j] = beta[j]! + step * delta[j]!;
      llNew = likelihoodPass(X, m, p, K, y, w, betaNew, piNew, gNew, etaRow);
      if (llNew >= ll - 1e-12 * Math.abs(ll)) break;
      step /= 2;
    }
    if (!(llNew >= ll - 1e-12 * Math.abs(ll))) {
      if (!fresh) {
        renew = true; // retry with the information matrix at β before giving up
        continue;
      }
      let full = 0;
      for (let j = 0; j < P; j++) full = Math.max(full, Math.abs(delta[j]!) / Math.max(1, Math.abs(beta[j]!)));
      status = full <= 1e-5 ? "converged" : "not-converged";
      break;
    }
    let maxMove = 0;
    for (let j = 0; j < P; j++) maxMove = Math.max(maxMove, Math.abs(step * delta[j]!) / Math.max(1, Math.abs(betaNew[j]!)));
    const change = Math.abs(llNew - ll);
    [beta, betaNew, pi, piNew, g, gNew] = [betaNew, beta, piNew, pi, gNew, g];
    ll = llNew;
    if (change <= 1e-10 * (Math.abs(ll) + 0.1) && maxMove <= 1e-7) {
      status = "converged";
      break;
    }
    renew = maxMove > CHORD_MOVE || step < 1;
  }
  let separatedRows = 0;
  for (let i = 0; i < m; i++) {
    const wi = w ? w[i]! : 1;
    if (wi === 0) continue;
    // probability of the observed category: π_0 = 1 − Σ π_k
    const yi = y[i]!;
    let prob: number;
    if (yi === 0) {
      prob = 1;
      for (let k = 0; k < q; k++) prob -= pi[i * q + k]!;
    } else prob = pi[i * q + yi - 1]!;
    if (prob > SEPARATED) separatedRows++;
  }
  const separation: Separation =
    separatedRows === 0 || status === "converged" ? "none" : separatedRows === rows ? "complete" : "quasi-complete";
  return { coef: beta, categories: K, logLik: ll, iterations: it, status, separation, separatedRows, rows };
}

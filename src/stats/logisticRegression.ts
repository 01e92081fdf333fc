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
 * than 1e-7·max(1, |β_j|). *Separation* (Albert & Anderson 1984, Biometrika 71:1–10): the
 * maximum likelihood estimate does not exist because a combination of predictors classifies
 * some rows perfectly; the coefficients then grow without bound while ℓ approaches its supremum.
 * A *separated row* is one whose observed outcome is fitted with probability above 1 − 1e-9;
 * when the fit did not converge (the coefficients keep moving, or the information matrix
 * became singular as the weights μ(1 − μ) of separated rows vanished) and such rows exist,
 * separation is *complete* when every row with positive weight is separated, *quasi-complete*
 * when some are.
 */
import { cholesky, choleskySolve } from "./linalg.js";

/** How a Newton fit ended. */
export type FitStatus = "converged" | "not-converged" | "singular";
export type Separation = "none" | "quasi-complete" | "complete";

export interface LogisticFit {
  coef: Float64Array;
  /** Log-likelihood at `coef` (at the supremum's approach under separation). */
  logLik: number;
  iterations: number;
  status: FitStatus;
  separation: Separation;
  /** Rows (with positive weight) whose observed outcome is fitted with probability > 1 − 1e-9. */
  separatedRows: number;
  /** Rows with positive weight. */
  rows: number;
}

export interface NewtonOptions {
  /** Row weights (default 1). */
  weights?: ArrayLike<number>;
  /** Starting coefficients (default 0). */
  start?: ArrayLike<number>;
  /** Newton iterations allowed (default 50). */
  maxIter?: number;
}

const LOG_SEPARATED = Math.log1p(-1e-9);

/** ln(1 + e^η) without overflow. */
function log1pExp(eta: number): number {
  return eta > 0 ? eta + Math.log1p(Math.exp(-eta)) : Math.log1p(Math.exp(eta));
}

/**
 * Information matrices are recomputed only while the coefficients still move by more than this
 * (relative): closer to the optimum the last one is reused (a chord step), which converges at a
 * rate proportional to the distance moved since it was computed.
 */
const CHORD_MOVE = 1e-3;

/**
 * One pass over the rows at coefficients `beta`: writes η = Xβ into `eta` and the working
 * weights w μ (1 − μ) into `v`, accumulates the gradient Xᵀ W (y − μ) into `g` (zeroed here)
 * and returns ℓ(β). One exponential and one log1p per row: with t = e^{−|η|},
 * ln(1 + e^η) = max(η, 0) + ln(1 + t) and μ = 1/(1 + t) or t/(1 + t). Cost: O(m·p).
 */
function likelihoodPass(
  X: Float64Array, m: number, p: number, y: ArrayLike<number>, w: ArrayLike<number> | undefined,
  beta: Float64Array, eta: Float64Array, v: Float64Array, g: Float64Array,
): number {
  g.fill(0);
  let ll = 0;
  for (let i = 0, off = 0; i < m; i++, off += p) {
    let e = 0;
    for (let j = 0; j < p; j++) e += X[off + j]! * beta[j]!;
    eta[i] = e;
    const wi = w ? w[i]! : 1;
    if (wi === 0) {
      v[i] = 0;
      continue;
    }
    const t = Math.exp(-Math.abs(e));
    const l1p = Math.log1p(t);
    const yi = y[i]!;
    ll += wi * (yi * e - (e > 0 ? e + l1p : l1p));
    const mu = e >= 0 ? 1 / (1 + t) : t / (1 + t);
    v[i] = wi * mu * (1 - mu);
    const r = wi * (yi - mu);
    for (let j = 0; j < p; j++) g[j] = g[j]! + r * X[off + j]!;
  }
  return ll;
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
 * Maximum-likelihood logistic regression of y on the columns of X (include an intercept column
 * yourself), by Newton–Raphson with step halving. Never throws on separation or
 * non-convergence: they are reported in `separation` and `status`.
 * Cost: one pass over the rows per iteration, O(m·p²) (η, ℓ, gradient and the upper triangle of
 * the information matrix together), typically 4–8 iterations; O(p³) for each Cholesky solve.
 * Source: McCullagh & Nelder (1989), Generalized Linear Models, 2nd ed., Chapman & Hall, §4.4;
 * Albert & Anderson (1984), Biometrika 71:1–10 (separation).
 * @throws RangeError when array sizes disagree (design, outcome, weights, start), or an outcome is not 0 or 1, or a weight is negative
 * @example
 * // intercept only: coef[0] = logit(mean) = ln(1/3)
 * logisticRegression(new Float64Array([1, 1, 1, 1]), 4, 1, [1, 0, 0, 0]).coef[0] // -1.0986…
 */
export function logisticRegression(X: Float64Array, m: number, p: number, y: ArrayLike<number>, options: NewtonOptions = {}): LogisticFit {
  if (X.length !== m * p) throw new RangeError(`design has ${X.length} entries, expected ${m}×${p}`);
  if (y.length !== m) throw new RangeError(`outcome has ${y.length} entries, expected ${m}`);
  const w = options.weights;
  if (w && w.length !== m) throw new RangeError(`weights have ${w.length} entries, expected ${m}`);
  let rows = 0;
  for (let i = 0; i < m; i++) {
    const yi = y[i]!;
    if (yi !== 0 && yi !== 1) throw new RangeError(`outcome at row ${i} is ${yi}; logistic regression needs 0 or 1`);
    const wi = w ? w[i]! : 1;
    if (!(wi >= 0)) throw new RangeError(`weight at row ${i} is ${wi}; weights must be non-negative`);
    if (wi > 0) rows++;
  }
  const maxIter = options.maxIter ?? 50;
  let beta = options.start ? Float64Array.from(options.start) : new Float64Array(p);
  if (beta.length !== p) throw new RangeError(`start has ${beta.length} coefficients, expected ${p}`);
  let betaNew = new Float64Array(p);
  let eta = new Float64Array(m);
  let etaNew = new Float64Array(m);
  let v = new Float64Array(m);
  let vNew = new Float64Array(m);
  let g = new Float64Array(p);
  let gNew = new Float64Array(p);
  const H = new Float64Array(p * p);
  const idx = new Int32Array(p);
  const val = new Float64Array(p);
  // A pass that tries a step also gives the gradient and working weights there, so an iteration
  // costs one likelihood pass, plus one cross-product pass while the information matrix is renewed.
  let ll = likelihoodPass(X, m, p, y, w, beta, eta, v, g);
  let L: Float64Array | undefined;
  let renew = true;
  let status: FitStatus = "not-converged";
  let it = 0;
  while (it < maxIter) {
    it++;
    const fresh = renew || !L;
    if (fresh) {
      weightedCrossProduct(X, m, p, v, H, idx, val);
      L = cholesky(H, p, 1e-13);
      if (!L) {
        status = "singular";
        break;
      }
    }
    const delta = choleskySolve(L!, p, g);
    let step = 1;
    let llNew = -Infinity;
    for (let h = 0; h < 40; h++) {
      for (let j = 0; j < p; j++) betaNew[j] = beta[j]! + step * delta[j]!;
      llNew = likelihoodPass(X, m, p, y, w, betaNew, etaNew, vNew, gNew);
      if (llNew >= ll - 1e-12 * Math.abs(ll)) break;
      step /= 2;
    }
    if (!(llNew >= ll - 1e-12 * Math.abs(ll))) {
      if (!fresh) {
        renew = true; // retry with the information matrix at β before giving up
        continue;
      }
      // No step improves ℓ to working precision: at the optimum when the Newton step is tiny.
      let full = 0;
      for (let j = 0; j < p; j++) full = Math.max(full, Math.abs(delta[j]!) / Math.max(1, Math.abs(beta[j]!)));
      status = full <= 1e-5 ? "converged" : "not-converged";
      break;
    }
    let maxMove = 0;
    for (let j = 0; j < p; j++) maxMove = Math.max(maxMove, Math.abs(step * delta[j]!) / Math.max(1, Math.abs(betaNew[j]!)));
    const change = Math.abs(llNew - ll);
    [beta, betaNew, eta, etaNew, v, vNew, g, gNew] = [betaNew, beta, etaNew, eta, vNew, v, gNew, g];
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
    const e = eta[i]!;
    const logProbObserved = y[i] === 1 ? -log1pExp(-e) : -log1pExp(e);
    if (logProbObserved > LOG_SEPARATED) separatedRows++;
  }
  // A converged fit has finite estimates: rows fitted near 0 or 1 there are extreme, not separated.
  const separation: Separation =
    separatedRows === 0 || status === "converged" ? "none" : separatedRows === rows ? "complete" : "quasi-complete";
  return { coef: beta, logLik: ll, iterations: it, status, separation, separatedRows, rows };
}

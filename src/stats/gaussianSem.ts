/**
 * Maximum-likelihood fit of a linear Gaussian structural model on a graph with arrows and
 * `<->` edges (an acyclic directed mixed graph), from the covariance matrix of the data.
 *
 * Terms: X = B X + ε with B[i][j] ≠ 0 only for an arrow j -> i, and ε ~ N(0, Ω) with Ω[i][j] ≠ 0
 * off the diagonal only for i <-> j (correlated errors: an unmeasured common cause). S is the
 * maximum-likelihood covariance (divisor n) of the centred data; the means are fitted exactly
 * and drop out of the likelihood. The fit is *residual iterative conditional fitting* (RICF;
 * Drton, Eichler & Richardson 2009, J. Mach. Learn. Res. 10:2329–2348 — from memory): node by
 * node, X_i is regressed on its parents and on the *pseudo-variables* Z_sp = (ε_{−i} Ω_{−i,−i}⁻¹)
 * of its `<->` partners, which gives row i of B and the covariances Ω[i][sp]; then
 * ω_ii = RSS/n + Ω_{i,−i} Ω_{−i,−i}⁻¹ Ω_{−i,i}. Each step raises the likelihood; sweeps repeat
 * until the parameters stop changing. Without `<->` edges one sweep is exact: each node is an
 * ordinary least-squares regression on its parents.
 * The log-likelihood is ℓ = −n/2 · (p ln 2π + ln|Σ̂| + tr(Σ̂⁻¹ S)) with Σ̂ = (I − B)⁻¹ Ω (I − B)⁻ᵀ,
 * and BIC = −2ℓ + k ln n with k = 2p + arrows + `<->` edges (means, variances, edge parameters;
 * Schwarz 1978, Ann. Statist. 6:461–464).
 */
import { cholesky, choleskyLogDet, choleskySolve } from "./linalg.js";

export interface SemFit {
  /** Maximised log-likelihood. */
  logLik: number;
  /** Free parameters counted in the BIC. */
  parameters: number;
  bic: number;
  /** RICF sweeps made. */
  sweeps: number;
  converged: boolean;
  /** Fitted B (row-major p×p, B[i·p + j] for j -> i) and Ω (row-major p×p). */
  B: Float64Array;
  Omega: Float64Array;
}

export interface SemOptions {
  /** Relative change of every parameter below which the fit has converged. Default 1e-10. */
  tol?: number;
  /** Most sweeps. Default 5000. */
  maxSweeps?: number;
}

/**
 * Fit the model (see the module comment). `parents[i]` and `spouses[i]` are node indices; every
 * `<->` edge must be listed at both ends.
 * Cost: O(sweeps · p · p³) (each node step solves with Ω_{−i,−i}); one sweep without `<->` edges.
 * @throws RangeError when S is not p×p, n < 1, an index is out of range, or the model cannot be
 *   fitted (a singular covariance among a node's regressors)
 * @example fitGaussianSem([1, 0.5, 0.5, 1], 2, 100, [[], [0]], [[], []]).logLik
 */
export function fitGaussianSem(S: ArrayLike<number>, p: number, n: number, parents: readonly (readonly number[])[], spouses: readonly (readonly number[])[], options: SemOptions = {}): SemFit {
  if (S.length !== p * p) throw new RangeError(`the covariance matrix has ${S.length} entries, not ${p}×${p}`);
  if (!(n >= 1)) throw new RangeError(`n must be at least 1, got ${n}`);
  for (const list of [...parents, ...spouses]) for (const j of list) if (!(Number.isInteger(j) && j >= 0 && j < p)) throw new RangeError(`node index ${j} is not in 0..${p - 1}`);
  const tol = options.tol ?? 1e-10;
  const maxSweeps = options.maxSweeps ?? 5000;
  const B = new Float64Array(p * p);
  const Omega = new Float64Array(p * p);
  for (let i = 0; i < p; i++) Omega[i * p + i] = S[i * p + i]!;
  const anySpouse = spouses.some((s) => s.length > 0);
  let sweeps = 0;
  let converged = false;
  while (sweeps < maxSweeps) {
    sweeps++;
    let change = 0;
    for (let i = 0; i < p; i++) change = Math.max(change, updateNode(S, p, i, parents[i] ?? [], spouses[i] ?? [], B, Omega));
    if (!anySpouse || change < tol) {
      converged = true;
      break;
    }
  }
  // Σ̂ = A⁻¹ Ω A⁻ᵀ with A = I − B
  const Ainv = inverseOfIMinus(B, p);
  const sigma = new Float64Array(p * p);
  const tmp = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) {
    let s = 0;
    for (let k = 0; k < p; k++) s += Ainv[i * p + k]! * Omega[k * p + j]!;
    tmp[i * p + j] = s;
  }
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) {
    let s = 0;
    for (let k = 0; k < p; k++) s += tmp[i * p + k]! * Ainv[j * p + k]!;
    sigma[i * p + j] = s;
  }
  const L = cholesky(sigma, p);
  if (!L) throw new RangeError("the fitted covariance is not positive definite; the model cannot be fitted to these data");
  let trace = 0;
  for (let j = 0; j < p; j++) {
    const col = new Float64Array(p);
    for (let i = 0; i < p; i++) col[i] = S[i * p + j]!;
    trace += choleskySolve(L, p, col)[j]!;
  }
  const logLik = (-n / 2) * (p * Math.log(2 * Math.PI) + choleskyLogDet(L, p) + trace);
  let edges = 0;
  for (const list of parents) edges += list.length;
  let bidirected = 0;
  for (const list of spouses) bidirected += list.length;
  const parameters = 2 * p + edges + bidirected / 2;
  return { logLik, parameters, bic: -2 * logLik + parameters * Math.log(n), sweeps, converged, B, Omega };
}

/** One RICF step for node i; returns the largest relative change of its parameters. */
function updateNode(S: ArrayLike<number>, p: number, i: number, pa: readonly number[], sp: readonly number[], B: Float64Array, Omega: Float64Array): number {
  const old = [...pa.map((j) => B[i * p + j]!), ...sp.map((j) => Omega[i * p + j]!), Omega[i * p + i]!];
  const others: number[] = [];
  for (let j = 0; j < p; j++) if (j !== i) others.push(j);
  const m = others.length;
  const q = pa.length + sp.length;
  // W = Ω_{−i,−i}⁻¹ restricted to the spouse columns (m × |sp|), when there are spouses
  let W: Float64Array[] = [];
  let Loo: Float64Array | undefined;
  if (sp.length > 0) {
    const Ooo = new Float64Array(m * m);
    for (let a = 0; a < m; a++) for (let b = 0; b < m; b++) Ooo[a * m + b] = Omega[others[a]! * p + others[b]!]!;
    Loo = cholesky(Ooo, m);
    if (!Loo) throw new RangeError("the error covariance became singular while fitting; the model cannot be fitted to these data");
    W = sp.map((j) => {
      const e = new Float64Array(m);
      e[others.indexOf(j)] = 1;
      return choleskySolve(Loo!, m, e);
    });
  }
  // ε_{−i} = (A X)_{−i} with A = I − B; cov(ε_a, X_j) = Σ_k A[a][k] S[k][j]
  const covEpsX = (a: number, j: number): number => {
    let s = S[a * p + j]!;
    for (let k = 0; k < p; k++) {
      const b = B[a * p + k]!;
      if (b !== 0) s -= b * S[k * p + j]!;
    }
    return s;
  };
  // cov(Z_s, X_j) = Σ_a W_s[a] cov(ε_{others[a]}, X_j)
  const CzX: Float64Array[] = W.map((w) => {
    const row = new Float64Array(p);
    for (let j = 0; j < p; j++) {
      let s = 0;
      for (let a = 0; a < m; a++) if (w[a] !== 0) s += w[a]! * covEpsX(others[a]!, j);
      row[j] = s;
    }
    return row;
  });
  // cov(Z_s, Z_t) = Σ_a W_s[a] Σ_k A[others[a]][k] cov(X_k, Z_t)
  const G = new Float64Array(q * q);
  const c = new Float64Array(q);
  for (let a = 0; a < pa.length; a++) {
    for (let b = 0; b < pa.length; b++) G[a * q + b] = S[pa[a]! * p + pa[b]!]!;
    for (let t = 0; t < sp.length; t++) G[a * q + pa.length + t] = G[(pa.length + t) * q + a] = CzX[t]![pa[a]!]!;
    c[a] = S[pa[a]! * p + i]!;
  }
  for (let s = 0; s < sp.length; s++) {
    for (let t = 0; t < sp.length; t++) {
      let v = 0;
      for (let a = 0; a < m; a++) {
        const w = W[s]![a]!;
        if (w === 0) continue;
        const row = others[a]!;
        // cov(ε_row, Z_t) = Σ_k A[row][k] cov(X_k, Z_t)
        let e = CzX[t]![row]!;
        for (let k = 0; k < p; k++) {
          const b = B[row * p + k]!;
          if (b !== 0) e -= b * CzX[t]![k]!;
        }
        v += w * e;
      }
      G[(pa.length + s) * q + pa.length + t] = v;
    }
    c[pa.length + s] = CzX[s]![i]!;
  }
  let rss = S[i * p + i]!;
  const theta = new Float64Array(q);
  if (q > 0) {
    const L = cholesky(G, q);
    if (!L) throw new RangeError(`the regressors of node ${i} are collinear in these data; the model cannot be fitted`);
    theta.set(choleskySolve(L, q, c));
    for (let a = 0; a < q; a++) rss -= c[a]! * theta[a]!;
  }
  for (let a = 0; a < pa.length; a++) B[i * p + pa[a]!] = theta[a]!;
  for (let s = 0; s < sp.length; s++) Omega[i * p + sp[s]!] = Omega[sp[s]! * p + i] = theta[pa.length + s]!;
  // ω_ii = RSS/n + Ω_{i,−i} Ω_{−i,−i}⁻¹ Ω_{−i,i}: only the spouse entries of Ω_{i,−i} are non-zero
  let extra = 0;
  for (let s = 0; s < sp.length; s++) for (let t = 0; t < sp.length; t++) extra += theta[pa.length + s]! * W[t]![others.indexOf(sp[s]!)]! * theta[pa.length + t]!;
  Omega[i * p + i] = Math.max(rss, 0) + extra;
  const now = [...pa.map((j) => B[i * p + j]!), ...sp.map((j) => Omega[i * p + j]!), Omega[i * p + i]!];
  let change = 0;
  for (let k = 0; k < now.length; k++) change = Math.max(change, Math.abs(now[k]! - old[k]!) / (1 + Math.abs(now[k]!)));
  return change;
}

/** (I − B)⁻¹ for an acyclic B (a permuted unit triangular matrix), by Gauss–Jordan elimination. */
function inverseOfIMinus(B: Float64Array, p: number): Float64Array {
  const a = new Float64Array(p * p);
  const inv = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < p; j++) a[i * p + j] = (i === j ? 1 : 0) - B[i * p + j]!;
    inv[i * p + i] = 1;
  }
  for (let col = 0; col < p; col++) {
    let piv = col;
    for (let r = col + 1; r < p; r++) if (Math.abs(a[r * p + col]!) > Math.abs(a[piv * p + col]!)) piv = r;
    if (piv !== col) {
      for (let k = 0; k < p; k++) {
        [a[col * p + k], a[piv * p + k]] = [a[piv * p + k]!, a[col * p + k]!];
        [inv[col * p + k], inv[piv * p + k]] = [inv[piv * p + k]!, inv[col * p + k]!];
      }
    }
    const d = a[col * p + col]!;
    for (let k = 0; k < p; k++) {
      a[col * p + k] = a[col * p + k]! / d;
      inv[col * p + k] = inv[col * p + k]! / d;
    }
    for (let r = 0; r < p; r++) {
      if (r === col) continue;
      const f = a[r * p + col]!;
      if (f === 0) continue;
      for (let k = 0; k < p; k++) {
        a[r * p + k] = a[r * p + k]! - f * a[col * p + k]!;
        inv[r * p + k] = inv[r * p + k]! - f * inv[col * p + k]!;
      }
    }
  }
  return inv;
}

/**
 * The numbers of an efficient score (Rao) test of added parameters in a logistic or multinomial
 * (baseline-category) logit model, in a form that adds up over sites.
 *
 * Terms. Row i has a design row z_i (p columns), outcome y_i ∈ {0, …, K − 1} (category 0 the
 * *baseline*; K = 2 is binary logistic regression) and weight w_i ≥ 0. At fitted category
 * probabilities π_ik the *score* of the parameter (k, j) (category k ≥ 1, column j) is
 * U_kj = Σ w_i z_ij (1{y_i = k} − π_ik), and the *Fisher information* has the entries
 * I_(k,j),(l,j′) = Σ w_i z_ij z_ij′ π_ik (δ_kl − π_il) (McCullagh & Nelder 1989, Generalized
 * Linear Models, 2nd ed., §4.4; Agresti 2013, Categorical Data Analysis, 3rd ed., §8.1).
 * Parameters are stored category by category: index (k − 1)·p + j, as in `multinomialLogit.ts`.
 * The parameters split into *nuisance* parameters b (those of the null model) and *added*
 * parameters a (those the test asks about). The *efficient score* is U_a − I_ab I_bb⁻ U_b and the
 * *efficient information* the Schur complement I_aa − I_ab I_bb⁻ I_ba (Cox & Hinkley 1974,
 * Theoretical Statistics, §9.3; Rao 1948, Proc. Cambridge Phil. Soc. 44:50–57): at the null
 * maximum-likelihood estimate U_b = 0, and the statistic U_aᵀ I_eff⁻¹ U_a is Rao's score test,
 * asymptotically χ² on the rank of I_eff under the null.
 *
 * Pooling (site-specific nuisance parameters). When every site s has nuisance parameters of its
 * own and the added parameters are shared, the information of the stacked rows is block-diagonal
 * in the nuisance blocks, so its efficient information is Σ_s I_eff,s and its score Σ_s U_s:
 * the pooled statistic (Σ U_s)ᵀ (Σ I_eff,s)⁺ (Σ U_s) is the score test of the stacked model with
 * every nuisance parameter interacted with site, computed from one vector and one matrix per
 * site (`pooledScoreStatistic`).
 *
 * Rank. `I_bb⁻` is the generalised inverse of a Cholesky sweep that skips the directions with no
 * information (`sweepFactor`): a pivot at or below 1e-9 of its column's diagonal (the column is
 * aliased with earlier ones: the rule of `regression-lr`), or a diagonal at or below 1e-12 of the
 * largest one (the rows it acts on are fitted with certainty: separation at the limit, or a level
 * absent). For a positive semi-definite information every generalised inverse gives the same
 * Schur complement and the same efficient score, since I_ba and U_b lie in the column space of
 * I_bb. The pooled quadratic form is taken on the information scaled to unit diagonal with
 * diagonal pivoting (largest remaining pivot first) and the same two rules; df is its rank.
 * Probabilities: 1 − π_ik is taken as the sum of the other categories' probabilities, so that
 * rows fitted with near certainty keep their (tiny) weights π(1 − π) to relative precision.
 */
import { chiSquareUpper, logChiSquareUpper } from "./pvalues.js";

/** A pivot at or below this times its column's diagonal entry marks an aliased direction (as `regression-lr`'s aliasing rule). */
export const ALIASED_PIVOT = 1e-9;
/** A diagonal entry at or below this times the largest one marks a direction without information (rows fitted with certainty). */
export const VANISHED_DIAGONAL = 1e-12;

/** Score vector and information matrix of a model's parameters at given probabilities. */
export interface ScoreInformation {
  /** Length P = (K − 1)·p, category by category. */
  score: Float64Array;
  /** P × P, row-major, both triangles. */
  information: Float64Array;
  /** Σ w_i ln π_{i,y_i} (−Infinity when an observed category has probability 0). */
  logLik: number;
}

function checkSizes(Z: ArrayLike<number>, m: number, p: number, y: ArrayLike<number>, K: number, w: ArrayLike<number> | undefined): void {
  if (!(Number.isInteger(m) && m >= 0 && Number.isInteger(p) && p >= 1)) throw new RangeError(`design sizes must be whole numbers (m ≥ 0, p ≥ 1), got ${m} × ${p}`);
  if (!(Number.isInteger(K) && K >= 2)) throw new RangeError(`number of categories must be an integer ≥ 2, got ${K}`);
  if (Z.length !== m * p) throw new RangeError(`design has ${Z.length} entries, expected ${m}×${p}`);
  if (y.length !== m) throw new RangeError(`outcome has ${y.length} entries, expected ${m}`);
  if (w && w.length !== m) throw new RangeError(`weights have ${w.length} entries, expected ${m}`);
  for (let i = 0; i < m; i++) {
    const v = y[i]!;
    if (!(Number.isInteger(v) && v >= 0 && v < K)) throw new RangeError(`outcome ${i} is ${v}, expected an integer in 0..${K - 1}`);
    if (w && !(w[i]! >= 0)) throw new RangeError(`weight ${i} is ${w[i]}, expected a number ≥ 0`);
  }
}

/**
 * Score, information and log-likelihood of the multinomial logit parameters (K − 1)·p at the
 * category probabilities `prob` (row-major m × K; each row sums to 1). A row with weight 0, or
 * whose probabilities put 1 on its observed category and 0 elsewhere, adds nothing.
 * Cost: O(m·K²·p²).
 * Source: McCullagh & Nelder (1989), §4.4; Agresti (2013), §8.1.
 * @throws RangeError when sizes disagree, an outcome is not in 0..K−1 or a weight is negative
 * @example
 * // one binary row at π = 0.5 with an intercept: score 0.5, information 0.25
 * scoreInformationAt(new Float64Array([1]), 1, 1, [1], 2, new Float64Array([0.5, 0.5])).information // [0.25]
 */
export function scoreInformationAt(
  Z: ArrayLike<number>, m: number, p: number, y: ArrayLike<number>, K: number, prob: ArrayLike<number>, weights?: ArrayLike<number>,
): ScoreInformation {
  checkSizes(Z, m, p, y, K, weights);
  if (prob.length !== m * K) throw new RangeError(`probabilities have ${prob.length} entries, expected ${m}×${K}`);
  const q = K - 1;
  const P = q * p;
  const U = new Float64Array(P);
  const I = new Float64Array(P * P);
  const v = new Float64Array(q * q); // π_k(δ_kl − π_l) of the row
  const r = new Float64Array(q);
  let ll = 0;
  for (let i = 0; i < m; i++) {
    const wi = weights ? weights[i]! : 1;
    if (wi === 0) continue;
    const pi = i * K;
    const yi = y[i]!;
    let others = 0; // 1 − π_{i,y_i}, as the sum of the other categories
    for (let l = 0; l < K; l++) if (l !== yi) others += prob[pi + l]!;
    ll += wi * Math.log(prob[pi + yi]!);
    for (let k = 1; k < K; k++) {
      const pk = prob[pi + k]!;
      r[k - 1] = wi * (yi === k ? others : -pk);
      for (let l = 1; l < K; l++) {
        if (l === k) {
          let rest = 0;
          for (let t = 0; t < K; t++) if (t !== k) rest += prob[pi + t]!;
          v[(k - 1) * q + (l - 1)] = wi * pk * rest;
        } else v[(k - 1) * q + (l - 1)] = -wi * pk * prob[pi + l]!;
      }
    }
    const zi = i * p;
    for (let k = 0; k < q; k++) {
      const rk = r[k]!;
      if (rk !== 0) for (let j = 0; j < p; j++) U[k * p + j] = U[k * p + j]! + rk * Z[zi + j]!;
      for (let l = k; l < q; l++) {
        const vkl = v[k * q + l]!;
        if (vkl === 0) continue;
        for (let j = 0; j < p; j++) {
          const a = vkl * Z[zi + j]!;
          if (a === 0) continue;
          const row = (k * p + j) * P + l * p;
          for (let j2 = 0; j2 < p; j2++) I[row + j2] = I[row + j2]! + a * Z[zi + j2]!;
        }
      }
    }
  }
  // the blocks l < k from their transposes
  for (let k = 0; k < q; k++) {
    for (let l = 0; l < k; l++) {
      for (let j = 0; j < p; j++) for (let j2 = 0; j2 < p; j2++) I[(k * p + j) * P + l * p + j2] = I[(l * p + j2) * P + k * p + j]!;
    }
  }
  return { score: U, information: I, logLik: ll };
}

/**
 * Category probabilities (row-major m × K) of a multinomial logit with coefficients `coef`
 * ((K − 1)·p, category by category; K = 2 is logistic regression) on the design Z (m × p).
 * Softmax with the largest linear predictor subtracted, so no exponential overflows.
 * Cost: O(m·K·p).
 * @throws RangeError when sizes disagree
 * @example categoryProbabilities(new Float64Array([1]), 1, 1, 2, [0]) // [0.5, 0.5]
 */
export function categoryProbabilities(Z: ArrayLike<number>, m: number, p: number, K: number, coef: ArrayLike<number>): Float64Array {
  if (Z.length !== m * p) throw new RangeError(`design has ${Z.length} entries, expected ${m}×${p}`);
  if (coef.length !== (K - 1) * p) throw new RangeError(`coefficients have ${coef.length} entries, expected ${(K - 1) * p}`);
  const out = new Float64Array(m * K);
  const eta = new Float64Array(K);
  for (let i = 0; i < m; i++) {
    let mx = 0;
    for (let k = 1; k < K; k++) {
      let e = 0;
      for (let j = 0; j < p; j++) e += Z[i * p + j]! * coef[(k - 1) * p + j]!;
      eta[k] = e;
      if (e > mx) mx = e;
    }
    let s = 0;
    for (let k = 0; k < K; k++) {
      const e = Math.exp(eta[k]! - mx);
      out[i * K + k] = e;
      s += e;
    }
    for (let k = 0; k < K; k++) out[i * K + k] = out[i * K + k]! / s;
  }
  return out;
}

/**
 * Score and information of a multinomial logit (K categories; K = 2: logistic) at coefficients
 * `coef` on the design Z (m × p); see {@link scoreInformationAt}. Cost: O(m·K²·p²).
 * @throws RangeError as scoreInformationAt and categoryProbabilities
 * @example
 * // intercept only, y = [1, 0, 0, 0] at coef ln(1/3), the MLE: score ≈ 0, information 4·0.25·0.75
 * multinomialScoreInformation(new Float64Array([1, 1, 1, 1]), 4, 1, [1, 0, 0, 0], 2, [Math.log(1 / 3)]).information // [0.75]
 */
export function multinomialScoreInformation(
  Z: ArrayLike<number>, m: number, p: number, y: ArrayLike<number>, K: number, coef: ArrayLike<number>, weights?: ArrayLike<number>,
): ScoreInformation {
  return scoreInformationAt(Z, m, p, y, K, categoryProbabilities(Z, m, p, K, coef), weights);
}

/**
 * A Cholesky sweep of the symmetric positive semi-definite submatrix A[idx, idx] in the order of
 * `idx` that skips directions without information (module comment: a pivot at or below
 * {@link ALIASED_PIVOT} times its diagonal, or a diagonal at or below {@link VANISHED_DIAGONAL}
 * times the largest). Returns the kept positions (into idx) and the factor L restricted to them
 * (row-major r × r, r kept). Cost: O(|idx|³).
 * Source: Golub & Van Loan (2013), Matrix Computations, 4th ed., §4.2 (Cholesky), restricted to
 * the columns it keeps.
 */
export function sweepFactor(A: ArrayLike<number>, P: number, idx: readonly number[]): { kept: number[]; L: Float64Array } {
  const n = idx.length;
  let maxDiag = 0;
  for (const j of idx) maxDiag = Math.max(maxDiag, A[j * P + j]!);
  const kept: number[] = [];
  const rows: Float64Array[] = [];
  for (let t = 0; t < n; t++) {
    const j = idx[t]!;
    const diag = A[j * P + j]!;
    if (!(diag > VANISHED_DIAGONAL * maxDiag) || !(diag > 0)) continue;
    const row = new Float64Array(kept.length + 1);
    for (let u = 0; u < kept.length; u++) {
      let s = A[j * P + idx[kept[u]!]!]!;
      for (let v = 0; v < u; v++) s -= row[v]! * rows[u]![v]!;
      row[u] = s / rows[u]![u]!;
    }
    let d = diag;
    for (let u = 0; u < kept.length; u++) d -= row[u]! * row[u]!;
    if (!(d > ALIASED_PIVOT * diag)) continue;
    row[kept.length] = Math.sqrt(d);
    kept.push(t);
    rows.push(row);
  }
  const r = kept.length;
  const L = new Float64Array(r * r);
  rows.forEach((row, u) => L.set(row, u * r));
  return { kept, L };
}

/** Solve L x = b (L lower triangular r × r) in place. */
function forward(L: Float64Array, r: number, b: Float64Array): Float64Array {
  for (let i = 0; i < r; i++) {
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= L[i * r + k]! * b[k]!;
    b[i] = s / L[i * r + i]!;
  }
  return b;
}

/** What {@link efficientScore} returns. */
export interface EfficientScore {
  /** U_a − I_ab I_bb⁻ U_b, length |added|. */
  score: Float64Array;
  /** I_aa − I_ab I_bb⁻ I_ba, |added| × |added|, row-major. */
  information: Float64Array;
  /** Rank of I_bb found by the sweep. */
  nuisanceRank: number;
}

/**
 * Efficient score and efficient information of the `added` parameters with the `nuisance` ones
 * profiled out (module comment): the Schur complement of the nuisance block, through a Cholesky
 * sweep of I_bb that skips directions without information ({@link sweepFactor}).
 * Cost: O(b³ + b²·a + b·a²) for b nuisance and a added parameters.
 * Source: Cox & Hinkley (1974), Theoretical Statistics, §9.3 (the efficient score); Golub & Van
 * Loan (2013), §4.2 (Cholesky).
 * @throws RangeError when sizes disagree or an index is outside 0..P−1
 * @example
 * // I = [[2, 1], [1, 2]], U = [0, 1]: efficient information 2 − 1/2 = 1.5, score 1
 * efficientScore(new Float64Array([0, 1]), new Float64Array([2, 1, 1, 2]), 2, [1], [0]).information // [1.5]
 */
export function efficientScore(U: ArrayLike<number>, I: ArrayLike<number>, P: number, added: readonly number[], nuisance: readonly number[]): EfficientScore {
  if (U.length !== P || I.length !== P * P) throw new RangeError(`score has ${U.length} and information ${I.length} entries, expected ${P} and ${P}×${P}`);
  for (const j of [...added, ...nuisance]) if (!(Number.isInteger(j) && j >= 0 && j < P)) throw new RangeError(`parameter index ${j} is outside 0..${P - 1}`);
  const a = added.length;
  const { kept, L } = sweepFactor(I, P, nuisance);
  const r = kept.length;
  const b = kept.map((t) => nuisance[t]!);
  // W = L⁻¹ I_ba (r × a), column by column; u = L⁻¹ U_b
  const W = new Float64Array(r * a);
  const col = new Float64Array(r);
  for (let c = 0; c < a; c++) {
    for (let t = 0; t < r; t++) col[t] = I[b[t]! * P + added[c]!]!;
    forward(L, r, col);
    for (let t = 0; t < r; t++) W[t * a + c] = col[t]!;
  }
  const u = forward(L, r, Float64Array.from(b, (j) => U[j]!));
  const score = new Float64Array(a);
  const info = new Float64Array(a * a);
  for (let c = 0; c < a; c++) {
    let s = U[added[c]!]!;
    for (let t = 0; t < r; t++) s -= W[t * a + c]! * u[t]!;
    score[c] = s;
    for (let c2 = c; c2 < a; c2++) {
      let v = I[added[c]! * P + added[c2]!]!;
      for (let t = 0; t < r; t++) v -= W[t * a + c]! * W[t * a + c2]!;
      info[c * a + c2] = v;
      info[c2 * a + c] = v;
    }
  }
  return { score, information: info, nuisanceRank: r };
}

/** What {@link scoreQuadraticForm} returns. */
export interface ScoreStatistic {
  /** Uᵀ I⁺ U on the kept directions. */
  statistic: number;
  /** Rank of I (directions kept). */
  df: number;
  /** Coordinates kept, in pivot order. */
  kept: number[];
  /** Coordinates dropped: no information, or aliased with kept ones. */
  dropped: number[];
}

/**
 * The rank-revealing score statistic Uᵀ I⁺ U of a score vector and its (efficient) information
 * (a × a): I scaled to unit diagonal, then a Cholesky factorisation with diagonal pivoting
 * (largest remaining pivot first) that stops at pivots at or below {@link ALIASED_PIVOT}; a
 * coordinate whose diagonal is at or below {@link VANISHED_DIAGONAL} times the largest is dropped
 * first. df is the number of pivots kept. Cost: O(a³).
 * Source: Golub & Van Loan (2013), §5.4.2 (Cholesky with pivoting, rank revealing); Rao (1948).
 * @throws RangeError when sizes disagree
 * @example
 * // two coordinates, the second a copy of the first: df 1
 * scoreQuadraticForm(new Float64Array([1, 1]), new Float64Array([1, 1, 1, 1]), 2) // { statistic: 1, df: 1, … }
 */
export function scoreQuadraticForm(U: ArrayLike<number>, I: ArrayLike<number>, a: number): ScoreStatistic {
  if (U.length !== a || I.length !== a * a) throw new RangeError(`score has ${U.length} and information ${I.length} entries, expected ${a} and ${a}×${a}`);
  let maxDiag = 0;
  for (let j = 0; j < a; j++) maxDiag = Math.max(maxDiag, I[j * a + j]!);
  const live: number[] = [];
  const dropped: number[] = [];
  for (let j = 0; j < a; j++) (I[j * a + j]! > VANISHED_DIAGONAL * maxDiag && I[j * a + j]! > 0 && Number.isFinite(I[j * a + j]!) ? live : dropped).push(j);
  const n = live.length;
  const s = live.map((j) => 1 / Math.sqrt(I[j * a + j]!));
  const A = new Float64Array(n * n);
  for (let t = 0; t < n; t++) for (let u = 0; u < n; u++) A[t * n + u] = I[live[t]! * a + live[u]!]! * s[t]! * s[u]!;
  const z = Float64Array.from(live, (j, t) => U[j]! * s[t]!);
  // pivoted Cholesky on A (in place, lower part), permuting z alongside
  const perm = live.map((_, t) => t);
  let r = 0;
  for (; r < n; r++) {
    let best = r;
    for (let t = r + 1; t < n; t++) if (A[t * n + t]! > A[best * n + best]!) best = t;
    if (!(A[best * n + best]! > ALIASED_PIVOT)) break;
    if (best !== r) {
      for (let c = 0; c < n; c++) [A[r * n + c], A[best * n + c]] = [A[best * n + c]!, A[r * n + c]!];
      for (let c = 0; c < n; c++) [A[c * n + r], A[c * n + best]] = [A[c * n + best]!, A[c * n + r]!];
      [perm[r], perm[best]] = [perm[best]!, perm[r]!];
      [z[r], z[best]] = [z[best]!, z[r]!];
    }
    const d = Math.sqrt(A[r * n + r]!);
    A[r * n + r] = d;
    for (let t = r + 1; t < n; t++) A[t * n + r] = A[t * n + r]! / d;
    for (let t = r + 1; t < n; t++) for (let u = r + 1; u <= t; u++) {
      A[t * n + u] = A[t * n + u]! - A[t * n + r]! * A[u * n + r]!;
      A[u * n + t] = A[t * n + u]!;
    }
  }
  // ‖L⁻¹ z‖² over the r kept pivots
  let stat = 0;
  for (let t = 0; t < r; t++) {
    let v = z[t]!;
    for (let k = 0; k < t; k++) v -= A[t * n + k]! * z[k]!;
    v /= A[t * n + t]!;
    z[t] = v;
    stat += v * v;
  }
  const kept = perm.slice(0, r).map((t) => live[t]!);
  for (const t of perm.slice(r)) dropped.push(live[t]!);
  return { statistic: stat, df: r, kept, dropped: dropped.sort((x, y) => x - y) };
}

/** What {@link pooledScoreStatistic} returns. */
export interface PooledScore extends ScoreStatistic {
  /** Σ U_s. */
  score: Float64Array;
  /** Σ I_s (a × a). */
  information: Float64Array;
  /** P(χ²(df) ≥ statistic), never exactly 0 (Number.MIN_VALUE where it underflows); 1 when df is 0. */
  p: number;
  /** ln P(χ²(df) ≥ statistic), exact where p underflows. */
  log_p: number;
}

/**
 * The pooled efficient score test over sites (module comment): U = Σ U_s, I = Σ I_s, statistic
 * Uᵀ I⁺ U on the rank of I ({@link scoreQuadraticForm}), p from χ²(df) in log space.
 * Cost: O(S·a² + a³) for S sites.
 * Source: Rao (1948), Proc. Cambridge Phil. Soc. 44:50–57; Cox & Hinkley (1974), §9.3.
 * @throws RangeError when there is no site or the sites' sizes disagree
 * @example pooledScoreStatistic([{ score: [1], information: [[2]] }, { score: [1], information: [[2]] }]).statistic // 1
 */
export function pooledScoreStatistic(sites: readonly { score: ArrayLike<number>; information: ArrayLike<ArrayLike<number>> }[]): PooledScore {
  if (sites.length === 0) throw new RangeError("pooledScoreStatistic needs at least one site");
  const a = sites[0]!.score.length;
  const U = new Float64Array(a);
  const I = new Float64Array(a * a);
  sites.forEach((s, i) => {
    if (s.score.length !== a || s.information.length !== a) throw new RangeError(`site ${i} has ${s.score.length} score entries and ${s.information.length} information rows, expected ${a}`);
    for (let c = 0; c < a; c++) {
      U[c] = U[c]! + s.score[c]!;
      const row = s.information[c]!;
      if (row.length !== a) throw new RangeError(`site ${i} information row ${c} has ${row.length} entries, expected ${a}`);
      for (let c2 = 0; c2 < a; c2++) I[c * a + c2] = I[c * a + c2]! + row[c2]!;
    }
  });
  // symmetrise the sum (each site's matrix is symmetric up to rounding)
  for (let c = 0; c < a; c++) for (let c2 = c + 1; c2 < a; c2++) I[c * a + c2] = I[c2 * a + c] = (I[c * a + c2]! + I[c2 * a + c]!) / 2;
  const q = scoreQuadraticForm(U, I, a);
  const p = q.df > 0 ? chiSquareUpper(q.statistic, q.df) : 1;
  const logP = q.df > 0 ? logChiSquareUpper(q.statistic, q.df) : 0;
  return { ...q, score: U, information: I, p: p > 0 ? p : Number.MIN_VALUE, log_p: logP };
}

/**
 * The Newton step δ that solves I δ = U on the directions with information (a Cholesky sweep of
 * I, {@link sweepFactor}), leaving the others at 0: one step of Fisher scoring from coefficients
 * whose score is U and information I. Used to take a fit that stopped at its convergence
 * criterion (coefficients within about 1e-7) to the maximum to working precision, which the
 * efficient information needs: it depends on the coefficients to first order. Cost: O(P³).
 * Source: McCullagh & Nelder (1989), §2.5 (Fisher scoring); Golub & Van Loan (2013), §4.2.
 * @throws RangeError when sizes disagree
 * @example newtonStep(new Float64Array([1, 0]), new Float64Array([2, 0, 0, 0]), 2) // [0.5, 0]
 */
export function newtonStep(U: ArrayLike<number>, I: ArrayLike<number>, P: number): Float64Array {
  if (U.length !== P || I.length !== P * P) throw new RangeError(`score has ${U.length} and information ${I.length} entries, expected ${P} and ${P}×${P}`);
  const all = Array.from({ length: P }, (_, j) => j);
  const { kept, L } = sweepFactor(I, P, all);
  const r = kept.length;
  const y = forward(L, r, Float64Array.from(kept, (j) => U[j]!));
  for (let i = r - 1; i >= 0; i--) {
    let s = y[i]!;
    for (let k = i + 1; k < r; k++) s -= L[k * r + i]! * y[k]!;
    y[i] = s / L[i * r + i]!;
  }
  const delta = new Float64Array(P);
  kept.forEach((j, t) => (delta[j] = y[t]!));
  return delta;
}

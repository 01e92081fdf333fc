/**
 * Monte-Carlo permutation p-values.
 *
 * Terms: permuting x within a stratum keeps every stratum's x margin and y margin fixed, so
 * the permuted x × y table of a stratum follows the multivariate hypergeometric distribution
 * given its margins. Two exact ways to draw such a table are used here:
 * - *expanded shuffle*: the stratum's rows (x code, y code) are kept as two small arrays and
 *   x is shuffled by Fisher–Yates (Durstenfeld 1964, CACM 7(7):420) — O(n_s) per draw, best
 *   for small strata;
 * - *sequential hypergeometric*: cell by cell, each count is drawn from the univariate
 *   hypergeometric distribution given what is left of its row and column (the conditional
 *   decomposition used by Patefield 1981, Applied Statistics 30:91–97, algorithm AS 159),
 *   each draw by inversion from the mode — O(r·c·√n_s) per draw, best for large strata.
 * The *Monte-Carlo p-value* of B draws is p = (1 + #{T* ≥ T})/(1 + B) (Davison & Hinkley 1997,
 * Bootstrap Methods and their Application, Cambridge University Press, eq. 4.11), never 0.
 * The *sequential Monte-Carlo p-value* (Besag & Clifford 1991, Biometrika 78:301–304) stops as
 * soon as h draws reach T: after L draws with h hits, p = h/L; if B draws never reach h hits it
 * is the ordinary (1 + hits)/(1 + B). It is a valid p-value and saves most of the work when the
 * observed statistic is unremarkable.
 */
import type { Rng } from "./rng.js";

/**
 * Monte-Carlo p-value (1 + #{T* ≥ T})/(1 + B) of an observed statistic against B draws.
 * A draw counts as "at least as extreme" when T* ≥ T − 1e-9·max(1, |T|), so values equal up to
 * rounding are ties (common practice). Cost: O(B) calls of `draw`.
 * Source: Davison & Hinkley (1997), Bootstrap Methods and their Application, eq. 4.11.
 * @throws RangeError when B is not a positive integer or the observed statistic is not finite
 * @example monteCarloPValue(3, 4, () => 1) // (1 + 0) / 5 = 0.2
 */
export function monteCarloPValue(observed: number, B: number, draw: () => number): number {
  if (!Number.isInteger(B) || B < 1) throw new RangeError(`permutations must be a positive integer, got ${B}; pass e.g. 2000`);
  if (!Number.isFinite(observed)) throw new RangeError(`observed statistic must be finite, got ${observed}`);
  const bar = observed - 1e-9 * Math.max(1, Math.abs(observed));
  let hits = 0;
  for (let b = 0; b < B; b++) if (draw() >= bar) hits++;
  return (1 + hits) / (1 + B);
}

/**
 * Sequential Monte-Carlo p-value: draw until `h` draws reach the observed statistic (p = h/L
 * after L draws) or `B` draws are made (p = (1 + hits)/(1 + B)). Ties as in {@link monteCarloPValue}.
 * Cost: O(min(B, about h/p)) calls of `draw`.
 * Source: Besag & Clifford (1991), Biometrika 78:301–304.
 * @throws RangeError when B or h is not a positive integer or the observed statistic is not finite
 * @example sequentialMonteCarloPValue(0, 1000, 10, () => 1) // { p: 1, draws: 10 }
 */
export function sequentialMonteCarloPValue(observed: number, B: number, h: number, draw: () => number): { p: number; draws: number } {
  if (!Number.isInteger(B) || B < 1) throw new RangeError(`permutations must be a positive integer, got ${B}; pass e.g. 2000`);
  if (!Number.isInteger(h) || h < 1) throw new RangeError(`stopping count h must be a positive integer, got ${h}`);
  if (!Number.isFinite(observed)) throw new RangeError(`observed statistic must be finite, got ${observed}`);
  const bar = observed - 1e-9 * Math.max(1, Math.abs(observed));
  let hits = 0;
  for (let b = 1; b <= B; b++) {
    if (draw() >= bar) hits++;
    if (hits === h) return { p: h / b, draws: b };
  }
  return { p: (1 + hits) / (1 + B), draws: B };
}

/**
 * In-place Fisher–Yates shuffle of the first `n` entries of `a` (default all).
 * Cost: O(n). Source: Durstenfeld (1964), CACM 7(7):420.
 * @example shuffleInPlace(new Int32Array([1, 2, 3]), createRng(1)) // a permutation of 1, 2, 3
 */
export function shuffleInPlace<T extends { length: number; [i: number]: number }>(a: T, rng: Rng, n = a.length): T {
  for (let i = n - 1; i > 0; i--) {
    const j = rng.nextInt(i + 1);
    const t = a[i]!;
    a[i] = a[j]!;
    a[j] = t;
  }
  return a;
}

/**
 * Table of log(k!) for k = 0..n, by cumulative sums of log k. Cost: O(n).
 * @example logFactorialTable(3)[3] // log 6
 */
export function logFactorialTable(n: number): Float64Array {
  const t = new Float64Array(n + 1);
  for (let k = 2; k <= n; k++) t[k] = t[k - 1]! + Math.log(k);
  return t;
}

/**
 * One draw from the hypergeometric distribution: the number of marked items among `draws`
 * items taken without replacement from `total` items of which `marked` are marked.
 * Inversion from the mode (the support is visited mode, mode+1, mode−1, mode+2, …), with
 * probability ratios; `logFact` must hold log(k!) for k ≤ total (see `logFactorialTable`).
 * Cost: O(standard deviation + 1) expected.
 * Source: the inversion method, Devroye (1986), Non-Uniform Random Variate Generation, §II.2.
 * @example hypergeometricDraw(createRng(1), 10, 10, 10, logFactorialTable(10)) // 10
 */
export function hypergeometricDraw(rng: Rng, total: number, marked: number, draws: number, logFact: Float64Array): number {
  const lo = Math.max(0, draws - (total - marked));
  const hi = Math.min(draws, marked);
  if (lo === hi) return lo;
  let mode = Math.floor(((draws + 1) * (marked + 1)) / (total + 2));
  if (mode < lo) mode = lo;
  if (mode > hi) mode = hi;
  const unmarked = total - marked;
  const logP = (k: number): number =>
    logFact[marked]! - logFact[k]! - logFact[marked - k]! +
    logFact[unmarked]! - logFact[draws - k]! - logFact[unmarked - draws + k]! -
    (logFact[total]! - logFact[draws]! - logFact[total - draws]!);
  const pMode = Math.exp(logP(mode));
  let u = rng.nextFloat() - pMode;
  if (u < 0) return mode;
  let up = mode;
  let down = mode;
  let pUp = pMode;
  let pDown = pMode;
  for (;;) {
    const canUp = up < hi;
    const canDown = down > lo;
    if (!canUp && !canDown) return mode; // rounding left a sliver of mass: return the mode
    if (canUp) {
      // p(k+1)/p(k) = (marked−k)(draws−k) / ((k+1)(unmarked−draws+k+1))
      pUp *= ((marked - up) * (draws - up)) / ((up + 1) * (unmarked - draws + up + 1));
      up++;
      u -= pUp;
      if (u < 0) return up;
    }
    if (canDown) {
      // p(k−1)/p(k) = k(unmarked−draws+k) / ((marked−k+1)(draws−k+1))
      pDown *= (down * (unmarked - draws + down)) / ((marked - down + 1) * (draws - down + 1));
      down--;
      u -= pDown;
      if (u < 0) return down;
    }
  }
}

/**
 * Random r × c table with the given row and column margins, distributed as the table of a
 * random permutation of one variable against the other (multivariate hypergeometric), drawn
 * cell by cell from conditional hypergeometric distributions. Writes row-major into `out`.
 * Cost: O(r·c·(√n + 1)) expected, n the grand total.
 * Source: the conditional decomposition of Patefield (1981), Applied Statistics 30:91–97.
 * @throws RangeError when the margins do not have the same total
 * @example
 * const out = new Float64Array(4);
 * randomTableWithMargins([2, 1], [1, 2], createRng(1), logFactorialTable(3), out); // e.g. [1, 1, 0, 1]
 */
export function randomTableWithMargins(
  rowMargins: ArrayLike<number>,
  colMargins: ArrayLike<number>,
  rng: Rng,
  logFact: Float64Array,
  out: Float64Array,
): Float64Array {
  const r = rowMargins.length;
  const c = colMargins.length;
  let total = 0;
  let colTotal = 0;
  for (let i = 0; i < r; i++) total += rowMargins[i]!;
  for (let j = 0; j < c; j++) colTotal += colMargins[j]!;
  if (total !== colTotal) throw new RangeError(`row margins total ${total} but column margins total ${colTotal}; they must agree`);
  const colLeft = Float64Array.from(colMargins);
  let left = total; // items not yet placed in rows
  for (let i = 0; i < r - 1; i++) {
    let need = rowMargins[i]!;
    let pool = left; // items of columns j.. still available
    for (let j = 0; j < c - 1; j++) {
      const k = need === 0 ? 0 : hypergeometricDraw(rng, pool, colLeft[j]!, need, logFact);
      out[i * c + j] = k;
      need -= k;
      pool -= colLeft[j]!;
      colLeft[j] = colLeft[j]! - k;
    }
    out[i * c + c - 1] = need;
    colLeft[c - 1] = colLeft[c - 1]! - need;
    left -= rowMargins[i]!;
  }
  for (let j = 0; j < c; j++) out[(r - 1) * c + j] = colLeft[j]!;
  return out;
}

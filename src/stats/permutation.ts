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
 * observed statistic is unremarkable, but its precision is not tied to the threshold a verdict
 * faces: the audit's methods draw by the confidence sequence of `monteCarloDecision.ts` instead,
 * and the sequential functions below stay for comparison.
 */
import type { Rng } from "./rng.js";

/**
 * A child stream forked from `rng`: a xoshiro128** generator (Blackman & Vigna 2021, ACM TOMS
 * 47(4):36) whose 128-bit state is four outputs of `rng`, kept in an Int32Array so that V8 never
 * boxes it (about 2.5× faster per number than a generator kept in closure variables). The same
 * parent state always gives the same child stream, so results stay reproducible per claim.
 * `nextInt(n)` takes n ≤ 2^21 (Lemire's multiply-and-reject, exact in doubles).
 * Cost: O(1) per number.
 * @throws RangeError from `nextInt` when n is not an integer in 1..2^21
 * @example
 * const fast = forkRng(createRng(1, "claim"));
 * fast.nextFloat(); // same value on every run
 */
export function forkRng(rng: Rng): Rng {
  const st = new Int32Array(4);
  for (let i = 0; i < 4; i++) st[i] = rng.nextUint32() | 0;
  if ((st[0]! | st[1]! | st[2]! | st[3]!) === 0) st[0] = 1; // the all-zero state is a fixed point
  const nextUint32 = (): number => {
    const s0 = st[0]!;
    const s1 = st[1]!;
    const a = Math.imul(s1, 5);
    const out = Math.imul((a << 7) | (a >>> 25), 9);
    const s2 = st[2]! ^ s0;
    const s3 = st[3]! ^ s1;
    st[1] = s1 ^ s2;
    st[0] = s0 ^ s3;
    st[2] = s2 ^ (s1 << 9);
    st[3] = (s3 << 11) | (s3 >>> 21);
    return out >>> 0;
  };
  const nextFloat = (): number => {
    const hi = nextUint32() >>> 5; // 27 bits
    const lo = nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  };
  const nextInt = (n: number): number => {
    if (!(Number.isInteger(n) && n >= 1 && n <= 2097152)) throw new RangeError(`nextInt bound must be an integer in 1..2^21, got ${n}`);
    // Lemire (2019): x·n < 2^53 is exact; reject the low part below 2^32 mod n.
    const threshold = 4294967296 % n;
    for (;;) {
      const m = nextUint32() * n;
      const hi = Math.floor(m / 4294967296);
      if (m - hi * 4294967296 >= threshold) return hi;
    }
  };
  return { nextUint32, nextFloat, nextInt };
}

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
 * Degenerate supports return at once; a single draw or a single marked item takes one uniform
 * (P(k = 1) = marked/total, resp. draws/total); otherwise inversion from the mode (the support
 * is visited mode, mode+1, mode−1, mode+2, …) with probability ratios, starting from the
 * mode's probability computed from `logFact`, which must hold log(k!) for k ≤ total (see
 * `logFactorialTable`). Exact up to rounding of the cumulative probabilities.
 * Cost: O(standard deviation + 1) expected, one exponential.
 * Source: the inversion method, Devroye (1986), Non-Uniform Random Variate Generation, §II.2.
 * @example hypergeometricDraw(createRng(1), 10, 10, 10, logFactorialTable(10)) // 10
 */
export function hypergeometricDraw(rng: Rng, total: number, marked: number, draws: number, logFact: Float64Array): number {
  const unmarked = total - marked;
  const lo = draws > unmarked ? draws - unmarked : 0;
  const hi = draws < marked ? draws : marked;
  if (lo === hi) return lo;
  if (draws === 1) return rng.nextFloat() * total < marked ? 1 : 0;
  if (marked === 1) return rng.nextFloat() * total < draws ? 1 : 0;
  let mode = Math.floor(((draws + 1) * (marked + 1)) / (total + 2));
  if (mode < lo) mode = lo;
  if (mode > hi) mode = hi;
  const pMode = Math.exp(
    logFact[marked]! + logFact[unmarked]! + logFact[draws]! + logFact[total - draws]! -
    logFact[total]! - logFact[mode]! - logFact[marked - mode]! - logFact[draws - mode]! - logFact[unmarked - draws + mode]!,
  );
  let u = rng.nextFloat() - pMode;
  if (u < 0) return mode;
  let up = mode;
  let down = mode;
  let pUp = pMode;
  let pDown = pMode;
  const shift = unmarked - draws; // so that the ratios below read k + shift
  for (;;) {
    const canUp = up < hi;
    const canDown = down > lo;
    if (!canUp && !canDown) return mode; // rounding left a sliver of mass: return the mode
    if (canUp) {
      // p(k+1)/p(k) = (marked−k)(draws−k) / ((k+1)(unmarked−draws+k+1))
      pUp *= ((marked - up) * (draws - up)) / ((up + 1) * (shift + up + 1));
      up++;
      u -= pUp;
      if (u < 0) return up;
    }
    if (canDown) {
      // p(k−1)/p(k) = k(unmarked−draws+k) / ((marked−k+1)(draws−k+1))
      pDown *= (down * (shift + down)) / ((marked - down + 1) * (draws - down + 1));
      down--;
      u -= pDown;
      if (u < 0) return down;
    }
  }
}

/**
 * Random r × c table with the given row and column margins, distributed as the table of a
 * random permutation of one variable against the other (multivariate hypergeometric), drawn
 * cell by cell from conditional hypergeometric distributions: cell (i, j) given the cells
 * before it is hypergeometric with the items of columns j.. not yet placed as population, what
 * is left of column j as marked items and what is left of row i as draws. A row that is
 * already full gets zeros without drawing. Writes row-major into `out`. `colLeft` is optional
 * scratch of length ≥ c (pass it to avoid an allocation per call).
 * Cost: O(r·c + Σ_draws (sd + 1)) expected, at most (r − 1)(c − 1) hypergeometric draws —
 * cheapest when the largest row and column come last.
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
  colLeft: Float64Array = new Float64Array(colMargins.length),
): Float64Array {
  const r = rowMargins.length;
  const c = colMargins.length;
  let total = 0;
  let colTotal = 0;
  for (let i = 0; i < r; i++) total += rowMargins[i]!;
  for (let j = 0; j < c; j++) {
    const v = colMargins[j]!;
    colTotal += v;
    colLeft[j] = v;
  }
  if (total !== colTotal) throw new RangeError(`row margins total ${total} but column margins total ${colTotal}; they must agree`);
  let left = total; // items not yet placed in rows
  for (let i = 0, row = 0; i < r - 1; i++, row += c) {
    const ri = rowMargins[i]!;
    let need = ri;
    let pool = left; // items of columns j.. still available
    let j = 0;
    for (; j < c - 1 && need > 0; j++) {
      const cl = colLeft[j]!;
      let k = 0;
      if (cl > 0) {
        k = hypergeometricDraw(rng, pool, cl, need, logFact);
        need -= k;
        colLeft[j] = cl - k;
      }
      out[row + j] = k;
      pool -= cl;
    }
    for (; j < c - 1; j++) out[row + j] = 0;
    out[row + c - 1] = need;
    colLeft[c - 1] = colLeft[c - 1]! - need;
    left -= ri;
  }
  const last = (r - 1) * c;
  for (let j = 0; j < c; j++) out[last + j] = colLeft[j]!;
  return out;
}

/** Largest n with C(n, k) tabulated by {@link createTableStatisticSampler}: C(1000, 500) ≈ 2.7e299 is finite. */
const BINOMIAL_TABLE_MAX = 1000;

/**
 * Sampler of the permutation distribution of a stratified table statistic: each call draws,
 * independently for every stratum, a random table with that stratum's row and column margins
 * (multivariate hypergeometric, as {@link randomTableWithMargins}) and returns
 * Σ_strata Σ_cells score[count]. Used with score[v] = v ln v, the sum differs from G²/2 by a
 * constant given the margins. Each cell is drawn by inversion from the mode of its conditional
 * hypergeometric distribution (as {@link hypergeometricDraw}); a row that is full gets zeros
 * without drawing; a single draw or single marked item takes one uniform. The random numbers
 * come from a xoshiro128** stream (Blackman & Vigna 2021) seeded by four outputs of `rng`, held
 * in local variables so that a call allocates nothing. The longer margin of a stratum is drawn
 * row by row (the statistic is the same for the transposed table), and both margins are sorted
 * ascending (the statistic does not depend on the order of levels), which makes the determined
 * last row and column the largest, and lets small rows fill up early, which saves work.
 * Cost: O(Σ_s n_s + max n_s) to set up; per call O(Σ_s r_s·c_s) plus the spread of the draws
 * (O(sd + 1) each), independent of the number of rows n_s behind the tables.
 * Source: conditional decomposition of Patefield (1981), Applied Statistics 30:91–97; inversion,
 * Devroye (1986), Non-Uniform Random Variate Generation, §II.2.
 * @throws RangeError when a stratum's margins do not have the same total, a margin is not a
 * non-negative integer, or `score` is shorter than a stratum total + 1
 * @example
 * const xlx = Float64Array.from({ length: 21 }, (_, v) => (v > 1 ? v * Math.log(v) : 0));
 * const draw = createTableStatisticSampler([new Float64Array([5, 15])], [new Float64Array([8, 12])], createRng(1), xlx);
 * draw(); // Σ O ln O of one random 2 × 2 table with margins (5, 15) × (8, 12)
 */
export function createTableStatisticSampler(
  rowMargins: readonly ArrayLike<number>[],
  colMargins: readonly ArrayLike<number>[],
  rng: Rng,
  score: Float64Array,
): () => number {
  const strata = rowMargins.length;
  if (colMargins.length !== strata) throw new RangeError(`${strata} strata of row margins but ${colMargins.length} of column margins; pass one of each per stratum`);
  let rowsTotal = 0;
  let colsTotal = 0;
  for (let s = 0; s < strata; s++) {
    rowsTotal += Math.max(rowMargins[s]!.length, colMargins[s]!.length);
    colsTotal += Math.min(rowMargins[s]!.length, colMargins[s]!.length);
  }
  const R = new Float64Array(rowsTotal);
  const C = new Float64Array(colsTotal);
  const rOff = new Int32Array(strata + 1);
  const cOff = new Int32Array(strata + 1);
  const N = new Float64Array(strata);
  let maxN = 0;
  let maxC = 0;
  for (let s = 0; s < strata; s++) {
    // The statistic does not depend on which margin is drawn row by row: the longer one is, so
    // that small rows fill up early and end their row.
    const swap = colMargins[s]!.length > rowMargins[s]!.length;
    const rm = swap ? colMargins[s]! : rowMargins[s]!;
    const cm = swap ? rowMargins[s]! : colMargins[s]!;
    let a = 0;
    let b = 0;
    for (let i = 0; i < rm.length; i++) {
      const v = rm[i]!;
      if (!(Number.isInteger(v) && v >= 0)) throw new RangeError(`stratum ${s}: margin ${v} must be a non-negative integer; pass counts`);
      R[rOff[s]! + i] = v;
      a += v;
    }
    for (let j = 0; j < cm.length; j++) {
      const v = cm[j]!;
      if (!(Number.isInteger(v) && v >= 0)) throw new RangeError(`stratum ${s}: margin ${v} must be a non-negative integer; pass counts`);
      C[cOff[s]! + j] = v;
      b += v;
    }
    if (a !== b) throw new RangeError(`stratum ${s}: row margins total ${a} but column margins total ${b}; they must agree`);
    rOff[s + 1] = rOff[s]! + rm.length;
    cOff[s + 1] = cOff[s]! + cm.length;
    R.subarray(rOff[s]!, rOff[s + 1]!).sort();
    C.subarray(cOff[s]!, cOff[s + 1]!).sort();
    N[s] = a;
    if (a > maxN) maxN = a;
    if (cm.length > maxC) maxC = cm.length;
  }
  if (score.length < maxN + 1) throw new RangeError(`score table has ${score.length} entries but a stratum holds ${maxN} items; pass at least ${maxN + 1}`);
  const lf = logFactorialTable(maxN);
  // Binomial coefficients C(n, k) for n ≤ binomMax by Pascal's rule (relative error ≤ n·2^−53),
  // row n at offset n(n + 1)/2: the mode's probability without an exponential.
  const binomMax = Math.min(maxN, BINOMIAL_TABLE_MAX);
  const binom = new Float64Array(((binomMax + 1) * (binomMax + 2)) >> 1);
  for (let n = 0, at = 0; n <= binomMax; n++, at += n) {
    binom[at] = 1;
    binom[at + n] = 1;
    for (let k = 1; k < n; k++) binom[at + k] = binom[at - n + k - 1]! + binom[at - n + k]!;
  }
  const colLeft = new Float64Array(maxC);
  const state = new Int32Array(4);
  for (let i = 0; i < 4; i++) state[i] = rng.nextUint32() | 0;
  if ((state[0]! | state[1]! | state[2]! | state[3]!) === 0) state[0] = 1;
  const score0 = score[0]!;

  return (): number => {
    let s0 = state[0]!;
    let s1 = state[1]!;
    let s2 = state[2]!;
    let s3 = state[3]!;
    let stat = 0;
    for (let s = 0; s < strata; s++) {
      const r0 = rOff[s]!;
      const r = rOff[s + 1]! - r0;
      const c0 = cOff[s]!;
      const c = cOff[s + 1]! - c0;
      for (let j = 0; j < c; j++) colLeft[j] = C[c0 + j]!;
      let left = N[s]!; // items not yet placed in rows
      for (let i = 0; i < r - 1; i++) {
        const ri = R[r0 + i]!;
        let need = ri;
        let pool = left; // items of columns j.. still available
        let j = 0;
        for (; j < c - 1 && need > 0; j++) {
          const marked = colLeft[j]!;
          if (marked === 0) {
            stat += score0;
            continue;
          }
          // k ~ hypergeometric(total = pool, marked, draws = need)
          const total = pool;
          const draws = need;
          const unmarked = total - marked;
          const lo = draws > unmarked ? draws - unmarked : 0;
          const hi = draws < marked ? draws : marked;
          let k = lo;
          if (lo !== hi) {
            // one uniform on [0, 1) with 53 bits from two xoshiro128** steps
            let t = Math.imul(s1, 5);
            const hiBits = Math.imul((t << 7) | (t >>> 25), 9) >>> 5;
            t = s1 << 9;
            s2 ^= s0;
            s3 ^= s1;
            s1 ^= s2;
            s0 ^= s3;
            s2 ^= t;
            s3 = (s3 << 11) | (s3 >>> 21);
            t = Math.imul(s1, 5);
            const loBits = Math.imul((t << 7) | (t >>> 25), 9) >>> 6;
            t = s1 << 9;
            s2 ^= s0;
            s3 ^= s1;
            s1 ^= s2;
            s0 ^= s3;
            s2 ^= t;
            s3 = (s3 << 11) | (s3 >>> 21);
            let u = (hiBits * 67108864 + loBits) / 9007199254740992;
            if (draws === 1) k = u * total < marked ? 1 : 0;
            else if (marked === 1) k = u * total < draws ? 1 : 0;
            else {
              let mode = Math.floor(((draws + 1) * (marked + 1)) / (total + 2));
              if (mode < lo) mode = lo;
              if (mode > hi) mode = hi;
              const shift = unmarked - draws;
              const pMode =
                total <= binomMax
                  ? (binom[((marked * (marked + 1)) >> 1) + mode]! * binom[((unmarked * (unmarked + 1)) >> 1) + draws - mode]!) /
                    binom[((total * (total + 1)) >> 1) + draws]!
                  : Math.exp(
                      lf[marked]! + lf[unmarked]! + lf[draws]! + lf[total - draws]! -
                      lf[total]! - lf[mode]! - lf[marked - mode]! - lf[draws - mode]! - lf[shift + mode]!,
                    );
              u -= pMode;
              k = mode;
              if (u >= 0) {
                let up = mode;
                let down = mode;
                let pUp = pMode;
                let pDown = pMode;
                for (;;) {
                  const canUp = up < hi;
                  const canDown = down > lo;
                  if (!canUp && !canDown) break; // rounding left a sliver of mass: keep the mode
                  if (canUp) {
                    pUp *= ((marked - up) * (draws - up)) / ((up + 1) * (shift + up + 1));
                    up++;
                    u -= pUp;
                    if (u < 0) {
                      k = up;
                      break;
                    }
                  }
                  if (canDown) {
                    pDown *= (down * (shift + down)) / ((marked - down + 1) * (draws - down + 1));
                    down--;
                    u -= pDown;
                    if (u < 0) {
                      k = down;
                      break;
                    }
                  }
                }
              }
            }
          }
          stat += score[k]!;
          need -= k;
          colLeft[j] = marked - k;
          pool = unmarked;
        }
        stat += (c - 1 - j) * score0 + score[need]!;
        colLeft[c - 1] = colLeft[c - 1]! - need;
        left -= ri;
      }
      for (let j = 0; j < c; j++) stat += score[colLeft[j]!]!;
    }
    state[0] = s0;
    state[1] = s1;
    state[2] = s2;
    state[3] = s3;
    return stat;
  };
}

/**
 * Σ_i a_i Σ_j b_j n_ij of a row-major r × c table (r = a.length, c = b.length), summed in one
 * fixed order, so equal tables give bitwise equal sums (ties in a Monte-Carlo p-value stay ties).
 * Cost: O(r·c).
 * @example scoredTableSum([1, 2, 3, 4], [0, 1], [0, 1]) // 4
 */
export function scoredTableSum(counts: ArrayLike<number>, a: ArrayLike<number>, b: ArrayLike<number>): number {
  const r = a.length;
  const c = b.length;
  let sum = 0;
  for (let i = 0; i < r; i++) {
    let row = 0;
    for (let j = 0; j < c; j++) row += b[j]! * counts[i * c + j]!;
    sum += a[i]! * row;
  }
  return sum;
}

/** One stratum for {@link createScoredTableSampler}: its margins and a score per row and per column. */
export interface ScoredMargins {
  rowMargins: ArrayLike<number>;
  colMargins: ArrayLike<number>;
  rowScores: ArrayLike<number>;
  colScores: ArrayLike<number>;
}

/**
 * Sampler of the permutation distribution of a stratified score statistic Σ_s Σ_ij a_i b_j n_ij:
 * each call draws, independently for every stratum, a random table with that stratum's margins
 * (multivariate hypergeometric, the table of x permuted within the stratum, drawn cell by cell
 * as {@link randomTableWithMargins}) and returns the sum of {@link scoredTableSum} over strata.
 * Pass scores centred within each stratum to get Σ_s (T_s − E_s) of the linear-by-linear
 * statistic directly. The random numbers come from a stream forked from `rng` ({@link forkRng}).
 * Cost: O(Σ_s n_s) to set up; per call O(Σ_s r_s·c_s) plus the spread of the draws (O(sd + 1)
 * each), independent of the number of rows behind the tables.
 * Source: conditional decomposition of Patefield (1981), Applied Statistics 30:91–97.
 * @throws RangeError when a stratum's margins do not agree, a margin is not a non-negative
 * integer, or the scores do not match the margins in length
 * @example
 * const draw = createScoredTableSampler([{ rowMargins: [5, 15], colMargins: [8, 12], rowScores: [-0.75, 0.25], colScores: [-0.6, 0.4] }], createRng(1));
 * draw(); // Σ (T − E) of one random 2 × 2 table with margins (5, 15) × (8, 12)
 */
export function createScoredTableSampler(strata: readonly ScoredMargins[], rng: Rng): () => number {
  let maxN = 0;
  let maxC = 0;
  let maxCells = 0;
  strata.forEach((s, k) => {
    if (s.rowScores.length !== s.rowMargins.length || s.colScores.length !== s.colMargins.length) {
      throw new RangeError(`stratum ${k}: ${s.rowScores.length} row scores for ${s.rowMargins.length} rows and ${s.colScores.length} column scores for ${s.colMargins.length} columns; pass one score per level`);
    }
    let a = 0;
    let b = 0;
    for (let i = 0; i < s.rowMargins.length; i++) {
      const v = s.rowMargins[i]!;
      if (!(Number.isInteger(v) && v >= 0)) throw new RangeError(`stratum ${k}: margin ${v} must be a non-negative integer; pass counts`);
      a += v;
    }
    for (let j = 0; j < s.colMargins.length; j++) {
      const v = s.colMargins[j]!;
      if (!(Number.isInteger(v) && v >= 0)) throw new RangeError(`stratum ${k}: margin ${v} must be a non-negative integer; pass counts`);
      b += v;
    }
    if (a !== b) throw new RangeError(`stratum ${k}: row margins total ${a} but column margins total ${b}; they must agree`);
    maxN = Math.max(maxN, a);
    maxC = Math.max(maxC, s.colMargins.length);
    maxCells = Math.max(maxCells, s.rowMargins.length * s.colMargins.length);
  });
  const lf = logFactorialTable(maxN);
  const out = new Float64Array(maxCells);
  const colLeft = new Float64Array(maxC);
  const fast = forkRng(rng);
  return (): number => {
    let sum = 0;
    for (const s of strata) {
      if (s.rowMargins.length === 0 || s.colMargins.length === 0) continue;
      randomTableWithMargins(s.rowMargins, s.colMargins, fast, lf, out, colLeft);
      sum += scoredTableSum(out, s.rowScores, s.colScores);
    }
    return sum;
  };
}

/** The sequential Monte-Carlo p-value with the mean and variance of the null draws ({@link sequentialMonteCarloNull}). */
export interface MonteCarloNull {
  /** Sequential Monte-Carlo p-value, as {@link sequentialMonteCarloPValue}. */
  p: number;
  /** Draws the p-value used. */
  draws: number;
  /** Mean of all null draws made (at least `nullDraws`). */
  mean: number;
  /** Their sample variance (denominator count − 1; 0 with one draw). */
  variance: number;
  /** Number of draws in the mean and variance. */
  nullDraws: number;
}

/**
 * Sequential Monte-Carlo p-value ({@link sequentialMonteCarloPValue}, stopping after `h` hits or
 * `B` draws) together with the mean and variance of the null distribution estimated from the
 * same draws, continued to at least `nullDraws` draws when the test stopped earlier. The extra
 * draws come after the test's own from the same stream, so the p-value is the one the test alone
 * gives. Mean and variance are accumulated by Welford's updates (Welford 1962, Technometrics
 * 4:419–420), which stay accurate when the draws are large and close together.
 * Cost: O(max(nullDraws, draws of the test)) calls of `draw`.
 * Sources: Besag & Clifford (1991), Biometrika 78:301–304 (the p-value); Welford (1962).
 * @throws RangeError as sequentialMonteCarloPValue; when nullDraws is not a non-negative integer
 * @example sequentialMonteCarloNull(0, 1000, 10, () => 1, 200) // { p: 1, draws: 10, mean: 1, variance: 0, nullDraws: 200 }
 */
export function sequentialMonteCarloNull(observed: number, B: number, h: number, draw: () => number, nullDraws: number): MonteCarloNull {
  if (!Number.isInteger(nullDraws) || nullDraws < 0) throw new RangeError(`draws for the null moments must be a non-negative integer, got ${nullDraws}`);
  let mean = 0;
  let m2 = 0;
  let count = 0;
  const counted = (): number => {
    const v = draw();
    count++;
    const d = v - mean;
    mean += d / count;
    m2 += d * (v - mean);
    return v;
  };
  const test = sequentialMonteCarloPValue(observed, B, h, counted);
  while (count < nullDraws) counted();
  return { p: test.p, draws: test.draws, mean, variance: count > 1 ? m2 / (count - 1) : 0, nullDraws: count };
}

/** Monte-Carlo draws when no floor asks for more (the default of the stratified chi-square test). */
export const BASE_PERMUTATIONS = 2000;
/**
 * Resolution factor c of {@link permutationsForFloor}: B ≥ c / floor, so that the smallest
 * reachable p-value 1/(B + 1) is about a tenth of the floor.
 */
export const FLOOR_RESOLUTION = 10;
/** Most draws {@link permutationsForFloor} asks for (a floor below 1e-6 is reported as unreachable instead). */
export const MAX_PERMUTATIONS = 10_000_000;

/**
 * Monte-Carlo draws for a p-value that must be able to fall below `floor` (the smallest
 * threshold an adjusted p-value can face): B = max(2000, ⌈c / floor⌉) with c = 10, at most 10⁷.
 * With B draws a Monte-Carlo p-value (1 + hits)/(1 + B) is at least 1/(B + 1), so a claim can
 * only be called below the floor when floor·(B + 1) > 1. With c = 10 the smallest reachable
 * p-value is about floor/10 and the Monte-Carlo test at the floor loses little power against
 * the exact permutation test (Jöckel 1986, Annals of Statistics 14:336–347, on the power of
 * Monte-Carlo tests as a function of α(B + 1)): it rejects when at most 9 of the B draws reach
 * the observed statistic, so a claim whose exact permutation p-value is floor/2 (expected
 * 5 hits) is called below the floor with probability P(Poisson(5) ≤ 9) ≈ 0.968, and one at
 * floor/4 with P(Poisson(2.5) ≤ 9) ≈ 0.9997 (Poisson limit of the binomial; scipy.stats.poisson.cdf).
 * The sequential stop after 20 hits still ends ordinary claims early: it can only stop at
 * p = 20/L ≥ 20/B ≥ 2·floor, above any threshold, so claims near or below the floor draw all B.
 * A floor that is missing, not a number, ≤ 0 or > 1 counts as 0.05. Cost: O(1).
 * @example permutationsForFloor(0.05 / 120) // 24000
 * @example permutationsForFloor(0.05)       // 2000
 */
export function permutationsForFloor(floor: number | undefined): number {
  const f = floor !== undefined && floor > 0 && floor <= 1 ? floor : 0.05;
  return Math.min(MAX_PERMUTATIONS, Math.max(BASE_PERMUTATIONS, Math.ceil(FLOOR_RESOLUTION / f - 1e-9)));
}

/**
 * The fewest Monte-Carlo draws B with 1/(B + 1) < floor, i.e. ⌊1/floor⌋ (a floor equal to
 * 1/(B + 1) up to rounding is not reached: p-values must fall strictly below it).
 * Cost: O(1).
 * @throws RangeError when floor is not in (0, 1]
 * @example permutationsToReach(0.05 / 120) // 2400
 */
export function permutationsToReach(floor: number): number {
  if (!(floor > 0 && floor <= 1)) throw new RangeError(`floor must be in (0, 1], got ${floor}`);
  let b = Math.max(1, Math.floor(1 / floor) - 1);
  while (!reachesFloor(b, floor)) b++;
  return b;
}

/** Whether 1/(B + 1) < floor, a floor equal to 1/(B + 1) up to rounding counting as not reached. */
function reachesFloor(B: number, floor: number): boolean {
  return 1 / (B + 1) < floor * (1 - 1e-12);
}

/**
 * A warning for a claim whose Monte-Carlo p-value cannot fall below the floor with B draws
 * (1/(B + 1) ≥ floor), naming the smallest reachable p-value, the draws that can reach the floor
 * and those {@link permutationsForFloor} would draw; `undefined` when B is enough. A missing or
 * invalid floor counts as 0.05. Cost: O(1).
 * @example permutationFloorWarning(2000, 0.05 / 120) // "with 2000 permutations the smallest reachable p-value is …"
 */
export function permutationFloorWarning(B: number, floor: number | undefined): string | undefined {
  const f = floor !== undefined && floor > 0 && floor <= 1 ? floor : 0.05;
  if (reachesFloor(B, f)) return undefined;
  const need = permutationsToReach(f);
  const advised = permutationsForFloor(f);
  return `with ${B} permutations the smallest reachable p-value is 1/${B + 1} = ${(1 / (B + 1)).toPrecision(3)}, not below ${f.toPrecision(3)}, the smallest threshold an adjusted p-value faces here; at least ${need} permutations are needed to go below it (${advised} advised)`;
}

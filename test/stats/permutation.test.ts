import { gammaln } from "simple-statistics";
import { describe, expect, it } from "vitest";
import {
  createScoredTableSampler, createTableStatisticSampler, forkRng, hypergeometricDraw, logFactorialTable, monteCarloPValue, permutationFloorWarning, permutationsForFloor,
  permutationsToReach, randomTableWithMargins, scoredTableSum, sequentialMonteCarloNull, sequentialMonteCarloPValue, shuffleInPlace,
} from "../../src/stats/permutation.js";
import { chiSquareUpper } from "../../src/stats/pvalues.js";
import { createRng, hashString32, streamKeyOfClaim } from "../../src/stats/rng.js";

/** Exact hypergeometric pmf C(K,k)·C(N−K,n−k)/C(N,n) in BigInt arithmetic (textbook definition). */
function choose(n: number, k: number): bigint {
  if (k < 0 || k > n) return 0n;
  let r = 1n;
  for (let i = 1; i <= k; i++) r = (r * BigInt(n - k + i)) / BigInt(i);
  return r;
}
function hyperPmf(N: number, K: number, n: number, k: number): number {
  if (N > 1000) {
    // large populations: log-gamma from simple-statistics (an independent implementation)
    const lc = (a: number, b: number) => gammaln(a + 1) - gammaln(b + 1) - gammaln(a - b + 1);
    return Math.exp(lc(K, k) + lc(N - K, n - k) - lc(N, n));
  }
  const num = choose(K, k) * choose(N - K, n - k);
  const den = choose(N, n);
  const scale = 10n ** 30n;
  return Number((num * scale) / den) / 1e30;
}
/** Pearson goodness-of-fit p-value of observed counts against probabilities (cells with expected ≥ 5, rest pooled). */
function gofP(obs: number[], probs: number[], total: number): number {
  let x2 = 0, df = -1, poolO = 0, poolE = 0;
  obs.forEach((o, k) => {
    const e = probs[k]! * total;
    if (e >= 5) { x2 += (o - e) ** 2 / e; df++; } else { poolO += o; poolE += e; }
  });
  if (poolE > 0) { x2 += (poolO - poolE) ** 2 / poolE; df++; }
  return chiSquareUpper(x2, df);
}

describe("rng", () => {
  it("createRng is deterministic per (seed, key) and streams differ across keys and seeds", () => {
    const a = createRng(7, "x\u0000y");
    const b = createRng(7, "x\u0000y");
    const seqA = Array.from({ length: 5 }, () => a.nextUint32());
    expect(Array.from({ length: 5 }, () => b.nextUint32())).toEqual(seqA);
    const c = createRng(7, "x\u0000z");
    const d = createRng(8, "x\u0000y");
    expect(Array.from({ length: 5 }, () => c.nextUint32())).not.toEqual(seqA);
    expect(Array.from({ length: 5 }, () => d.nextUint32())).not.toEqual(seqA);
    expect(() => createRng(NaN)).toThrow(/finite/);
  });

  it("nextInt is uniform (chi-square goodness of fit) and nextFloat lies in [0, 1)", () => {
    const r = createRng(1, "uniform");
    const counts = new Array(7).fill(0);
    for (let i = 0; i < 70_000; i++) counts[r.nextInt(7)]++;
    expect(gofP(counts, new Array(7).fill(1 / 7), 70_000)).toBeGreaterThan(1e-3);
    let mn = 1, mx = 0, s = 0;
    for (let i = 0; i < 100_000; i++) { const u = r.nextFloat(); mn = Math.min(mn, u); mx = Math.max(mx, u); s += u; }
    expect(mn).toBeGreaterThanOrEqual(0);
    expect(mx).toBeLessThan(1);
    // mean of 1e5 uniforms: sd = 1/√(12·1e5) ≈ 0.000913; 5 sd (common practice)
    expect(Math.abs(s / 100_000 - 0.5)).toBeLessThan(5 * 0.000913);
  });

  it("streamKeyOfClaim ignores the order of the conditioning set; hashString32 is FNV-1a", () => {
    expect(streamKeyOfClaim({ x: "a", y: "b", given: ["d", "c"] })).toBe(streamKeyOfClaim({ x: "a", y: "b", given: ["c", "d"] }));
    expect(hashString32("")).toBe(0x811c9dc5); // FNV-1a offset basis (Fowler–Noll–Vo, from memory)
    expect(hashString32("a")).toBe(0xe40c292c); // FNV-1a 32 of "a", published test vector (from memory)
  });
});

describe("permutation", () => {
  it("hypergeometricDraw follows the exact hypergeometric pmf (goodness of fit, small and large populations)", () => {
    for (const [N, K, n] of [[20, 7, 9], [500, 120, 200], [100_000, 30_000, 5_000]] as const) {
      const lf = logFactorialTable(N);
      const rng = createRng(3, `h${N}`);
      const draws = 20_000;
      const lo = Math.max(0, n - (N - K));
      const hi = Math.min(n, K);
      const counts = new Array(hi - lo + 1).fill(0);
      for (let i = 0; i < draws; i++) {
        const k = hypergeometricDraw(rng, N, K, n, lf);
        expect(k).toBeGreaterThanOrEqual(lo);
        expect(k).toBeLessThanOrEqual(hi);
        counts[k - lo]++;
      }
      const probs = counts.map((c, i) => (c > 0 || Math.abs(i + lo - (n * K) / N) < 6 * Math.sqrt(n) ? hyperPmf(N, K, n, i + lo) : 0));
      expect(gofP(counts, probs, draws)).toBeGreaterThan(1e-3);
    }
  });

  it("hypergeometricDraw handles degenerate supports", () => {
    const lf = logFactorialTable(10);
    const rng = createRng(1);
    expect(hypergeometricDraw(rng, 10, 10, 4, lf)).toBe(4);
    expect(hypergeometricDraw(rng, 10, 0, 4, lf)).toBe(0);
    expect(hypergeometricDraw(rng, 10, 3, 10, lf)).toBe(3);
    expect(hypergeometricDraw(rng, 10, 3, 0, lf)).toBe(0);
  });

  it("randomTableWithMargins keeps the margins and matches the table of a shuffled column (same G² distribution)", () => {
    const rowM = [5, 9, 6];
    const colM = [8, 4, 8];
    const N = 20;
    const lf = logFactorialTable(N);
    const rng = createRng(11, "tables");
    const out = new Float64Array(9);
    const xs = new Int32Array(N), ys = new Int32Array(N);
    let at = 0;
    rowM.forEach((r, i) => { for (let t = 0; t < r; t++) xs[at++] = i; });
    at = 0;
    colM.forEach((c, j) => { for (let t = 0; t < c; t++) ys[at++] = j; });
    const reps = 20_000;
    const cell00a = new Array(6).fill(0);
    const cell00b = new Array(6).fill(0);
    for (let b = 0; b < reps; b++) {
      randomTableWithMargins(rowM, colM, rng, lf, out);
      for (let i = 0; i < 3; i++) expect(out[3 * i]! + out[3 * i + 1]! + out[3 * i + 2]!).toBe(rowM[i]);
      for (let j = 0; j < 3; j++) expect(out[j]! + out[3 + j]! + out[6 + j]!).toBe(colM[j]);
      cell00a[out[0]!]++;
      shuffleInPlace(xs, rng);
      let c00 = 0;
      for (let q = 0; q < N; q++) if (xs[q] === 0 && ys[q] === 0) c00++;
      cell00b[c00]++;
    }
    // cell (0,0) is hypergeometric(N = 20, K = 8, n = 5) under both methods (textbook)
    const probs = cell00a.map((_, k) => hyperPmf(20, 8, 5, k));
    expect(gofP(cell00a, probs, reps)).toBeGreaterThan(1e-3);
    expect(gofP(cell00b, probs, reps)).toBeGreaterThan(1e-3);
    expect(() => randomTableWithMargins([1, 2], [2, 2], rng, lf, out)).toThrow(/agree/);
  });

  it("monteCarloPValue is (1 + hits)/(1 + B), never 0, counts ties, and validates B", () => {
    let i = 0;
    const seq = [1, 5, 3, 2, 3 - 1e-12];
    expect(monteCarloPValue(3, 5, () => seq[i++]!)).toBeCloseTo((1 + 3) / 6, 15); // 5, 3 and the rounding tie
    expect(monteCarloPValue(1e9, 10, () => 0)).toBe(1 / 11);
    expect(monteCarloPValue(3, 4, () => 1)).toBe(0.2);
    expect(() => monteCarloPValue(1, 0, () => 0)).toThrow(/positive integer/);
    expect(() => monteCarloPValue(NaN, 10, () => 0)).toThrow(/finite/);
  });

  it("sequentialMonteCarloPValue stops after h hits with p = h/L, else equals the fixed-B p-value", () => {
    expect(sequentialMonteCarloPValue(0, 1000, 10, () => 1)).toEqual({ p: 1, draws: 10 });
    let i = 0;
    // hits at every 4th draw: the 5th hit comes at draw 20 → p = 5/20 (Besag & Clifford 1991)
    expect(sequentialMonteCarloPValue(1, 1000, 5, () => (++i % 4 === 0 ? 2 : 0))).toEqual({ p: 0.25, draws: 20 });
    expect(sequentialMonteCarloPValue(1, 99, 5, () => 0)).toEqual({ p: 0.01, draws: 99 });
    // validity: under the null (uniform statistics), P(p ≤ 0.05) ≤ 0.05 — 2000 seeded trials,
    // band of Bin(2000, 0.05) is 76..126 (scipy binom.ppf/isf(0.005, 2000, 0.05), run by hand)
    const rng = createRng(2, "besag");
    let rej = 0;
    for (let t = 0; t < 2000; t++) {
      const obs = rng.nextFloat();
      if (sequentialMonteCarloPValue(obs, 399, 10, () => rng.nextFloat()).p <= 0.05) rej++;
    }
    expect(rej).toBeLessThanOrEqual(126);
    expect(rej).toBeGreaterThanOrEqual(76);
    expect(() => sequentialMonteCarloPValue(1, 10, 0, () => 0)).toThrow(/positive integer/);
  });

  it("shuffleInPlace gives each of the 6 orders of 3 items equally often", () => {
    const rng = createRng(5, "shuffle");
    const counts = new Map<string, number>();
    for (let i = 0; i < 60_000; i++) {
      const a = shuffleInPlace(new Int32Array([0, 1, 2]), rng);
      counts.set(a.join(""), (counts.get(a.join("")) ?? 0) + 1);
    }
    expect(counts.size).toBe(6);
    expect(gofP([...counts.values()], new Array(6).fill(1 / 6), 60_000)).toBeGreaterThan(1e-3);
  });
});

/** Every table with the given margins and its probability Π r_i! Π c_j! / (n! Π n_ij!) under a random permutation (textbook multivariate hypergeometric). */
function enumerateTables(rowM: number[], colM: number[]): { cells: number[]; prob: number }[] {
  const lf = logFactorialTable(rowM.reduce((a, b) => a + b, 0));
  const n = rowM.reduce((a, b) => a + b, 0);
  const base = rowM.reduce((a, v) => a + lf[v]!, 0) + colM.reduce((a, v) => a + lf[v]!, 0) - lf[n]!;
  const out: { cells: number[]; prob: number }[] = [];
  const r = rowM.length, c = colM.length;
  const cells = new Array(r * c).fill(0);
  const colLeft = [...colM];
  const rec = (at: number, rowLeft: number): void => {
    const i = Math.floor(at / c), j = at % c;
    if (i === r) {
      out.push({ cells: [...cells], prob: Math.exp(base - cells.reduce((a, v) => a + lf[v]!, 0)) });
      return;
    }
    const left = j === 0 ? rowM[i]! : rowLeft;
    const lo = j === c - 1 ? left : 0;
    for (let k = lo; k <= Math.min(left, colLeft[j]!); k++) {
      if (i === r - 1 && k !== colLeft[j]) continue; // the last row takes what the columns have left
      cells[at] = k;
      colLeft[j] -= k;
      rec(at + 1, left - k);
      colLeft[j] += k;
    }
    cells[at] = 0;
  };
  rec(0, 0);
  return out;
}
const xlogx = Float64Array.from({ length: 64 }, (_, v) => (v > 1 ? v * Math.log(v) : 0));
/** Exact distribution of Σ x ln x over independent strata, keyed by the value rounded to 1e-9. */
function exactStatistic(strata: [number[], number[]][]): Map<string, number> {
  let dist = new Map<number, number>([[0, 1]]);
  for (const [rm, cm] of strata) {
    const next = new Map<number, number>();
    for (const { cells, prob } of enumerateTables(rm, cm)) {
      const t = cells.reduce((a, v) => a + xlogx[v]!, 0);
      for (const [v, p] of dist) next.set(Math.round((v + t) * 1e9) / 1e9, (next.get(Math.round((v + t) * 1e9) / 1e9) ?? 0) + p * prob);
    }
    dist = next;
  }
  return new Map([...dist].map(([v, p]) => [v.toFixed(6), p]));
}

describe("createTableStatisticSampler", () => {
  it("enumerateTables (test helper) sums to 1 and gives the hypergeometric cell (0, 0) on a 2 × 2 table (theorem)", () => {
    const all = enumerateTables([5, 15], [8, 12]);
    expect(all.reduce((a, t) => a + t.prob, 0)).toBeCloseTo(1, 12);
    for (const t of all) expect(t.prob).toBeCloseTo(hyperPmf(20, 8, 5, t.cells[0]!), 12); // textbook pmf in BigInt
  });

  it("createTableStatisticSampler draws Σ O ln O with its exact permutation distribution (one stratum, both orientations)", () => {
    for (const [rm, cm] of [[[5, 15], [8, 12]], [[3, 4, 2], [2, 1, 3, 3]], [[2, 6, 1, 3], [7, 5]]] as [number[], number[]][]) {
      const exact = exactStatistic([[rm, cm]]);
      const draw = createTableStatisticSampler([Float64Array.from(rm)], [Float64Array.from(cm)], createRng(4, rm.join()), xlogx);
      const reps = 20_000;
      const counts = new Map<string, number>();
      for (let b = 0; b < reps; b++) {
        const key = draw().toFixed(6);
        expect(exact.has(key)).toBe(true); // only values a table with these margins can give
        counts.set(key, (counts.get(key) ?? 0) + 1);
      }
      const keys = [...exact.keys()];
      expect(gofP(keys.map((k) => counts.get(k) ?? 0), keys.map((k) => exact.get(k)!), reps)).toBeGreaterThan(1e-3);
    }
  });

  it("createTableStatisticSampler sums independent strata (exact convolution) and skips single-level strata", () => {
    const strata: [number[], number[]][] = [[[2, 3], [1, 4]], [[1, 1, 2], [2, 2]], [[4], [1, 3]]];
    const exact = exactStatistic(strata);
    const draw = createTableStatisticSampler(strata.map(([r]) => r), strata.map(([, c]) => c), createRng(9, "conv"), xlogx);
    const reps = 20_000;
    const counts = new Map<string, number>();
    for (let b = 0; b < reps; b++) {
      const key = draw().toFixed(6);
      expect(exact.has(key)).toBe(true);
      counts.set(key, (counts.get(key) ?? 0) + 1);
    }
    const keys = [...exact.keys()];
    expect(gofP(keys.map((k) => counts.get(k) ?? 0), keys.map((k) => exact.get(k)!), reps)).toBeGreaterThan(1e-3);
  });

  it("createTableStatisticSampler is reproducible per stream, handles large strata, and validates its input", () => {
    const rm = [[300, 500, 1200], [3, 0, 2]];
    const cm = [[900, 1100], [1, 4]];
    const score = Float64Array.from({ length: 2001 }, (_, v) => (v > 1 ? v * Math.log(v) : 0));
    const a = createTableStatisticSampler(rm, cm, createRng(1, "k"), score);
    const b = createTableStatisticSampler(rm, cm, createRng(1, "k"), score);
    const sa = Array.from({ length: 50 }, a);
    expect(Array.from({ length: 50 }, b)).toEqual(sa);
    expect(new Set(sa).size).toBeGreaterThan(1);
    expect(sa.every(Number.isFinite)).toBe(true);
    // a stratum above the tabulated binomial coefficients (total 2000 > 1000): 2 × 2, so the
    // statistic is a function f(k) of cell (0, 0) ~ hypergeometric(2000, 900, 300); its mean and
    // variance follow from the pmf (log-gamma from simple-statistics); sample mean within 5 sd
    const f = (k: number) => score[k]! + score[300 - k]! + score[900 - k]! + score[800 + k]!;
    let mean = 0, second = 0;
    for (let k = 0; k <= 300; k++) { const q = hyperPmf(2000, 900, 300, k); mean += q * f(k); second += q * f(k) ** 2; }
    const big = createTableStatisticSampler([[300, 1700]], [[900, 1100]], createRng(2, "big"), score);
    const reps = 4000;
    let sum = 0;
    for (let t = 0; t < reps; t++) sum += big();
    expect(Math.abs(sum / reps - mean)).toBeLessThan(5 * Math.sqrt((second - mean * mean) / reps));
    expect(() => createTableStatisticSampler([[1, 2]], [[2, 2]], createRng(1), score)).toThrow(/agree/);
    expect(() => createTableStatisticSampler([[1.5, 2]], [[2, 1.5]], createRng(1), score)).toThrow(/non-negative integer/);
    expect(() => createTableStatisticSampler([[10, 10]], [[10, 10]], createRng(1), new Float64Array(5))).toThrow(/score table/);
    expect(() => createTableStatisticSampler([[1]], [], createRng(1), score)).toThrow(/strata/);
    expect(createTableStatisticSampler([], [], createRng(1), score)()).toBe(0); // no strata: empty sum
  });

  it("forkRng is reproducible, uniform (goodness of fit) and validates nextInt's bound", () => {
    const a = forkRng(createRng(3, "fork"));
    const b = forkRng(createRng(3, "fork"));
    const seq = Array.from({ length: 5 }, () => a.nextUint32());
    expect(Array.from({ length: 5 }, () => b.nextUint32())).toEqual(seq);
    expect(seq.every((v) => Number.isInteger(v) && v >= 0 && v < 2 ** 32)).toBe(true);
    const counts = new Array(7).fill(0);
    for (let i = 0; i < 70_000; i++) counts[a.nextInt(7)]++;
    expect(gofP(counts, new Array(7).fill(1 / 7), 70_000)).toBeGreaterThan(1e-3);
    let mn = 1, mx = 0;
    for (let i = 0; i < 10_000; i++) { const u = a.nextFloat(); mn = Math.min(mn, u); mx = Math.max(mx, u); }
    expect(mn).toBeGreaterThanOrEqual(0);
    expect(mx).toBeLessThan(1);
    expect(() => a.nextInt(0)).toThrow(/1\.\.2\^21/);
  });
});

describe("createScoredTableSampler", () => {
  /** Exact distribution of Σ_s Σ_ij a_i b_j n_ij over independent strata, keyed by the value to 1e-6. */
  function exactScored(strata: { rm: number[]; cm: number[]; a: number[]; b: number[] }[]): Map<string, number> {
    let dist = new Map<number, number>([[0, 1]]);
    for (const { rm, cm, a, b } of strata) {
      const next = new Map<number, number>();
      for (const { cells, prob } of enumerateTables(rm, cm)) {
        const t = scoredTableSum(cells, a, b);
        for (const [v, p] of dist) {
          const k = Math.round((v + t) * 1e9) / 1e9;
          next.set(k, (next.get(k) ?? 0) + p * prob);
        }
      }
      dist = next;
    }
    return new Map([...dist].map(([v, p]) => [v.toFixed(6), p]));
  }

  it("scoredTableSum is Σ a_i b_j n_ij (doc example)", () => {
    expect(scoredTableSum([1, 2, 3, 4], [0, 1], [0, 1])).toBe(4);
    expect(scoredTableSum([1, 2, 3, 4, 5, 6], [1, 2], [1, 0, -1])).toBe(1 - 3 + 2 * (4 - 6)); // hand computation
  });

  it("createScoredTableSampler draws Σ a_i b_j n_ij with its exact permutation distribution (two strata, exact convolution)", () => {
    const strata = [
      { rm: [3, 4, 2], cm: [2, 1, 3, 3], a: [-1, 0.5, 2], b: [0, 1, 1.5, 4] },
      { rm: [2, 3], cm: [1, 4], a: [0, 1], b: [-2, 3] },
    ];
    const exact = exactScored(strata);
    const draw = createScoredTableSampler(strata.map((s) => ({ rowMargins: s.rm, colMargins: s.cm, rowScores: s.a, colScores: s.b })), createRng(12, "scored"));
    const reps = 20_000;
    const counts = new Map<string, number>();
    for (let t = 0; t < reps; t++) {
      const key = draw().toFixed(6);
      expect(exact.has(key)).toBe(true); // only values a table with these margins can give
      counts.set(key, (counts.get(key) ?? 0) + 1);
    }
    const keys = [...exact.keys()];
    // textbook multivariate hypergeometric probabilities, Pearson goodness of fit
    expect(gofP(keys.map((k) => counts.get(k) ?? 0), keys.map((k) => exact.get(k)!), reps)).toBeGreaterThan(1e-3);
  });

  it("createScoredTableSampler is reproducible per stream and validates its input", () => {
    const s = [{ rowMargins: [5, 15], colMargins: [8, 12], rowScores: [-0.75, 0.25], colScores: [-0.6, 0.4] }];
    const a = createScoredTableSampler(s, createRng(1, "k"));
    const b = createScoredTableSampler(s, createRng(1, "k"));
    const seq = Array.from({ length: 30 }, a);
    expect(Array.from({ length: 30 }, b)).toEqual(seq);
    expect(new Set(seq).size).toBeGreaterThan(1);
    expect(() => createScoredTableSampler([{ ...s[0]!, rowScores: [1] }], createRng(1))).toThrow(/one score per level/);
    expect(() => createScoredTableSampler([{ ...s[0]!, rowMargins: [5, 14] }], createRng(1))).toThrow(/agree/);
    expect(() => createScoredTableSampler([{ ...s[0]!, rowMargins: [5.5, 14.5] }], createRng(1))).toThrow(/non-negative integer/);
    expect(createScoredTableSampler([], createRng(1))()).toBe(0);
  });
});

describe("sequentialMonteCarloNull", () => {
  it("sequentialMonteCarloNull gives the p-value of sequentialMonteCarloPValue on the same stream, and the mean and variance of at least nullDraws draws", () => {
    const mk = () => { const r = createRng(4, "null"); return () => r.nextFloat(); };
    const plain = sequentialMonteCarloPValue(0.3, 1000, 20, mk());
    const withNull = sequentialMonteCarloNull(0.3, 1000, 20, mk(), 2000);
    expect(withNull.p).toBe(plain.p);
    expect(withNull.draws).toBe(plain.draws);
    expect(withNull.nullDraws).toBe(2000);
    // uniform draws: mean 1/2 with sd √(1/12/2000); sample variance 1/12 with sd ≈ √((μ₄ − σ⁴)/2000), μ₄ = 1/80 (moments of U(0, 1)); 5 sd (common practice)
    expect(Math.abs(withNull.mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / 2000));
    expect(Math.abs(withNull.variance - 1 / 12)).toBeLessThan(5 * Math.sqrt((1 / 80 - 1 / 144) / 2000));
    expect(sequentialMonteCarloNull(0, 1000, 10, () => 1, 200)).toEqual({ p: 1, draws: 10, mean: 1, variance: 0, nullDraws: 200 });
    // a run longer than nullDraws keeps every draw: 150 zeros and 150 ones, variance 0.25·300/299
    let i = 0;
    const long = sequentialMonteCarloNull(5, 300, 20, () => i++ % 2, 100);
    expect(long).toMatchObject({ p: 1 / 301, draws: 300, mean: 0.5, nullDraws: 300 });
    expect(long.variance).toBeCloseTo((0.25 * 300) / 299, 14);
    // Welford keeps large, close draws accurate: 1e9 + (0, 1, 2) three times each has sample variance 6/8
    // (hand computation); Σx² − (Σx)²/n would cancel 1e19-sized terms and lose every digit
    let k = 0;
    const big = sequentialMonteCarloNull(2e9, 9, 5, () => 1e9 + (k++ % 3), 9);
    expect(big).toMatchObject({ p: 0.1, draws: 9, nullDraws: 9 });
    expect(big.variance).toBeCloseTo(0.75, 6); // rounding of the mean at 1e9 is ~1e-7 (2⁻⁵³·1e9)
    expect(() => sequentialMonteCarloNull(0, 10, 1, () => 0, -1)).toThrow(/non-negative integer/);
  });
});

describe("the permutation floor", () => {
  it("permutationsForFloor is max(2000, ⌈10/floor⌉), capped, and treats a missing or invalid floor as 0.05", () => {
    expect(permutationsForFloor(0.05 / 120)).toBe(24000); // 10 · 120 / 0.05, hand computation
    expect(permutationsForFloor(0.05)).toBe(2000);
    expect(permutationsForFloor(undefined)).toBe(2000);
    expect(permutationsForFloor(0)).toBe(2000);
    expect(permutationsForFloor(NaN)).toBe(2000);
    expect(permutationsForFloor(0.001 / 3)).toBe(30000);
    expect(permutationsForFloor(1e-9)).toBe(10_000_000);
    // the smallest reachable p-value is about a tenth of the floor
    for (const f of [0.05 / 7, 0.05 / 120, 0.01 / 999]) expect(1 / (permutationsForFloor(f) + 1)).toBeLessThan(f / 9.99);
  });

  it("permutationsToReach is the fewest B with 1/(B + 1) < floor; equality does not count", () => {
    expect(permutationsToReach(0.05 / 120)).toBe(2400); // 1/2401 < 0.05/120 = 1/2400 (hand computation)
    expect(permutationsToReach(0.05)).toBe(20); // 1/21 < 1/20
    expect(permutationsToReach(0.03)).toBe(33); // 1/34 < 0.03 ≤ 1/33
    expect(() => permutationsToReach(0)).toThrow(/floor/);
  });

  it("permutationFloorWarning names the smallest reachable p-value and the B needed, only when B is too small", () => {
    const w = permutationFloorWarning(2000, 0.05 / 120)!;
    expect(w).toMatch(/with 2000 permutations the smallest reachable p-value is 1\/2001 = 0\.000500/);
    expect(w).toMatch(/not below 0\.000417/);
    expect(w).toMatch(/at least 2400 permutations/);
    expect(w).toMatch(/24000 advised/);
    expect(permutationFloorWarning(2400, 0.05 / 120)).toBeUndefined();
    expect(permutationFloorWarning(2399, 0.05 / 120)).toBeDefined(); // 1/2400 equals the floor
    expect(permutationFloorWarning(200, undefined)).toBeUndefined(); // 1/201 < 0.05
    expect(permutationFloorWarning(19, 0.05)).toMatch(/1\/20/);
  });
});

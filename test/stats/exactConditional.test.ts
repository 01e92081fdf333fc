/**
 * Monte-Carlo permutation p-values against exact conditional p-values of small stratified tables.
 *
 * The reference (scripts/exact_conditional_reference.py, live through python3 when present, else
 * the committed fixture test/fixtures/exact-conditional/reference.json) enumerates the permutation
 * distribution exactly: for 2 × 2 × K tables the convolution of the strata's hypergeometric pmfs
 * of n11k (scipy.stats.hypergeom; the exact conditional test of a common odds ratio of 1, Agresti
 * 2013, Categorical Data Analysis, §7.3), for r × c × K tables every table with the strata's
 * margins (scipy.stats.multivariate_hypergeom). A Monte-Carlo p-value from N draws is compared
 * with the exact p within a band of 4 binomial standard errors, 4·√(p(1 − p)/N), plus 1/(N + 1)
 * for the (1 + hits)/(1 + N) form (common practice); with 14 such comparisons at 4 SE a correct
 * sampler fails one with probability below 1e-3 (normal tail 6.3e-5 each).
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { linearByLinear } from "../../src/audit/methods/linearByLinear.js";
import { stratifiedChisq } from "../../src/audit/methods/stratifiedChisq.js";
import type { TestContext } from "../../src/audit/TestMethod.js";
import type { Column, Table } from "../../src/data/Table.js";
import { createScoredTableSampler, createTableStatisticSampler } from "../../src/stats/permutation.js";
import { createRng } from "../../src/stats/rng.js";
import { stratifiedChiSquare } from "../../src/stats/stratifiedChiSquare.js";
import { printedReference } from "../fixtures/stats/loadReference.js";

interface TwoByTwoCase {
  name: string;
  strata: number[][];
  n11_sum: number;
  n11_mean: number;
  n11_sum_support: [number, number];
  n11_sum_pmf: number[];
  g2: number;
  p_cmh: number;
  p_g2: number;
  total_probability: number;
}
interface RcCase {
  name: string;
  strata: number[][][];
  g2: number;
  p_g2: number;
  row_scores?: number[][];
  col_scores?: number[][];
  lbl_sum?: number;
  p_lbl?: number;
  total_probability: number;
}
interface Reference {
  two_by_two: TwoByTwoCase[];
  r_by_c: RcCase[];
  williams: { margins: [number, number, number, number]; exact_mean_g2: number; williams_q: number }[];
}

const fixture = new URL("../fixtures/exact-conditional/reference.json", import.meta.url);
const { ref, from } = printedReference<Reference>("exact_conditional_reference.py", "exact-conditional/reference.json", "python3 scipy (live)");

/** The band of a Monte-Carlo p-value from `draws` draws around the exact p: 4 standard errors plus 1/(draws + 1). */
function band(pExact: number, draws: number): number {
  return 4 * Math.sqrt((pExact * (1 - pExact)) / draws) + 1 / (draws + 1);
}

/** Row and column totals of a row-major r × c table. */
function margins(t: number[][]): { rows: Float64Array; cols: Float64Array } {
  const rows = Float64Array.from(t, (r) => r.reduce((a, b) => a + b, 0));
  const cols = Float64Array.from(t[0]!, (_, j) => t.reduce((a, r) => a + r[j]!, 0));
  return { rows, cols };
}
const asTable = (s: number[]): number[][] => [[s[0]!, s[1]!], [s[2]!, s[3]!]];
const xLogX = (max: number) => Float64Array.from({ length: max + 1 }, (_, v) => (v > 1 ? v * Math.log(v) : 0));

/** Monte-Carlo p-value of the stratified Σ O ln O (G²/2 up to a constant) from `createTableStatisticSampler`. */
function samplerPG2(strata: number[][][], N: number, seed: number): number {
  const m = strata.map(margins);
  const score = xLogX(Math.max(...m.map((x) => x.rows.reduce((a, b) => a + b, 0))));
  let observed = 0;
  for (const t of strata) for (const row of t) for (const v of row) observed += score[v]!;
  const draw = createTableStatisticSampler(m.map((x) => x.rows), m.map((x) => x.cols), createRng(seed, "exact:g2"), score);
  const bar = observed - 1e-9 * Math.max(1, Math.abs(observed));
  let hits = 0;
  for (let b = 0; b < N; b++) if (draw() >= bar) hits++;
  return (1 + hits) / (1 + N);
}

/** Draws of Σ_s (T_s − E_s) from `createScoredTableSampler`, with row scores centred within each stratum. */
function scoredSampler(strata: number[][][], rowScores: number[][], colScores: number[][], seed: number): { observed: number; draw: () => number } {
  let observed = 0;
  const used = strata.map((t, k) => {
    const { rows, cols } = margins(t);
    const n = rows.reduce((a, b) => a + b, 0);
    const mean = rowScores[k]!.reduce((a, u, i) => a + u * rows[i]!, 0) / n;
    const u = rowScores[k]!.map((x) => x - mean);
    t.forEach((row, i) => row.forEach((c, j) => (observed += u[i]! * colScores[k]![j]! * c)));
    return { rowMargins: rows, colMargins: cols, rowScores: u, colScores: colScores[k]! };
  });
  return { observed, draw: createScoredTableSampler(used, createRng(seed, "exact:scored")) };
}

function cat(name: string, codes: number[], levels: string[], type: Column["type"] = "nominal", scores?: number[]): Column {
  const c = Int32Array.from(codes);
  return { name, type, typeSource: "declared", codes: c, levels, values: Float64Array.from(c, (k) => (scores ? scores[k]! : k)), missing: 0 };
}
/** The rows of stratified r × c tables as columns x, y, z (one row per counted case). */
function expand(strata: number[][][], type: "nominal" | "ordinal", rowScores?: number[], colScores?: number[]): Table {
  const x: number[] = [];
  const y: number[] = [];
  const z: number[] = [];
  strata.forEach((t, k) => t.forEach((row, i) => row.forEach((c, j) => {
    for (let r = 0; r < c; r++) { x.push(i); y.push(j); z.push(k); }
  })));
  const r = strata[0]!.length;
  const c = strata[0]![0]!.length;
  const cols = [
    cat("x", x, (rowScores ?? Array.from({ length: r }, (_, i) => i)).map(String), type, rowScores),
    cat("y", y, (colScores ?? Array.from({ length: c }, (_, j) => j)).map(String), type, colScores),
    cat("z", z, strata.map((_, k) => `s${k}`)),
  ];
  return { rows: x.length, columns: cols, warnings: [], column: (n) => cols.find((col) => col.name === n) };
}
/**
 * A context that asks for up to `cap` permutations. The decision floor is put at the exact p so
 * that a rule that stops once the verdict at the floor is clear keeps drawing; the band then uses
 * the draws the method reports (`B`), whatever its stopping rule.
 */
function ctx(t: Table, cap: number, pExact: number, seed: number): TestContext {
  return { table: t, moments: undefined as never, seed, permutations: cap, decisionFloor: pExact };
}

describe(`exact conditional p-values of stratified tables [${from}]`, () => {
  it("the reference distributions are complete: every pmf sums to 1 (scipy.stats.hypergeom / multivariate_hypergeom)", () => {
    for (const c of ref.two_by_two) {
      expect(c.total_probability).toBeCloseTo(1, 10);
      expect(c.n11_sum_pmf.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 10);
    }
    for (const c of ref.r_by_c) expect(c.total_probability).toBeCloseTo(1, 9);
    // the observed statistics of the reference are ours: G² summed over the strata
    for (const c of ref.two_by_two) expect(stratifiedChiSquare(c.strata.map((s) => ({ rows: 2, cols: 2, counts: s }))).g2).toBeCloseTo(c.g2, 10);
    for (const c of ref.r_by_c) expect(stratifiedChiSquare(c.strata.map((t) => ({ rows: t.length, cols: t[0]!.length, counts: t.flat() }))).g2).toBeCloseTo(c.g2, 10);
  });

  it("createScoredTableSampler: the distribution of Σ n11k matches the convolution of hypergeometric pmfs (each value within 4 SE + 3 counts, 100,000 draws)", () => {
    const N = 100_000;
    for (const c of ref.two_by_two) {
      const counts = new Map<number, number>();
      // scores (1, 0) × (1, 0): Σ T_s = Σ n11k, uncentred here to count values
      const draw = createScoredTableSampler(
        c.strata.map((s) => { const m = margins(asTable(s)); return { rowMargins: m.rows, colMargins: m.cols, rowScores: [1, 0], colScores: [1, 0] }; }),
        createRng(7, `exact:pmf:${c.name}`),
      );
      for (let b = 0; b < N; b++) {
        const v = Math.round(draw());
        counts.set(v, (counts.get(v) ?? 0) + 1);
      }
      const [lo, hi] = c.n11_sum_support;
      for (const v of counts.keys()) expect(v >= lo && v <= hi).toBe(true); // never outside the support given the margins
      // count of each value ~ Binomial(N, p): within 4 SE plus 3 counts, which covers the Poisson tail of
      // values expected less than once (P(Poisson(1) ≥ 8) ≈ 1e-5; common practice)
      c.n11_sum_pmf.forEach((p, i) => {
        const k = counts.get(lo + i) ?? 0;
        expect(Math.abs(k - N * p), `${c.name}: Σ n11 = ${lo + i} drawn ${k} times, expected ${N * p}`).toBeLessThanOrEqual(4 * Math.sqrt(N * p * (1 - p)) + 3);
      });
    }
  });

  it("createScoredTableSampler: the Monte-Carlo p of |Σ (n11k − E)| matches the exact CMH p-value (200,000 draws)", () => {
    const N = 200_000;
    for (const c of ref.two_by_two) {
      const { observed, draw } = scoredSampler(c.strata.map(asTable), c.strata.map(() => [1, 0]), c.strata.map(() => [1, 0]), 11);
      expect(observed).toBeCloseTo(c.n11_sum - c.n11_mean, 10);
      const bar = Math.abs(observed) - 1e-9 * Math.max(1, Math.abs(observed));
      let hits = 0;
      for (let b = 0; b < N; b++) if (Math.abs(draw()) >= bar) hits++;
      const p = (1 + hits) / (1 + N);
      expect(Math.abs(p - c.p_cmh), `${c.name}: ${p} vs exact ${c.p_cmh}`).toBeLessThanOrEqual(band(c.p_cmh, N));
    }
  });

  it("createTableStatisticSampler: the Monte-Carlo p of the stratified G² matches the exact permutation p-value, 2 × 2 × K and nominal 3 × 3 × 2 (200,000 draws)", () => {
    const N = 200_000;
    for (const c of ref.two_by_two) {
      const p = samplerPG2(c.strata.map(asTable), N, 3);
      expect(Math.abs(p - c.p_g2), `${c.name}: ${p} vs exact ${c.p_g2}`).toBeLessThanOrEqual(band(c.p_g2, N));
    }
    for (const c of ref.r_by_c) {
      const p = samplerPG2(c.strata, N, 5);
      expect(Math.abs(p - c.p_g2), `${c.name}: ${p} vs exact ${c.p_g2}`).toBeLessThanOrEqual(band(c.p_g2, N));
    }
  });

  it("createScoredTableSampler: the Monte-Carlo p of the ordinal 3 × 4 × 2 linear-by-linear sum matches its exact permutation p-value (200,000 draws)", () => {
    const N = 200_000;
    const c = ref.r_by_c.find((r) => r.p_lbl !== undefined)!;
    const { observed, draw } = scoredSampler(c.strata, c.row_scores!, c.col_scores!, 13);
    expect(observed).toBeCloseTo(c.lbl_sum!, 10);
    const bar = Math.abs(observed) - 1e-9 * Math.max(1, Math.abs(observed));
    let hits = 0;
    for (let b = 0; b < N; b++) if (Math.abs(draw()) >= bar) hits++;
    const p = (1 + hits) / (1 + N);
    expect(Math.abs(p - c.p_lbl!), `${p} vs exact ${c.p_lbl}`).toBeLessThanOrEqual(band(c.p_lbl!, N));
  });

  it("stratifiedChisq.run with permutations: its p matches the exact permutation p of G² within the band of the draws it reports", () => {
    const cases = [
      ...ref.two_by_two.map((c) => ({ name: c.name, strata: c.strata.map(asTable), p: c.p_g2 })),
      ...ref.r_by_c.map((c) => ({ name: c.name, strata: c.strata, p: c.p_g2 })),
    ];
    for (const c of cases) {
      const res = stratifiedChisq.run({ x: "x", y: "y", given: ["z"] }, ctx(expand(c.strata, "nominal"), 50_000, c.p, 17));
      if (!res.ok) throw new Error(`${c.name}: ${res.reason}`);
      const o = res.outcome;
      expect(o.p_method).toBe("permutation");
      expect(o.B).toBeGreaterThanOrEqual(200);
      console.log(`stratified-chisq ${c.name}: p = ${o.p.toPrecision(4)} from ${o.B} draws, exact ${c.p.toPrecision(4)}`);
      expect(Math.abs(o.p - c.p), `${c.name}: ${o.p} from ${o.B} draws vs exact ${c.p}`).toBeLessThanOrEqual(band(c.p, o.B!));
    }
  });

  it("linearByLinear.run with permutations: its p matches the exact CMH p-value (2 × 2 × K) and the exact ordinal 3 × 4 × 2 p-value", () => {
    const cases = [
      ...ref.two_by_two.map((c) => ({ name: c.name, strata: c.strata.map(asTable), p: c.p_cmh, u: [0, 1], v: [0, 1] })),
      ...ref.r_by_c.filter((c) => c.p_lbl !== undefined).map((c) => ({ name: c.name, strata: c.strata, p: c.p_lbl!, u: c.row_scores![0]!, v: c.col_scores![0]! })),
    ];
    for (const c of cases) {
      const res = linearByLinear.run({ x: "x", y: "y", given: ["z"] }, ctx(expand(c.strata, "ordinal", c.u, c.v), 50_000, c.p, 19));
      if (!res.ok) throw new Error(`${c.name}: ${res.reason}`);
      const o = res.outcome;
      expect(o.p_method).toBe("permutation");
      console.log(`linear-by-linear ${c.name}: p = ${o.p.toPrecision(4)} from ${o.B} draws, exact ${c.p.toPrecision(4)}`);
      expect(Math.abs(o.p - c.p), `${c.name}: ${o.p} from ${o.B} draws vs exact ${c.p}`).toBeLessThanOrEqual(band(c.p, o.B!));
    }
  });

  it("stratifiedChiSquare's Williams excess matches the exact permutation mean of G² of 2 × 2 tables to O(1/n²)", () => {
    for (const w of ref.williams) {
      const [r1, r2, c1, c2] = w.margins;
      // any table with these margins: Williams' factor depends on the margins only
      const k = Math.min(r1, c1);
      const t = stratifiedChiSquare([{ rows: 2, cols: 2, counts: [k, r1 - k, c1 - k, r2 - c1 + k] }]);
      expect(t.williamsExcess).toBeCloseTo(w.williams_q - 1, 12); // Williams (1976), formula in scripts/exact_conditional_reference.py
      // exact mean of G² − 1 (df) within 15% of the excess for n = 100–150 (scipy.stats.hypergeom)
      expect(Math.abs(w.exact_mean_g2 - 1 - t.williamsExcess)).toBeLessThanOrEqual(0.15 * (w.exact_mean_g2 - 1));
    }
  });

  it("the committed fixture agrees with the live script (when python3 ran it)", () => {
    const committed = JSON.parse(readFileSync(fixture, "utf8")) as Reference;
    committed.two_by_two.forEach((c, i) => {
      expect(ref.two_by_two[i]!.p_cmh).toBeCloseTo(c.p_cmh, 12);
      expect(ref.two_by_two[i]!.p_g2).toBeCloseTo(c.p_g2, 12);
    });
    committed.r_by_c.forEach((c, i) => expect(ref.r_by_c[i]!.p_g2).toBeCloseTo(c.p_g2, 12));
  });
});

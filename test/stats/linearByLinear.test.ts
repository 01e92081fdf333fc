import { readFileSync } from "node:fs";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { centredScores, linearByLinear, type ScoredStratum } from "../../src/stats/linearByLinear.js";
import { mantelHaenszel } from "../../src/stats/mantelHaenszel.js";
import { printedReference } from "../fixtures/stats/loadReference.js";

/** Reference values from scripts/linear_by_linear_reference.py (numpy/scipy), live or the committed fixture. */
interface LblRef {
  one_stratum: { counts: number[][]; row_scores: number[]; col_scores: number[]; n: number; r: number; q: number; p: number; log_p: number };
  stratified: {
    row_scores: number[]; col_scores: number[]; strata: number[][][]; n: number; strata_used: number;
    per_stratum: { n: number; t: number; e: number; v: number; used: boolean }[];
    t: number; e: number; v: number; q: number; p: number; log_p: number; correlation: number;
  };
  exact: { counts: number[][]; row_scores: number[]; col_scores: number[]; orderings: number; mean: number; variance: number };
  malformation: { absent: number[]; present: number[]; scores: number[]; n: number; r: number; q: number; p: number };
}
const { ref, from } = printedReference<LblRef>("linear_by_linear_reference.py", "linear-by-linear/reference.json", "python3 numpy/scipy (live)", 60_000);

const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
function stratum(counts: number[][], rowScores: number[], colScores: number[]): ScoredStratum {
  return { rows: counts.length, cols: counts[0]!.length, counts: counts.flat(), rowScores, colScores };
}

describe(`linearByLinear against numpy/scipy [${from}]`, () => {
  it("linearByLinear of one stratum is (n − 1) r² with r from scipy.stats.pearsonr (Agresti's M²)", () => {
    const o = ref.one_stratum;
    const r = linearByLinear([stratum(o.counts, o.row_scores, o.col_scores)]);
    expect(r.n).toBe(o.n); // 150 seeded rows
    expect(rel(r.q, o.q)).toBeLessThan(1e-10); // (n − 1)·pearsonr² (scipy.stats.pearsonr)
    expect(rel(r.correlation, o.r)).toBeLessThan(1e-10); // scipy.stats.pearsonr, sign included
    expect(rel(r.p, o.p)).toBeLessThan(1e-10); // scipy.stats.chi2.sf(Q, 1)
    expect(rel(r.logP, o.log_p)).toBeLessThan(1e-10); // scipy.stats.chi2.logsf(Q, 1)
    expect(Math.sign(r.deviation)).toBe(Math.sign(o.r));
    expect(r.strataUsed).toBe(1);
  });

  it("linearByLinear of five strata matches T, E, V, Q and the pooled correlation computed from the definition (numpy)", () => {
    const s = ref.stratified;
    const r = linearByLinear(s.strata.map((c) => stratum(c, s.row_scores, s.col_scores)));
    // numpy on the expanded rows, Mantel (1963) variance with n − 1 (scripts/linear_by_linear_reference.py)
    expect(r.n).toBe(s.n);
    expect(r.strataUsed).toBe(s.strata_used); // 3: one stratum has one x level, one has a single row
    expect(r.strataTotal).toBe(5);
    expect(rel(r.t, s.t)).toBeLessThan(1e-12);
    expect(rel(r.e, s.e)).toBeLessThan(1e-12);
    expect(rel(r.v, s.v)).toBeLessThan(1e-12);
    expect(rel(r.deviation, s.t - s.e)).toBeLessThan(1e-10);
    expect(rel(r.q, s.q)).toBeLessThan(1e-10);
    expect(rel(r.p, s.p)).toBeLessThan(1e-9); // scipy.stats.chi2.sf
    expect(rel(r.logP, s.log_p)).toBeLessThan(1e-10); // scipy.stats.chi2.logsf
    expect(rel(r.correlation, s.correlation)).toBeLessThan(1e-10); // numpy residuals about stratum means
    // each stratum alone gives its own T − E and V
    s.strata.forEach((c, k) => {
      const one = linearByLinear([stratum(c, s.row_scores, s.col_scores)]);
      const want = s.per_stratum[k]!;
      expect(one.strataUsed).toBe(want.used ? 1 : 0);
      if (want.used) expect(rel(one.v, want.v)).toBeLessThan(1e-12);
    });
  });

  it("E and V of a stratum are the exact mean and variance of T over all 5,040 orderings of x (the n − 1 denominator)", () => {
    const x = ref.exact;
    const r = linearByLinear([stratum(x.counts, x.row_scores, x.col_scores)]);
    expect(x.orderings).toBe(5040); // 7! (itertools.permutations)
    expect(r.e).toBeCloseTo(x.mean, 10); // exact enumeration, numpy mean
    expect(r.v).toBeCloseTo(x.variance, 10); // exact enumeration, numpy var
  });

  it("linearByLinear reproduces Agresti's infant malformation example: M² = 6.57, P = 0.01", () => {
    const m = ref.malformation;
    const r = linearByLinear([stratum([m.absent, m.present], [0, 1], m.scores)]);
    expect(r.n).toBe(32574); // Agresti, Categorical Data Analysis §3.4 (from memory; recomputed by the script)
    expect(r.q).toBeCloseTo(6.57, 2); // Agresti §3.4: M² = 6.57 (from memory)
    expect(r.p).toBeCloseTo(0.0104, 4); // Agresti §3.4: P = 0.01 (from memory; scipy gives 0.01037)
    expect(r.correlation).toBeCloseTo(0.0142, 4); // Agresti §3.4: r = 0.0142 (from memory)
    expect(rel(r.q, m.q)).toBeLessThan(1e-10); // scipy.stats.pearsonr, (n − 1) r²
  });

  it("linearByLinear with 0/1 scores on 2 × 2 × K tables is the Cochran–Mantel–Haenszel statistic (Berkeley admissions, R's 1.5246)", () => {
    interface Dept { men_admitted: number; men_rejected: number; women_admitted: number; women_rejected: number }
    // Bickel, Hammel & O'Connell (1975), Science 187:398–404
    const ucb = JSON.parse(readFileSync(new URL("../fixtures/statsmodels/ucb-admissions.json", import.meta.url), "utf8")) as { departments: Dept[] };
    const tables = ucb.departments.map((d) => [[d.men_admitted, d.men_rejected], [d.women_admitted, d.women_rejected]]);
    const r = linearByLinear(tables.map((t) => stratum(t, [0, 1], [0, 1])));
    // R stats::mantelhaen.test(UCBAdmissions, correct = FALSE), documented output (tests/Examples/stats-Ex.Rout.save)
    expect(r.q).toBeCloseTo(1.5246, 4);
    expect(r.p).toBeCloseTo(0.2169, 4);
    expect(r.q).toBeCloseTo(mantelHaenszel(tables.map((t) => t.flat())).cmh, 10);
  });
});

describe("linearByLinear properties", () => {
  const table = fc.array(fc.array(fc.integer({ min: 0, max: 12 }), { minLength: 4, maxLength: 4 }), { minLength: 3, maxLength: 3 });
  const strataArb = fc.array(table, { minLength: 1, maxLength: 4 });

  it("Q is unchanged by increasing affine maps of either score set, and reversing one score set flips only the sign (theorem)", () => {
    fc.assert(
      fc.property(strataArb, fc.double({ min: 0.1, max: 50, noNaN: true }), fc.double({ min: -1e3, max: 1e3, noNaN: true }), (tabs, a, b) => {
        const u = [0, 1, 3];
        const v = [1, 2, 4, 8];
        const base = linearByLinear(tabs.map((c) => stratum(c, u, v)));
        const moved = linearByLinear(tabs.map((c) => stratum(c, u.map((s) => a * s + b), v)));
        const flipped = linearByLinear(tabs.map((c) => stratum(c, u, v.map((s) => -s))));
        expect(moved.strataUsed).toBe(base.strataUsed);
        if (base.v === 0) return;
        expect(Math.abs(moved.q - base.q)).toBeLessThanOrEqual(1e-8 * Math.max(1, base.q));
        expect(Math.abs(flipped.q - base.q)).toBeLessThanOrEqual(1e-8 * Math.max(1, base.q));
        if (Math.abs(base.deviation) > 1e-9) expect(Math.sign(flipped.deviation)).toBe(-Math.sign(base.deviation));
        expect(Math.abs(base.correlation)).toBeLessThanOrEqual(1 + 1e-12);
      }),
      { numRuns: 200, seed: 31 },
    );
  });

  it("Q is 0 for tables with exactly proportional rows, whatever the scores and strata (theorem)", () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 2, maxLength: 4 }), fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 2, maxLength: 4 })), { minLength: 1, maxLength: 4 }), (spec) => {
        const tabs = spec.map(([a, b]) => stratum(a.map((ai) => b.map((bj) => ai * bj)), a.map((_, i) => i * i), b.map((_, j) => Math.sqrt(j))));
        const r = linearByLinear(tabs);
        expect(r.q).toBeLessThan(1e-18 + 1e-12 * r.v);
        expect(r.strataUsed).toBe(spec.length);
      }),
      { numRuns: 100, seed: 32 },
    );
  });

  it("scores near 1e6 (e.g. calendar years in thousandths) keep Q to 1e-9 relative: T − E comes from centred scores", () => {
    const s = ref.stratified;
    const base = linearByLinear(s.strata.map((c) => stratum(c, s.row_scores, s.col_scores)));
    const shifted = linearByLinear(s.strata.map((c) => stratum(c, s.row_scores.map((v) => v + 1e6), s.col_scores.map((v) => v + 1e6))));
    expect(rel(shifted.q, base.q)).toBeLessThan(1e-9);
  });

  it("scores multiplied by 2^k give the scipy/numpy Q and correlation bit for bit as the unscaled scores, T, E, V scaled by 2^k (regression: scores of 1e155 or more overflowed to NaN)", () => {
    const s = ref.stratified;
    const base = linearByLinear(s.strata.map((c) => stratum(c, s.row_scores, s.col_scores)));
    expect(rel(base.q, s.q)).toBeLessThan(1e-9); // numpy from the definition (scripts/linear_by_linear_reference.py)
    for (const k of [-1000, -600, 600, 1000]) {
      const f = 2 ** k;
      const scaled = linearByLinear(s.strata.map((c) => stratum(c, s.row_scores.map((v) => v * f), s.col_scores)));
      expect(scaled.q, `k=${k}`).toBe(base.q); // IEEE 754: powers of two scale without rounding
      expect(scaled.correlation, `k=${k}`).toBe(base.correlation);
      expect(scaled.t, `k=${k}`).toBe(base.t * f);
      expect(scaled.deviation, `k=${k}`).toBe(base.deviation * f);
      const both = linearByLinear(s.strata.map((c) => stratum(c, s.row_scores.map((v) => v * f), s.col_scores.map((v) => v * f))));
      expect(both.q, `k=${k}`).toBe(base.q);
      expect(Number.isNaN(both.v), `k=${k}`).toBe(false); // V of 2^2k·V overflows to Infinity for k = 600 and underflows for k = −600: reported, never NaN
    }
    // extreme scores that are not a rescaling: the statistic stays finite
    const wild = linearByLinear(s.strata.map((c) => stratum(c, [1, 2, 1e200].slice(0, s.row_scores.length).concat(s.row_scores.slice(3)), s.col_scores.map((v, j) => (j === 0 ? -1.7e308 : v)))));
    expect(Number.isFinite(wild.q) && Number.isFinite(wild.p) && Number.isFinite(wild.correlation)).toBe(true);
  });

  it("a stratum with ordinary scores next to one scored up to 1e200 still counts as used, and Q is that of the dominant stratum (regression: 'never both vary' when one scale served all strata)", () => {
    const ordinary = stratum([[3, 1, 0], [1, 3, 1], [0, 1, 3]], [1, 2, 3], [1, 2, 3]);
    const huge = stratum([[2, 1, 0], [1, 2, 1], [0, 1, 2]], [2, 3, 1e200], [1, 2, 3]);
    const both = linearByLinear([ordinary, huge]);
    expect(both.strataUsed).toBe(2);
    // exact arithmetic: D and V of the ordinary stratum are 1e-199 or less of the other's, so Q is the dominant stratum's
    expect(rel(both.q, linearByLinear([huge]).q)).toBeLessThan(1e-12);
    expect(Number.isFinite(both.correlation) && Math.abs(both.correlation) <= 1).toBe(true);
    // scores spanning −1e308 to 1e-310 in one stratum and 1e-310 to 5 in the other: both used, all finite
    const wide = linearByLinear([stratum([[3, 1, 0], [1, 3, 1], [0, 1, 3]], [1, 2, 3], [-1e308, 0, 1e-310]), stratum([[2, 1, 0], [1, 2, 1], [0, 1, 2]], [2, 3, 1e200], [0, 1e-310, 5])]);
    expect(wide.strataUsed).toBe(2);
    expect([wide.q, wide.p, wide.correlation].every(Number.isFinite)).toBe(true);
  });

  it("centredScores centres on the weighted mean (doc example, hand computation)", () => {
    const c = centredScores([0, 1, 3], [2, 1, 1]);
    expect(Array.from(c.centred)).toEqual([-1, 0, 2]);
    expect(c.mean).toBe(1);
    expect(c.sumSquares).toBe(6); // 2·1 + 0 + 4
    expect(centredScores([5, 7], [0, 0]).mean).toBe(0);
  });

  it("the doc example, the empty list, degenerate strata and bad input", () => {
    // 12 rows with scores (0,0)×4, (0,1)×2, (1,0)×1, (1,1)×5: r = 0.50709 (numpy.corrcoef, run by hand), Q = 11 r²
    const ex = linearByLinear([stratum([[4, 2], [1, 5]], [0, 1], [0, 1])]);
    expect(ex.q).toBeCloseTo(11 * 0.5070925528371097 ** 2, 12);
    expect(linearByLinear([])).toMatchObject({ q: 0, strataUsed: 0, strataTotal: 0, n: 0, v: 0 });
    expect(Number.isNaN(linearByLinear([]).correlation)).toBe(true);
    const single = linearByLinear([stratum([[3, 4], [0, 0]], [0, 1], [0, 1]), stratum([[1, 0], [0, 0]], [0, 1], [0, 1])]);
    expect(single).toMatchObject({ strataUsed: 0, strataTotal: 2, n: 8, q: 0, p: 1 });
    expect(() => linearByLinear([{ rows: 2, cols: 2, counts: [1, 2, 3], rowScores: [0, 1], colScores: [0, 1] }])).toThrow(/3 counts for a 2×2/);
    expect(() => linearByLinear([{ rows: 2, cols: 2, counts: [1, 2, 3, 4], rowScores: [0], colScores: [0, 1] }])).toThrow(/one score per row/);
    expect(() => linearByLinear([stratum([[1, -2], [3, 4]], [0, 1], [0, 1])])).toThrow(/finite non-negative/);
    expect(() => linearByLinear([stratum([[1, 2], [3, 4]], [0, NaN], [0, 1])])).toThrow(/not a finite number/);
  });
});

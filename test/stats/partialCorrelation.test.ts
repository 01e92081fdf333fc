import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { partialCorrelation, partialCorrelationWithReason } from "../../src/stats/partialCorrelation.js";
import { partialCorrelationTest, Z_975 } from "../../src/stats/partialCorrelationTest.js";
import { leastSquaresQR } from "../../src/stats/linalg.js";
import { logStudentTTwoSided, studentTTwoSided } from "../../src/stats/pvalues.js";
import { loadReference, relErr } from "../fixtures/stats/loadReference.js";
import { covarianceOf, midRanks } from "../fixtures/stats/arrayMoments.js";
import { attachScaledCovariance } from "../../src/stats/scaledCovariance.js";

interface Stat { r: number; t: number; df: number; p: number; log_p: number; ci: [number, number] }
interface PartialRef {
  sets: { name: string; columns: string[]; n: number; data: number[][]; ranks: number[][]; cases: { i: number; j: number; given: number[]; pearson: Stat; spearman: Stat }[] }[];
}
const ref = loadReference<PartialRef>("partial");

/** Correlation of the residuals of i and j on [1, given] by Householder QR: an independent route. */
function residualPartial(cols: number[][], i: number, j: number, given: number[]): number {
  const n = cols[0]!.length;
  const p = given.length + 1;
  const X = new Float64Array(n * p);
  for (let r = 0; r < n; r++) {
    X[r * p] = 1;
    given.forEach((g, q) => (X[r * p + q + 1] = cols[g]![r]!));
  }
  const res = (c: number): number[] => {
    const fit = leastSquaresQR(X, n, p, cols[c]!)!;
    return cols[c]!.map((v, r) => v - given.reduce((s, g, q) => s + fit.coef[q + 1]! * cols[g]![r]!, fit.coef[0]!));
  };
  const a = res(i);
  const b = res(j);
  const { cov } = covarianceOf([a, b]);
  return cov[1]! / Math.sqrt(cov[0]! * cov[3]!);
}

describe(`partialCorrelation against numpy residuals (reference: ${ref.origin})`, () => {
  // numpy lstsq residual method + scipy.stats.t / norm, scripts/stats_reference.py
  it("partialCorrelation(cov, k, i, j, given) matches numpy to 1e-9 relative on every case", () => {
    let count = 0;
    for (const set of ref.data.sets) {
      const { cov } = covarianceOf(set.data);
      const k = set.columns.length;
      for (const c of set.cases) {
        const r = partialCorrelation(cov, k, c.i, c.j, c.given)!;
        expect(relErr(r, c.pearson.r), `${set.name} ${c.i},${c.j}|${c.given}`).toBeLessThanOrEqual(1e-9);
        count++;
      }
    }
    expect(count).toBeGreaterThan(50);
  });

  it("partialCorrelationWithReason reads the scaled twin of a covariance whose entries left the double range: numpy's r where cov·2^(±1000 per column) is Infinity or 0 (regression: 'variance is Infinity' internal error)", () => {
    for (const set of ref.data.sets) {
      const { cov } = covarianceOf(set.data);
      const k = set.columns.length;
      const exponent = Int32Array.from({ length: k }, (_, j) => (j % 2 === 0 ? 1000 : -1000));
      // the covariance in the columns' own units when each was scaled down by 2^exponent[j]: cov_ab·2^−(e_a + e_b)
      const unscaled = Float64Array.from(cov, (v, idx) => v * 2 ** -exponent[Math.floor(idx / k)]! * 2 ** -exponent[idx % k]!);
      expect(unscaled.some((v) => !Number.isFinite(v) || v === 0)).toBe(true);
      expect(() => partialCorrelationWithReason(Float64Array.from(unscaled), k, 1, 0, [])).toThrow(RangeError); // no twin: column 1's variance is Infinity
      expect(partialCorrelationWithReason(Float64Array.from(unscaled), k, 0, 2, [])).toEqual({ reason: "constant", column: 0 }); // no twin: column 0's variance underflowed to 0
      attachScaledCovariance(unscaled, { cov: Float64Array.from(cov), means: new Float64Array(k), exponent });
      for (const c of set.cases) {
        const r = partialCorrelationWithReason(unscaled, k, c.i, c.j, c.given);
        expect("r" in r && relErr(r.r, c.pearson.r), `${set.name} ${c.i},${c.j}|${c.given}`).toBeLessThanOrEqual(1e-9); // numpy residual method
      }
    }
  });

  it("partialCorrelationTest(r, n, c) matches scipy t, p, log p and Fisher-z CI to 1e-9 relative", () => {
    for (const set of ref.data.sets)
      for (const c of set.cases) {
        const s = partialCorrelationTest(c.pearson.r, set.n, c.given.length);
        if ("reason" in s) throw new Error(s.reason);
        const where = `${set.name} ${c.i},${c.j}|${c.given}`;
        expect(s.df, where).toBe(c.pearson.df);
        expect(relErr(s.t, c.pearson.t), where).toBeLessThanOrEqual(1e-9);
        expect(relErr(s.p, c.pearson.p), where).toBeLessThanOrEqual(1e-9);
        expect(relErr(s.log_p, c.pearson.log_p), where).toBeLessThanOrEqual(1e-9);
        expect(relErr(s.ci[0], c.pearson.ci[0]), where).toBeLessThanOrEqual(1e-9);
        expect(relErr(s.ci[1], c.pearson.ci[1]), where).toBeLessThanOrEqual(1e-9);
      }
  });

  it("Spearman partial: partialCorrelation on mid-ranks matches scipy.stats.rankdata + numpy to 1e-9", () => {
    for (const set of ref.data.sets) {
      const ranks = set.data.map(midRanks);
      ranks.forEach((rk, q) => rk.forEach((v, r) => expect(v).toBe(set.ranks[q]![r]))); // scipy.stats.rankdata(method="average")
      const { cov } = covarianceOf(ranks);
      for (const c of set.cases) {
        const rho = partialCorrelation(cov, set.columns.length, c.i, c.j, c.given)!;
        expect(relErr(rho, c.spearman.r)).toBeLessThanOrEqual(1e-9);
        const s = partialCorrelationTest(rho, set.n, c.given.length);
        if ("reason" in s) throw new Error(s.reason);
        expect(relErr(s.p, c.spearman.p)).toBeLessThanOrEqual(1e-9);
        expect(relErr(s.ci[0], c.spearman.ci[0])).toBeLessThanOrEqual(1e-9);
      }
    }
  });

  it("partialCorrelation equals the residual correlation by QR, on the data with a 1e6 offset column (stability)", () => {
    const set = ref.data.sets.find((s) => s.name === "continuous")!;
    const { cov } = covarianceOf(set.data);
    const big = set.columns.indexOf("big");
    for (const [i, j, given] of [[0, 1, [big]], [big, 1, [2, 3]], [0, big, [4]]] as [number, number, number[]][]) {
      expect(relErr(partialCorrelation(cov, 6, i, j, given)!, residualPartial(set.data, i, j, given))).toBeLessThanOrEqual(1e-9);
    }
  });
});

describe("partialCorrelation theorems", () => {
  const gen = fc.array(fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: 30, maxLength: 30 }), { minLength: 5, maxLength: 5 });

  it("is symmetric in i and j, ignores the order of given, flips sign with a column, and is invariant to scale and shift", () => {
    fc.assert(
      fc.property(gen, fc.double({ min: 1e-3, max: 1e3, noNaN: true }), fc.double({ min: -1e4, max: 1e4, noNaN: true }), (cols, scale, shift) => {
        const { cov } = covarianceOf(cols);
        const r = partialCorrelation(cov, 5, 0, 1, [2, 3, 4]);
        if (r === undefined) return;
        expect(partialCorrelation(cov, 5, 1, 0, [2, 3, 4])).toBeCloseTo(r, 12);
        expect(partialCorrelation(cov, 5, 0, 1, [4, 2, 3])).toBeCloseTo(r, 12);
        const flipped = covarianceOf([cols[0]!.map((v) => -v), ...cols.slice(1)]).cov;
        expect(partialCorrelation(flipped, 5, 0, 1, [2, 3, 4])).toBeCloseTo(-r, 12);
        const moved = covarianceOf([cols[0]!.map((v) => v * scale + shift), cols[1]!, cols[2]!.map((v) => v * scale - shift), cols[3]!, cols[4]!]).cov;
        expect(partialCorrelation(moved, 5, 0, 1, [2, 3, 4])).toBeCloseTo(r, 9);
        expect(Math.abs(r)).toBeLessThanOrEqual(1);
      }),
      { numRuns: 100, seed: 5 },
    );
  });

  it("with no given columns it is the ordinary correlation, and it matches the QR residual route (theorem)", () => {
    fc.assert(
      fc.property(gen, (cols) => {
        const { cov } = covarianceOf(cols);
        const r0 = partialCorrelation(cov, 5, 0, 1, []);
        if (r0 !== undefined) expect(r0).toBeCloseTo(cov[1]! / Math.sqrt(cov[0]! * cov[6]!), 12);
        const r = partialCorrelation(cov, 5, 0, 1, [2, 3]);
        if (r !== undefined) expect(r).toBeCloseTo(residualPartial(cols, 0, 1, [2, 3]), 9);
      }),
      { numRuns: 60, seed: 6 },
    );
  });

  it("partialCorrelation(…) is ±1 when j is an exact linear function of i and given, and the test then stays finite", () => {
    const a = [1, 2, 3, 4, 5, 6, 7, 9];
    const g = [2, 1, 4, 3, 6, 5, 8, 7];
    const b = a.map((v, r) => -2 * v + 3 * g[r]! + 1);
    const { cov } = covarianceOf([a, b, g]);
    expect(partialCorrelation(cov, 3, 0, 1, [2])).toBeCloseTo(-1, 9);
    const s = partialCorrelationTest(-1, 8, 1);
    if ("reason" in s) throw new Error(s.reason);
    for (const v of [s.t, s.p, s.log_p, ...s.ci]) expect(Number.isFinite(v)).toBe(true);
    expect(s.t).toBeLessThan(-1e7);
    expect(s.p).toBeGreaterThan(0);
    expect(s.ci[0]).toBeLessThan(s.ci[1]);
  });
});

describe("partialCorrelationWithReason reports why r is undefined", () => {
  const x = [1, 2, 3, 4, 5, 6, 7, 8];
  const y = [2, 1, 4, 3, 6, 5, 8, 9];
  const z = [3, 1, 2, 5, 4, 7, 6, 8];
  it("a constant column → constant, naming the column", () => {
    const { cov } = covarianceOf([x, y, [5, 5, 5, 5, 5, 5, 5, 5]]);
    expect(partialCorrelationWithReason(cov, 3, 0, 1, [2])).toEqual({ reason: "constant", column: 2 });
    expect(partialCorrelationWithReason(cov, 3, 2, 1, [])).toEqual({ reason: "constant", column: 2 });
    expect(partialCorrelation(cov, 3, 0, 1, [2])).toBeUndefined();
    expect(partialCorrelation(cov, 3, 0, 1, [])).toBeDefined();
  });
  it("a given column that is a linear function of the others → collinear-given", () => {
    const w = x.map((v, r) => 2 * z[r]! - 1);
    const { cov } = covarianceOf([x, y, z, w]);
    expect(partialCorrelationWithReason(cov, 4, 0, 1, [2, 3])).toEqual({ reason: "collinear-given", column: 3 });
    expect("r" in partialCorrelationWithReason(cov, 4, 0, 1, [2])).toBe(true); // each alone is fine
  });
  it("i or j a linear function of the given columns → collinear-with-given, naming it", () => {
    const xi = z.map((v) => 3 * v + 2);
    const { cov } = covarianceOf([xi, y, z]);
    expect(partialCorrelationWithReason(cov, 3, 0, 1, [2])).toEqual({ reason: "collinear-with-given", column: 0 });
    expect(partialCorrelationWithReason(cov, 3, 1, 0, [2])).toEqual({ reason: "collinear-with-given", column: 0 });
  });
  it("rejects bad indices and a non-finite variance, and leaves the covariance unchanged", () => {
    const { cov } = covarianceOf([x, y, z]);
    const frozen = Object.freeze(Array.from(cov));
    expect(() => partialCorrelation(frozen, 3, 0, 3, [])).toThrow(/outside 0..2/);
    expect(() => partialCorrelation(frozen, 3, 0, 1, [1])).toThrow(/appears twice/);
    expect(() => partialCorrelation([NaN, 0, 0, 1], 2, 0, 1, [])).toThrow(/must be finite/);
    expect(partialCorrelation(frozen, 3, 0, 1, [2])).toBeDefined();
  });
  it("doc example: partialCorrelation([1, .5, .5, 1], 2, 0, 1, []) = 0.5", () => {
    expect(partialCorrelation(new Float64Array([1, 0.5, 0.5, 1]), 2, 0, 1, [])).toBeCloseTo(0.5, 15);
  });
});

describe("partialCorrelationTest", () => {
  it("partialCorrelationTest(0.711879, 37, 2): t = 5.82 on 33 df, significant at 0.05 (Penn State STAT 505 §6.3)", () => {
    const s = partialCorrelationTest(0.711879, 37, 2); // Wechsler data, STAT 505 lesson 6.3
    if ("reason" in s) throw new Error(s.reason);
    expect(s.df).toBe(33); // STAT 505 §6.3
    expect(s.t).toBeCloseTo(5.82, 2); // STAT 505 §6.3
    expect(s.t).toBeGreaterThan(2.0345); // critical t, STAT 505 §6.3
    expect(s.p).toBeLessThan(0.05);
    expect(studentTTwoSided(2.0345, 33)).toBeCloseTo(0.05, 4); // the critical value is the 0.05 point
    expect(s.ci[0]).toBeGreaterThan(0); // a significant r has a CI excluding 0
    // the other side: r = 0.3 with the same n and c is not significant
    const ns = partialCorrelationTest(0.3, 37, 2);
    if ("reason" in ns) throw new Error(ns.reason);
    expect(Math.abs(ns.t)).toBeLessThan(2.0345);
    expect(ns.p).toBeGreaterThan(0.05);
    expect(ns.ci[0]).toBeLessThan(0);
  });

  it("r = 0 gives t = 0, p = 1, log p = 0 and a symmetric CI with the exact 0.975 normal quantile", () => {
    const s = partialCorrelationTest(0, 103, 0);
    if ("reason" in s) throw new Error(s.reason);
    expect(s.t).toBe(0);
    expect(s.p).toBe(1);
    expect(s.log_p).toBe(0);
    expect(s.ci[1]).toBeCloseTo(Math.tanh(Z_975 / 10), 15);
    expect(s.ci[0]).toBe(-s.ci[1]);
  });

  it("p never 0: an underflowing p becomes Number.MIN_VALUE with an exact log p", () => {
    const s = partialCorrelationTest(0.9999, 200_000, 3);
    if ("reason" in s) throw new Error(s.reason);
    expect(studentTTwoSided(s.t, s.df)).toBe(0);
    expect(s.p).toBe(Number.MIN_VALUE);
    expect(s.log_p).toBe(logStudentTTwoSided(s.t, s.df));
    expect(s.log_p).toBeLessThan(-745);
    expect(Number.isFinite(s.log_p)).toBe(true);
  });

  it("too few cases give a reason; n − c − 3 = 0 gives the CI [−1, 1]; bad input throws", () => {
    const r1 = partialCorrelationTest(0.5, 4, 2);
    expect(r1).toEqual({ reason: "4 complete cases leave no degrees of freedom for a partial correlation given 2 columns; it needs at least 5" });
    expect("reason" in partialCorrelationTest(0.5, 0, 0)).toBe(true);
    const s = partialCorrelationTest(0.5, 5, 2);
    if ("reason" in s) throw new Error(s.reason);
    expect(s.df).toBe(1);
    expect(s.ci).toEqual([-1, 1]);
    expect(() => partialCorrelationTest(1.5, 10, 0)).toThrow(/\[-1, 1\]/);
    expect(() => partialCorrelationTest(NaN, 10, 0)).toThrow(RangeError);
    expect(() => partialCorrelationTest(0.5, 10.5, 0)).toThrow(/non-negative integer/);
    expect(() => partialCorrelationTest(0.5, 10, -1)).toThrow(/non-negative integer/);
  });

  it("the Fisher-z CI contains r, lies in [−1, 1], and narrows as n grows (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: -0.999, max: 0.999, noNaN: true }), fc.integer({ min: 4, max: 1e6 }), fc.integer({ min: 0, max: 3 }), (r, n, c) => {
        const s = partialCorrelationTest(r, n + c, c);
        const s2 = partialCorrelationTest(r, 4 * n + c, c);
        if ("reason" in s || "reason" in s2) return;
        expect(s.ci[0]).toBeLessThanOrEqual(r + 1e-15);
        expect(s.ci[1]).toBeGreaterThanOrEqual(r - 1e-15);
        expect(s.ci[0]).toBeGreaterThanOrEqual(-1);
        expect(s.ci[1]).toBeLessThanOrEqual(1);
        expect(s2.ci[1] - s2.ci[0]).toBeLessThanOrEqual(s.ci[1] - s.ci[0] + 1e-15);
        expect(s.p).toBeGreaterThan(0);
      }),
      { numRuns: 200, seed: 7 },
    );
  });
});

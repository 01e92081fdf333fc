import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { lrEffect, lrEffectCI, lrToEffect } from "../../src/stats/effectScale.js";
import { noncentralChiSquareUpper } from "../../src/stats/noncentralChiSquare.js";
import { loadReference, relErr } from "../fixtures/stats/loadReference.js";

interface EffRef { rows: { lr: number; df: number; n: number; lambda: [number, number]; ci: [number, number] }[] }
const ref = loadReference<EffRef>("effect");

describe(`lrEffectCI against scipy (reference: ${ref.origin})`, () => {
  // scipy.optimize.brentq on scipy.stats.ncx2.sf, scripts/stats_reference.py
  it("lrEffectCI(lr, df, n) matches the scipy noncentrality bounds mapped to the effect scale to 1e-8", () => {
    for (const r of ref.data.rows) {
      const [lo, hi] = lrEffectCI(r.lr, r.df, r.n);
      const where = `lr=${r.lr} df=${r.df} n=${r.n}`;
      if (r.ci[0] === 0) expect(lo, where).toBe(0);
      else expect(relErr(lo, r.ci[0]), where).toBeLessThanOrEqual(1e-8);
      expect(relErr(hi, r.ci[1]), where).toBeLessThanOrEqual(1e-8);
    }
  });
});

describe("lrToEffect", () => {
  it("lrToEffect(−n ln(1 − r²), n, sign r) = r: the Gaussian partial-correlation LR maps back to r (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: -0.999999, max: 0.999999, noNaN: true }), fc.integer({ min: 5, max: 1e7 }), (r, n) => {
        const lr = -n * Math.log1p(-r * r);
        const e = lrToEffect(lr, n, r < 0 ? -1 : 1);
        expect(Math.abs(e - r)).toBeLessThanOrEqual(1e-12 + 1e-9 * Math.abs(r));
      }),
      { numRuns: 300, seed: 14 },
    );
  });
  it("lrToEffect(0, n) = 0, sign 0 gives 0, small LR keeps relative accuracy, bad input throws", () => {
    expect(lrToEffect(0, 10)).toBe(0);
    expect(lrToEffect(5, 10, 0) === 0).toBe(true);
    expect(relErr(lrToEffect(1e-20, 1), 1e-10)).toBeLessThanOrEqual(1e-9); // √(1 − e^{−u}) ≈ √u
    expect(lrToEffect(1e6, 10)).toBe(1);
    expect(() => lrToEffect(NaN, 10)).toThrow(/NaN/);
    expect(() => lrToEffect(1, 0)).toThrow(/sample size/);
    expect(() => lrToEffect(1, 10, 2 as never)).toThrow(/sign/);
  });
});

describe("lrEffectCI", () => {
  it("the interval contains the point effect, its bounds solve the tail equations, and a higher level widens it (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.5, max: 200, noNaN: true }), fc.integer({ min: 1, max: 6 }), fc.integer({ min: 20, max: 5000 }), (lr, df, n) => {
        const [lo, hi] = lrEffectCI(lr, df, n);
        const [lo99, hi99] = lrEffectCI(lr, df, n, 0.99);
        expect(lo).toBeLessThanOrEqual(hi);
        expect(lo99).toBeLessThanOrEqual(lo + 1e-12);
        expect(hi99).toBeGreaterThanOrEqual(hi - 1e-12);
        const lambdaOf = (e: number): number => -n * Math.log1p(-e * e);
        if (lo > 0) expect(noncentralChiSquareUpper(lr, df, lambdaOf(lo))).toBeCloseTo(0.025, 8);
        if (hi > 0) expect(noncentralChiSquareUpper(lr, df, lambdaOf(hi))).toBeCloseTo(0.975, 8);
        // the point estimate √(1 − e^{−max(LR − df, 0)/n}) of the noncentrality lies inside
        const point = lrToEffect(Math.max(lr - df, 0), n);
        expect(point).toBeGreaterThanOrEqual(lo - 1e-12);
        expect(point).toBeLessThanOrEqual(hi + 1e-12);
      }),
      { numRuns: 40, seed: 15 },
    );
  });
  it("the lower bound is 0 exactly when the central test is not significant at 0.025; doc example", () => {
    expect(lrEffectCI(5.0, 1, 100)[0]).toBe(0); // P(χ²₁ ≥ 5.0) ≈ 0.0253 > 0.025 (χ²₁ 0.975 point 5.0239, common practice)
    expect(lrEffectCI(5.03, 1, 100)[0]).toBeGreaterThan(0);
    expect(lrEffectCI(4.9, 1, 100)[0]).toBe(0);
    expect(lrEffectCI(0.0005, 3, 50)).toEqual([0, 0]);
    const [lo, hi] = lrEffectCI(20, 1, 100);
    expect(lo).toBeCloseTo(0.2473, 4); // scipy brentq, effect.json
    expect(hi).toBeCloseTo(0.5821, 4);
  });
  it("rejects negative LR, bad df, n or level", () => {
    expect(() => lrEffectCI(-1, 1, 10)).toThrow(/finite number ≥ 0/);
    expect(() => lrEffectCI(1, 0, 10)).toThrow(/df must be positive/);
    expect(() => lrEffectCI(1, 1, 0)).toThrow(/sample size/);
    expect(() => lrEffectCI(1, 1, 10, 1)).toThrow(/confidence level/);
  });
});

describe("lrEffect", () => {
  it("lrEffect equals lrToEffect for 1 df (so |r| for the Gaussian LR) and removes the chance expectation df for more", () => {
    expect(lrEffect(20, 1, 100, -1)).toBe(lrToEffect(20, 100, -1));
    expect(lrEffect(3, 6, 500)).toBe(0); // below its expectation under the null
    expect(lrEffect(26, 6, 500)).toBeCloseTo(Math.sqrt(1 - Math.exp(-20 / 500)), 15);
  });

  it("lrEffect lies inside lrEffectCI for every LR, df and n (property)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 400, noNaN: true }), fc.integer({ min: 1, max: 40 }), fc.integer({ min: 50, max: 100000 }), (lr, df, n) => {
        const e = lrEffect(lr, df, n);
        const [lo, hi] = lrEffectCI(lr, df, n);
        return lo <= e + 1e-12 && e <= hi + 1e-12;
      }),
      { numRuns: 150, seed: 7 },
    );
  });
});

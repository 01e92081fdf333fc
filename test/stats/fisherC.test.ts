import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { fisherC } from "../../src/stats/fisherC.js";
import { logChiSquareUpper } from "../../src/stats/pvalues.js";
import { loadReference, relErr } from "../fixtures/stats/loadReference.js";

interface FisherRef { rows: { p: number[]; statistic: number; pvalue: number }[] }
const ref = loadReference<FisherRef>("fisher");

describe(`fisherC against scipy.stats.combine_pvalues (reference: ${ref.origin})`, () => {
  it("fisherC(log p) matches combine_pvalues(method='fisher') statistic and p to 1e-10, up to k = 1500 (df 3000)", () => {
    for (const r of ref.data.rows) {
      const res = fisherC(r.p.map(Math.log));
      expect(res.df).toBe(2 * r.p.length);
      expect(relErr(res.statistic, r.statistic), `k=${r.p.length}`).toBeLessThanOrEqual(1e-12);
      expect(relErr(res.p, r.pvalue), `k=${r.p.length}`).toBeLessThanOrEqual(1e-10);
      expect(relErr(res.log_p, Math.log(r.pvalue))).toBeLessThanOrEqual(1e-10);
    }
  });
});

describe("fisherC", () => {
  it("with one test, the combined p equals that p: P(χ²₂ ≥ −2 ln p) = p (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-300, max: 1, noNaN: true }), (p) => {
        expect(relErr(fisherC([Math.log(p)]).p, p)).toBeLessThanOrEqual(1e-12);
      }),
      { numRuns: 200, seed: 10 },
    );
  });

  it("p-values that underflowed still count in full through their logs, and p is never 0", () => {
    const res = fisherC([-2000, -1500, Math.log(0.5)]);
    expect(res.statistic).toBeCloseTo(7000 - 2 * Math.log(0.5), 9);
    expect(res.df).toBe(6);
    expect(res.p).toBe(Number.MIN_VALUE);
    expect(res.log_p).toBe(logChiSquareUpper(res.statistic, 6));
    expect(res.log_p).toBeLessThan(-3400);
  });

  it("all p = 1 give C = 0 and p = 1; doc example fisherC([ln 0.05, ln 0.5])", () => {
    expect(fisherC([0, 0])).toEqual({ statistic: 0, df: 4, p: 1, log_p: 0 });
    const ex = fisherC([Math.log(0.05), Math.log(0.5)]);
    expect(ex.statistic).toBeCloseTo(7.3778, 4); // −2(ln 0.05 + ln 0.5), by hand
    // for df = 4, P(χ² ≥ C) = e^{−C/2}(1 + C/2) = q(1 − ln q) with q = 0.05·0.5 (closed form, common practice)
    expect(relErr(ex.p, 0.025 * (1 - Math.log(0.025)))).toBeLessThanOrEqual(1e-13);
    expect(ex.p).toBeCloseTo(0.11722, 5);
  });

  it("rejects an empty list and a positive or NaN log p, naming the position", () => {
    expect(() => fisherC([])).toThrow(/no p-values to combine/);
    expect(() => fisherC([-1, 0.3])).toThrow(/position 1 is 0.3/);
    expect(() => fisherC([NaN])).toThrow(RangeError);
  });
});

import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { adfCoefficients, residualCorrelationInterval } from "../../src/stats/residualCorrelationInterval.js";
import { studentTTwoSided } from "../../src/stats/pvalues.js";
import { intervalReference } from "../fixtures/intervals/loadIntervalReference.js";

const { ref, from } = intervalReference();

function sumsOf(ex: number[], ey: number[]) {
  const s = { uu: 0, vv: 0, uv: 0, uuvv: 0, uuuv: 0, uvvv: 0, uuuu: 0, vvvv: 0 };
  ex.forEach((u, i) => {
    const v = ey[i]!;
    s.uu += u * u;
    s.vv += v * v;
    s.uv += u * v;
    s.uuvv += u * u * v * v;
    s.uuuv += u * u * u * v;
    s.uvvv += u * v * v * v;
    s.uuuu += u ** 4;
    s.vvvv += v ** 4;
  });
  return s;
}

describe(`residualCorrelationInterval [reference: ${from}]`, () => {
  it("adfCoefficients(m, sums) gives the variance of the influence values u·v − ρ(u² + v²)/2 that numpy.var gives, at ρ = −0.5, 0, 0.3, 0.8, whatever the residuals' scale", () => {
    for (const c of ref.adf) {
      for (const scale of [1, 2 ** -40, 3.7e5]) {
        const coef = adfCoefficients(c.ex.length, sumsOf(c.ex.map((v) => v * scale), c.ey.map((v) => v / scale)))!;
        for (const [rho, want] of Object.entries(c.variance)) {
          const x = Number(rho);
          // numpy.var of the influence values, scripts/interval_reference.py
          expect(Math.abs(coef[0] + coef[1] * x + coef[2] * x * x - want) / want, `${c.shape} ρ=${rho} scale ${scale}`).toBeLessThan(1e-12);
        }
      }
    }
    expect(adfCoefficients(4, { uu: 0, vv: 1, uv: 0, uuvv: 0, uuuv: 0, uvvv: 0, uuuu: 0, vvvv: 1 })).toBeUndefined();
    expect(adfCoefficients(4, { uu: 4, vv: 4, uv: 0, uuvv: 4, uuuv: 0, uvvv: 0, uuuu: 4, vvvv: 4 })).toEqual([1, 0, 0]); // doc example
  });

  it("matches the scipy inversion (scipy.stats.t.ppf, a grid walk and scipy.optimize.brentq) to 1e-9, at alpha 0.05 and 0.01", () => {
    for (const c of ref.intervals) {
      const where = `r=${c.r} s0=${c.se0} α=${c.alpha}`;
      // the test's p of t = r/s0 on ν df (scipy.stats.t.sf), as the generalised covariance measure reports it
      expect(Math.abs(studentTTwoSided(c.r / c.se0, c.nu) - c.p) / c.p, where).toBeLessThan(1e-9);
      const ci = residualCorrelationInterval(c.r, c.p, c.nu, c.n, c.params, { se0: c.se0, adf: c.adf }, 1 - c.alpha);
      expect(Math.abs(ci[0] - c.ci[0]), `${where} lower`).toBeLessThan(1e-9);
      expect(Math.abs(ci[1] - c.ci[1]), `${where} upper`).toBeLessThan(1e-9);
      expect(ci[0] > 0 || ci[1] < 0, where).toBe(c.p < c.alpha);
    }
  });

  it("contains r, lies in [−1, 1] and excludes 0 exactly when p < alpha, for random r, s0, ADF moments, n and alpha (property)", () => {
    fc.assert(
      fc.property(
        fc.double({ min: -0.99, max: 0.99, noNaN: true }),
        fc.double({ min: 0.2, max: 5, noNaN: true }),
        fc.double({ min: 0.05, max: 20, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: 0, max: 30, noNaN: true }),
        fc.integer({ min: 20, max: 20000 }), fc.integer({ min: 0, max: 12 }), fc.constantFrom(0.05, 0.01, 0.2),
        (r, seRatio, c0, corr, c2, n, params, alpha) => {
          fc.pre(n - 2 - params >= 5);
          // a valid quadratic variance: c1² ≤ 4 c0 c2 (A(ρ) is a variance for every ρ)
          const c1 = corr * 2 * Math.sqrt(c0 * c2);
          const se0 = (seRatio * Math.sqrt(c0)) / Math.sqrt(n);
          const nu = n - 2 - params;
          const p = r === 0 ? 1 : studentTTwoSided(r / se0, nu);
          const ci = residualCorrelationInterval(r, p, nu, n, params, { se0, adf: [c0, c1, c2] }, 1 - alpha);
          expect(ci[0]).toBeLessThanOrEqual(r);
          expect(ci[1]).toBeGreaterThanOrEqual(r);
          expect(ci[0]).toBeGreaterThanOrEqual(-1);
          expect(ci[1]).toBeLessThanOrEqual(1);
          expect(ci[0] > 0 || ci[1] < 0).toBe(p < alpha);
        },
      ),
      { numRuns: 400, seed: 12 },
    );
  });

  it("doc example: r = 0.3 with s0 = 0.07 on 200 df gives about [0.1724, 0.4213]", () => {
    const ci = residualCorrelationInterval(0.3, 2.83e-5, 200, 205, 3, { se0: 0.07, adf: [0.9, -0.5, 0.4] });
    // the value the doc comment states (computed by this function; the scipy agreement is the test above)
    expect(ci[0]).toBeCloseTo(0.1724, 4);
    expect(ci[1]).toBeCloseTo(0.4213, 4);
  });

  it("rejects a correlation outside [−1, 1], no degrees of freedom, a bad level or p, and negative variances", () => {
    const v = { se0: 0.05, adf: [1, 0, 0.5] as [number, number, number] };
    expect(() => residualCorrelationInterval(1.2, 0.5, 100, 105, 3, v)).toThrow(/residual correlation/);
    expect(() => residualCorrelationInterval(0.2, 0.5, 0, 5, 3, v)).toThrow(/degrees of freedom/);
    expect(() => residualCorrelationInterval(0.2, 0.5, 100, 105, 3, v, 1)).toThrow(/confidence level/);
    expect(() => residualCorrelationInterval(0.2, 1.5, 100, 105, 3, v)).toThrow(/p-value/);
    expect(() => residualCorrelationInterval(0.2, 0.5, 100, 105, 3, { se0: -1, adf: [1, 0, 0.5] })).toThrow(/variances/);
  });
});

import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { noncentralChiSquareCdf, noncentralChiSquareUpper } from "../../src/stats/noncentralChiSquare.js";
import { regularizedGammaQ } from "../../src/stats/pvalues.js";
import { loadReference, relErr } from "../fixtures/stats/loadReference.js";

interface NcRef { rows: { x: number; df: number; lambda: number; cdf: number; sf: number }[] }
const ref = loadReference<NcRef>("ncx2");

describe(`noncentral chi-square against scipy.stats.ncx2 (reference: ${ref.origin})`, () => {
  it("noncentralChiSquareCdf and noncentralChiSquareUpper match scipy.stats.ncx2.cdf / .sf to 1e-9 relative", () => {
    for (const r of ref.data.rows) {
      const where = `x=${r.x} df=${r.df} λ=${r.lambda}`;
      if (r.cdf > 1e-300) expect(relErr(noncentralChiSquareCdf(r.x, r.df, r.lambda), r.cdf), where).toBeLessThanOrEqual(1e-9);
      if (r.sf > 1e-300) expect(relErr(noncentralChiSquareUpper(r.x, r.df, r.lambda), r.sf), where).toBeLessThanOrEqual(1e-9);
    }
  });
});

describe("noncentral chi-square theorems", () => {
  it("cdf + upper tail = 1, λ = 0 gives the central tail, and the upper tail grows with λ (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 2000, noNaN: true }), fc.double({ min: 0.5, max: 50, noNaN: true }), fc.double({ min: 0, max: 2000, noNaN: true }), (x, df, lambda) => {
        const F = noncentralChiSquareCdf(x, df, lambda);
        const S = noncentralChiSquareUpper(x, df, lambda);
        expect(Math.abs(F + S - 1)).toBeLessThanOrEqual(1e-12);
        expect(noncentralChiSquareUpper(x, df, lambda * 1.1 + 0.1)).toBeGreaterThanOrEqual(S - 1e-15);
        expect(relErr(noncentralChiSquareUpper(x, df, 0), regularizedGammaQ(df / 2, x / 2))).toBeLessThanOrEqual(1e-15);
      }),
      { numRuns: 150, seed: 13 },
    );
  });

  it("df = 1: P(X ≥ x) = Φ(−√x − √λ) + Φ(−√x + √λ) (X is a squared shifted normal; common practice)", () => {
    const phiUpper = (z: number): number => 0.5 * erfcApprox(z / Math.SQRT2);
    for (const [x, lambda] of [[1, 4], [9, 1], [0.3, 0.5], [25, 16]] as const) {
      const exact = phiUpper(Math.sqrt(x) + Math.sqrt(lambda)) + phiUpper(Math.sqrt(x) - Math.sqrt(lambda));
      expect(relErr(noncentralChiSquareUpper(x, 1, lambda), exact)).toBeLessThanOrEqual(1e-12);
    }
  });

  it("large λ (1e5, 2e6) keeps cdf + sf = 1 to 1e-13 (Poisson weights formed without cancellation)", () => {
    for (const [x, df, lambda] of [[1e5, 1, 1e5], [2e6, 4, 2e6], [1e4, 10, 9000]] as const) {
      expect(Math.abs(noncentralChiSquareCdf(x, df, lambda) + noncentralChiSquareUpper(x, df, lambda) - 1)).toBeLessThanOrEqual(1e-13);
    }
  });

  it("edges: x ≤ 0, x = Infinity; invalid df, λ or x throw", () => {
    expect(noncentralChiSquareCdf(0, 2, 3)).toBe(0);
    expect(noncentralChiSquareUpper(-1, 2, 3)).toBe(1);
    expect(noncentralChiSquareCdf(Infinity, 2, 3)).toBe(1);
    expect(noncentralChiSquareUpper(Infinity, 2, 3)).toBe(0);
    expect(() => noncentralChiSquareCdf(1, 0, 1)).toThrow(/df must be a positive/);
    expect(() => noncentralChiSquareCdf(1, 2, -1)).toThrow(/noncentrality must be/);
    expect(() => noncentralChiSquareUpper(NaN, 2, 1)).toThrow(/NaN/);
  });

  it("doc examples: ncx2(3; 2, 1) cdf ≈ 0.62064, sf ≈ 0.37936 (scipy.stats.ncx2, ncx2.json)", () => {
    expect(noncentralChiSquareCdf(3, 2, 1)).toBeCloseTo(0.62064365321954, 13);
    expect(noncentralChiSquareUpper(3, 2, 1)).toBeCloseTo(0.37935634678046, 13);
  });
});

/** erfc by its continued fraction/series via the incomplete gamma: erfc(z) = Q(½, z²) for z ≥ 0. */
function erfcApprox(z: number): number {
  return z >= 0 ? regularizedGammaQ(0.5, z * z) : 2 - regularizedGammaQ(0.5, z * z);
}

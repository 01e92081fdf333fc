import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { cholesky, choleskyLogDet, choleskySolve, leastSquaresQR } from "../../src/stats/linalg.js";
import { readFixture, relErr } from "../fixtures/stats/loadReference.js";
import { covarianceOf } from "../fixtures/stats/arrayMoments.js";

interface Longley {
  columns: string[];
  rows: number[][];
  certified: { coef: number[]; sd: number[]; residual_sd: number; r_squared: number; rss: number };
}
// NIST StRD Longley data and certified values (test/fixtures/stats/longley.json, copied from
// https://www.itl.nist.gov/div898/strd/lls/data/Longley.shtml)
const longley = readFixture<Longley>("longley");
const m = longley.rows.length;
const y = longley.rows.map((r) => r[0]!);
const xs = [1, 2, 3, 4, 5, 6].map((c) => longley.rows.map((r) => r[c]!));

/** Significant digits of agreement: −log10 of the relative error. */
const digits = (a: number, b: number): number => -Math.log10(Math.max(relErr(a, b), 1e-17));

describe("leastSquaresQR on NIST StRD Longley", () => {
  const X = new Float64Array(m * 7);
  longley.rows.forEach((r, i) => {
    X[i * 7] = 1;
    for (let c = 1; c <= 6; c++) X[i * 7 + c] = r[c]!;
  });
  const fit = leastSquaresQR(X, m, 7, y)!;

  it("leastSquaresQR(X, 16, 7, y) reproduces the 7 certified coefficients to at least 8 significant digits", () => {
    expect(fit).toBeDefined();
    longley.certified.coef.forEach((b, c) => expect(digits(fit.coef[c]!, b), `B${c}`).toBeGreaterThanOrEqual(8)); // NIST certified
  });

  it("leastSquaresQR gives the certified residual sum of squares to 8 digits", () => {
    expect(digits(fit.rss, longley.certified.rss)).toBeGreaterThanOrEqual(8); // NIST certified ANOVA residual SS
    expect(digits(Math.sqrt(fit.rss / 9), longley.certified.residual_sd)).toBeGreaterThanOrEqual(8); // NIST certified
    expect(fit.rank).toBe(7);
  });

  it("leastSquaresQR returns undefined for a rank-deficient design (a column repeated)", () => {
    const Xd = new Float64Array(m * 3);
    for (let i = 0; i < m; i++) {
      Xd[i * 3] = 1;
      Xd[i * 3 + 1] = xs[0]![i]!;
      Xd[i * 3 + 2] = 2 * xs[0]![i]!;
    }
    expect(leastSquaresQR(Xd, m, 3, y)).toBeUndefined();
  });
});

describe("Cholesky regression on the Longley covariance (the moments route)", () => {
  it("cholesky + choleskySolve on the centred covariance give the certified coefficients to at least 8 digits", () => {
    const { means, cov } = covarianceOf([...xs, y]);
    const k = 7;
    const Sxx = new Float64Array(36);
    const Sxy = new Float64Array(6);
    for (let a = 0; a < 6; a++) {
      for (let b = 0; b < 6; b++) Sxx[a * 6 + b] = cov[a * k + b]!;
      Sxy[a] = cov[a * k + 6]!;
    }
    const L = cholesky(Sxx, 6)!;
    expect(L).toBeDefined();
    const beta = choleskySolve(L, 6, Sxy);
    let b0 = means[6]!;
    for (let a = 0; a < 6; a++) b0 -= beta[a]! * means[a]!;
    expect(digits(b0, longley.certified.coef[0]!), "B0").toBeGreaterThanOrEqual(8); // NIST certified
    beta.forEach((b, a) => expect(digits(b, longley.certified.coef[a + 1]!), `B${a + 1}`).toBeGreaterThanOrEqual(8)); // NIST certified
    // residual SS = (n − 1)(s_yy − s_xyᵀ β)
    let rss = cov[6 * k + 6]!;
    for (let a = 0; a < 6; a++) rss -= Sxy[a]! * beta[a]!;
    rss *= m - 1;
    expect(digits(rss, longley.certified.rss)).toBeGreaterThanOrEqual(6); // NIST certified; a difference of sums of squares loses ~2 digits
  });
});

describe("cholesky", () => {
  it("cholesky(a) gives L with L Lᵀ = a on random SPD matrices (theorem)", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 8 }), fc.array(fc.double({ min: -3, max: 3, noNaN: true }), { minLength: 100, maxLength: 100 }), (n, vals) => {
        // a = B Bᵀ + n I is symmetric positive definite
        const a = new Float64Array(n * n);
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            let s = i === j ? n : 0;
            for (let q = 0; q < n; q++) s += vals[i * 10 + q]! * vals[j * 10 + q]!;
            a[i * n + j] = s;
          }
        const L = cholesky(a, n)!;
        expect(L).toBeDefined();
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            let s = 0;
            for (let q = 0; q < n; q++) s += L[i * n + q]! * L[j * n + q]!;
            expect(Math.abs(s - a[i * n + j]!)).toBeLessThanOrEqual(1e-12 * (Math.abs(a[i * n + j]!) + n * 10));
            if (j > i) expect(L[i * n + j]).toBe(0);
          }
        // choleskySolve solves a x = b
        const b = Array.from({ length: n }, (_, i) => i + 1);
        const x = choleskySolve(L, n, b);
        for (let i = 0; i < n; i++) {
          let s = 0;
          for (let j = 0; j < n; j++) s += a[i * n + j]! * x[j]!;
          expect(Math.abs(s - b[i]!)).toBeLessThanOrEqual(1e-9 * n * 10);
        }
      }),
      { numRuns: 100, seed: 4 },
    );
  });

  it("cholesky([[4, 2], [2, 3]]) = [[2, 0], [1, √2]] and its log-determinant is ln 8 (hand-checkable)", () => {
    const L = cholesky(new Float64Array([4, 2, 2, 3]), 2)!;
    expect(Array.from(L)).toEqual([2, 0, 1, Math.SQRT2]);
    expect(choleskyLogDet(L, 2)).toBeCloseTo(Math.log(8), 14);
  });

  it("cholesky returns undefined for singular, indefinite and all-zero matrices", () => {
    expect(cholesky(new Float64Array([1, 1, 1, 1]), 2)).toBeUndefined(); // singular
    expect(cholesky(new Float64Array([1, 2, 2, 1]), 2)).toBeUndefined(); // indefinite
    expect(cholesky(new Float64Array([0, 0, 0, 0]), 2)).toBeUndefined();
  });
});

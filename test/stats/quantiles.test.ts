import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { chiSquareQuantile, chiSquareUpperQuantileLog, normalQuantile, studentTCritical, studentTCriticalByBisection } from "../../src/stats/quantiles.js";
import { chiSquareUpper, logChiSquareUpper, normalTwoSided, regularizedGammaP, regularizedGammaQ, studentTTwoSided } from "../../src/stats/pvalues.js";
import { loadReference, relErr } from "../fixtures/stats/loadReference.js";

interface QRef {
  normal: { p: number; q: number }[];
  chi2: { p: number; df: number; q: number }[];
  chi2_upper: { alpha: number; df: number; q: number }[];
}
const ref = loadReference<QRef>("quantiles");

describe("quantiles against the NIST/SEMATECH e-Handbook tables", () => {
  // NIST/SEMATECH e-Handbook of Statistical Methods §1.3.6.7.4, "Critical Values of the
  // Chi-Square Distribution" (3 decimals), copied from /work/shared/reference/distribution-tables.md
  const table: [number, number, number][] = [
    [1, 3.841, 6.635],
    [2, 5.991, 9.21],
    [5, 11.07, 15.086],
    [10, 18.307, 23.209],
    [30, 43.773, 50.892],
  ];
  it("chiSquareQuantile(0.95 and 0.99, df) agrees with the handbook's 3-decimal critical values", () => {
    for (const [df, q95, q99] of table) {
      expect(Math.abs(chiSquareQuantile(0.95, df) - q95), `df=${df}`).toBeLessThanOrEqual(0.0005);
      expect(Math.abs(chiSquareQuantile(0.99, df) - q99), `df=${df}`).toBeLessThanOrEqual(0.0005);
    }
  });
  it("normalQuantile(0.975) = 1.96 to the handbook's precision (§1.3.6.7.1) and 1.959963984540054 to double precision", () => {
    expect(Math.abs(normalQuantile(0.975) - 1.96)).toBeLessThanOrEqual(0.005); // NIST/SEMATECH §1.3.6.7.1
    expect(relErr(normalQuantile(0.975), 1.959963984540054)).toBeLessThanOrEqual(1e-15); // distribution-tables.md
  });
});

describe(`quantiles against scipy (reference: ${ref.origin})`, () => {
  // scipy.stats.norm.ppf, scipy.stats.chi2.ppf / .isf, scripts/stats_reference.py
  it("normalQuantile(p) matches scipy.stats.norm.ppf to 1e-14 relative from 1e-300 to 1 − 1e-10", () => {
    for (const r of ref.data.normal) expect(relErr(normalQuantile(r.p), r.q), `p=${r.p}`).toBeLessThanOrEqual(1e-14);
  });
  it("chiSquareQuantile(p, df) matches scipy.stats.chi2.ppf to 1e-12 relative for df from 0.5 to 1e5", () => {
    for (const r of ref.data.chi2) expect(relErr(chiSquareQuantile(r.p, r.df), r.q), `p=${r.p} df=${r.df}`).toBeLessThanOrEqual(1e-12);
  });
  it("chiSquareQuantile(1 − α, df) keeps scipy.stats.chi2.isf accuracy where 1 − α rounds (α ≥ 1e-10)", () => {
    for (const r of ref.data.chi2_upper) {
      if (r.alpha < 1e-10) continue; // 1 − α is 1 in double precision below about 1e-16
      expect(relErr(chiSquareQuantile(1 - r.alpha, r.df), r.q)).toBeLessThanOrEqual(1e-6 * r.alpha * 1e10);
    }
  });
});

describe("quantile theorems and edges", () => {
  it("normalQuantile inverts the normal tail and is antisymmetric (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-300, max: 0.5, noNaN: true }), (p) => {
        const z = normalQuantile(p);
        if (p > 1e-10) expect(normalQuantile(1 - p)).toBeCloseTo(-z, 5); // 1 − p rounds, so the check is looser
        expect(relErr(normalTwoSided(z) / 2, p)).toBeLessThanOrEqual(1e-12);
      }),
      { numRuns: 200, seed: 11 },
    );
  });
  it("chiSquareQuantile inverts the chi-square cdf (theorem)", () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-12, max: 1 - 1e-12, noNaN: true }), fc.double({ min: 0.2, max: 5000, noNaN: true }), (p, df) => {
        const x = chiSquareQuantile(p, df);
        // the nearer tail comes back with its relative accuracy
        if (p <= 0.5) expect(relErr(regularizedGammaP(df / 2, x / 2), p)).toBeLessThanOrEqual(1e-9);
        else expect(relErr(regularizedGammaQ(df / 2, x / 2), 1 - p)).toBeLessThanOrEqual(1e-9);
      }),
      { numRuns: 150, seed: 12 },
    );
    expect(relErr(chiSquareUpper(chiSquareQuantile(0.95, 3), 3), 0.05)).toBeLessThanOrEqual(1e-12);
  });
  it("edges: p = 0 and 1 give the support's ends; bad p or df throw", () => {
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(0.5)).toBe(0);
    expect(chiSquareQuantile(0, 3)).toBe(0);
    expect(chiSquareQuantile(1, 3)).toBe(Infinity);
    expect(() => normalQuantile(1.1)).toThrow(/\[0, 1\]/);
    expect(() => normalQuantile(NaN)).toThrow(RangeError);
    expect(() => chiSquareQuantile(0.5, 0)).toThrow(/df must be a positive/);
    expect(() => chiSquareQuantile(-0.5, 2)).toThrow(/\[0, 1\]/);
  });
});

interface LogQuantileRef {
  source: string;
  chi2_isf: { log_p: number; df: number; x: number }[];
  chi2_round_trip: { x: number; df: number; log_p: number }[];
}
const logQ = JSON.parse(readFileSync(new URL("../fixtures/gcm/tails.json", import.meta.url), "utf8")) as LogQuantileRef;

describe(`chiSquareUpperQuantileLog against scipy and mpmath (${logQ.source})`, () => {
  it("chiSquareUpperQuantileLog(ln p, df) matches scipy.stats.chi2.isf(p, df) to 1e-12 relative for p from 0.5 to 1e-300", () => {
    for (const c of logQ.chi2_isf) expect(relErr(chiSquareUpperQuantileLog(c.log_p, c.df), c.x), `ln p=${c.log_p} df=${c.df}`).toBeLessThanOrEqual(1e-12); // scipy.stats.chi2.isf
  });

  it("inverts mpmath's log tails down to ln p = −5000 (x = 9990 on 1 df): the quantile of ln Q(df/2, x/2) is x to 1e-12", () => {
    for (const c of logQ.chi2_round_trip) expect(relErr(chiSquareUpperQuantileLog(c.log_p, c.df), c.x), `x=${c.x} df=${c.df} ln p=${c.log_p}`).toBeLessThanOrEqual(1e-12); // mpmath.gammainc, 50 digits
  });

  it("round trip with logChiSquareUpper for random ln p in [−5000, 0) and df in 1..60 (property)", () => {
    fc.assert(
      fc.property(fc.double({ min: -5000, max: -1e-6, noNaN: true }), fc.integer({ min: 1, max: 60 }), (lp, df) => {
        const x = chiSquareUpperQuantileLog(lp, df);
        return Math.abs(logChiSquareUpper(x, df) - lp) <= 1e-10 * Math.max(1, Math.abs(lp));
      }),
      { numRuns: 200, seed: 17 },
    );
  });

  it("edges and doc example: ln p = 0 gives 0, −Infinity gives Infinity, ln 0.05 on 1 df gives 3.841458820694124; positive or NaN ln p and bad df throw", () => {
    expect(chiSquareUpperQuantileLog(0, 3)).toBe(0);
    expect(chiSquareUpperQuantileLog(-Infinity, 3)).toBe(Infinity);
    expect(chiSquareUpperQuantileLog(Math.log(0.05), 1)).toBeCloseTo(3.841458820694124, 12); // NIST/SEMATECH e-Handbook §1.3.6.7.4: 3.841
    expect(() => chiSquareUpperQuantileLog(0.1, 3)).toThrow(RangeError);
    expect(() => chiSquareUpperQuantileLog(NaN, 3)).toThrow(RangeError);
    expect(() => chiSquareUpperQuantileLog(-1, 0)).toThrow(RangeError);
  });
});

describe("studentTCritical", () => {
  it("gives the worked example's critical t of 2.0345 on 33 df at 0.05 (Penn State STAT 505, lesson 6.3, in /work/shared/reference/distribution-tables.md)", () => {
    expect(Math.abs(studentTCritical(0.05, 33) - 2.0345)).toBeLessThanOrEqual(0.00005);
  });

  it("is the smallest double with a two-sided p-value at most alpha, the same double as bisection, over alphas 0.9 … 1e-12 and df 0.5 … 1e7 (large df where the p-value's rounding stalls Newton's steps included)", () => {
    // pins: Newton's method with a short bisection replaced the bisection alone (2.4x faster); the result must not move
    for (const alpha of [0.9, 0.5, 0.2, 0.1, 0.05, 0.025, 0.01, 1e-3, 1e-4, 1e-6, 1e-8, 1e-10, 1e-12, 0.05 / 1138, 0.1 / 34]) {
      for (const nu of [0.5, 1, 1.5, 2, 3, 5, 7, 10, 30, 47.3, 100, 1000, 1e4, 20_017, 45_678.5, 91_234, 99_000, 1e5, 123_457, 1e6, 1e7]) {
        const c = studentTCritical(alpha, nu);
        expect(c, `alpha=${alpha} nu=${nu}`).toBe(studentTCriticalByBisection(alpha, nu));
        expect(studentTTwoSided(c, nu)).toBeLessThanOrEqual(alpha);
      }
    }
  });
});

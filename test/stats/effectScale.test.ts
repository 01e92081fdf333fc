import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { lrEffect, lrEffectCI, lrEffectCIAtAlpha, lrEffectInterval, lrToEffect, permutationLrEffect, signedRootEffectCI } from "../../src/stats/effectScale.js";
import { chiSquareUpper } from "../../src/stats/pvalues.js";
import { noncentralChiSquareUpper } from "../../src/stats/noncentralChiSquare.js";
import { loadReference, relErr, printedReference } from "../fixtures/stats/loadReference.js";

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
  it("at the scale of registry counts (LR up to 2·10^6 on 18 df, n up to 6·10^8) its bounds still solve the tail equations, to 1e-8", () => {
    for (const [lr, df, n] of [[2e6, 18, 6e8], [2e4, 6, 1e6], [3.1e5, 3, 5e7]] as const) {
      const [lo, hi] = lrEffectCIAtAlpha(lr, df, n);
      const lambdaOf = (e: number): number => -n * Math.log1p(-e * e);
      expect(lo).toBeGreaterThan(0);
      expect(Math.abs(noncentralChiSquareUpper(lr, df, lambdaOf(lo)) - 0.05)).toBeLessThanOrEqual(1e-8);
      expect(Math.abs(noncentralChiSquareUpper(lr, df, lambdaOf(hi)) - 0.975)).toBeLessThanOrEqual(1e-8);
    }
  });

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

describe("signedRootEffectCI", () => {
  // Φ⁻¹(0.975) = 1.959963984540054 (scipy.stats.norm.ppf(0.975); NIST/SEMATECH e-Handbook table 1.96)
  const Z975 = 1.959963984540054;
  const map = (d: number, n: number) => Math.sign(d) * Math.sqrt(1 - Math.exp(-(d * d) / n));

  it("signedRootEffectCI(Q, n, sign) is sign·√Q ± 1.96 mapped by √(1 − exp(−δ²/n)), around lrToEffect(Q, n, sign)", () => {
    const [lo, hi] = signedRootEffectCI(20, 100, 1);
    expect(lo).toBeCloseTo(map(Math.sqrt(20) - Z975, 100), 12);
    expect(hi).toBeCloseTo(map(Math.sqrt(20) + Z975, 100), 12);
    const [nlo, nhi] = signedRootEffectCI(20, 100, -1);
    expect(nlo).toBeCloseTo(-hi, 12);
    expect(nhi).toBeCloseTo(-lo, 12);
    // Q = 1: √Q − 1.96 < 0, so the interval crosses 0 and its lower end is negative
    const [a, b] = signedRootEffectCI(1, 50, 1);
    expect(a).toBeCloseTo(map(1 - Z975, 50), 12);
    expect(a).toBeLessThan(0);
    expect(b).toBeGreaterThan(lrToEffect(1, 50));
    const [z0, z1] = signedRootEffectCI(0, 50, 0);
    expect(z0).toBeCloseTo(map(-Z975, 50), 12);
    expect(z1).toBeCloseTo(map(Z975, 50), 12);
  });

  it("the asymptotic interval excludes 0 exactly when P(χ²₁ ≥ Q) < 0.05, and contains the point (property)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 60, noNaN: true }), fc.integer({ min: 5, max: 100000 }), fc.constantFrom(-1 as const, 1 as const), (q, n, sign) => {
        const [lo, hi] = signedRootEffectCI(q, n, sign);
        const p = chiSquareUpper(q, 1);
        const e = lrToEffect(q, n, sign);
        expect(lo).toBeLessThanOrEqual(e + 1e-15);
        expect(hi).toBeGreaterThanOrEqual(e - 1e-15);
        if (Math.abs(p - 0.05) > 1e-9) expect(lo > 0 || hi < 0).toBe(p < 0.05);
      }),
      { numRuns: 400, seed: 21 },
    );
    // doc examples: Q = 1.2 × the χ²₁ 0.95 point (p ≈ 0.032) excludes 0; a permutation p of 0.08 does not
    expect(signedRootEffectCI(3.841458820694124 * 1.2, 100, 1)[0]).toBeGreaterThan(0);
    const [dlo, dhi] = signedRootEffectCI(4, 100, -1, 0.95, 0.08);
    expect(dlo).toBeLessThan(0);
    expect(dhi).toBeGreaterThan(0);
    // boundary: χ²₁ 0.95 point 3.841458820694124 (NIST/SEMATECH e-Handbook §1.3.6.7.4: 3.841; scipy.stats.chi2.ppf)
    expect(signedRootEffectCI(3.8415, 100, 1)[0]).toBeGreaterThan(0);
    expect(signedRootEffectCI(3.8414, 100, 1)[0]).toBeLessThan(0);
  });

  it("with a permutation p-value the interval excludes 0 exactly when p < 0.05, and equals the asymptotic one at the χ²₁ p-value (property)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 60, noNaN: true }), fc.double({ min: 1e-6, max: 1, noNaN: true }), fc.integer({ min: 5, max: 100000 }), fc.constantFrom(-1 as const, 1 as const), (q, p, n, sign) => {
        const [lo, hi] = signedRootEffectCI(q, n, sign, 0.95, p);
        const e = lrToEffect(q, n, sign);
        expect(lo).toBeLessThanOrEqual(e + 1e-15);
        expect(hi).toBeGreaterThanOrEqual(e - 1e-15);
        if (Math.abs(p - 0.05) > 1e-9) expect(lo > 0 || hi < 0).toBe(p < 0.05);
        const asym = signedRootEffectCI(q, n, sign);
        const same = signedRootEffectCI(q, n, sign, 0.95, chiSquareUpper(q, 1));
        expect(same[0]).toBeCloseTo(asym[0], 8);
        expect(same[1]).toBeCloseTo(asym[1], 8);
      }),
      { numRuns: 400, seed: 22 },
    );
    // p = 1 (every permuted statistic reached the observed one): an interval around 0
    const [lo, hi] = signedRootEffectCI(0.3, 100, 1, 0.95, 1);
    expect(lo).toBeLessThan(0);
    expect(hi).toBeGreaterThan(0);
  });

  it("the standard error implied by the p-value reproduces the Altman & Bland (2011) worked example", () => {
    // BMJ 343:d2090: estimate 17, P = 0.032 → 95% CI 1.4 to 32.6 (their z = 2.141 from an approximation;
    // the exact Φ⁻¹(1 − 0.016) = 2.1444 moves the ends by 0.024, and they print one decimal: tolerance 0.07).
    // On a huge n the map is linear, δ/√n, so the δ scale is read off as the bounds × √n.
    const n = 1e14;
    const [lo, hi] = signedRootEffectCI(17 * 17, n, 1, 0.95, 0.032);
    expect(Math.abs(lo * Math.sqrt(n) - 1.4)).toBeLessThan(0.07);
    expect(Math.abs(hi * Math.sqrt(n) - 32.6)).toBeLessThan(0.07);
  });

  it("signedRootEffectCI rejects bad input", () => {
    expect(() => signedRootEffectCI(-1, 10, 1)).toThrow(/finite number ≥ 0/);
    expect(() => signedRootEffectCI(1, 0, 1)).toThrow(/sample size/);
    expect(() => signedRootEffectCI(1, 10, 2 as never)).toThrow(/sign/);
    expect(() => signedRootEffectCI(1, 10, 1, 1)).toThrow(/confidence level/);
    expect(() => signedRootEffectCI(1, 10, 1, 0.95, 0)).toThrow(/p-value/);
  });
});

interface CalRef { intervals: { g2: number; df: number; n: number; mean: number; variance: number; scale: number; nu: number; p: number; ci: [number, number]; effect: number; central_tail: number }[] }
const cal = printedReference<CalRef>("calibrated_effect_reference.py", "calibrated-effect/reference.json", "python3 scipy (live)", 60_000);

describe(`permutationLrEffect [reference: ${cal.from}]`, () => {
  it("permutationLrEffect matches scipy's recalibrated noncentral inversion on the scaled chi-square matched to the null, and the signed root on 1 df (1e-8)", () => {
    for (const r of cal.ref.intervals) {
      // scipy.optimize.brentq on scipy.stats.ncx2.sf with the probit shift Φ⁻¹(p) − Φ⁻¹(central tail); scipy.stats.norm for 1 df; scripts/calibrated_effect_reference.py
      const e = permutationLrEffect(r.g2, r.df, r.n, { mean: r.mean, variance: r.variance }, r.p);
      const where = `G²=${r.g2} df=${r.df} m=${r.mean} v=${r.variance}`;
      expect(relErr(e.scale, r.scale), where).toBeLessThan(1e-12);
      expect(relErr(e.dfMatched, r.nu), where).toBeLessThan(1e-12);
      expect(relErr(e.effect, r.effect), where).toBeLessThan(1e-12);
      if (r.ci[0] === 0) expect(e.ci[0], where).toBe(0);
      else expect(relErr(e.ci[0], r.ci[0]), where).toBeLessThan(1e-8);
      expect(relErr(e.ci[1], r.ci[1]), where).toBeLessThan(1e-8);
    }
  });

  it("permutationLrEffect with the asymptotic null moments (mean df, variance 2df) and the χ²(df) p-value is lrEffect with lrEffectInterval", () => {
    for (const [lr, df, n] of [[26, 6, 500], [20, 1, 100], [3, 6, 500], [80, 12, 300]] as const) {
      const e = permutationLrEffect(lr, df, n, { mean: df, variance: 2 * df }, chiSquareUpper(lr, df));
      expect(e.effect).toBeCloseTo(lrEffect(lr, df, n), 14);
      const [lo, hi] = lrEffectInterval(lr, df, n, 1);
      expect(e.ci[0]).toBeCloseTo(lo, 12);
      expect(e.ci[1]).toBeCloseTo(hi, 12);
    }
    const neg = permutationLrEffect(20, 1, 100, { mean: 1, variance: 2 }, 1e-5, -1);
    expect(neg.effect).toBe(lrEffect(20, 1, 100, -1));
    expect(neg.ci[1]).toBeLessThan(0);
    // unusable moments fall back to the asymptotic construction
    expect(permutationLrEffect(26, 6, 500, { mean: NaN, variance: 3 }, 1e-4).effect).toBe(lrEffect(26, 6, 500));
  });

  it("permutationLrEffect: a G² at its permutation null mean has effect 0 and an interval from 0 (doc example); the unadjusted effect would not", () => {
    const e = permutationLrEffect(69, 44, 100, { mean: 70, variance: 42 }, 0.55);
    expect(e.effect).toBe(0);
    expect(e.ci[0]).toBe(0);
    expect(e.ci[1]).toBeGreaterThan(0);
    // the pinned bug: the df-based construction calls the same numbers clearly non-null
    expect(lrEffect(69, 44, 100)).toBeGreaterThan(0.4);
    expect(lrEffectCI(69, 44, 100)[0]).toBeGreaterThan(0);
  });

  it("permutationLrEffect: the point lies in its interval, which excludes 0 exactly when p < alpha, at alpha 0.05 and 0.01 (property)", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0, max: 300, noNaN: true }), fc.integer({ min: 1, max: 40 }), fc.integer({ min: 10, max: 20000 }),
        fc.double({ min: 0.3, max: 3, noNaN: true }), fc.double({ min: 0.1, max: 2, noNaN: true }), fc.double({ min: 1e-5, max: 1, noNaN: true }),
        fc.constantFrom(-1 as const, 0 as const, 1 as const), fc.constantFrom(0.05, 0.01),
        (lr, df, n, meanRatio, varRatio, p, sign, alpha) => {
          // on 1 df a statistic of 0 has permutation p-value 1 (every draw reaches it), and a 2×2 table without direction (odds ratio 1) has G² = 0
          fc.pre(df > 1 || p === 1 || (lr > 0 && sign !== 0));
          const s = df === 1 ? sign : 1;
          const mean = meanRatio * df;
          const e = permutationLrEffect(lr, df, n, { mean, variance: varRatio * 2 * mean }, p, s, 1 - alpha);
          expect(e.ci[0]).toBeLessThanOrEqual(e.effect);
          expect(e.ci[1]).toBeGreaterThanOrEqual(e.effect);
          expect(e.ci[0] <= 0 && e.ci[1] >= 0).toBe(p >= alpha);
        },
      ),
      { numRuns: 300, seed: 23 },
    );
  });

  it("permutationLrEffect: a permutation p of 0.03 gives an interval above 0, and 0.07 one from 0 (regression: the lower end was 0 whenever p ≥ 0.025)", () => {
    const m = { mean: 82.3, variance: 45 };
    const rejected = permutationLrEffect(104.6, 56, 100, m, 0.03);
    const kept = permutationLrEffect(104.6, 56, 100, m, 0.07);
    expect(rejected.ci[0]).toBeGreaterThan(0);
    expect(kept.ci[0]).toBe(0);
    // scripts/calibrated_effect_reference.py (scipy.optimize.brentq on scipy.stats.ncx2.sf after the probit shift): lower end 0.121199…
    expect(rejected.ci[0]).toBeCloseTo(0.12119941440700972, 8);
    expect(kept.ci[1]).toBeLessThan(rejected.ci[1]);
  });

  it("permutationLrEffect rejects bad input", () => {
    const m = { mean: 5, variance: 8 };
    expect(() => permutationLrEffect(-1, 4, 10, m, 0.5)).toThrow(/finite number ≥ 0/);
    expect(() => permutationLrEffect(1, 0, 10, m, 0.5)).toThrow(/df must be positive/);
    expect(() => permutationLrEffect(1, 4, 0, m, 0.5)).toThrow(/sample size/);
    expect(() => permutationLrEffect(1, 4, 10, m, 0)).toThrow(/p-value/);
    expect(() => permutationLrEffect(1, 4, 10, m, 0.5, 1, 2)).toThrow(/confidence level/);
  });
});

interface AtAlphaRef {
  source: string;
  cases: { lr: number; df: number; n: number; p: number; lambda_lower: number; lambda_upper: number; ci: [number, number]; effect: number }[];
}
const atAlpha = JSON.parse(readFileSync(new URL("../fixtures/gcm/effect.json", import.meta.url), "utf8")) as AtAlphaRef;

describe(`lrEffectCIAtAlpha against scipy (${atAlpha.source})`, () => {
  it("lrEffectCIAtAlpha(lr, df, n) matches scipy's noncentralities (P(χ²(df, λ) ≥ LR) = 0.05 and 0.975) mapped to the effect scale to 1e-8", () => {
    for (const c of atAlpha.cases) {
      const [lo, hi] = lrEffectCIAtAlpha(c.lr, c.df, c.n);
      const where = `lr=${c.lr} df=${c.df} n=${c.n}`;
      if (c.ci[0] === 0) expect(lo, where).toBe(0);
      else expect(relErr(lo, c.ci[0]), where).toBeLessThanOrEqual(1e-8); // scipy.optimize.brentq on scipy.stats.ncx2.sf
      expect(relErr(hi, c.ci[1]), where).toBeLessThanOrEqual(1e-8);
      expect(lo <= lrEffect(c.lr, c.df, c.n) && lrEffect(c.lr, c.df, c.n) <= hi, where).toBe(true);
      expect(relErr(lrEffect(c.lr, c.df, c.n), c.effect), where).toBeLessThanOrEqual(1e-12);
    }
  });

  it("the lower end is above 0 exactly when P(χ²(df) ≥ LR) < 0.05, on both sides of the boundary (LR = 9.488 and 9.4877 on 4 df, 5.99 and 6.0 on 2 df)", () => {
    for (const c of atAlpha.cases) expect(lrEffectCIAtAlpha(c.lr, c.df, c.n)[0] > 0, `lr=${c.lr} df=${c.df}: scipy p = ${c.p}`).toBe(c.p < 0.05); // scipy.stats.chi2.sf
  });

  it("the lower end is above 0 exactly when chiSquareUpper(LR, df) < 0.05, and the point lies inside, for random LR, df, n (property)", () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 300, noNaN: true }), fc.integer({ min: 1, max: 30 }), fc.integer({ min: 30, max: 100000 }), (lr, df, n) => {
        const [lo, hi] = lrEffectCIAtAlpha(lr, df, n);
        const e = lrEffect(lr, df, n);
        return lo > 0 === chiSquareUpper(lr, df) < 0.05 && lo <= e + 1e-12 && e <= hi + 1e-12;
      }),
      { numRuns: 150, seed: 19 },
    );
  });

  it("doc example and input checks: lrEffectCIAtAlpha(12.6, 4, 500) has a lower end above 0; negative or infinite LR, bad df, n or level throw", () => {
    expect(lrEffectCIAtAlpha(12.6, 4, 500)[0]).toBeGreaterThan(0);
    expect(() => lrEffectCIAtAlpha(-1, 4, 500)).toThrow(RangeError);
    expect(() => lrEffectCIAtAlpha(Infinity, 4, 500)).toThrow(RangeError);
    expect(() => lrEffectCIAtAlpha(3, 0, 500)).toThrow(RangeError);
    expect(() => lrEffectCIAtAlpha(3, 2, 0)).toThrow(RangeError);
    expect(() => lrEffectCIAtAlpha(3, 2, 100, 1)).toThrow(RangeError);
  });
});

describe("lrEffectInterval (the interval reported beside lrEffect)", () => {
  it("a 1-df LR far below its df got [0, 0] beside a positive effect; the signed-root interval contains it", () => {
    // regression-lr on the demo, activity_days ⫫ sbp with --method regression: effect 0.0002, interval [0, 0]
    const n = 2900;
    const lr = 1.2e-4;
    expect(lrEffectCI(lr, 1, n)).toEqual([0, 0]); // the two-sided noncentral inversion collapses
    const point = lrEffect(lr, 1, n, 1);
    const [lo, hi] = lrEffectInterval(lr, 1, n, 1);
    expect(lo).toBeLessThan(point);
    expect(hi).toBeGreaterThan(point);
    // sign·√LR ± z₀.₉₇₅ mapped by sign(δ)·√(1 − exp(−δ²/n)) (definition; z₀.₉₇₅ = 1.959963984540054, scipy.stats.norm.ppf(0.975))
    const m = (d: number) => Math.sign(d) * Math.sqrt(-Math.expm1(-(d * d) / n));
    expect(lo).toBeCloseTo(m(Math.sqrt(lr) - 1.959963984540054), 12);
    expect(hi).toBeCloseTo(m(Math.sqrt(lr) + 1.959963984540054), 12);
  });

  it("contains its effect and excludes 0 exactly when P(χ²(df) ≥ LR) < 0.05, for every LR, df, n and sign (property)", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0, max: 300, noNaN: true }),
        fc.integer({ min: 1, max: 30 }),
        fc.integer({ min: 30, max: 200000 }),
        fc.constantFrom(-1 as const, 1 as const),
        (lr, df, n, sign) => {
          const effect = lrEffect(lr, df, n, sign);
          const [lo, hi] = lrEffectInterval(lr, df, n, sign);
          const slack = 1e-9;
          expect(lo).toBeLessThanOrEqual(effect + slack);
          expect(hi).toBeGreaterThanOrEqual(effect - slack);
          const p = chiSquareUpper(lr, df);
          if (Math.abs(p - 0.05) < 1e-6) return; // at the boundary either answer is rounding
          const excludes = df === 1 ? lo > 0 || hi < 0 : lo > 0;
          expect(excludes, `lr=${lr} df=${df} p=${p}`).toBe(p < 0.05);
        },
      ),
      { numRuns: 400 },
    );
  });
});

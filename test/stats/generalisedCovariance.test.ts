/**
 * gcmStatistic and gcmCorrelationInterval against scipy: test/fixtures/gcm/statistic.json
 * (written by `python3 scripts/gcm_reference.py`) holds generated residual products (their sum
 * and covariance), the statistic from numpy.linalg.solve, p-values from scipy.stats.t.sf and
 * scipy.stats.f.sf / logsf (mpmath, 50 digits, where the tail is below 1e-300), intervals from
 * scipy.stats.t.ppf and critical values from scipy.stats.t.isf(0.025, ν).
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { gcmCorrelationInterval, gcmStatistic } from "../../src/stats/generalisedCovariance.js";
import { studentTTwoSided } from "../../src/stats/pvalues.js";

interface StatCase {
  label: string;
  n: number;
  params: number;
  sum_r: number[];
  sigma: number[];
  untestable?: boolean;
  components: number;
  w_adj: number;
  statistic: number;
  df: number;
  f?: number;
  df2?: number;
  p: number;
  log_p: number;
}
interface StatFixture {
  source: string;
  cases: StatCase[];
  intervals: { r: number; t: number; nu: number; n: number; params: number; ci: [number, number]; p: number }[];
  critical: { nu: number; c: number }[];
}
const ref = JSON.parse(readFileSync(new URL("../fixtures/gcm/statistic.json", import.meta.url), "utf8")) as StatFixture;
const rel = (a: number, b: number) => (b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b));

describe(`gcmStatistic against numpy/scipy (${ref.source})`, () => {
  it("gcmStatistic matches the reference components, statistic, df, F and its df, p and log p (1e-10) for 1, 2, 3 and 6 components", () => {
    for (const c of ref.cases.filter((c) => !c.untestable)) {
      const got = gcmStatistic({ n: c.n, params: c.params, sumR: c.sum_r, sigma: c.sigma });
      if ("reason" in got) throw new Error(`${c.label}: ${got.reason}`);
      expect(got.components, c.label).toBe(c.components);
      expect(got.df, c.label).toBe(c.df);
      expect(rel(got.statistic, c.statistic), c.label).toBeLessThanOrEqual(1e-10); // numpy.linalg.solve
      expect(rel(got.log_p, c.log_p), c.label).toBeLessThanOrEqual(1e-10); // scipy.stats.t / f logsf, or mpmath
      if (c.p > 0) expect(rel(got.p, c.p), c.label).toBeLessThanOrEqual(1e-10 * Math.max(1, Math.abs(c.log_p))); // scipy.stats.t.sf / f.sf
      else expect(got.p, `${c.label}: an underflowing p is reported as the smallest double`).toBe(Number.MIN_VALUE);
      if (c.components > 1) {
        expect(got.df2, c.label).toBe(c.df2);
        expect(rel(got.f!, c.f!), c.label).toBeLessThanOrEqual(1e-10);
      } else {
        expect(got.f).toBeUndefined();
        expect(Math.sign(got.statistic), `${c.label}: the sign of Σ R`).toBe(Math.sign(c.sum_r[0]!));
      }
    }
  });

  it("a component that is a linear combination of the others is left out (the reference keeps 2 of 3)", () => {
    const c = ref.cases.find((c) => c.label === "redundant third component")!;
    const got = gcmStatistic({ n: c.n, params: c.params, sumR: c.sum_r, sigma: c.sigma });
    expect("reason" in got ? got.reason : got.components).toBe(2);
  });

  it("too few rows for the parameters, or residual products that do not vary, give a reason instead of a number", () => {
    const c = ref.cases.find((c) => c.untestable)!;
    const few = gcmStatistic({ n: c.n, params: c.params, sumR: c.sum_r, sigma: c.sigma });
    expect(few).toEqual({ reason: "only 5 complete cases for 3 adjustment columns; the test needs at least 6" });
    expect(gcmStatistic({ n: 100, params: 1, sumR: [0, 0], sigma: [0, 0, 0, 0] })).toEqual({ reason: "the products of the two residuals do not vary; the claim cannot be tested" });
    expect(gcmStatistic({ n: 100, params: 1, sumR: [1], sigma: [NaN] })).toHaveProperty("reason");
    const manyComponents = gcmStatistic({ n: 10, params: 3, sumR: [1, 2, 3, 4, 5, 6], sigma: Array.from({ length: 36 }, (_, k) => (k % 7 === 0 ? 1 : 0)) });
    expect(manyComponents).toHaveProperty("reason");
  });

  it("doc example: one component, n = 100, p = 2, ΣR = 5, σ̂ = 1 gives t = 0.5·√97/10 on 96 df (the definition)", () => {
    const got = gcmStatistic({ n: 100, params: 2, sumR: [5], sigma: [1] });
    if ("reason" in got) throw new Error(got.reason);
    const t = Math.sqrt((25 / 100) * (97 / 100)); // W = ΣR²/(n σ̂), scaled by (n − 1 − p)/n
    expect(got.statistic).toBeCloseTo(t, 15);
    expect(got.df).toBe(96);
    expect(got.p).toBe(studentTTwoSided(t, 96));
  });

  it("the statistic is unchanged when every residual product is rescaled or the components are mixed linearly (theorem: W is invariant)", () => {
    const c = ref.cases.find((c) => c.label === "two components")!;
    const base = gcmStatistic({ n: c.n, params: c.params, sumR: c.sum_r, sigma: c.sigma }) as { statistic: number; p: number };
    // R → A R with A = [[2, 1], [0, −3]]: ΣR → A ΣR, Σ̂ → A Σ̂ Aᵀ
    const A = [2, 1, 0, -3];
    const s = c.sigma;
    const sumR = [A[0]! * c.sum_r[0]! + A[1]! * c.sum_r[1]!, A[2]! * c.sum_r[0]! + A[3]! * c.sum_r[1]!];
    const AS = [A[0]! * s[0]! + A[1]! * s[2]!, A[0]! * s[1]! + A[1]! * s[3]!, A[2]! * s[0]! + A[3]! * s[2]!, A[2]! * s[1]! + A[3]! * s[3]!];
    const sigma = [AS[0]! * A[0]! + AS[1]! * A[1]!, AS[0]! * A[2]! + AS[1]! * A[3]!, AS[2]! * A[0]! + AS[3]! * A[1]!, AS[2]! * A[2]! + AS[3]! * A[3]!];
    const mixed = gcmStatistic({ n: c.n, params: c.params, sumR, sigma }) as { statistic: number; p: number };
    expect(rel(mixed.statistic, base.statistic)).toBeLessThan(1e-12);
    const one = ref.cases.find((c) => c.label === "one component, null")!;
    const a = gcmStatistic({ n: one.n, params: one.params, sumR: one.sum_r, sigma: one.sigma }) as { statistic: number };
    const b = gcmStatistic({ n: one.n, params: one.params, sumR: one.sum_r.map((v) => -7 * v), sigma: one.sigma.map((v) => 49 * v) }) as { statistic: number };
    expect(rel(b.statistic, -a.statistic)).toBeLessThan(1e-14);
  });
});

describe(`gcmCorrelationInterval against scipy.stats.t.ppf (${ref.source})`, () => {
  it("tanh(atanh r ± t_{ν,0.975}·|atanh r / t|) matches the reference to 1e-12 (Fisher's standard error 1/√(n − p − 3) when r = t = 0)", () => {
    for (const c of ref.intervals) {
      const [lo, hi] = gcmCorrelationInterval(c.r, c.t, c.nu, c.n, c.params);
      const where = `r=${c.r} t=${c.t} ν=${c.nu}`;
      expect(Math.abs(lo - c.ci[0]), where).toBeLessThanOrEqual(1e-12 * Math.max(1e-3, Math.abs(c.ci[0]))); // scipy.stats.t.ppf
      expect(Math.abs(hi - c.ci[1]), where).toBeLessThanOrEqual(1e-12 * Math.max(1e-3, Math.abs(c.ci[1])));
      expect(lo > 0 || hi < 0, where).toBe(c.p < 0.05); // scipy.stats.t.sf
    }
  });

  it("the interval excludes 0 exactly when studentTTwoSided(t, ν) < 0.05, also for t within 1e-12 to 3e-8 of scipy's critical value (regression: jStat's t quantile was 2.5e-8 low, so p = 0.05 + 5e-9 excluded 0)", () => {
    for (const { nu, c } of ref.critical) {
      for (const d of [-3e-8, -1e-8, -3e-9, -1e-9, -1e-10, -1e-12, 1e-12, 1e-10, 1e-9, 3e-9, 1e-8, 3e-8]) {
        const t = c * (1 + d); // scipy.stats.t.isf(0.025, ν)·(1 + d)
        const [lo, hi] = gcmCorrelationInterval(0.1, t, nu, nu + 5, 3);
        const p = studentTTwoSided(t, nu);
        expect(lo > 0 || hi < 0, `ν=${nu} t=${t} p=${p}`).toBe(p < 0.05);
        // the project's t tail agrees with scipy to about 3e-11 at ν = 1e6, so the side of the critical value is known from |d| ≥ 1e-10
        if (Math.abs(d) >= 1e-10) expect(p < 0.05, `ν=${nu}: scipy's critical value ·(1 ${d < 0 ? "−" : "+"} ${Math.abs(d)})`).toBe(d > 0);
      }
    }
  });

  it("excludes 0 exactly when p < 1 − level for random r, t, ν and levels 0.9, 0.95, 0.99 (property)", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.001, max: 0.95, noNaN: true }),
        fc.double({ min: 0.01, max: 8, noNaN: true }),
        fc.integer({ min: 1, max: 5000 }),
        fc.constantFrom(0.9, 0.95, 0.99),
        fc.boolean(),
        (r, t, nu, level, negative) => {
          const s = negative ? -1 : 1;
          const [lo, hi] = gcmCorrelationInterval(s * r, s * t, nu, nu + 5, 3, level);
          return lo <= s * r && s * r <= hi && (lo > 0 || hi < 0) === studentTTwoSided(t, nu) < 1 - level;
        },
      ),
      { numRuns: 300, seed: 5 },
    );
  });
});

import { describe, expect, it } from "vitest";
import { pearsonPartial } from "../../../src/audit/methods/pearsonPartial.js";
import type { TestContext } from "../../../src/audit/TestMethod.js";
import type { Table } from "../../../src/data/Table.js";
import type { TestOutcome } from "../../../src/audit/types.js";
import { leastSquaresQR } from "../../../src/stats/linalg.js";
import { arrayMoments, covarianceOf, type ArrayVariable } from "../../fixtures/stats/arrayMoments.js";
import { loadReference, relErr } from "../../fixtures/stats/loadReference.js";

interface Stat { r: number; t: number; df: number; p: number; log_p: number; ci: [number, number]; ci_test: [number, number] }
interface PartialRef { sets: { name: string; columns: string[]; n: number; data: number[][]; cases: { i: number; j: number; given: number[]; pearson: Stat; spearman: Stat }[] }[] }
const ref = loadReference<PartialRef>("partial");

function ctxOf(vars: ArrayVariable[]): TestContext {
  return {
    table: { column: (name: string) => (vars.some((v) => v.name === name && v.levels) ? { type: "nominal" } : { type: "continuous" }) } as unknown as Table, // the method reads only the moments and the columns' types
    moments: arrayMoments(vars),
    seed: 1,
  };
}

function outcomeOf(res: ReturnType<typeof pearsonPartial.run>): TestOutcome {
  if (!res.ok) throw new Error(res.reason);
  return res.outcome;
}

describe(`pearsonPartial against numpy/scipy (reference: ${ref.origin})`, () => {
  // numpy residual method + scipy.stats.t / rankdata, scripts/stats_reference.py
  it("pearsonPartial.run matches the reference r, t, df, p, log p and the interval that inverts the t test to 1e-9", () => {
    for (const set of ref.data.sets) {
      const vars = set.columns.map((name, q) => ({ name, values: set.data[q]! }));
      const ctx = ctxOf(vars);
      for (const c of set.cases) {
        const claim = { x: set.columns[c.i]!, y: set.columns[c.j]!, given: c.given.map((g) => set.columns[g]!) };
        for (const [method, want] of [[pearsonPartial, c.pearson]] as const) {
          const o = outcomeOf(method.run(claim, ctx));
          const where = `${method.name} ${set.name} ${claim.x},${claim.y}|${claim.given}`;
          expect(o.test, where).toBe(method.name);
          expect(o.n).toBe(set.n);
          expect(o.df).toBe(want.df);
          expect(o.p_method).toBe("asymptotic");
          expect(o.details).toMatchObject({ r: o.effect, c: c.given.length });
          expect((o.details as { adjustment: { entered: string }[] }).adjustment.map((a) => a.entered)).toEqual(claim.given.map(() => "linear"));
          expect(relErr(o.effect, want.r), where).toBeLessThanOrEqual(1e-9);
          expect(relErr(o.statistic, want.t), where).toBeLessThanOrEqual(1e-9);
          expect(relErr(o.p, want.p), where).toBeLessThanOrEqual(1e-9);
          expect(relErr(o.log_p, want.log_p), where).toBeLessThanOrEqual(1e-9);
          // the interval that inverts the t test (scipy.stats.t.ppf(0.975, df)·|z / t| on Fisher's z), so it excludes 0 exactly when p < 0.05
          expect(relErr(o.ci[0], want.ci_test[0]), where).toBeLessThanOrEqual(1e-9);
          expect(relErr(o.ci[1], want.ci_test[1]), where).toBeLessThanOrEqual(1e-9);
          expect(o.ci[0] > 0 || o.ci[1] < 0, where).toBe(o.p < 0.05);
        }
      }
    }
  });
});

describe("accepts", () => {
  it("accepts scored x and y with any given set, and refuses a nominal x or y", () => {
    for (const m of [pearsonPartial]) {
      expect(m.accepts({ x: "continuous", y: "binary", given: ["nominal", "ordinal"] })).toBe(true);
      expect(m.accepts({ x: "ordinal", y: "continuous", given: [] })).toBe(true);
      expect(m.accepts({ x: "nominal", y: "continuous", given: [] })).toBe(false);
      expect(m.accepts({ x: "continuous", y: "nominal", given: ["continuous"] })).toBe(false);
    }
  });
});

describe("pearsonPartial with nominal members, missing values and Unicode names", () => {
  // a nominal given with 3 levels enters as 2 dummies; reference: residuals on [1, d1, d2, z] by QR
  const n = 40;
  const grp = Array.from({ length: n }, (_, r) => r % 3);
  const z = Array.from({ length: n }, (_, r) => Math.sin(r * 1.7) * 2);
  const x = Array.from({ length: n }, (_, r) => grp[r]! * 1.5 + z[r]! + Math.cos(r * 2.3));
  const y = Array.from({ length: n }, (_, r) => -grp[r]! + 0.5 * z[r]! + Math.sin(r * 0.9 + 1));
  const vars: ArrayVariable[] = [
    { name: "x", values: x },
    { name: "y", values: y },
    { name: "z", values: z },
    { name: "région", values: grp, levels: ["nord", "sud", "est"] },
  ];

  it("pearsonPartial uses c = 3 design columns for {région (3 levels), z} and matches the QR residual correlation", () => {
    const o = outcomeOf(pearsonPartial.run({ x: "x", y: "y", given: ["région", "z"] }, ctxOf(vars)));
    expect(o.details).toMatchObject({ c: 3 });
    expect(o.df).toBe(n - 2 - 3);
    const X = new Float64Array(n * 4);
    for (let r = 0; r < n; r++) X.set([1, grp[r] === 1 ? 1 : 0, grp[r] === 2 ? 1 : 0, z[r]!], r * 4);
    const resid = (v: number[]): number[] => {
      const b = leastSquaresQR(X, n, 4, v)!.coef;
      return v.map((val, r) => val - (b[0]! + b[1]! * X[r * 4 + 1]! + b[2]! * X[r * 4 + 2]! + b[3]! * z[r]!));
    };
    const { cov } = covarianceOf([resid(x), resid(y)]);
    expect(relErr(o.effect, cov[1]! / Math.sqrt(cov[0]! * cov[3]!))).toBeLessThanOrEqual(1e-10);
  });

  it("rows with a missing value are left out (complete cases) and n says so", () => {
    const xm = x.map((v, r) => (r % 10 === 0 ? NaN : v));
    const o = outcomeOf(pearsonPartial.run({ x: "x", y: "y", given: ["z"] }, ctxOf([{ name: "x", values: xm }, ...vars.slice(1)])));
    expect(o.n).toBe(36);
  });
});

describe("untestable reasons in plain words", () => {
  const base = Array.from({ length: 12 }, (_, r) => r);
  const y = base.map((r) => (r * 7) % 5);
  const run = (vars: ArrayVariable[], given: string[], x = "x") => pearsonPartial.run({ x, y: "y", given }, ctxOf(vars));

  it("a constant column: \"bmi\" is constant among the 12 complete cases", () => {
    const res = run([{ name: "x", values: base }, { name: "y", values: y }, { name: "bmi", values: base.map(() => 25) }], ["bmi"]);
    expect(res).toEqual({ ok: false, reason: '"bmi" is constant among the 12 complete cases' });
  });

  it("a collinear conditioning set names the redundant member", () => {
    const a = base.map((r) => (r * 3) % 7);
    const res = run([{ name: "x", values: base }, { name: "y", values: y }, { name: "a", values: a }, { name: "b", values: a.map((v) => 2 * v + 1) }], ["a", "b"]);
    expect(res).toEqual({ ok: false, reason: 'the conditioning set is collinear: "b" is a linear function of the others among the 12 complete cases' });
  });

  it("x explained by the set: \"x\" is a linear function of the conditioning set", () => {
    const a = base.map((r) => (r * 3) % 7);
    const res = run([{ name: "x", values: a.map((v) => 4 - v) }, { name: "y", values: y }, { name: "a", values: a }], ["a"]);
    expect(res).toEqual({ ok: false, reason: '"x" is a linear function of the conditioning set among the 12 complete cases' });
  });

  it("too few complete cases, and no complete case at all", () => {
    const few = [{ name: "x", values: [1, 2, 3, 4] }, { name: "y", values: [2, 1, 4, 3] }, { name: "a", values: [1, 0, 0, 1] }, { name: "b", values: [3, 1, 2, 2] }];
    expect(pearsonPartial.run({ x: "x", y: "y", given: ["a", "b"] }, ctxOf(few))).toEqual({
      ok: false,
      reason: "only 4 complete cases for 2 conditioning columns; the test needs at least 5",
    });
    const none = [{ name: "x", values: [1, NaN, 3] }, { name: "y", values: [NaN, 2, NaN] }];
    expect(pearsonPartial.run({ x: "x", y: "y", given: [] }, ctxOf(none))).toEqual({ ok: false, reason: 'no row has "x", "y" all observed' });
    const one = [{ name: "x", values: [1, NaN, 3] }, { name: "y", values: [5, 2, NaN] }];
    expect(pearsonPartial.run({ x: "x", y: "y", given: [] }, ctxOf(one))).toEqual({
      ok: false,
      reason: "only 1 complete case for 0 conditioning columns; the test needs at least 3",
    });
  });

  it("Unicode names appear verbatim in reasons", () => {
    const res = run([{ name: "x", values: base }, { name: "y", values: y }, { name: "體重 kg", values: base.map(() => 1) }], ["體重 kg"]);
    expect(res).toEqual({ ok: false, reason: '"體重 kg" is constant among the 12 complete cases' });
  });

  it("a perfect association is tested without NaN (finite t and log p, p > 0)", () => {
    const o = outcomeOf(run([{ name: "x", values: base }, { name: "y", values: base.map((v) => 3 * v - 2) }], []));
    expect(o.effect).toBeCloseTo(1, 12);
    for (const v of [o.statistic, o.p, o.log_p, ...o.ci]) expect(Number.isFinite(v)).toBe(true);
    expect(o.p).toBeGreaterThan(0);
  });
});

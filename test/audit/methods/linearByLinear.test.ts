import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { linearByLinear } from "../../../src/audit/methods/linearByLinear.js";
import { stratifiedChisq } from "../../../src/audit/methods/stratifiedChisq.js";
import type { TestContext } from "../../../src/audit/TestMethod.js";
import type { Claim, TestOutcome } from "../../../src/audit/types.js";
import type { Column, Table, VariableType } from "../../../src/data/Table.js";
import { createRng, type Rng } from "../../../src/stats/rng.js";
import { printedReference } from "../../fixtures/stats/loadReference.js";

// ---- hand-built tables (the CSV reader is tested elsewhere) ----
/** A categorical column from labels; `scores` gives the values of the levels (default: the level index). */
function cat(name: string, labels: readonly (string | null)[], type: VariableType, levels: readonly string[], scores?: readonly number[]): Column {
  const index = new Map(levels.map((l, i) => [l, i] as const));
  const codes = Int32Array.from(labels, (l) => (l === null ? -1 : index.get(l)!));
  const values = Float64Array.from(codes, (c) => (c < 0 ? NaN : scores ? scores[c]! : c));
  return { name, type, typeSource: "declared", codes, levels, values, missing: codes.filter((c) => c < 0).length };
}
function num(name: string, values: readonly number[]): Column {
  return { name, type: "continuous", typeSource: "declared", values: Float64Array.from(values), missing: 0 };
}
function table(cols: Column[]): Table {
  return { rows: cols[0]?.values.length ?? 0, columns: cols, warnings: [], column: (n) => cols.find((c) => c.name === n) };
}
function ctx(t: Table, extra: Partial<TestContext> = {}): TestContext {
  // the linear-by-linear test reads the rows, never the moments (it may run on the helper thread)
  const moments = new Proxy({}, { get() { throw new Error("moments are not used by linear-by-linear"); } }) as TestContext["moments"];
  return { table: t, moments, seed: 1, ...extra };
}
function ok(r: ReturnType<typeof linearByLinear.run>): TestOutcome {
  if (!r.ok) throw new Error(`expected a test outcome, got untestable: ${r.reason}`);
  return r.outcome;
}
const reason = (r: ReturnType<typeof linearByLinear.run>) => (r.ok ? "(testable)" : r.reason);
const effectOf = (q: number, n: number, sign: number) => sign * Math.sqrt(1 - Math.exp(-q / n));

// ---- numpy/scipy reference (scripts/linear_by_linear_reference.py), live or the committed fixture ----
interface LblRef {
  one_stratum: { counts: number[][]; row_scores: number[]; col_scores: number[]; n: number; r: number; q: number; p: number; log_p: number };
  stratified: { row_scores: number[]; col_scores: number[]; strata: number[][][]; n: number; strata_used: number; t: number; e: number; v: number; q: number; p: number; log_p: number; correlation: number };
}
const { ref, from } = printedReference<LblRef>("linear_by_linear_reference.py", "linear-by-linear/reference.json", "python3 numpy/scipy (live)", 60_000);

/** Rows of strata of counts: ordinal x and y whose levels are their scores (as numbers), nominal z naming the stratum. */
function expandStrata(strata: number[][][], rowScores: number[], colScores: number[]): Table {
  const x: string[] = [], y: string[] = [], z: string[] = [];
  strata.forEach((c, s) => c.forEach((row, i) => row.forEach((k, j) => {
    for (let t = 0; t < k; t++) { x.push(String(rowScores[i])); y.push(String(colScores[j])); z.push(`s${s}`); }
  })));
  return table([
    cat("x", x, "ordinal", rowScores.map(String), rowScores),
    cat("y", y, "ordinal", colScores.map(String), colScores),
    cat("z", z, "nominal", strata.map((_, s) => `s${s}`)),
  ]);
}
const claimXYZ: Claim = { x: "x", y: "y", given: ["z"] };

describe(`linearByLinear.run against numpy/scipy [${from}]`, () => {
  it("linearByLinear.run(x ⫫ y | z) on five strata gives Q, p, T, E, V and the stratified correlation of the definition", () => {
    const s = ref.stratified;
    const o = ok(linearByLinear.run(claimXYZ, ctx(expandStrata(s.strata, s.row_scores, s.col_scores))));
    expect(o.test).toBe("linear-by-linear");
    expect(o.n).toBe(s.n); // 247 rows
    expect(o.df).toBe(1);
    const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
    expect(rel(o.statistic, s.q)).toBeLessThan(1e-10); // numpy, from the definition (Mantel 1963)
    expect(rel(o.p, s.p)).toBeLessThan(1e-9); // scipy.stats.chi2.sf(Q, 1)
    expect(rel(o.log_p, s.log_p)).toBeLessThan(1e-10); // scipy.stats.chi2.logsf(Q, 1)
    expect(o.p_method).toBe("asymptotic");
    expect(o.details).toMatchObject({ strata_used: 3, strata_total: 5 });
    expect(rel(o.details!.t as number, s.t)).toBeLessThan(1e-12);
    expect(rel(o.details!.e as number, s.e)).toBeLessThan(1e-12);
    expect(rel(o.details!.v as number, s.v)).toBeLessThan(1e-12);
    expect(rel(o.details!.stratified_correlation as number, s.correlation)).toBeLessThan(1e-10);
    expect(o.details!.x_scores).toEqual({ levels: ["1", "2", "4", "7"], scores: [1, 2, 4, 7] });
    expect(o.details!.y_scores).toEqual({ levels: ["0", "1", "2", "3", "10"], scores: [0, 1, 2, 3, 10] });
    expect(o.warnings!.join(" ")).toMatch(/2 of 5 strata have a single row or a single level of "x" or "y" and contribute nothing/);
    // effect sign·√(1 − exp(−Q/n)), signed by T − E > 0; p = 0.013 < 0.05, so the interval excludes 0
    expect(o.effect).toBeCloseTo(effectOf(s.q, s.n, 1), 12);
    expect(o.ci[0]).toBeGreaterThan(0);
    expect(o.ci[0]).toBeLessThanOrEqual(o.effect);
    expect(o.ci[1]).toBeGreaterThanOrEqual(o.effect);
  });

  it("with nothing given, Q = (n − 1) r² with r from scipy.stats.pearsonr, and the effect has the sign of r", () => {
    const o1 = ref.one_stratum;
    const t = expandStrata([o1.counts], o1.row_scores, o1.col_scores);
    const o = ok(linearByLinear.run({ x: "x", y: "y", given: [] }, ctx(t)));
    expect(o.n).toBe(150);
    expect(Math.abs(o.statistic - o1.q) / o1.q).toBeLessThan(1e-10); // (n − 1)·scipy.stats.pearsonr²
    expect(o.details!.stratified_correlation as number).toBeCloseTo(o1.r, 12); // scipy.stats.pearsonr
    expect(Math.sign(o.effect)).toBe(Math.sign(o1.r));
    expect(o.ci[0]).toBeLessThan(0); // p = 0.36: the interval contains 0
    expect(o.ci[1]).toBeGreaterThan(0);
  });

  it("binary levels declared ordinal (scores 0, 1) give the Cochran–Mantel–Haenszel statistic of the Berkeley admissions (R's 1.5246)", () => {
    interface Dept { dept: string; men_admitted: number; men_rejected: number; women_admitted: number; women_rejected: number }
    // Bickel, Hammel & O'Connell (1975), Science 187:398–404
    const ucb = JSON.parse(readFileSync(new URL("../../fixtures/statsmodels/ucb-admissions.json", import.meta.url), "utf8")) as { departments: Dept[] };
    const g: string[] = [], a: string[] = [], d: string[] = [];
    for (const r of ucb.departments) {
      const add = (gender: string, adm: string, k: number) => { for (let i = 0; i < k; i++) { g.push(gender); a.push(adm); d.push(r.dept); } };
      add("Male", "Admitted", r.men_admitted); add("Male", "Rejected", r.men_rejected);
      add("Female", "Admitted", r.women_admitted); add("Female", "Rejected", r.women_rejected);
    }
    const t = table([cat("gender", g, "ordinal", ["Male", "Female"]), cat("admission", a, "ordinal", ["Admitted", "Rejected"]), cat("dept", d, "nominal", ["A", "B", "C", "D", "E", "F"])]);
    const o = ok(linearByLinear.run({ x: "gender", y: "admission", given: ["dept"] }, ctx(t)));
    // R stats::mantelhaen.test(UCBAdmissions, correct = FALSE), documented output
    expect(o.statistic).toBeCloseTo(1.5246, 4);
    expect(o.p).toBeCloseTo(0.2169, 4);
    expect(o.n).toBe(4526); // Bickel et al. (1975)
    // common odds ratio 0.905 < 1 (R): women are admitted slightly more often within departments,
    // so Σ(T − E) over (gender = Female, admission = Rejected) is negative
    expect(o.effect).toBeLessThan(0);
  });
});

describe("linearByLinear.run scores, rows and permutations", () => {
  /** Seeded ordinal data: x (5 levels), y (4 levels), z (3 levels); y follows x with strength `beta`. */
  function ordinalData(n: number, seed: number, beta: number, xScores?: number[]): Table {
    const rng = createRng(seed, "lbl-data");
    const normal = (r: Rng) => Math.sqrt(-2 * Math.log(1 - r.nextFloat())) * Math.cos(2 * Math.PI * r.nextFloat());
    const x: string[] = [], y: string[] = [], z: string[] = [];
    for (let i = 0; i < n; i++) {
      const zi = rng.nextInt(3);
      const xi = Math.min(4, Math.max(0, Math.round(1.5 + 0.6 * zi + 1.2 * normal(rng))));
      const latent = beta * (xi - 2) + 0.5 * zi + normal(rng);
      const yi = latent < -0.8 ? 0 : latent < 0.2 ? 1 : latent < 1.1 ? 2 : 3;
      x.push(`x${xi}`); y.push(`y${yi}`); z.push(`z${zi}`);
    }
    return table([
      cat("x", x, "ordinal", ["x0", "x1", "x2", "x3", "x4"], xScores),
      cat("y", y, "ordinal", ["y0", "y1", "y2", "y3"]),
      cat("z", z, "nominal", ["z0", "z1", "z2"]),
    ]);
  }

  it("text levels are scored by their rank 0, 1, 2, …; numeric levels by their value, which changes Q", () => {
    const t = ordinalData(300, 1, 0.3);
    const o = ok(linearByLinear.run(claimXYZ, ctx(t)));
    expect(o.details!.x_scores).toEqual({ levels: ["x0", "x1", "x2", "x3", "x4"], scores: [0, 1, 2, 3, 4] });
    const spaced = ordinalData(300, 1, 0.3, [1, 2, 3, 5, 8]);
    const s = ok(linearByLinear.run(claimXYZ, ctx(spaced)));
    expect((s.details!.x_scores as { scores: number[] }).scores).toEqual([1, 2, 3, 5, 8]);
    expect(s.statistic).not.toBeCloseTo(o.statistic, 6);
    // an affine change of scores (here 10·rank + 3) leaves Q unchanged (theorem)
    const affine = ordinalData(300, 1, 0.3, [3, 13, 23, 33, 43]);
    expect(ok(linearByLinear.run(claimXYZ, ctx(affine))).statistic).toBeCloseTo(o.statistic, 9);
  });

  it("rows with a missing value are skipped; the row filter (listwise deletion) is honoured; row order does not matter", () => {
    const t = ordinalData(400, 2, 0.2);
    const base = ok(linearByLinear.run(claimXYZ, ctx(t)));
    const withMissing = table(t.columns.map((c) => cat(c.name, [...Array.from(c.codes!, (k) => c.levels![k]!), c.name === "x" ? null : c.levels![0]!, c.name === "z" ? null : c.levels![1]!], c.type, c.levels!)));
    const m = ok(linearByLinear.run(claimXYZ, ctx(withMissing)));
    expect(m.n).toBe(400);
    expect(m.statistic).toBeCloseTo(base.statistic, 12);
    const zc = t.column("z")!.codes!;
    const filter = Uint8Array.from(zc, (k) => (k === 2 ? 0 : 1));
    const f = ok(linearByLinear.run(claimXYZ, ctx(t, { rowFilter: filter })));
    expect(f.n).toBe(zc.filter((k) => k !== 2).length);
    expect(f.details!.strata_total).toBe(2);
    const order = Array.from({ length: 400 }, (_, i) => (i * 137) % 400); // 137 is coprime with 400: a permutation
    const shuffled = table(t.columns.map((c) => cat(c.name, order.map((i) => c.levels![c.codes![i]!]!), c.type, c.levels!)));
    expect(ok(linearByLinear.run(claimXYZ, ctx(shuffled))).statistic).toBeCloseTo(base.statistic, 10);
  });

  it("the 95% interval excludes 0 exactly when p < 0.05, and contains the effect, over 300 seeded claims", () => {
    let significant = 0;
    for (let r = 0; r < 300; r++) {
      const o = ok(linearByLinear.run(claimXYZ, ctx(ordinalData(60 + (r % 7) * 20, 100 + r, (r % 5) * 0.08))));
      expect(o.effect).toBeCloseTo(effectOf(o.statistic, o.n, Math.sign(o.details!.t_minus_e as number)), 12);
      expect(o.ci[0]).toBeLessThanOrEqual(o.effect);
      expect(o.ci[1]).toBeGreaterThanOrEqual(o.effect);
      expect(o.ci[0] > 0 || o.ci[1] < 0).toBe(o.p < 0.05);
      if (o.p < 0.05) significant++;
    }
    expect(significant).toBeGreaterThan(30); // both sides of the rule are exercised
    expect(significant).toBeLessThan(270);
  });

  it("with permutations: a seeded Monte-Carlo p-value, reproducible, interval agreeing with it, floor warning when B is too small", () => {
    const t = ordinalData(200, 3, 0.15);
    const asym = ok(linearByLinear.run(claimXYZ, ctx(t)));
    const a = ok(linearByLinear.run(claimXYZ, ctx(t, { permutations: 999, seed: 5 })));
    const b = ok(linearByLinear.run(claimXYZ, ctx(t, { permutations: 999, seed: 5 })));
    expect(a.p_method).toBe("permutation");
    expect(a.p).toBe(b.p);
    expect(a.statistic).toBe(asym.statistic);
    expect(a.details!.p_asymptotic).toBe(asym.p);
    expect(a.B).toBeLessThanOrEqual(999);
    // the Monte-Carlo form (1 + hits)/(1 + draws), the draws judged by the confidence sequence (replaces the stop after 20 hits)
    expect(a.p).toBeCloseTo((1 + a.monte_carlo!.hits) / (1 + a.B!), 12);
    expect(a.monte_carlo!.cap).toBe(999);
    expect(a.log_p).toBeCloseTo(Math.log(a.p), 12);
    expect(a.ci[0] > 0 || a.ci[1] < 0).toBe(a.p < 0.05);
    expect(a.warnings ?? []).toEqual([]);
    // strong trend: p at the floor 1/(B + 1); with 120 claims the floor 1/200 is above 0.05/120: warned
    const strong = ordinalData(300, 4, 0.9);
    const s = ok(linearByLinear.run(claimXYZ, ctx(strong, { permutations: 199, decisionFloor: 0.05 / 120 })));
    expect(s.p).toBe(1 / 200);
    expect(s.ci[0]).toBeGreaterThan(0); // p = 0.005 < 0.05
    expect(s.warnings!.join(" ")).toMatch(/smallest reachable p-value is 1\/200 .* at least 2400 permutations/);
  });

  it("both sides: a U-shaped association has no linear trend for linear-by-linear to see, while the stratified G² finds it", () => {
    // x uniform on 5 levels, P(y = 1) = 0.1 + 0.2·|x − 2|: symmetric around the middle level, so the
    // population covariance of the scores is 0 (linear-by-linear's null holds) but y depends on x
    const rng = createRng(8, "u-shape");
    const n = 3000;
    const x: string[] = [], y: string[] = [];
    for (let i = 0; i < n; i++) {
      const xi = rng.nextInt(5);
      x.push(`x${xi}`);
      y.push(rng.nextFloat() < 0.1 + 0.2 * Math.abs(xi - 2) ? "hi" : "lo");
    }
    const t = table([cat("x", x, "ordinal", ["x0", "x1", "x2", "x3", "x4"]), cat("y", y, "ordinal", ["lo", "hi"])]);
    const lin = ok(linearByLinear.run({ x: "x", y: "y", given: [] }, ctx(t)));
    const g2 = ok(stratifiedChisq.run({ x: "x", y: "y", given: [] }, ctx(t)));
    expect(lin.p).toBeGreaterThan(0.01); // Q ~ χ²(1) under a zero linear trend: P(p ≤ 0.01) = 0.01 (seeded)
    expect(g2.p).toBeLessThan(1e-10); // 4-df G² of a strong U shape (≈ 0.1 vs 0.5 at the ends, 3,000 rows)
  });

  it("untestable claims give a reason: non-ordinal x or y, continuous given, no complete rows, no variation, two scores for one level", () => {
    const t = ordinalData(100, 6, 0);
    const cols = t.columns as Column[];
    const nominalX = table([cat("x", Array.from(cols[0]!.codes!, (k) => `x${k}`), "nominal", ["x0", "x1", "x2", "x3", "x4"]), cols[1]!, cols[2]!, num("c", Array.from({ length: 100 }, (_, i) => i))]);
    expect(reason(linearByLinear.run(claimXYZ, ctx(nominalX)))).toMatch(/"x" is nominal; the linear-by-linear test needs ordinal x and y/);
    expect(reason(linearByLinear.run({ x: "y", y: "x", given: [] }, ctx(nominalX)))).toMatch(/"x" is nominal/);
    expect(reason(linearByLinear.run({ x: "y", y: "z", given: [] }, ctx(t)))).toMatch(/"z" is nominal/);
    expect(reason(linearByLinear.run({ x: "y", y: "y", given: ["c"] }, ctx(nominalX)))).toMatch(/"c" is continuous; .* categorical conditioning set/);
    expect(reason(linearByLinear.run({ x: "x", y: "nope", given: [] }, ctx(t)))).toMatch(/"nope" is not a column/);
    const none = table([cat("x", ["a", null], "ordinal", ["a", "b"]), cat("y", [null, "b"], "ordinal", ["a", "b"])]);
    expect(reason(linearByLinear.run({ x: "x", y: "y", given: [] }, ctx(none)))).toMatch(/no row has all of "x", "y" observed/);
    // x equal to z: x never varies within a stratum of z
    const z = ["a", "b", "a", "b", "a", "b"];
    const same = table([cat("x", z, "ordinal", ["a", "b"]), cat("y", ["a", "a", "b", "b", "a", "b"], "ordinal", ["a", "b"]), cat("z", z, "nominal", ["a", "b"])]);
    expect(reason(linearByLinear.run(claimXYZ, ctx(same)))).toMatch(/"x" and "y" never both vary within any stratum of "z" \(2 strata, 6 complete rows\)/);
    // a column whose values give one level two scores
    const bad = cat("x", ["a", "b", "a", "b"], "ordinal", ["a", "b"]);
    const twoScores: Column = { ...bad, values: Float64Array.from([0, 1, 0.5, 1]) };
    expect(reason(linearByLinear.run({ x: "x", y: "y", given: [] }, ctx(table([twoScores, cat("y", ["a", "b", "b", "a"], "ordinal", ["a", "b"])]))))).toMatch(/level "a" of "x" has two scores \(0 and 0\.5\)/);
    const empty = table([cat("x", [], "ordinal", ["a"]), cat("y", [], "ordinal", ["a"])]);
    expect(linearByLinear.run({ x: "x", y: "y", given: [] }, ctx(empty)).ok).toBe(false);
  });

  it("accepts ordinal x and y with a categorical set only; reports row work; Unicode names work", () => {
    expect(linearByLinear.accepts({ x: "ordinal", y: "ordinal", given: ["binary", "nominal", "ordinal"] })).toBe(true);
    expect(linearByLinear.accepts({ x: "ordinal", y: "ordinal", given: [] })).toBe(true);
    expect(linearByLinear.accepts({ x: "ordinal", y: "nominal", given: [] })).toBe(false);
    expect(linearByLinear.accepts({ x: "binary", y: "ordinal", given: [] })).toBe(false);
    expect(linearByLinear.accepts({ x: "ordinal", y: "ordinal", given: ["continuous"] })).toBe(false);
    expect(linearByLinear.name).toBe("linear-by-linear");
    const t = ordinalData(120, 7, 0.4);
    expect(linearByLinear.rowWork!(claimXYZ, t)).toBeGreaterThan(0);
    const u = table(t.columns.map((c) => ({ ...c, name: c.name === "x" ? "éducation_✓" : c.name === "y" ? "活动" : c.name })));
    const o = ok(linearByLinear.run({ x: "éducation_✓", y: "活动", given: ["z"] }, ctx(u)));
    expect(o.statistic).toBeCloseTo(ok(linearByLinear.run(claimXYZ, ctx(t))).statistic, 12);
  });
});

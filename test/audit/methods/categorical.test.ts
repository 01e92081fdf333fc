import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import type { Column, Table, VariableType } from "../../../src/data/Table.js";
import { groupRows, groupStrata } from "../../../src/audit/methods/groupRows.js";
import { regressionLr } from "../../../src/audit/methods/regressionLr.js";
import { stratifiedChisq } from "../../../src/audit/methods/stratifiedChisq.js";
import type { TestContext } from "../../../src/audit/TestMethod.js";
import type { Claim, TestOutcome } from "../../../src/audit/types.js";
import { logisticRegression } from "../../../src/stats/logisticRegression.js";
import { multinomialLogit } from "../../../src/stats/multinomialLogit.js";
import { lrEffectCI } from "../../../src/stats/effectScale.js";
import { chiSquareUpper } from "../../../src/stats/pvalues.js";
import { lazyMoments } from "../../helpers/lazyMoments.js";
import { createRng } from "../../../src/stats/rng.js";
import { lookSchedule } from "../../../src/stats/confidenceSequence.js";
import { printedReference } from "../../fixtures/stats/loadReference.js";

// ---- tiny hand-built tables (the CSV reader is tested elsewhere) ----
function cat(name: string, labels: readonly (string | null)[], type: VariableType = "nominal", levels?: readonly string[]): Column {
  const lv = levels ?? [...new Set(labels.filter((l): l is string => l !== null))];
  const index = new Map(lv.map((l, i) => [l, i] as const));
  const codes = Int32Array.from(labels, (l) => (l === null ? -1 : index.get(l)!));
  return { name, type, typeSource: "declared", codes, levels: lv, values: Float64Array.from(codes, (c) => (c < 0 ? NaN : c)), missing: codes.filter((c) => c < 0).length };
}
function num(name: string, values: readonly number[]): Column {
  const v = Float64Array.from(values);
  return { name, type: "continuous", typeSource: "declared", values: v, missing: v.filter((x) => Number.isNaN(x)).length };
}
function table(cols: Column[]): Table {
  const rows = cols[0]?.values.length ?? 0;
  return { rows, columns: cols, warnings: [], column: (n) => cols.find((c) => c.name === n) };
}
function ctx(t: Table, extra: Partial<TestContext> = {}): TestContext {
  return { table: t, moments: lazyMoments(t), seed: 1, ...extra };
}
function ok(r: ReturnType<typeof stratifiedChisq.run>): TestOutcome {
  if (!r.ok) throw new Error(`expected a test outcome, got untestable: ${r.reason}`);
  return r.outcome;
}

// ---- Berkeley admissions, one row per applicant ----
interface Dept { dept: string; men_admitted: number; men_rejected: number; women_admitted: number; women_rejected: number }
const fixtures = new URL("../../fixtures/statsmodels/", import.meta.url);
// Bickel, Hammel & O'Connell (1975), Science 187:398–404
const ucb = JSON.parse(readFileSync(new URL("ucb-admissions.json", fixtures), "utf8")) as { departments: Dept[] };
function berkeley(shuffleSeed?: number): Table {
  const g: string[] = [], a: string[] = [], d: string[] = [];
  for (const r of ucb.departments) {
    const add = (gender: string, adm: string, k: number) => { for (let i = 0; i < k; i++) { g.push(gender); a.push(adm); d.push(r.dept); } };
    add("Male", "Admitted", r.men_admitted); add("Male", "Rejected", r.men_rejected);
    add("Female", "Admitted", r.women_admitted); add("Female", "Rejected", r.women_rejected);
  }
  if (shuffleSeed !== undefined) {
    const rng = createRng(shuffleSeed);
    for (let i = g.length - 1; i > 0; i--) { const j = rng.nextInt(i + 1); [g[i], g[j]] = [g[j]!, g[i]!]; [a[i], a[j]] = [a[j]!, a[i]!]; [d[i], d[j]] = [d[j]!, d[i]!]; }
  }
  return table([cat("gender", g, "binary", ["Male", "Female"]), cat("admission", a, "binary", ["Admitted", "Rejected"]), cat("dept", d, "nominal")]);
}
function scipyReference(): { ref: { x2_sum: number; g2_sum: number }; from: string } {
  const script = new URL("../../../scripts/statsmodels_reference.py", import.meta.url).pathname;
  const run = spawnSync("python3", [script, "--ucb"], { encoding: "utf8", timeout: 60_000 });
  if (run.status === 0) return { ref: JSON.parse(run.stdout), from: "python3 scipy (live)" };
  return { ref: JSON.parse(readFileSync(new URL("ucb-scipy.json", fixtures), "utf8")), from: "committed fixture ucb-scipy.json" };
}
const scipy = scipyReference();
const claimUCB: Claim = { x: "gender", y: "admission", given: ["dept"] };

describe("stratifiedChisq (Berkeley admissions)", () => {
  it(`stratifiedChisq.run(gender ⫫ admission | dept) on 4,526 applicants matches R and scipy [${scipy.from}]`, () => {
    const o = ok(stratifiedChisq.run(claimUCB, ctx(berkeley())));
    expect(o.test).toBe("stratified-chisq");
    expect(o.n).toBe(4526); // Bickel et al. (1975)
    expect(o.df).toBe(6);
    expect(o.statistic).toBeCloseTo(scipy.ref.g2_sum, 9); // scipy chi2_contingency(lambda_="log-likelihood"), summed
    expect(o.details!.x2 as number).toBeCloseTo(scipy.ref.x2_sum, 9); // scipy chi2_contingency(correction=False), summed
    expect(o.p_method).toBe("asymptotic");
    expect(o.p).toBeCloseTo(chiSquareUpper(scipy.ref.g2_sum, 6), 12);
    expect(o.log_p).toBeCloseTo(Math.log(o.p), 9);
    const mh = o.details!.mantel_haenszel as { odds_ratio: number; ci: [number, number]; cmh: number; p: number; cmh_corrected: number; p_corrected: number };
    // R stats::mantelhaen.test(UCBAdmissions), documented output (tests/Examples/stats-Ex.Rout.save)
    expect(mh.cmh).toBeCloseTo(1.5246, 4);
    expect(mh.p).toBeCloseTo(0.2169, 4);
    expect(mh.cmh_corrected).toBeCloseTo(1.4269, 4);
    expect(mh.p_corrected).toBeCloseTo(0.2323, 4);
    expect(mh.odds_ratio).toBeCloseTo(0.9046968, 7);
    expect(mh.ci[0]).toBeCloseTo(0.7719074, 7);
    expect(mh.ci[1]).toBeCloseTo(1.0603298, 7);
    expect(o.details).toMatchObject({ strata_used: 6, strata_total: 6 });
    // effect scale for a 6-df test: √(1 − exp(−max(0, G² − df)/n)), unsigned, inside its interval
    expect(o.effect).toBeCloseTo(Math.sqrt(1 - Math.exp(-Math.max(0, scipy.ref.g2_sum - 6) / 4526)), 12);
    expect(o.ci[0]).toBeLessThanOrEqual(o.effect);
    expect(o.ci[1]).toBeGreaterThanOrEqual(o.effect);
  });

  it("stratifiedChisq.run does not depend on row order and skips rows with a missing value", () => {
    const a = ok(stratifiedChisq.run(claimUCB, ctx(berkeley())));
    const t = berkeley(9);
    const b = ok(stratifiedChisq.run(claimUCB, ctx(t)));
    expect(b.statistic).toBeCloseTo(a.statistic, 10);
    // add 3 rows with a missing member: n and the statistic stay
    const cols = t.columns.map((c) => cat(c.name, [...Array.from(c.codes!, (k) => c.levels![k]!), null, c.name === "dept" ? "A" : null, "A" === "A" && c.name === "gender" ? "Male" : null], c.type, c.levels));
    const c = ok(stratifiedChisq.run(claimUCB, ctx(table(cols))));
    expect(c.n).toBe(4526);
    expect(c.statistic).toBeCloseTo(a.statistic, 10);
    // a row filter (listwise deletion) removing department F
    const filter = Uint8Array.from(t.column("dept")!.codes!, (k) => (t.column("dept")!.levels![k] === "F" ? 0 : 1));
    const d = ok(stratifiedChisq.run(claimUCB, ctx(t, { rowFilter: filter })));
    expect(d.df).toBe(5);
    expect(d.n).toBe(4526 - 714); // F: 22 + 351 + 24 + 317
  });

  it("stratifiedChisq.run uses permutations when asked: p_method, B, seeded and reproducible", () => {
    const t = berkeley();
    const a = ok(stratifiedChisq.run(claimUCB, ctx(t, { permutations: 400, seed: 3 })));
    const b = ok(stratifiedChisq.run(claimUCB, ctx(t, { permutations: 400, seed: 3 })));
    expect(a.p_method).toBe("permutation");
    // the confidence sequence decides p far below 0.05 at its first look of 200 draws (the cap 400 is not needed)
    expect(a.monte_carlo!.cap).toBe(400);
    expect(a.B).toBe(200);
    expect(a.p).toBe((1 + a.monte_carlo!.hits) / 201);
    expect(a.p).toBe(b.p);
    expect(a.p).toBeGreaterThanOrEqual(1 / 401);
    // G² = 21.7 on 6 df: asymptotic p ≈ 0.0014 (scipy value above); the permutation p is small too
    expect(a.p).toBeLessThan(0.02);
    expect(a.log_p).toBeCloseTo(Math.log(a.p), 12);
    // gender ⫫ admission without department: G² ≈ 93, p tiny; permutation p at its floor 1/(B + 1)
    const m = ok(stratifiedChisq.run({ x: "gender", y: "admission", given: [] }, ctx(t, { permutations: 200 })));
    expect(m.p).toBe(1 / 201);
  });
});

describe("stratifiedChisq sparse and degenerate data", () => {
  // deterministic pseudo-random categorical data
  function randomCats(n: number, seed: number, levels: number[]): string[][] {
    const rng = createRng(seed, "cats");
    return levels.map((L) => Array.from({ length: n }, () => `l${rng.nextInt(L)}`));
  }

  it("the sparse rule switches to permutation when more than 20% of expected counts are below 5", () => {
    const [x, y, z] = randomCats(60, 1, [3, 3, 4]);
    const t = table([cat("x", x!), cat("y", y!), cat("z", z!)]);
    const o = ok(stratifiedChisq.run({ x: "x", y: "y", given: ["z"] }, ctx(t)));
    expect((o.details!.sparse_share as number)).toBeGreaterThan(0.2);
    expect(o.p_method).toBe("permutation");
    // draws judged by the confidence sequence up to the cap (replaces the stop after 20 hits): p = (1 + hits)/(1 + draws)
    expect(o.B).toBeLessThanOrEqual(o.monte_carlo!.cap);
    expect(o.p).toBeCloseTo((1 + o.monte_carlo!.hits) / (1 + o.B!), 12);
    expect(o.warnings!.join(" ")).toMatch(/below 5/);
    // dense data: asymptotic
    const [x2, y2, z2] = randomCats(4000, 2, [3, 3, 2]);
    const d = ok(stratifiedChisq.run({ x: "x", y: "y", given: ["z"] }, ctx(table([cat("x", x2!), cat("y", y2!), cat("z", z2!)]))));
    expect(d.p_method).toBe("asymptotic");
    expect(d.B).toBeUndefined();
  });

  it("a stratum with one row is counted as unused, adds nothing and is reported", () => {
    const [x, y, z] = randomCats(400, 3, [2, 2, 2]);
    const base = ok(stratifiedChisq.run({ x: "x", y: "y", given: ["z"] }, ctx(table([cat("x", x!), cat("y", y!), cat("z", z!)]))));
    const t = table([cat("x", [...x!, "l0"]), cat("y", [...y!, "l1"]), cat("z", [...z!, "lonely"])]);
    const o = ok(stratifiedChisq.run({ x: "x", y: "y", given: ["z"] }, ctx(t)));
    expect(o.details).toMatchObject({ strata_used: 2, strata_total: 3 });
    expect(o.statistic).toBeCloseTo(base.statistic, 12);
    expect(o.df).toBe(base.df);
    expect(o.n).toBe(401);
    expect(o.warnings!.join(" ")).toMatch(/1 of 3 strata/);
  });

  it("a level seen only once enters its stratum's table (df grows by one) and the sparse rule applies", () => {
    const [x, y] = randomCats(200, 4, [2, 2]);
    const t = table([cat("x", [...x!, "rare"]), cat("y", [...y!, "l0"])]);
    const o = ok(stratifiedChisq.run({ x: "x", y: "y", given: [] }, ctx(t)));
    expect(o.df).toBe(2); // (3 − 1)(2 − 1)
    expect(o.details!.sparse_cells).toBe(2); // the two cells of the rare level have expected ≈ 0.5 (< 5)
    expect(o.p_method).toBe("permutation"); // 2 of 6 cells sparse: 33% > 20%
  });

  it("a nominal variable with 40 levels and n = 200 gets a permutation p-value; regression-lr tests it with 39 df", () => {
    const rng = createRng(5, "forty");
    const x = Array.from({ length: 200 }, (_, i) => `k${i % 40}`);
    const y = Array.from({ length: 200 }, () => (rng.nextFloat() < 0.4 ? "yes" : "no"));
    const c = Array.from({ length: 200 }, () => rng.nextFloat() * 10);
    const t = table([cat("x", x), cat("y", y, "binary"), num("c", c)]);
    const o = ok(stratifiedChisq.run({ x: "x", y: "y", given: [] }, ctx(t)));
    expect(o.df).toBe(39);
    expect(o.p_method).toBe("permutation");
    expect(o.p).toBeGreaterThan(0.001); // independent by construction
    // continuous response: linear model with 39 dummies
    const r = ok(regressionLr.run({ x: "x", y: "c", given: [] }, ctx(t)));
    expect(r.df).toBe(39);
    expect(r.details!.model).toBe("linear");
    // binary response on 40 levels of 5 rows: some level has a single outcome → quasi-complete separation warning
    const l = ok(regressionLr.run({ x: "x", y: "y", given: ["c"] }, ctx(t)));
    expect(l.details!.model).toBe("logistic");
    expect(l.warnings!.join(" ")).toMatch(/quasi-complete separation/);
    expect(Number.isFinite(l.statistic)).toBe(true);
  });

  it("untestable claims give a reason: no variation within strata, no complete rows, non-categorical variables", () => {
    // x constant within every stratum of z (x = z)
    const z = ["a", "a", "b", "b", "a", "b"];
    const t = table([cat("x", z), cat("y", ["u", "v", "u", "v", "v", "u"]), cat("z", z), num("w", [1, 2, 3, 4, 5, 6])]);
    const r = stratifiedChisq.run({ x: "x", y: "y", given: ["z"] }, ctx(t));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toMatch(/never both vary within any stratum of "z"/);
    const e = stratifiedChisq.run({ x: "x", y: "y", given: [] }, ctx(table([cat("x", [null, "a"]), cat("y", ["u", null])])));
    expect(e.ok).toBe(false);
    if (!e.ok) expect(e.reason).toMatch(/no row has all of "x", "y" observed/);
    const w = stratifiedChisq.run({ x: "x", y: "w", given: [] }, ctx(t));
    expect(w.ok).toBe(false);
    expect(stratifiedChisq.run({ x: "x", y: "nope", given: [] }, ctx(t))).toMatchObject({ ok: false });
    expect(stratifiedChisq.accepts({ x: "binary", y: "nominal", given: ["ordinal"] })).toBe(true);
    expect(stratifiedChisq.accepts({ x: "binary", y: "nominal", given: ["continuous"] })).toBe(false);
  });

  it("Unicode names and level labels work; an empty table is untestable", () => {
    const [x, y] = randomCats(300, 6, [2, 3]);
    const t = table([cat("tabagisme_é", x!), cat("血压", y!)]);
    const o = ok(stratifiedChisq.run({ x: "tabagisme_é", y: "血压", given: [] }, ctx(t)));
    expect(o.df).toBe(2);
    const empty = table([cat("a", []), cat("b", [])]);
    expect(stratifiedChisq.run({ x: "a", y: "b", given: [] }, ctx(empty)).ok).toBe(false);
  });
});

describe("stratifiedChisq with permutation p-values: effects agree with the test, and the floor", () => {
  /** Seeded nominal x, y (Lx, Ly levels) in Lz strata of z, n rows; with `dep` > 0, x copies y in that share of rows. */
  function sparseClaim(Lx: number, Ly: number, Lz: number, n: number, seed: number, dep: number): Table {
    const rng = createRng(seed, "sparse effect");
    const x: string[] = [], y: string[] = [], z: string[] = [];
    for (let i = 0; i < n; i++) {
      const yi = rng.nextInt(Ly);
      const xi = rng.nextFloat() < dep ? yi % Lx : rng.nextInt(Lx);
      x.push(`x${xi}`); y.push(`y${yi}`); z.push(`z${rng.nextInt(Lz)}`);
    }
    return table([cat("x", x), cat("y", y), cat("z", z)]);
  }
  const claimXYZ: Claim = { x: "x", y: "y", given: ["z"] };

  it("regression: a sparse independent claim (p ≈ 0.40) no longer shows a clearly non-null effect (was 0.47 [0.18, 0.66])", () => {
    const o = ok(stratifiedChisq.run(claimXYZ, ctx(sparseClaim(3, 3, 20, 100, 1, 0))));
    expect(o.p_method).toBe("permutation");
    // 10⁶ draws give p = 0.3965 ± 0.0005; the 0.56 once written here came from the old stop after 20 hits (36 draws)
    expect(o.p).toBeGreaterThan(0.25);
    // the bug: the asymptotic construction on the raw G² (lrEffect, lrEffectCI with df) excluded 0
    expect(lrEffectCI(o.statistic, o.df, o.n)[0]).toBeGreaterThan(0.15);
    const m = o.details!.g2_null_mean as number;
    expect(m).toBeGreaterThan(o.df + 15); // twenty small strata inflate the null mean of G² far above df
    expect(o.details!.g2_null_variance as number).toBeLessThan(2 * m); // and its spread is narrower than χ²'s
    expect(o.effect).toBeCloseTo(Math.sqrt(1 - Math.exp(-Math.max(0, o.statistic - m) / o.n)), 12);
    expect(o.effect).toBeLessThan(0.2);
    expect(o.ci[0]).toBe(0);
    expect(o.ci[1]).toBeGreaterThan(o.effect);
  });

  it("the permutation null mean and variance of G² behind the effect match their exact values (enumeration of all tables)", () => {
    interface ExactNull { strata: number[][][]; g2: number; df: number; mean: number; variance: number; mu4: number; p: number }
    const exact = printedReference<{ exact_null: ExactNull }>("calibrated_effect_reference.py", "calibrated-effect/reference.json", "python3 scipy (live)", 60_000).ref.exact_null;
    const x: string[] = [], y: string[] = [], z: string[] = [];
    exact.strata.forEach((c, s) => c.forEach((row, i) => row.forEach((k, j) => { for (let t = 0; t < k; t++) { x.push(`x${i}`); y.push(`y${j}`); z.push(`z${s}`); } })));
    const o = ok(stratifiedChisq.run(claimXYZ, ctx(table([cat("x", x), cat("y", y), cat("z", z)]), { permutations: 5000, seed: 4 })));
    expect(o.statistic).toBeCloseTo(exact.g2, 10); // numpy G², scripts/calibrated_effect_reference.py
    expect(o.df).toBe(exact.df);
    const draws = Math.max(200, o.B!);
    // Monte-Carlo mean and variance of `draws` permuted G² against the exact moments of the
    // enumerated permutation distribution: 5 standard errors (common practice); the standard error
    // of a sample variance is √((μ₄ − σ⁴)/draws)
    expect(Math.abs((o.details!.g2_null_mean as number) - exact.mean)).toBeLessThan(5 * Math.sqrt(exact.variance / draws));
    expect(Math.abs((o.details!.g2_null_variance as number) - exact.variance)).toBeLessThan(5 * Math.sqrt((exact.mu4 - exact.variance ** 2) / draws));
    expect(exact.mean).toBeGreaterThan(exact.df); // sparse: the null mean is not df
  });

  it("property over 240 seeded sparse claims (independent and dependent): no 95% interval excludes 0 when p ≥ 0.05, and the effect lies in its interval", () => {
    const configs: [number, number, number, number][] = [[3, 3, 20, 100], [2, 2, 30, 90], [4, 4, 10, 80], [5, 3, 8, 60]];
    let oldWrong = 0, excluded = 0, notRejected = 0, smallP = 0;
    for (let r = 0; r < 240; r++) {
      const [Lx, Ly, Lz, n] = configs[r % 4]!;
      const o = ok(stratifiedChisq.run(claimXYZ, ctx(sparseClaim(Lx, Ly, Lz, n, 1000 + r, r % 3 === 2 ? 0.5 : 0), { seed: r })));
      expect(o.p_method).toBe("permutation");
      expect(o.ci[0]).toBeLessThanOrEqual(o.effect);
      expect(o.ci[1]).toBeGreaterThanOrEqual(o.effect);
      if (o.p >= 0.05) {
        notRejected++;
        expect(o.ci[0]).toBeLessThanOrEqual(0);
        if (lrEffectCI(o.statistic, o.df, o.n)[0] > 0) oldWrong++;
      }
      if (o.ci[0] > 0) excluded++;
      if (o.p < 0.025) smallP++;
    }
    console.log(`sparse claims: ${notRejected} with p ≥ 0.05 (${oldWrong} of them excluded 0 before), ${smallP} with p < 0.025 of which ${excluded} exclude 0`);
    expect(notRejected).toBeGreaterThan(100);
    expect(oldWrong).toBeGreaterThan(20); // the unadjusted construction failed on these claims
    expect(smallP).toBeGreaterThan(20); // dependent claims are rejected…
    // …and the two-moment calibration makes their intervals agree with the permutation p-value in
    // this direction too (not guaranteed by construction; 72 of 72 with these seeds)
    expect(excluded).toBeGreaterThanOrEqual(0.9 * smallP);
  });

  it("regression: two identical binary columns among 120 claims get a permutation p-value below the floor 0.05/120 (was stuck at 1/2001)", () => {
    // 60 rows, 5 ones: 3 of 4 expected counts below 5, so the sparse rule permutes; exact p = 1/C(60, 5) ≈ 1.8e-7
    const v = Array.from({ length: 60 }, (_, i) => (i % 12 === 3 ? "yes" : "no"));
    const t = table([cat("a", v, "binary", ["no", "yes"]), cat("b", [...v], "binary", ["no", "yes"])]);
    const floor = 0.05 / 120;
    const o = ok(stratifiedChisq.run({ x: "a", y: "b", given: [] }, ctx(t, { decisionFloor: floor })));
    expect(o.p_method).toBe("permutation");
    // no draw reaches the observed G²: the first look n = 200·2^j whose Clopper–Pearson upper end
    // 1 − (δ/2)^(1/n) is below the floor (δ = 0.001/J, J looks up to the default cap) decides it
    const cap = o.monte_carlo!.cap;
    const delta = 1e-3 / lookSchedule(cap).length;
    expect(1 - (delta / 2) ** (1 / 12800)).toBeGreaterThanOrEqual(floor); // Clopper & Pearson (1934), the h = 0 case in closed form
    expect(1 - (delta / 2) ** (1 / 25600)).toBeLessThan(floor);
    expect(o.B).toBe(25600);
    expect(o.p).toBe(1 / 25601);
    expect(o.p).toBeLessThan(floor);
    expect(o.ci[0]).toBeGreaterThan(0);
    expect((o.warnings ?? []).join(" ")).not.toMatch(/smallest reachable/);
    // without a floor (one claim at 0.05) the first look of 200 draws is enough
    expect(ok(stratifiedChisq.run({ x: "a", y: "b", given: [] }, ctx(t))).B).toBe(200);
    // the user's --permutations 2000 cannot reach the floor: the claim says so
    const forced = ok(stratifiedChisq.run({ x: "a", y: "b", given: [] }, ctx(t, { decisionFloor: floor, permutations: 2000 })));
    expect(forced.p).toBe(1 / 2001);
    expect(forced.warnings!.join(" ")).toMatch(/with 2000 permutations the smallest reachable p-value is 1\/2001 = 0\.000500, not below 0\.000417.*at least 2400 permutations/);
    const enough = ok(stratifiedChisq.run({ x: "a", y: "b", given: [] }, ctx(t, { decisionFloor: floor, permutations: 2400 })));
    expect((enough.warnings ?? []).join(" ")).not.toMatch(/smallest reachable/);
  });

  it("an ordinary sparse claim under a low floor still stops early (at the first look of the confidence sequence), with p = (1 + hits)/(1 + draws)", () => {
    const o = ok(stratifiedChisq.run(claimXYZ, ctx(sparseClaim(3, 3, 4, 60, 7, 0), { decisionFloor: 0.05 / 1000 })));
    expect(o.p_method).toBe("permutation");
    expect(o.p).toBeGreaterThan(0.05);
    expect(o.B).toBe(200);
    expect(o.p).toBeCloseTo((1 + o.monte_carlo!.hits) / 201, 12);
  });
});

describe("groupRows", () => {
  it("groupRows counts distinct combinations, skips missing rows and honours the row filter", () => {
    const a = cat("a", ["p", "q", "p", "p", null, "q"]);
    const b = cat("b", ["u", "u", "u", "v", "v", "u"]);
    const g = groupRows([a, b], 6);
    expect(g.n).toBe(5);
    expect(g.groups).toBe(3);
    const got = new Map<string, number>();
    for (let i = 0; i < g.groups; i++) got.set(`${a.levels![g.codes[0]![i]!]}${b.levels![g.codes[1]![i]!]}`, g.counts[i]!);
    expect(Object.fromEntries(got)).toEqual({ pu: 2, qu: 2, pv: 1 });
    expect(g.rowGroup[4]).toBe(-1);
    const f = groupRows([a, b], 6, Uint8Array.from([1, 1, 0, 1, 1, 1]));
    expect(f.n).toBe(4);
    expect(() => groupRows([num("c", [1, 2])], 2)).toThrow(/not categorical/);
    expect(groupRows([], 0).n).toBe(0);
  });
});

describe("groupStrata", () => {
  it("groupStrata builds one compact x × y table per stratum with the level codes of its rows and columns", () => {
    const x = cat("x", ["a", "b", "a", "c", "b", "a", null, "c"]);
    const y = cat("y", ["u", "u", "v", "v", "u", "u", "v", "u"]);
    const z = cat("z", ["p", "p", "p", "q", "q", "q", "q", null]);
    const g = groupStrata(x, y, [z], 8);
    expect(g.n).toBe(6);
    expect(g.strata).toHaveLength(2);
    const asMap = (k: number) => {
      const s = g.strata[k]!;
      const out: Record<string, number> = {};
      for (let i = 0; i < s.rows; i++) for (let j = 0; j < s.cols; j++) out[`${x.levels![s.xCodes[i]!]}${y.levels![s.yCodes[j]!]}`] = s.counts[i * s.cols + j]!;
      return out;
    };
    expect(asMap(0)).toEqual({ au: 1, av: 1, bu: 1, bv: 0 }); // z = p: rows 1–3 (hand count)
    expect(asMap(1)).toEqual({ cv: 1, cu: 0, bv: 0, bu: 1, av: 0, au: 1 }); // z = q: rows 4–6
    expect(g.twoByTwo).toBeUndefined(); // x has three levels
    // binary x and y: the full 2 × 2 tables by code come along; nothing given is one stratum
    const b = groupStrata(cat("b", ["0", "1", "1", "0"], "binary", ["0", "1"]), cat("c", ["1", "1", "0", "0"], "binary", ["0", "1"]), [], 4);
    expect(b.strata).toHaveLength(1);
    expect(Array.from(b.twoByTwo![0]!)).toEqual([1, 1, 1, 1]);
    expect(groupStrata(x, y, [z], 8, Uint8Array.from([1, 1, 1, 0, 0, 0, 0, 0])).strata).toHaveLength(1);
  });
});

describe("regressionLr", () => {
  // Seeded dataset and statsmodels fits written by scripts/statsmodels_reference.py (committed fixtures)
  const ref = JSON.parse(readFileSync(new URL("regression-ref.json", fixtures), "utf8"));
  const data = readFileSync(new URL("regression-data.csv", fixtures), "utf8").trim().split("\n").slice(1).map((l) => l.split(",").map(Number));
  const t = table([
    num("x1", data.map((r) => r[0]!)),
    cat("x2", data.map((r) => String(r[1])), "binary", ["0", "1"]),
    cat("x3", data.map((r) => String(r[2])), "nominal", ["0", "1", "2"]),
    cat("yb", data.map((r) => String(r[3])), "binary", ["0", "1"]),
    cat("ym", data.map((r) => String(r[4])), "nominal", ["0", "1", "2"]),
    num("yc", data.map((r) => r[5]!)),
  ]);

  it("regressionLr.run: continuous response gives statsmodels' OLS likelihood ratio, signed by the coefficient", () => {
    const ln = ok(regressionLr.run({ x: "x1", y: "yc", given: ["x2", "x3"] }, ctx(t)));
    expect(ln.details!.model).toBe("linear");
    expect(ln.details!.response).toBe("yc");
    expect(ln.statistic).toBeCloseTo(ref.ols.llr, 7); // statsmodels OLS 2(llf − llf_null)
    expect(ln.df).toBe(1);
    expect(Math.sign(ln.effect)).toBe(Math.sign(ref.ols.params[1])); // sign of the x1 coefficient
    expect(ln.p).toBeCloseTo(chiSquareUpper(ref.ols.llr, 1), 12);
    expect(ln.ci[0]).toBeLessThanOrEqual(ln.effect);
    expect(ln.ci[1]).toBeGreaterThanOrEqual(ln.effect);
    // a continuous side is the response even when it is x
    const sw = ok(regressionLr.run({ x: "yc", y: "x2", given: ["x1", "x3"] }, ctx(t)));
    expect(sw.details!.response).toBe("yc");
  });

  it("regressionLr.run: binary response → logistic, nominal response → multinomial, LR = 2(ℓ1 − ℓ0) of the fits", () => {
    const m = data.length;
    const lg = ok(regressionLr.run({ x: "x2", y: "yb", given: ["x1", "x3"] }, ctx(t)));
    expect(lg.details).toMatchObject({ model: "logistic", response: "yb", grouped: false });
    const X = new Float64Array(m * 5);
    data.forEach(([x1, x2, x3], i) => X.set([1, x1!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0, x2!], i * 5));
    const X0 = new Float64Array(m * 4);
    data.forEach(([x1, , x3], i) => X0.set([1, x1!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0], i * 4));
    const y = data.map((r) => r[3]!);
    const lr = 2 * (logisticRegression(X, m, 5, y).logLik - logisticRegression(X0, m, 4, y).logLik);
    expect(lg.statistic).toBeCloseTo(lr, 8);
    expect(lg.df).toBe(1);
    // nominal x3 and nominal ym (3 levels each): ym is the response (y on ties), df = 2 × 2
    const ml = ok(regressionLr.run({ x: "x3", y: "ym", given: ["x1", "x2"] }, ctx(t)));
    expect(ml.details).toMatchObject({ model: "multinomial", response: "ym" });
    expect(ml.df).toBe(4);
    const Xm = new Float64Array(m * 5);
    data.forEach(([x1, x2, x3], i) => Xm.set([1, x2!, x1!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0], i * 5));
    const Xm0 = new Float64Array(m * 3);
    data.forEach(([x1, x2], i) => Xm0.set([1, x2!, x1!], i * 3));
    const yy = data.map((r) => r[4]!);
    const lrm = 2 * (multinomialLogit(Xm, m, 5, yy, 3).logLik - multinomialLogit(Xm0, m, 3, yy, 3).logLik);
    expect(ml.statistic).toBeCloseTo(lrm, 7);
    // a binary side is preferred as the response over a nominal one
    const pick = ok(regressionLr.run({ x: "x2", y: "ym", given: ["x1"] }, ctx(t)));
    expect(pick.details!.response).toBe("x2");
  });

  it("regressionLr.run groups all-categorical claims into a small weighted fit with the row-level answer", () => {
    const g = ok(regressionLr.run({ x: "x2", y: "yb", given: ["x3"] }, ctx(t)));
    expect(g.details!.grouped).toBe(true);
    expect(g.details!.fitted_rows as number).toBeLessThanOrEqual(12);
    // statsmodels GLM Binomial log-likelihood of yb on x2 and x3 dummies (regression-ref.json)
    expect(Math.abs((g.details!.loglik_full as number) - ref.logit_categorical.llf)).toBeLessThan(1e-8);
  });

  it("regressionLr.run: complete separation is untestable with its reason; quasi-complete gives a warning", () => {
    const x = Array.from({ length: 40 }, (_, i) => i / 4);
    const yy = x.map((v) => (v > 5 ? "1" : "0"));
    const th = x.map((v) => (v > 5 ? "hi" : "lo"));
    const n = x.map((_, i) => (i % 2 ? "p" : "q"));
    const t2 = table([cat("yy", yy, "binary"), cat("th", th, "binary"), cat("n", n, "binary"), num("c", x.map((v, i) => Math.sin(i) + v / 100))]);
    const comp = regressionLr.run({ x: "n", y: "yy", given: ["th"] }, ctx(t2));
    expect(comp.ok).toBe(false);
    if (!comp.ok) expect(comp.reason).toMatch(/complete separation in the null model: "yy" is predicted perfectly by "th"/);
    // continuous given, separated response: row-level fit, same outcome
    const comp2 = regressionLr.run({ x: "n", y: "yy", given: ["th", "c"] }, ctx(t2));
    expect(comp2.ok).toBe(false);
    // without the separating variable the claim is testable
    expect(regressionLr.run({ x: "n", y: "yy", given: [] }, ctx(t2)).ok).toBe(true);
  });

  it("regressionLr.run: constant added side, single-level response, aliased side and too few rows are untestable", () => {
    const a = table([num("c", [1, 2, 3, 4, 5, 6]), cat("k", ["a", "a", "a", "a", "a", "a"]), cat("z", ["u", "v", "u", "v", "u", "v"]), cat("zz", ["u", "v", "u", "v", "u", "v"])]);
    const reason = (r: ReturnType<typeof regressionLr.run>) => (r.ok ? "(testable)" : r.reason);
    expect(reason(regressionLr.run({ x: "k", y: "c", given: [] }, ctx(a)))).toMatch(/"k" is constant/);
    expect(reason(regressionLr.run({ x: "z", y: "k", given: [] }, ctx(a)))).toMatch(/"k" is constant/);
    const b = table([cat("k1", ["a", "a", "a", "a"]), cat("k2", ["b", "b", "b", "b"])]);
    expect(reason(regressionLr.run({ x: "k1", y: "k2", given: [] }, ctx(b)))).toMatch(/"k2" has a single observed level/);
    expect(reason(regressionLr.run({ x: "zz", y: "c", given: ["z"] }, ctx(a)))).toMatch(/"zz" is determined by "z"/);
    expect(reason(regressionLr.run({ x: "z", y: "c", given: [] }, ctx(table([num("c", [1, 2, 3]), cat("z", ["u", "v", "u"])]))))).toMatch(/too few/);
    expect(reason(regressionLr.run({ x: "z", y: "c", given: [] }, ctx(table([num("c", [NaN, 2]), cat("z", ["u", null])]))))).toMatch(/no row/);
    expect(regressionLr.accepts({ x: "continuous", y: "nominal", given: [] })).toBe(true);
  });
});

describe("regressionLr warm start (more than 60,000 rows)", () => {
  // seeded data: continuous c, nominal z (3 levels), nominal x (3 levels), binary yb and nominal ym (3 levels) depending on c and z
  const m = 70_000;
  const rng = createRng(2024, "warm-start test");
  const normal = () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
  const c = Array.from({ length: m }, () => 10 + 3 * normal());
  const z = c.map((v) => (v + normal() > 11 ? 2 : rng.nextFloat() < 0.5 ? 1 : 0));
  const x = z.map((v) => (rng.nextFloat() < 0.6 ? v : rng.nextInt(3)));
  const yb = c.map((v, i) => (rng.nextFloat() < 1 / (1 + Math.exp(-(0.3 * (v - 10) + 0.5 * z[i]! - 0.2))) ? 1 : 0));
  const ym = c.map((v, i) => {
    const e = [0, 0.2 * (v - 10) + 0.3 * z[i]!, -0.1 * (v - 10) + 0.1 * (x[i] === 2 ? 1 : 0)].map(Math.exp);
    const u = rng.nextFloat() * (e[0]! + e[1]! + e[2]!);
    return u < e[0]! ? 0 : u < e[0]! + e[1]! ? 1 : 2;
  });
  const t = table([
    num("c", c), cat("z", z.map(String), "nominal", ["0", "1", "2"]), cat("x", x.map(String), "nominal", ["0", "1", "2"]),
    cat("yb", yb.map(String), "binary", ["0", "1"]), cat("ym", ym.map(String), "nominal", ["0", "1", "2"]),
  ]);
  // the same models fitted from zero on the row-major design [1, c, z=1, z=2, (x=1, x=2)]
  const design = (withX: boolean) => {
    const p = withX ? 6 : 4;
    const X = new Float64Array(m * p);
    for (let i = 0; i < m; i++) X.set([1, c[i]!, z[i] === 1 ? 1 : 0, z[i] === 2 ? 1 : 0, ...(withX ? [x[i] === 1 ? 1 : 0, x[i] === 2 ? 1 : 0] : [])], i * p);
    return { X, p };
  };

  it("regressionLr.run on 70,000 rows: logistic log-likelihoods equal the cold-start fits on all rows (1e-12 relative), whatever the seed", () => {
    const d0 = design(false);
    const d1 = design(true);
    const l0 = logisticRegression(d0.X, m, d0.p, yb).logLik;
    const l1 = logisticRegression(d1.X, m, d1.p, yb).logLik;
    for (const seed of [1, 77]) {
      const r = ok(regressionLr.run({ x: "x", y: "yb", given: ["c", "z"] }, ctx(t, { seed })));
      expect(r.details).toMatchObject({ model: "logistic", fitted_rows: m, grouped: false });
      expect(Math.abs((r.details!.loglik_null as number) - l0)).toBeLessThanOrEqual(1e-12 * Math.abs(l0));
      expect(Math.abs((r.details!.loglik_full as number) - l1)).toBeLessThanOrEqual(1e-12 * Math.abs(l1));
      expect(r.statistic).toBeCloseTo(2 * (l1 - l0), 6);
      expect(r.df).toBe(2);
    }
  });

  it("regressionLr.run on 70,000 rows: multinomial log-likelihoods equal the cold-start fits on all rows (1e-12 relative)", () => {
    const d0 = design(false);
    const d1 = design(true);
    const l0 = multinomialLogit(d0.X, m, d0.p, ym, 3).logLik;
    const l1 = multinomialLogit(d1.X, m, d1.p, ym, 3).logLik;
    const r = ok(regressionLr.run({ x: "x", y: "ym", given: ["c", "z"] }, ctx(t)));
    expect(r.details).toMatchObject({ model: "multinomial", response: "ym", fitted_rows: m });
    expect(Math.abs((r.details!.loglik_null as number) - l0)).toBeLessThanOrEqual(1e-12 * Math.abs(l0));
    expect(Math.abs((r.details!.loglik_full as number) - l1)).toBeLessThanOrEqual(1e-12 * Math.abs(l1));
    expect(r.df).toBe(4);
    expect(r.p).toBeLessThan(1e-3); // ym depends on x = 2 given c and z (the other side)
  });
});

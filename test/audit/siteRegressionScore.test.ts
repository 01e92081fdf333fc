import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import type { Column, Table, VariableType } from "../../src/data/Table.js";
import {
  checkScoreClaimShape, isScoreClaim, poolScoreClaims, regressionScoreSummary, responseOf, type RegressionScoreSummary, type ScoreClaimSummary,
} from "../../src/audit/siteRegressionScore.js";
import { regressionLr } from "../../src/audit/methods/regressionLr.js";
import type { MethodResult, TestContext } from "../../src/audit/TestMethod.js";
import type { Claim, TestOutcome } from "../../src/audit/types.js";
import { chiSquareUpper } from "../../src/stats/pvalues.js";
import { lrEffect, lrEffectInterval } from "../../src/stats/effectScale.js";
import { mulberry32 } from "../helpers/randomGraph.js";
import { binomialInterval } from "../helpers/simulate.js";
import { printedReference } from "../fixtures/stats/loadReference.js";

/** Reference values from scripts/pooled_score_reference.py (statsmodels/numpy), live or the committed fixture. */
interface ClaimRef { name: string; x: string; y: string; given: string[]; response: string; added: string; n: number; statistic: number; glm_score_test?: number }
interface SingleRef extends ClaimRef { efficient_score: number[]; efficient_information: number[][]; llf_null: number; llf_full: number; lr: number }
interface StackedRef extends ClaimRef { additive_lr: number }
interface Ref {
  source: string; levels: Record<string, string[]>;
  single: Record<string, SingleRef>; stacked: Record<string, StackedRef>; edge: Record<string, ClaimRef & { rows_uncertain: number }>;
}
const fixtures = new URL("../fixtures/pooled-score/", import.meta.url);
const { ref, from } = printedReference<Ref>("pooled_score_reference.py", "pooled-score/reference.json", "python3 statsmodels/numpy (live)");
const SITES = ["A", "B", "C"];

/** Columns of a table: continuous values, or categorical codes on a given level list (shared by every site, as summaries require). */
type Spec = Record<string, { type: VariableType; levels?: readonly string[]; values: ArrayLike<number> }>;
function tableOf(spec: Spec): Table {
  const columns: Column[] = Object.entries(spec).map(([name, s]) => {
    if (!s.levels) {
      const values = Float64Array.from(s.values);
      return { name, type: s.type, typeSource: "declared", values, missing: values.filter(Number.isNaN).length };
    }
    const codes = Int32Array.from(s.values);
    return { name, type: s.type, typeSource: "declared", codes, levels: s.levels, values: Float64Array.from(codes, (c) => (c < 0 ? NaN : c)), missing: codes.filter((c) => c < 0).length };
  });
  const rows = columns[0]?.values.length ?? 0;
  return { rows, columns, warnings: [], column: (n) => columns.find((c) => c.name === n) };
}

/** A fixture CSV as one table per site (or one table when it has no site column), the level lists of the script. */
function load(file: string, keep: (row: Record<string, string>) => boolean = () => true): Map<string, Table> {
  const lines = readFileSync(new URL(file, fixtures), "utf8").trim().split("\n");
  const head = lines[0]!.split(",");
  const all = lines.slice(1).map((l) => Object.fromEntries(l.split(",").map((v, j) => [head[j]!, v]))).filter(keep);
  const groups = new Map<string, Record<string, string>[]>();
  for (const r of all) {
    const s = r.site ?? "";
    if (!groups.has(s)) groups.set(s, []);
    groups.get(s)!.push(r);
  }
  const out = new Map<string, Table>();
  const levels: Record<string, readonly string[]> = { ...ref.levels, site: SITES };
  for (const [s, rows] of [...groups, ["*", all] as [string, Record<string, string>[]]]) {
    const spec: Spec = {};
    for (const name of head) {
      if (name === "z") spec.z = { type: "continuous", values: rows.map((r) => Number(r.z)) };
      else spec[name] = { type: levels[name]!.length === 2 ? "binary" : "nominal", levels: levels[name]!, values: rows.map((r) => levels[name]!.indexOf(r[name]!)) };
    }
    out.set(s, tableOf(spec));
  }
  return out;
}
function ctx(table: Table, alpha = 0.05): TestContext {
  return {
    table,
    get moments(): TestContext["moments"] {
      throw new Error("logistic and multinomial fits do not read the pattern moments");
    },
    seed: 1,
    alpha,
  };
}
function ok(r: MethodResult): TestOutcome {
  if (!r.ok) throw new Error(`expected a test outcome, got untestable: ${r.reason}`);
  return r.outcome;
}
function scored(r: RegressionScoreSummary): ScoreClaimSummary {
  if (r.kind !== "score") throw new Error(`expected a score, got untestable: ${r.reason}`);
  return r;
}
const claimOf = (c: { x: string; y: string; given: string[] }): Claim => ({ x: c.x, y: c.y, given: c.given });
const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
const relDiff = (a: ArrayLike<number>, b: ArrayLike<number>) => Math.max(...Array.from(a, (v, i) => Math.abs(v - b[i]!))) / Math.max(...Array.from(b, Math.abs));
/** Summaries of a claim at every site of a file, pooled. */
function pooled(file: string, claim: Claim, k = 5, keep?: (row: Record<string, string>) => boolean): { outcome: TestOutcome; parts: ScoreClaimSummary[]; all: Table } {
  const tables = load(file, keep);
  const parts = SITES.map((s) => scored(regressionScoreSummary(tables.get(s)!, claim, k)));
  return { outcome: ok(poolScoreClaims(parts, claim, ctx(tables.get("*")!), SITES)), parts, all: tables.get("*")! };
}

describe(`regressionScoreSummary on one site against statsmodels [${from}]`, () => {
  for (const name of ["logistic", "logistic3", "multinomial"]) {
    it(`regressionScoreSummary(${name}) writes the efficient score and information of statsmodels' null fit (1e-7), and the pool of one site is its score test (1e-8)`, () => {
      const c = ref.single[name]!;
      const table = load("single.csv").get("")!;
      const s = scored(regressionScoreSummary(table, claimOf(c), 5));
      expect(s.response).toBe(c.response);
      expect(s.n).toBe(c.n);
      expect(relDiff(s.score, c.efficient_score)).toBeLessThan(1e-7); // numpy Schur complement of statsmodels score/−hessian
      expect(relDiff(s.information.flat(), c.efficient_information.flat())).toBeLessThan(1e-7);
      const o = ok(poolScoreClaims([s], claimOf(c), ctx(table)));
      expect(o.test).toBe("regression-lr");
      expect(o.df).toBe(s.added_columns.length);
      expect(rel(o.statistic, c.statistic)).toBeLessThan(1e-8); // numpy U'I_eff⁻¹U at statsmodels' null MLE
      if (c.glm_score_test !== undefined) expect(rel(o.statistic, c.glm_score_test)).toBeLessThan(1e-8); // statsmodels GLM.score_test
      expect(rel(o.p, chiSquareUpper(o.statistic, o.df))).toBeLessThan(1e-12); // p is the χ²(df) tail of the statistic
    });

    it(`regressionScoreSummary(${name}).site_lr is statsmodels' LR and regression-lr's on the same rows; the score statistic stays within 2% + 0.01 of it (measured)`, () => {
      const c = ref.single[name]!;
      const table = load("single.csv").get("")!;
      const s = scored(regressionScoreSummary(table, claimOf(c), 5));
      expect(rel(s.site_lr!.l0, c.llf_null)).toBeLessThan(1e-10); // statsmodels llf, null model
      expect(rel(s.site_lr!.l1, c.llf_full)).toBeLessThan(1e-10); // statsmodels llf, full model
      expect(rel(s.site_lr!.lr, c.lr)).toBeLessThan(1e-7); // statsmodels 2(llf_full − llf_null)
      const lr = ok(regressionLr.run(claimOf(c), ctx(table)));
      expect(rel(lr.statistic, s.site_lr!.lr)).toBeLessThan(1e-8);
      expect(lr.df).toBe(s.site_lr!.df);
      // measured on single.csv (400 rows): score − LR = +0.038 (6.975 vs 6.938, logistic), −0.0016
      // (0.9954 vs 0.9970, logistic on a 3-level side), −0.255 (24.999 vs 25.254, multinomial)
      const pooledOne = ok(poolScoreClaims([s], claimOf(c), ctx(table)));
      expect(Math.abs(pooledOne.statistic - lr.statistic)).toBeLessThan(0.02 * lr.statistic + 0.01);
      if (lr.df === 1) expect(Math.sign(pooledOne.effect)).toBe(Math.sign(lr.effect)); // the score's sign is the added coefficient's
    });
  }

  it("poolScoreClaims reports the effect and interval of lrOutcome with the score statistic in place of LR", () => {
    const c = ref.single.logistic!;
    const table = load("single.csv").get("")!;
    const o = ok(poolScoreClaims([scored(regressionScoreSummary(table, claimOf(c), 5))], claimOf(c), ctx(table, 0.01)));
    const sign = o.effect >= 0 ? 1 : -1;
    expect(o.effect).toBe(lrEffect(o.statistic, 1, o.n, sign));
    expect(o.ci).toEqual(lrEffectInterval(o.statistic, 1, o.n, sign, 0.99));
    expect(o.details?.statistic_kind).toMatch(/score/);
    expect(o.log_p).toBeCloseTo(Math.log(o.p), 10);
  });
});

describe(`poolScoreClaims over three sites against the stacked rows [${from}]`, () => {
  for (const n of [300, 3000]) {
    for (const name of ["logistic", "multinomial"]) {
      it(`poolScoreClaims(${name}, ${n} rows per site) is the score test of the stacked model with the set interacted with site (statsmodels, 1e-8)`, () => {
        const c = ref.stacked[`${name}-${n}`]!;
        const { outcome } = pooled(`sites-${n}.csv`, claimOf(c));
        expect(outcome.n).toBe(c.n);
        expect(rel(outcome.statistic, c.statistic)).toBeLessThan(1e-8); // numpy Schur complement of statsmodels score/−hessian, interacted model
        if (c.glm_score_test !== undefined) expect(rel(outcome.statistic, c.glm_score_test)).toBeLessThan(1e-8); // statsmodels GLM.score_test
      });

      it(`poolScoreClaims(${name}, ${n} rows per site) against the additive model's LR (y ~ added + S + site): the documented difference`, () => {
        const c = ref.stacked[`${name}-${n}`]!;
        const { outcome, all } = pooled(`sites-${n}.csv`, claimOf(c));
        // regression-lr on the stacked rows with site in the set is the additive model's LR (statsmodels)
        const additive = ok(regressionLr.run({ ...claimOf(c), given: [...c.given, "site"] }, ctx(all)));
        expect(rel(additive.statistic, c.additive_lr)).toBeLessThan(1e-7); // statsmodels 2(llf_full − llf_null), additive model
        // measured (scripts/pooled_score_reference.py data): pooled score − additive LR =
        //   logistic:    +0.029 (2.497 vs 2.468) at 300 per site, +0.20 (48.27 vs 48.07) at 3,000
        //   multinomial: +0.28 (4.383 vs 4.106) at 300 per site,  +0.60 (44.94 vs 44.34) at 3,000
        // different models (site-specific S effects against one shared S effect), the same hypothesis
        const diff = outcome.statistic - additive.statistic;
        expect(Math.abs(diff - (c.statistic - c.additive_lr))).toBeLessThan(1e-6 * c.statistic);
        expect(Math.abs(diff)).toBeLessThan(0.1 * additive.statistic + 0.5);
        expect(outcome.df).toBe(additive.df);
      });
    }
  }
});

describe(`poolScoreClaims at the edges [${from}]`, () => {
  const edge = ref.edge.logistic3!;

  it("a level of the added side absent at one site and quasi-complete separation of the null model at another pool to the limit's score test (statsmodels on the uncertain rows, 1e-8)", () => {
    // regression: both used to be the cases a naive pooled fit fails on (a zero column, a coefficient running to +∞)
    const { outcome, parts } = pooled("sites-edge.csv", claimOf(edge));
    expect(Number.isFinite(outcome.statistic)).toBe(true);
    expect(outcome.df).toBe(2);
    expect(rel(outcome.statistic, edge.statistic)).toBeLessThan(1e-8); // statsmodels interacted model on the 613 rows left uncertain
    const [, b, c] = parts;
    // site B: "w" = "r" absent, so its coordinate has zero score and information
    const r = b!.added_columns.indexOf("w=r");
    expect(b!.score[r]).toBe(0);
    expect(b!.information[r]!.every((v) => v === 0)).toBe(true);
    expect(b!.notes?.join(" ")).toMatch(/"r" of "w" absent/);
    // site C: the rows with c = "b" are fitted with certainty and add nothing
    expect(c!.notes?.join(" ")).toMatch(/quasi-complete separation in the null model at this site: 137 of 250 rows/);
    expect(outcome.warnings?.join(" ")).toMatch(/site "C": quasi-complete separation/);
    expect(ref.edge.logistic3!.rows_uncertain).toBe(750 - 137);
  });

  it("a multinomial claim with an added level absent at one site pools to a finite statistic on the full df", () => {
    // regression: the all-zero column of the absent level must not make the site's information singular for the pool
    const { outcome, parts } = pooled("sites-edge.csv", { x: "w", y: "ym", given: ["z", "c"] });
    expect(Number.isFinite(outcome.statistic)).toBe(true);
    expect(outcome.df).toBe(4);
    expect(parts[1]!.score.filter((v) => v === 0)).toHaveLength(2); // w=r for each non-baseline category of ym at site B
  });

  it("a multinomial site without the response's baseline level pools to a finite statistic on the full df", () => {
    // regression: with the baseline absent the site's nuisance information is singular (all intercepts shift together); the sweep must skip that direction
    const claim: Claim = { x: "w", y: "ym", given: ["z", "c"] };
    const { outcome, parts } = pooled("sites-edge.csv", claim, 5, (r) => r.site !== "A" || r.ym !== "u");
    expect(Number.isFinite(outcome.statistic)).toBe(true);
    expect(outcome.df).toBe(4);
    expect(parts[0]!.notes?.join(" ")).toMatch(/"u" of "ym" absent/);
    expect(parts[0]!.information.flat().some((v) => v !== 0)).toBe(true);
  });

  it("a site whose response has a single level adds zero score and information, and the pool equals the pool without it", () => {
    // site C restricted to c = "b": yb = 1 on every row (the null model fits every row with certainty)
    const claim = claimOf(edge);
    const tables = load("sites-edge.csv", (r) => r.site !== "C" || r.c === "b");
    const parts = SITES.map((s) => scored(regressionScoreSummary(tables.get(s)!, claim, 5)));
    expect(parts[2]!.score.every((v) => v === 0)).toBe(true);
    expect(parts[2]!.information.flat().every((v) => v === 0)).toBe(true);
    expect(parts[2]!.notes?.join(" ")).toMatch(/single level "1"/);
    const all = ok(poolScoreClaims(parts, claim, ctx(tables.get("*")!)));
    const two = ok(poolScoreClaims(parts.slice(0, 2), claim, ctx(tables.get("*")!)));
    expect(all.statistic).toBe(two.statistic);
    expect(all.n).toBe(two.n + parts[2]!.n);
  });

  it("poolScoreClaims is untestable when no added parameter has information at any site", () => {
    const claim = claimOf(edge);
    const tables = load("sites-edge.csv", (r) => r.site === "C" && r.c === "b");
    const s = scored(regressionScoreSummary(tables.get("C")!, claim, 5));
    const r = poolScoreClaims([s], claim, ctx(tables.get("*")!));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toMatch(/no information left/);
  });

  it("poolScoreClaims refuses sites that model different responses", () => {
    const c = ref.single.logistic!;
    const table = load("single.csv").get("")!;
    const s = scored(regressionScoreSummary(table, claimOf(c), 5));
    const r = poolScoreClaims([s, { ...s, response: "x" }], claimOf(c), ctx(table));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toMatch(/different responses/);
  });
});

describe("regressionScoreSummary: the claims it takes and the disclosure rules", () => {
  const single = () => load("single.csv").get("")!;

  it("isScoreClaim and responseOf follow regression-lr: binary or nominal sides; y with two levels, else the binary or smaller side", () => {
    const t = single();
    expect(isScoreClaim(t, { x: "x", y: "yb", given: [] })).toBe(true);
    expect(isScoreClaim(t, { x: "z", y: "yb", given: [] })).toBe(false);
    expect(responseOf(t, { x: "x", y: "ym", given: [] }).response.name).toBe("x"); // binary x beside a 3-level y
    expect(responseOf(t, { x: "w", y: "ym", given: [] }).response.name).toBe("ym"); // equal levels: y
    expect(() => regressionScoreSummary(t, { x: "z", y: "yb", given: [] }, 5)).toThrow(/binary or nominal/);
    expect(() => regressionScoreSummary(t, { x: "x", y: "nope", given: [] }, 5)).toThrow(/no column "nope"/);
  });

  it("rule 2: fewer than k complete cases make the claim untestable at the site, with no number", () => {
    const t = tableOf({
      x: { type: "binary", levels: ["0", "1"], values: [0, 1, 0, 1, -1, 0] },
      y: { type: "binary", levels: ["0", "1"], values: [0, 1, 1, 0, 1, -1] },
    });
    const r = regressionScoreSummary(t, { x: "x", y: "y", given: [] }, 5);
    expect(r).toEqual({ x: "x", y: "y", given: [], kind: "untestable", reason: "4 complete cases at this site, fewer than --min-cell 5: no statistic is written for it" });
  });

  it("rule 4: a level or a pair of levels with 1 … k − 1 complete cases makes the claim untestable, naming it", () => {
    const n = 40;
    const x = Array.from({ length: n }, (_, i) => i % 2);
    const y = Array.from({ length: n }, (_, i) => (i % 4 < 2 ? 0 : 1));
    const g = Array.from({ length: n }, (_, i) => (i < 3 ? 2 : i % 2)); // level "c" of g has 3 rows
    const t = tableOf({
      x: { type: "binary", levels: ["0", "1"], values: x },
      y: { type: "binary", levels: ["0", "1"], values: y },
      g: { type: "nominal", levels: ["a", "b", "c"], values: g },
    });
    const r = regressionScoreSummary(t, { x: "x", y: "y", given: ["g"] }, 5);
    expect(r.kind).toBe("untestable");
    if (r.kind === "untestable") expect(r.reason).toBe(`the level "c" of "g" has 3 rows among its complete cases at this site, fewer than --min-cell 5: its score would tell those rows' values, so none is written`);
    // a pair: x = 1 with y = 1 on 2 rows only
    const y2 = x.map((v, i) => (v === 1 ? (i < 4 ? 1 : 0) : i % 4 < 2 ? 0 : 1));
    const t2 = tableOf({ x: { type: "binary", levels: ["0", "1"], values: x }, y: { type: "binary", levels: ["0", "1"], values: y2 } });
    const r2 = regressionScoreSummary(t2, { x: "x", y: "y", given: [] }, 5);
    expect(r2.kind === "untestable" && r2.reason).toMatch(/^"x" = "1" with "y" = "1" has 2 rows/);
    expect(regressionScoreSummary(t2, { x: "x", y: "y", given: [] }, 2).kind).toBe("score");
  });

  it("checkScoreClaimShape accepts a written summary and names the first wrong field", () => {
    const c = ref.single.multinomial!;
    const s = JSON.parse(JSON.stringify(scored(regressionScoreSummary(single(), claimOf(c), 5)))) as Record<string, unknown>;
    const bad = (field: string, want: string): never => {
      throw new Error(`field "${field}" must be ${want}`);
    };
    expect(() => checkScoreClaimShape(s, "claims[2]", bad)).not.toThrow();
    expect(() => checkScoreClaimShape({ ...s, score: [1, 2] }, "claims[2]", bad)).toThrow(`field "claims[2].score" must be 4 finite numbers`);
    expect(() => checkScoreClaimShape({ ...s, information: [[1]] }, "claims[2]", bad)).toThrow(/claims\[2\]\.information/);
    expect(() => checkScoreClaimShape({ ...s, response: "z" }, "claims[2]", bad)).toThrow(/claims\[2\]\.response/);
    expect(() => checkScoreClaimShape({ ...s, model: "probit" }, "claims[2]", bad)).toThrow(/claims\[2\]\.model/);
    expect(() => checkScoreClaimShape({ ...s, n: 0 }, "claims[2]", bad)).toThrow(/claims\[2\]\.n/);
    const asym = (s.information as number[][]).map((r) => [...r]);
    asym[0]![1] = asym[0]![1]! + 1;
    expect(() => checkScoreClaimShape({ ...s, information: asym }, "claims[2]", bad)).toThrow(/symmetric/);
    expect(() => checkScoreClaimShape({ ...s, site_lr: { l0: 1 } }, "claims[2]", bad)).toThrow(/claims\[2\]\.site_lr/);
  });

  it("regressionScoreSummary does not modify the table it reads", () => {
    const t = single();
    const before = t.columns.map((c) => [Array.from(c.values), c.codes ? Array.from(c.codes) : []]);
    regressionScoreSummary(t, { x: "w", y: "ym", given: ["z", "c"] }, 5);
    expect(t.columns.map((c) => [Array.from(c.values), c.codes ? Array.from(c.codes) : []])).toEqual(before);
  });
});

/** Draws from a softmax of the given linear predictors (category 0 has predictor 0). */
function draw(rand: () => number, etas: number[]): number {
  const e = [1, ...etas.map(Math.exp)];
  const s = e.reduce((a, b) => a + b, 0);
  let u = rand() * s;
  for (let k = 0; k < e.length; k++) if ((u -= e[k]!) < 0) return k;
  return e.length - 1;
}

/**
 * Three heterogeneous sites under x ⫫ y | z, c: the intercepts and the effects of z and c on the
 * response differ by site, and the added side depends on z and c. Invented data.
 */
function nullSites(seed: number, nominal: boolean): Table[] {
  const rand = mulberry32(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
  return [200, 250, 300].map((n, s) => {
    const z: number[] = [];
    const c: number[] = [];
    const a: number[] = [];
    const y: number[] = [];
    for (let i = 0; i < n; i++) {
      const zi = 0.4 * s + (1 + 0.3 * s) * normal();
      const ci = draw(rand, [0.3 * s + 0.4 * zi, -0.3 - 0.2 * zi]);
      const ai = nominal ? draw(rand, [0.5 * zi + (ci === 1 ? 0.6 : 0), -0.2 - 0.4 * zi]) : draw(rand, [-0.2 + 0.7 * zi - (ci === 2 ? 0.8 : 0)]);
      const cb = ci === 1 ? 1 : 0;
      const cc = ci === 2 ? 1 : 0;
      const yi = nominal
        ? draw(rand, [0.2 * s + (0.5 - 0.3 * s) * zi - 0.6 * cb, 0.2 - 0.1 * s - 0.3 * zi + (0.5 - 0.3 * s) * cc])
        : draw(rand, [-0.6 + 0.5 * s + (0.8 - 0.4 * s) * zi + (0.9 - 0.6 * s) * cb - 0.5 * cc]);
      z.push(zi);
      c.push(ci);
      a.push(ai);
      y.push(yi);
    }
    return tableOf({
      z: { type: "continuous", values: z },
      c: { type: "nominal", levels: ["a", "b", "c"], values: c },
      x: nominal ? { type: "nominal", levels: ["p", "q", "r"], values: a } : { type: "binary", levels: ["0", "1"], values: a },
      y: nominal ? { type: "nominal", levels: ["u", "v", "w"], values: y } : { type: "binary", levels: ["0", "1"], values: y },
    });
  });
}

describe("poolScoreClaims calibration under x ⫫ y | z, c with three heterogeneous sites (exact binomial 99% band)", () => {
  const R = 300;
  const [lo, hi] = binomialInterval(R, 0.05); // exact Binomial(300, 0.05) central 99% band (common practice)
  for (const nominal of [false, true]) {
    it(`rejects ${nominal ? "a nominal response on a nominal side (df 4)" : "a binary response on a binary side (df 1)"} at 0.05 in ${lo}…${hi} of ${R} replications`, () => {
      const claim: Claim = { x: "x", y: "y", given: ["z", "c"] };
      let rejected = 0;
      let tested = 0;
      for (let rep = 0; rep < R; rep++) {
        const sites = nullSites(1000 + rep + (nominal ? 50_000 : 0), nominal);
        const parts = sites.map((t) => regressionScoreSummary(t, claim, 5)).filter((p): p is ScoreClaimSummary => p.kind === "score");
        if (parts.length === 0) continue;
        const r = poolScoreClaims(parts, claim, ctx(sites[0]!));
        if (!r.ok) continue;
        tested++;
        expect(r.outcome.df).toBe(nominal ? 4 : 1);
        if (r.outcome.p < 0.05) rejected++;
      }
      expect(tested).toBeGreaterThanOrEqual(R - 5); // a site made untestable by rule 4 at most rarely
      const [l, h] = binomialInterval(tested, 0.05);
      expect(rejected).toBeGreaterThanOrEqual(l);
      expect(rejected).toBeLessThanOrEqual(h);
    });
  }
});

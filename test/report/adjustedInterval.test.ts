import { readFileSync } from "node:fs";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { runAudit } from "../../src/audit/runAudit.js";
import type { AuditResult, AuditSettings, TestedClaim } from "../../src/audit/types.js";
import { createTable } from "../../src/data/createTable.js";
import { readTable } from "../../src/data/readTable.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { readGraphSource } from "../../src/graph/readGraphSource.js";
import { mulberry32 } from "../../src/stats/mulberry32.js";
import { adjustedInterval, adjustmentLevel, effectIntervalAt } from "../../src/report/adjustedInterval.js";

const demo = join(import.meta.dirname, "..", "..", "data", "demo");

/** The demo audit (as `arrowaudit demo` runs it) with the given settings. */
async function demoAudit(settings: Partial<AuditSettings>): Promise<AuditResult> {
  const graph = readGraphSource(readFileSync(join(demo, "graph.txt")), { file: "graph.txt" }).graph;
  const table = await readTable(readFileSync(join(demo, "cohort.csv")), { file: "cohort.csv", missing: ["-9", "999"], levels: { education: ["primary", "secondary", "tertiary"] } });
  return runAudit(graph, table, { settings });
}

/**
 * Invented ordinal data: x and y on five levels, both driven by a three-level stratum s and x
 * also by y directly (so one claim is true and one is false), for the linear-by-linear test.
 */
function ordinalAudit(settings: Partial<AuditSettings>): AuditResult {
  const rand = mulberry32(20240611);
  const s: string[] = [];
  const x: number[] = [];
  const y: number[] = [];
  const w: number[] = [];
  for (let i = 0; i < 600; i++) {
    const si = Math.floor(rand() * 3);
    const yi = Math.min(4, Math.max(0, Math.round(si + rand() * 2 - 0.5)));
    const xi = Math.min(4, Math.max(0, Math.round(0.5 * si + 0.3 * yi + rand() * 2 - 0.5)));
    s.push(["a", "b", "c"][si]!);
    y.push(yi);
    x.push(xi);
    w.push(Math.min(4, Math.max(0, Math.round(si + rand() * 2 - 0.5))));
  }
  const table = createTable({ s, x, y, w }, { types: { x: "ordinal", y: "ordinal", w: "ordinal", s: "nominal" } });
  // the graph leaves out y -> x: x ⫫ y | s is false; x ⫫ w | s and y ⫫ w | s hold
  const graph = createGraph({ arrows: [["s", "x"], ["s", "y"], ["s", "w"]] });
  return runAudit(graph, table, { settings });
}

const runs: Record<string, AuditResult> = {};
beforeAll(async () => {
  runs.auto = await demoAudit({});
  runs.linear = await demoAudit({ method: "linear" });
  runs.regression = await demoAudit({ method: "regression", adjust: "bh" });
  runs.permutation = await demoAudit({ method: "chisq", permutations: 999 });
  runs.ordinal = ordinalAudit({});
  runs.ordinalPermutation = ordinalAudit({ permutations: 999, adjust: "none" });
  runs.auto01 = await demoAudit({ alpha: 0.01 });
  runs.permutation01 = await demoAudit({ method: "chisq", permutations: 999, alpha: 0.01, adjust: "none" });
  runs.ordinalPermutation01 = ordinalAudit({ permutations: 999, adjust: "none", alpha: 0.01 });
}, 180_000);

describe("effectIntervalAt", () => {
  it("effectIntervalAt(claim, 1 − alpha) rebuilds every claim's stored interval, for every test and p-value method, at alpha 0.05 and 0.01", () => {
    const seen = new Set<string>();
    for (const [name, r] of Object.entries(runs)) {
      for (const c of r.claims) {
        const ci = effectIntervalAt(c, 1 - r.settings.alpha);
        const where = `${name}: ${c.test} ${c.p_method} ${c.x} ⫫ ${c.y} | ${c.given.join(", ")}`;
        expect(ci, where).toBeDefined();
        expect(Math.abs(ci![0] - c.ci[0]), where).toBeLessThan(1e-9);
        expect(Math.abs(ci![1] - c.ci[1]), where).toBeLessThan(1e-9);
        seen.add(`${c.test}/${c.p_method}/${Number(c.details?.components ?? 1) > 1 ? "several" : "one"}`);
      }
    }
    // the runs cover every construction the function rebuilds
    for (const kind of ["gcm/asymptotic/one", "gcm/asymptotic/several", "pearson-partial/asymptotic/one", "regression-lr/asymptotic/one", "stratified-chisq/asymptotic/one", "stratified-chisq/permutation/one", "linear-by-linear/asymptotic/one", "linear-by-linear/permutation/one"]) {
      expect(seen, kind).toContain(kind);
    }
  });

  it("effectIntervalAt matches scipy at other levels: Student's t for the generalised covariance measure, the normal for Fisher's z, the noncentral chi-square for LR", () => {
    const base = { x: "a", y: "b", given: [], p_method: "asymptotic", ci: [0, 0], verdict: "consistent", rank: 1, arrows: [], log_p: 0, p: 0.1, p_adjusted: 0.1 } as const;
    const gcm = { ...base, test: "gcm", effect: -0.165, statistic: -8.48, df: 2762, n: 2782 } as unknown as TestedClaim;
    // scipy 1.17: z = arctanh(r), se = |z/t|, c = stats.t.ppf(1 - a/2, 2762), tanh(z ± c·se) with a = 0.05/34
    const g = effectIntervalAt(gcm, 1 - 0.05 / 34)!;
    expect(g[0]).toBeCloseTo(-0.2251166708114279, 10);
    expect(g[1]).toBeCloseTo(-0.10363180334416364, 10);
    const pearson = { ...base, test: "pearson-partial", effect: 0.214, statistic: 7.3, df: 1129, n: 1135 } as unknown as TestedClaim;
    // scipy 1.17: tanh(arctanh(0.214) ± stats.t.ppf(1 - 0.015/2, 1129)·|arctanh(0.214)/7.3|), the interval that inverts the t test
    // (it replaced the textbook 1/sqrt(n − c − 3) standard error, which does not agree with the test's p exactly)
    const q = effectIntervalAt(pearson, 1 - 0.015)!;
    expect(q[0]).toBeCloseTo(0.14381963967080572, 10);
    expect(q[1]).toBeCloseTo(0.2820385874323902, 10);
    const lr = { ...base, test: "regression-lr", effect: 0.1, statistic: 12, df: 2, n: 500 } as unknown as TestedClaim;
    // scipy: brentq on stats.ncx2.sf(12, 2, λ) = a (the lower end agrees with the test at a) and
    // 1 − a/2 with a = 0.005, mapped by sqrt(-expm1(-λ/500)); chi2.sf(12, 2) = 0.00248 < a, so above 0
    const l = effectIntervalAt(lr, 1 - 0.005)!;
    expect(l[0]).toBeCloseTo(0.024270735411424497, 6);
    expect(l[1]).toBeCloseTo(0.2704865390811704, 6);
    const lr1 = { ...base, test: "regression-lr", effect: -Math.sqrt(-Math.expm1(-3 / 400)), statistic: 3, df: 1, n: 400 } as unknown as TestedClaim;
    // 1 df: the signed root z = −√3 ± stats.norm.ppf(0.995), mapped by sign(δ)·sqrt(-expm1(-δ²/400))
    const l1 = effectIntervalAt(lr1, 0.99)!;
    expect(l1[0]).toBeCloseTo(-0.212919707088214, 10);
    expect(l1[1]).toBeCloseTo(0.04217015868494316, 10);
  });
});

describe("adjustedInterval", () => {
  it("adjustmentLevel is Holm's threshold α/(k − j + 1) for the j-th smallest p-value where the monotone step changes nothing (Holm 1979)", () => {
    const r = runs.auto!;
    const byP = [...r.claims].sort((a, b) => a.p - b.p);
    const k = byP.length;
    let checked = 0;
    byP.forEach((c, i) => {
      const j = i + 1;
      if ((k - j + 1) * c.p >= 1 || Math.abs(c.p_adjusted - (k - j + 1) * c.p) > 1e-15 * c.p_adjusted) return; // capped at 1, or raised by the monotone step
      expect(adjustmentLevel(c, 0.05)! / (0.05 / (k - j + 1))).toBeCloseTo(1, 12);
      checked++;
    });
    expect(checked).toBeGreaterThanOrEqual(2);
  });

  it("adjustmentLevel is the Benjamini–Hochberg threshold jα/k where the step-up changes nothing (Benjamini & Hochberg 1995)", () => {
    const r = runs.regression!;
    const byP = [...r.claims].sort((a, b) => a.p - b.p);
    const k = byP.length;
    let checked = 0;
    byP.forEach((c, i) => {
      const j = i + 1;
      if ((k / j) * c.p >= 1 || Math.abs(c.p_adjusted - (k / j) * c.p) > 1e-12 * c.p_adjusted) return; // capped at 1, or lowered by the step-up
      expect(adjustmentLevel(c, 0.05)! / ((j * 0.05) / k)).toBeCloseTo(1, 10);
      checked++;
    });
    expect(checked).toBeGreaterThanOrEqual(1);
  });

  it("adjustedInterval excludes 0 exactly when the adjusted p-value is below α, that is when the verdict is contradicted (--min-effect 0), for every test; the unadjusted interval exactly when p < α", () => {
    // regression: a 95% interval excluding 0 sat beside a consistent (Holm-adjusted) verdict with nothing to explain it
    let contradicted = 0;
    for (const [name, r] of Object.entries(runs)) {
      for (const c of r.claims) {
        const adj = adjustedInterval(c, r.settings.alpha)!;
        const where = `${name}: ${c.test} ${c.p_method} ${c.x} ⫫ ${c.y} p=${c.p} p_adj=${c.p_adjusted}`;
        const excludes = adj.ci[0] > 0 || adj.ci[1] < 0;
        expect(excludes, where).toBe(c.p_adjusted < r.settings.alpha);
        expect(excludes, where).toBe(c.verdict === "contradicted");
        expect(c.ci[0] > 0 || c.ci[1] < 0, where).toBe(c.p < r.settings.alpha);
        if (excludes) contradicted++;
      }
    }
    expect(contradicted).toBeGreaterThan(0);
  });

  it("adjustedInterval is never narrower than the interval at 1 − α and holds the point estimate", () => {
    for (const r of Object.values(runs)) {
      for (const c of r.claims) {
        const adj = adjustedInterval(c, r.settings.alpha)!;
        expect(adj.level).toBeGreaterThanOrEqual(1 - r.settings.alpha - 1e-15);
        expect(adj.ci[0]).toBeLessThanOrEqual(c.ci[0] + 1e-12);
        expect(adj.ci[1]).toBeGreaterThanOrEqual(c.ci[1] - 1e-12);
        // (a likelihood-ratio interval can be [0, 0] beside a tiny positive point when LR is far below df; there the stored interval misses the point too)
        if (c.ci[0] <= c.effect && c.effect <= c.ci[1]) {
          expect(adj.ci[0]).toBeLessThanOrEqual(c.effect + 1e-12);
          expect(adj.ci[1]).toBeGreaterThanOrEqual(c.effect - 1e-12);
        }
      }
    }
  });

  it("adjustedInterval under --adjust none is the interval at 1 − α", () => {
    for (const c of runs.ordinalPermutation!.claims) expect(adjustedInterval(c, 0.05)!.level).toBeCloseTo(0.95, 14);
  });

  it("adjustedInterval is undefined for a p-value that is not a positive number", () => {
    const c = { ...runs.auto!.claims[0]!, p: Number.NaN };
    expect(adjustedInterval(c, 0.05)).toBeUndefined();
  });
});

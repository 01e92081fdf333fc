import { spawnSync } from "node:child_process";
import { describe, expect, it } from "vitest";
import { runAudit, runAuditParallel } from "../../src/audit/runAudit.js";
import type { AuditResult } from "../../src/audit/types.js";
import { createTable } from "../../src/data/createTable.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { renderCsv } from "../../src/report/csv.js";
import { renderHtmlReport } from "../../src/report/renderHtmlReport.js";
import { renderMarkdownReport } from "../../src/report/renderMarkdownReport.js";
import { buildReportText } from "../../src/report/buildReportText.js";
import { renderTestText } from "../../src/report/terminal.js";
import { adjustPValues } from "../../src/stats/adjustPValues.js";
import { sequentialMonteCarloPValue } from "../../src/stats/permutation.js";
import { createTableStatisticSampler } from "../../src/stats/permutation.js";
import { createRng, streamKeyOfClaim } from "../../src/stats/rng.js";

/**
 * Exact permutation p-values of 2 × 2 tables [n00, n01, n10, n11] for the statistic Σ O ln O
 * (equivalent to G² given the margins), with the ties rule of the Monte-Carlo test: the sum of
 * scipy.stats.hypergeom.pmf over the tables with the same margins whose statistic reaches the
 * observed one (live, python3 with scipy).
 */
function exactPermutationP(tables: number[][]): number[] {
  const script = `
import json, sys, math
from scipy.stats import hypergeom
def S(t): return sum(o * math.log(o) for o in t if o > 0)
out = []
for a, b, c, d in json.load(sys.stdin):
    n = a + b + c + d; R = a + b; K = a + c
    s0 = S((a, b, c, d)); bar = s0 - 1e-9 * max(1, abs(s0)); p = 0.0
    for x in range(max(0, R + K - n), min(R, K) + 1):
        if S((x, R - x, K - x, n - R - K + x)) >= bar: p += float(hypergeom.pmf(x, n, K, R))
    out.append(min(1.0, p))
print(json.dumps(out))`;
  const run = spawnSync("python3", ["-c", script], { input: JSON.stringify(tables), encoding: "utf8", timeout: 60_000 });
  if (run.status !== 0) throw new Error(`python3 with scipy is needed for the exact permutation p-values: ${run.stderr || run.error?.message}`);
  return JSON.parse(run.stdout) as number[];
}

/** Two binary columns holding the 2 × 2 table [n00, n01, n10, n11]. */
function columnsOf(t: readonly number[], x = "x", y = "y"): Record<string, number[]> {
  const xs: number[] = [];
  const ys: number[] = [];
  t.forEach((n, k) => {
    for (let i = 0; i < n; i++) {
      xs.push(k >> 1);
      ys.push(k & 1);
    }
  });
  return { [x]: xs, [y]: ys };
}

function tableOf(cols: Record<string, number[]>, x: string, y: string): number[] {
  const t = [0, 0, 0, 0];
  cols[x]!.forEach((v, i) => t[2 * v + cols[y]![i]!]!++);
  return t;
}

const pair = createGraph({ nodes: ["x", "y"], arrows: [] });
// exact permutation p = 0.0613 (scipy.stats.hypergeom, see exactPermutationP): the p-value of the example
const NEAR = [18, 42, 62, 78];

describe("the issue's example: a claim whose permutation p is 0.061, tested at 0.05 with --permutations 20000", () => {
  it("exactPermutationP(NEAR) is 0.0613 [reference: scipy.stats.hypergeom.pmf, live]", () => {
    expect(exactPermutationP([NEAR])[0]).toBeCloseTo(0.061307753140732835, 10); // scipy.stats.hypergeom, computed when the case was chosen
  });

  it("regression: the stop after 20 hits made about 330 draws and called p < 0.05 in some runs; the confidence sequence never does, and draws thousands", () => {
    const t = createTable(columnsOf(NEAR));
    let oldWrong = 0;
    let oldDraws = 0;
    let newDraws = 0;
    for (let seed = 1; seed <= 30; seed++) {
      const r = runAudit(pair, t, { settings: { permutations: 20000, adjust: "none", seed } });
      const c = r.claims[0]!;
      expect(c.p_method).toBe("permutation");
      expect(c.p_undecided).toBeUndefined();
      expect(c.verdict).toBe("consistent"); // exact p 0.0613 ≥ 0.05
      expect(c.p).toBeGreaterThanOrEqual(0.05);
      expect(c.B).toBeGreaterThan(200);
      expect(c.B).toBeLessThanOrEqual(20000);
      newDraws += c.B!;
      expect(c.monte_carlo!.decision_interval![0]).toBeGreaterThanOrEqual(0.05);
      // the old rule on the same stream: Besag & Clifford's stop after 20 hits
      const draw = createTableStatisticSampler([new Float64Array([NEAR[0]! + NEAR[1]!, NEAR[2]! + NEAR[3]!])], [new Float64Array([NEAR[0]! + NEAR[2]!, NEAR[1]! + NEAR[3]!])], createRng(seed, streamKeyOfClaim(c)), xLogX(200));
      const observed = NEAR.reduce((s, v) => s + (v > 1 ? v * Math.log(v) : 0), 0);
      const old = sequentialMonteCarloPValue(observed, 20000, 20, draw);
      if (old.p < 0.05) oldWrong++;
      oldDraws += old.draws;
    }
    console.log(`issue example over 30 seeds: the 20-hit stop called p < 0.05 in ${oldWrong}, with ${(oldDraws / 30).toFixed(0)} draws on average; the confidence sequence never, with ${(newDraws / 30).toFixed(0)}`);
    expect(newDraws / 30).toBeGreaterThan(2000);
    expect(oldWrong).toBeGreaterThan(0); // the bug: 4 of these 30 seeds called the exact p of 0.061 significant
    expect(oldDraws / 30).toBeLessThan(500); // 20/0.061 ≈ 330 draws: the old rule's imprecision at the threshold
  });

  it("draws adapt: 200 for a claim far from the threshold, thousands near it", () => {
    const far = runAudit(pair, createTable(columnsOf([40, 40, 40, 40])), { settings: { permutations: 20000, adjust: "none" } }).claims[0]!;
    expect(far.B).toBe(200);
    expect(far.p).toBeGreaterThan(0.5);
    const strong = runAudit(pair, createTable(columnsOf([60, 20, 20, 60])), { settings: { permutations: 20000, adjust: "none" } }).claims[0]!;
    expect(strong.B).toBe(200);
    expect(strong.verdict).toBe("contradicted");
    const near = runAudit(pair, createTable(columnsOf(NEAR)), { settings: { permutations: 20000, adjust: "none" } }).claims[0]!;
    expect(near.B).toBeGreaterThanOrEqual(3200);
    console.log(`draws: far ${far.B}, strong ${strong.B}, near the threshold ${near.B}`);
  });
});

function xLogX(n: number): Float64Array {
  const t = new Float64Array(n + 1);
  for (let v = 2; v <= n; v++) t[v] = v * Math.log(v);
  return t;
}

/** Six binary variables with a few dependencies; with no arrows every pair is a 2 × 2 claim. */
const NAMES = ["a", "b", "c", "d", "e", "f"];
function cohort(seed: number, n: number): Record<string, number[]> {
  const rng = createRng(seed, "mc audit");
  const cols: Record<string, number[]> = Object.fromEntries(NAMES.map((k) => [k, [] as number[]]));
  const bit = (p: number) => (rng.nextFloat() < p ? 1 : 0);
  for (let i = 0; i < n; i++) {
    const a = bit(0.3);
    const b = bit(a ? 0.6 : 0.25);
    const c = bit(0.4);
    const d = bit(c ? 0.5 : 0.33);
    const e = bit(b ? 0.35 : 0.2);
    const f = bit(0.2);
    for (const [k, v] of Object.entries({ a, b, c, d, e, f })) cols[k]!.push(v);
  }
  return cols;
}
const none = createGraph({ nodes: NAMES, arrows: [] });

describe("Holm and Benjamini–Hochberg over several Monte-Carlo claims", () => {
  it("verdicts equal those of the exact permutation p-values adjusted the same way [reference: scipy.stats.hypergeom, live]; every verdict decided", () => {
    for (const seed of [1, 2, 3]) {
      const cols = cohort(seed, 150);
      for (const adjust of ["holm", "bh"] as const) {
        const r = runAudit(none, createTable(cols), { settings: { permutations: 200_000, adjust } });
        expect(r.claims).toHaveLength(15);
        const exact = exactPermutationP(r.claims.map((c) => tableOf(cols, c.x, c.y)));
        const exactAdjusted = adjustPValues(exact, adjust);
        r.claims.forEach((c, i) => {
          expect(c.p_method).toBe("permutation");
          expect(c.p_undecided).toBeUndefined();
          expect(c.verdict).toBe(exactAdjusted[i]! < 0.05 ? "contradicted" : "consistent");
          // the decision interval holds the exact p (it may miss with probability ≤ 0.001 over the audit)
          expect(c.monte_carlo!.decision_interval![0]).toBeLessThanOrEqual(exact[i]!);
          expect(c.monte_carlo!.decision_interval![1]).toBeGreaterThanOrEqual(exact[i]!);
          // the reported p agrees with its threshold and verdict
          expect(c.p < c.monte_carlo!.threshold!).toBe(c.verdict === "contradicted");
        });
        expect(r.claims.some((c) => c.verdict === "contradicted")).toBe(true);
        // claims far from their threshold stop at the first look
        expect(r.claims.filter((c) => c.B === 200).length).toBeGreaterThan(5);
      }
    }
  }, 60_000);

  it("with a small cap some verdicts stay undecided: p_undecided, a proposed B above the cap, a warning, and the reports say so", () => {
    const cols = cohort(1, 150);
    for (const adjust of ["holm", "bh"] as const) {
      const r = runAudit(none, createTable(cols), { settings: { permutations: 300, adjust } });
      const undecided = r.claims.filter((c) => c.p_undecided);
      expect(undecided.length).toBeGreaterThan(0);
      for (const c of undecided) {
        expect(c.B).toBe(300);
        if (c.p_proposed_B !== undefined) expect(c.p_proposed_B).toBeGreaterThanOrEqual(600);
        const [lo, hi] = c.monte_carlo!.decision_interval!;
        expect(lo < c.monte_carlo!.threshold! && c.monte_carlo!.threshold! <= hi).toBe(true);
      }
      expect(undecided.some((c) => c.p_proposed_B !== undefined)).toBe(true);
      expect(r.warnings.join(" ")).toMatch(/not resolved by the cap on Monte-Carlo draws .* rerun with --permutations \d+/);
      // shown wherever the verdict is: terminal ("?"), CSV (p_undecided), the reports' rows and methods text
      expect(renderTestText(r, { width: 160 })).toMatch(/consistent\?|contradicted\?/);
      const csv = renderCsv(r).split("\r\n");
      expect(csv[0]).toMatch(/p_draws,p_se,p_ci99_low,p_ci99_high,p_undecided,p_proposed_B,detectable,equivalence,equivalence_ci_low,equivalence_ci_high$/);
      expect(csv.filter((l) => /,true,\d*,[0-9.e-]*,(supported|inconclusive),[0-9.e-]*,[0-9.e-]*$/.test(l)).length).toBe(undecided.length);
      const context = { command: "arrowaudit test", date: "2024-06-11T00:00:00Z", inputs: [], toolVersion: "0.0.0" };
      const text = buildReportText(r, context);
      expect(text.claimRows.filter((row) => row.undecided.startsWith("undecided")).length).toBe(undecided.length);
      expect(text.claimRows.every((row) => row.pPrecision.includes("draws, 99% CI"))).toBe(true);
      const html = renderHtmlReport(r, context);
      expect(html.match(/<span class="undecided">undecided/g)?.length).toBe(undecided.length);
      expect(html).toContain("draws, 99% CI");
      const md = renderMarkdownReport(r, context);
      expect(md.match(/consistent \(undecided|contradicted\*\* \(undecided/g)?.length).toBe(undecided.length);
      expect(md).toMatch(/was not resolved within that limit and is provisional/);
    }
  }, 60_000);

  it("determinism: the same seed gives the same result; runAuditParallel (no helper) equals runAudit; another seed changes the draws", async () => {
    const t = createTable(cohort(2, 150));
    const settings = { permutations: 50_000, adjust: "holm" as const, seed: 7 };
    const strip = (r: AuditResult) => JSON.stringify(r);
    const a = runAudit(none, t, { settings });
    const b = runAudit(none, t, { settings });
    expect(strip(b)).toBe(strip(a));
    expect(strip(await runAuditParallel(none, t, { settings }))).toBe(strip(a));
    const other = runAudit(none, t, { settings: { ...settings, seed: 8 } });
    expect(other.claims.map((c) => c.p)).not.toEqual(a.claims.map((c) => c.p));
  }, 60_000);
});

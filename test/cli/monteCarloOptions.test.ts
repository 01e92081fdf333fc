/**
 * The command line's Monte-Carlo options: --permutations is the cap on draws, --resampling-risk
 * the risk of a wrong Monte-Carlo verdict, both validated before any file is read.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { claimHelper } from "../../cli/claimHelper.js";
import { runAudit, runAuditParallel } from "../../src/audit/runAudit.js";
import type { AuditResult } from "../../src/audit/types.js";
import { createTable } from "../../src/data/createTable.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { createRng } from "../../src/stats/rng.js";
import { runCli } from "../helpers/runCli.js";

const work = mkdtempSync(join(tmpdir(), "arrowaudit-mc-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

// Two binary columns whose 2 × 2 table [18, 42, 62, 78] has the exact permutation p 0.0613
// (scipy.stats.hypergeom; see test/audit/monteCarloAudit.test.ts), and a third independent one.
const rows: string[] = ["x,y,z"];
[18, 42, 62, 78].forEach((n, k) => {
  for (let i = 0; i < n; i++) rows.push(`${k >> 1},${k & 1},${(i * 7 + k) % 2}`);
});
writeFileSync(join(work, "data.csv"), rows.join("\n") + "\n");
writeFileSync(join(work, "graph.txt"), "x\ny\nz\n");

describe("arrowaudit test: Monte-Carlo options", () => {
  it("--resampling-risk outside (0, 0.25] is a usage error (exit 1) naming the option", async () => {
    for (const bad of ["0", "0.5", "abc"]) {
      const r = await runCli(["test", "graph.txt", "data.csv", "--permutations", "2000", "--resampling-risk", bad], { cwd: work });
      expect(r.code).toBe(1);
      expect(r.stderr).toMatch(/--resampling-risk must be a number from 1e-9 to 0\.25/);
    }
  });

  it("--permutations caps the draws and --resampling-risk reaches the settings, the claims' monte_carlo and the CSV columns", async () => {
    const r = await runCli(["test", "graph.txt", "data.csv", "--permutations", "20000", "--resampling-risk", "0.01", "--adjust", "none", "--json"], { cwd: work });
    expect(r.code).toBe(0);
    const result = JSON.parse(r.stdout) as AuditResult;
    expect(result.settings.resampling_risk).toBe(0.01);
    const xy = result.claims.find((c) => [c.x, c.y].sort().join() === "x,y")!;
    expect(xy.p_method).toBe("permutation");
    expect(xy.monte_carlo).toMatchObject({ cap: 20000, risk: 0.01, threshold: 0.05 });
    expect(xy.B).toBe(xy.monte_carlo!.draws);
    expect(xy.verdict).toBe("consistent"); // exact p 0.0613 ≥ 0.05
    expect(xy.p).toBeGreaterThanOrEqual(0.05);
    const small = await runCli(["test", "graph.txt", "data.csv", "--permutations", "199", "--adjust", "none", "--csv"], { cwd: work });
    expect(small.code).toBe(0);
    const line = small.stdout.split("\r\n").find((l) => /^\d+,(x,y|y,x),/.test(l))!;
    expect(line, line).toMatch(/,199,[0-9.e-]+,[0-9.e-]+,[0-9.e-]+,true,\d*,[0-9.e-]*,(supported|inconclusive),[0-9.e-]*,[0-9.e-]*$/); // draws, se, 99% interval, undecided, proposed B (absent here: p̂ = 10/200 sits on 0.05, out of reach), then detectable and the equivalence columns
    const text = await runCli(["test", "graph.txt", "data.csv", "--permutations", "199", "--adjust", "none"], { cwd: work, env: { COLUMNS: "120" } });
    expect(text.stdout).toMatch(/consistent\?|contradicted\?/);
    expect(text.stdout).toMatch(/warning: 1 verdict was not resolved by the cap on Monte-Carlo draws/);
  });
});

describe("Monte-Carlo re-runs and the helper thread", () => {
  it("runAuditParallel with the worker helper equals runAudit when undecided Monte-Carlo claims are re-run (claims first drawn on the worker are redrawn here from the start)", async () => {
    const names = ["a", "b", "c", "d", "e", "f"];
    const rng = createRng(1, "mc audit");
    const cols: Record<string, number[]> = Object.fromEntries(names.map((k) => [k, [] as number[]]));
    const bit = (p: number) => (rng.nextFloat() < p ? 1 : 0);
    for (let i = 0; i < 150; i++) {
      const a = bit(0.3), b = bit(a ? 0.6 : 0.25), c = bit(0.4), d = bit(c ? 0.5 : 0.33), e = bit(b ? 0.35 : 0.2), f = bit(0.2);
      for (const [k, v] of Object.entries({ a, b, c, d, e, f })) cols[k]!.push(v);
    }
    const graph = createGraph({ nodes: names, arrows: [] });
    const table = createTable(cols);
    for (const adjust of ["holm", "bh"] as const) {
      const settings = { permutations: 100_000, adjust };
      const alone = runAudit(graph, table, { settings });
      expect(alone.claims.some((c) => c.B! > 800)).toBe(true); // some claims needed re-runs
      const shared = await runAuditParallel(graph, table, { settings, helper: claimHelper, helperMinWork: 0 });
      expect(JSON.stringify(shared)).toBe(JSON.stringify(alone));
    }
  }, 60_000);
});

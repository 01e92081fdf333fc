/**
 * The command line's Monte-Carlo options: --permutations is the cap on draws, --resampling-risk
 * the risk of a wrong Monte-Carlo verdict, both validated before any file is read.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import type { AuditResult } from "../../src/audit/types.js";
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
    expect(line, line).toMatch(/,199,[0-9.e-]+,[0-9.e-]+,[0-9.e-]+,true,\d*$/); // draws, se, 99% interval, undecided, proposed B (absent here: p̂ = 10/200 sits on 0.05, out of reach)
    const text = await runCli(["test", "graph.txt", "data.csv", "--permutations", "199", "--adjust", "none"], { cwd: work, env: { COLUMNS: "120" } });
    expect(text.stdout).toMatch(/consistent\?|contradicted\?/);
    expect(text.stdout).toMatch(/warning: 1 verdict was not resolved by the cap on Monte-Carlo draws/);
  });
});

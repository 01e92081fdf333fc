/**
 * Detectable effects and power plans: against the closed-form Fisher-z formula
 * tanh((z_{0.975} + z_{0.8})/√(n − |S| − 3)) (Cohen 1988 ch. 3; z from scipy.stats.norm.ppf), and
 * against simulation — data from `simulateFromGraph` with the true effect set to the reported
 * detectable effect are detected in 80% ± 6 points of 500 seeded replications.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { runAudit } from "../../src/audit/runAudit.js";
import { planPower } from "../../src/audit/planPower.js";
import { createTable } from "../../src/data/createTable.js";
import { simulateFromGraph } from "../../src/data/simulateFromGraph.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { runCli } from "../helpers/runCli.js";

const Z975 = 1.959963984540054; // scipy.stats.norm.ppf(0.975)
const Z80 = 0.8416212335729143; // scipy.stats.norm.ppf(0.8)
const work = mkdtempSync(join(tmpdir(), "arrowaudit-power-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

function table(text: string, n: number, seed: number, coefficients: Record<string, number> = {}, effects = 0.3) {
  const data = simulateFromGraph(parseGraph(text).graph, { n, seed, effects, coefficients });
  return createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
}

describe("detectable effect of each tested claim", () => {
  it("at n = 1,000 with no adjustment: within 3e-3 of tanh((z.975 + z.8)/√(n − |S| − 3)), default and linear tests", () => {
    const drawn = parseGraph("x\ny\n").graph;
    const t = table("x\ny\n", 1000, 3);
    const ref = Math.tanh((Z975 + Z80) / Math.sqrt(1000 - 0 - 3));
    for (const method of ["auto", "linear"] as const) {
      const r = runAudit(drawn, t, { settings: { adjust: "none", method } });
      expect(Math.abs(r.claims[0]!.detectable! - ref), method).toBeLessThan(3e-3);
    }
    // with one member in S entered linearly (the linear test): n − 1 − 3
    const withS = runAudit(parseGraph("s -> x\ns -> y\n").graph, table("s -> x\ns -> y\n", 1000, 4), { settings: { adjust: "none", method: "linear" } });
    expect(Math.abs(withS.claims[0]!.detectable! - Math.tanh((Z975 + Z80) / Math.sqrt(1000 - 1 - 3)))).toBeLessThan(3e-3);
  });

  it("Holm uses α/k, the conservative floor; --power changes it", () => {
    const g = parseGraph("a\nb\nc\n").graph; // three claims
    const t = table("a\nb\nc\n", 500, 5);
    const holm = runAudit(g, t, { settings: { adjust: "holm" } }).claims[0]!.detectable!;
    const none = runAudit(g, t, { settings: { adjust: "none" } }).claims[0]!.detectable!;
    expect(holm).toBeGreaterThan(none);
    const z = 2.3939797998185104; // scipy.stats.norm.ppf(1 − 0.05/3/2)
    expect(Math.abs(holm - Math.tanh((z + Z80) / Math.sqrt(497)))).toBeLessThan(3e-3);
    const p9 = runAudit(g, t, { settings: { adjust: "none", power: 0.9 } }).claims[0]!.detectable!;
    expect(p9).toBeGreaterThan(none);
  });

  it("500 seeded replications with the true partial r set to the reported detectable effect are detected 80% ± 6 points of the time (n = 300)", () => {
    const drawn = parseGraph("x\ny\n").graph;
    const n = 300;
    const d = runAudit(drawn, table("x\ny\n", n, 1), { settings: { adjust: "none" } }).claims[0]!.detectable!;
    // y = β·z_x + ε has corr(x, y) = β/√(β² + 1): β = r/√(1 − r²)
    const beta = d / Math.sqrt(1 - d * d);
    let detected = 0;
    for (let rep = 0; rep < 500; rep++) {
      const r = runAudit(drawn, table("x -> y\n", n, 9000 + rep, { "x -> y": beta }), { settings: { adjust: "none" } });
      if (r.claims[0]!.verdict === "contradicted") detected++;
    }
    expect(detected / 500).toBeGreaterThanOrEqual(0.74);
    expect(detected / 500).toBeLessThanOrEqual(0.86);
  }, 120_000);
});

describe("planPower and arrowaudit power", () => {
  it("plans correlation claims by Fisher's z and categorical ones by the noncentral chi-square, with n_needed", () => {
    const g = parseGraph("age -> sbp\nage -> smoker\nregion -> smoker\nsbp\n").graph;
    const plan = planPower(g, { n: 1000, adjust: "none", types: { smoker: "binary", region: "nominal" }, targetEffect: 0.1 });
    const byPair = new Map(plan.claims.map((c) => [[c.x, c.y].sort().join(), c]));
    const ageRegion = byPair.get("age,region")!;
    expect(ageRegion.test).toBe("chi-square"); // a nominal side: (3 − 1)·(1) df
    expect(ageRegion.df).toBe(2);
    const sbpSmoker = byPair.get("sbp,smoker")!;
    expect(sbpSmoker.test).toBe("partial correlation");
    expect(sbpSmoker.given.sort()).toEqual(["age", "region"]);
    expect(sbpSmoker.df).toBe(1000 - 2 - 3); // age 1 column, region 2
    expect(Math.abs(sbpSmoker.detectable! - Math.tanh((Z975 + Z80) / Math.sqrt(1000 - 3 - 3)))).toBeLessThan(1e-12);
    expect(sbpSmoker.n_needed).toBe(Math.ceil(((Z975 + Z80) / Math.atanh(0.1)) ** 2 + 3 + 3));
    expect(plan.settings).toMatchObject({ n: 1000, alpha: 0.05, adjust: "none", power: 0.8, alpha_per_claim: 0.05, target_effect: 0.1 });
  });

  it("all-categorical claims: the stratified chi-square's df per stratum times the strata; ordinal pairs 1 df", () => {
    const g = parseGraph("s -> x\ns -> y\n").graph;
    const nominal = planPower(g, { n: 800, types: { s: "nominal", x: "nominal", y: "binary" } }).claims[0]!;
    expect(nominal).toMatchObject({ test: "chi-square", df: 2 * 1 * 3 });
    const ordinal = planPower(g, { n: 800, types: { s: "binary", x: "ordinal", y: "ordinal" }, levels: { x: 5 } }).claims[0]!;
    expect(ordinal).toMatchObject({ test: "linear-by-linear", df: 1 });
  });

  it("arrowaudit power --json prints settings, claims (x, y, given, n, df, detectable, n_needed) and untestable", async () => {
    writeFileSync(join(work, "g.txt"), "unmeasured: u\nu -> a\nu -> b\nc -> a\n");
    const r = await runCli(["power", "g.txt", "--n", "2000", "--json"], { cwd: work });
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(Object.keys(j)).toEqual(["settings", "claims", "untestable"]);
    expect(Object.keys(j.claims[0])).toEqual(["x", "y", "given", "test", "n", "df", "detectable", "n_needed"]);
    expect(j.claims[0].n_needed).toBeNull();
    expect(j.untestable.map((u: { x: string; y: string }) => [u.x, u.y].sort().join())).toContain("a,b");
    const text = await runCli(["power", "g.txt", "--n", "2000", "--target-effect", "0.1"], { cwd: work });
    expect(text.code).toBe(0);
    expect(text.stdout).toMatch(/^Power plan for n = 2000: the smallest \|effect\| each claim's test detects with power 0\.8/);
    expect(text.stdout).toMatch(/n for 0\.1/);
    expect(text.stdout).toMatch(/not being contradicted is not evidence of independence/);
  });

  it("test --json gives each claim its detectable effect", async () => {
    writeFileSync(join(work, "chain.txt"), "a -> b -> c\n");
    const sim = await runCli(["simulate", "chain.txt", "--n", "400", "--out", "chain.csv", "--quiet"], { cwd: work });
    expect(sim.code).toBe(0);
    const r = await runCli(["test", "chain.txt", "chain.csv", "--json"], { cwd: work });
    const j = JSON.parse(r.stdout);
    expect(j.settings.power).toBe(0.8);
    expect(typeof j.claims[0].detectable).toBe("number");
  });
});

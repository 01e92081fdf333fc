/**
 * Simulation from a graph (`arrowaudit simulate`): the structural model's parts against their
 * definitions, with sampling bands; determinism; the audit of simulated data rejects true claims
 * at the nominal rate. Reference values: scipy.stats.norm.ppf(0.75) = 0.6744897501960817 and
 * norm.cdf (computed with scipy 1.x, pasted here); binomial bands from the exact pmf
 * (test/helpers/simulate.ts `binomialInterval`).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { simulateFromGraph, simulationCsv } from "../../src/data/simulateFromGraph.js";
import { createTable } from "../../src/data/createTable.js";
import { runAudit } from "../../src/audit/runAudit.js";
import { binomialInterval } from "../helpers/simulate.js";
import { runCli } from "../helpers/runCli.js";

const g = (text: string) => parseGraph(text).graph;

function column(data: ReturnType<typeof simulateFromGraph>, name: string): Array<number | string | null> {
  return data.columns.find((c) => c.name === name)!.values;
}

function slope(x: ArrayLike<number>, y: ArrayLike<number>): { b: number; r: number } {
  const n = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= n;
  my /= n;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    sxy += (x[i]! - mx) * (y[i]! - my);
    sxx += (x[i]! - mx) ** 2;
    syy += (y[i]! - my) ** 2;
  }
  return { b: sxy / sxx, r: sxy / Math.sqrt(sxx * syy) };
}

const work = mkdtempSync(join(tmpdir(), "arrowaudit-sim-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe("simulateFromGraph: the structural model", () => {
  it("linear Gaussian: a child's slope on its standardised parent is the arrow's weight (±4 SE)", () => {
    const n = 100_000;
    const data = simulateFromGraph(g("a -> b\n"), { n, seed: 11, effects: 0.3 });
    const a = column(data, "a") as number[];
    const b = column(data, "b") as number[];
    // a ~ N(0, 1): b = 0.3·z_a + ε, so the slope of b on a is 0.3·(1/sd(a)) ≈ 0.3; SE ≈ 1/√n
    const { b: beta } = slope(a, b);
    const sdA = Math.sqrt(a.reduce((s, v) => s + v * v, 0) / n - (a.reduce((s, v) => s + v, 0) / n) ** 2);
    expect(Math.abs(beta * sdA - 0.3)).toBeLessThan(4 / Math.sqrt(n));
    expect(data.model.arrows).toEqual([{ from: "a", to: "b", coefficient: 0.3 }]);
  });

  it("binary by a latent normal at 0: a root is 1 in half the rows (exact 99% binomial band)", () => {
    const n = 20_000;
    const x = column(simulateFromGraph(g("x\n"), { n, seed: 3, types: { x: "binary" } }), "x") as number[];
    const ones = x.filter((v) => v === 1).length;
    const [lo, hi] = binomialInterval(n, 0.5);
    expect(ones).toBeGreaterThanOrEqual(lo);
    expect(ones).toBeLessThanOrEqual(hi);
    expect(new Set(x)).toEqual(new Set([0, 1]));
  });

  it("binary child of a binary-free continuous parent: P(child = 1) = Φ(0.3·z) averages to 0.5, rises with z", () => {
    const n = 50_000;
    const data = simulateFromGraph(g("z -> y\n"), { n, seed: 5, types: { y: "binary" }, effects: 0.3 });
    const z = column(data, "z") as number[];
    const y = column(data, "y") as number[];
    // rows with z in (0.9, 1.1): P(y = 1) ≈ Φ(0.3·1.0) = 0.6179114221889526 (scipy.stats.norm.cdf(0.3)); SD of z ≈ 1
    const sel = y.filter((_, i) => z[i]! > 0.9 && z[i]! < 1.1);
    const share = sel.filter((v) => v === 1).length / sel.length;
    expect(Math.abs(share - 0.6179114221889526)).toBeLessThan(4 * Math.sqrt(0.25 / sel.length) + 0.01);
  });

  it("ordinal: a root's four levels are its quartiles (each a quarter, exact band), levels 1–4", () => {
    const n = 20_000;
    const x = column(simulateFromGraph(g("x\n"), { n, seed: 9, types: { x: "ordinal" } }), "x") as number[];
    const [lo, hi] = binomialInterval(n, 0.25, 0.999);
    for (const level of [1, 2, 3, 4]) {
      const k = x.filter((v) => v === level).length;
      expect(k).toBeGreaterThanOrEqual(lo);
      expect(k).toBeLessThanOrEqual(hi);
    }
  });

  it("nominal: a root's levels A, B, C each a third (multinomial logit at 0)", () => {
    const n = 30_000;
    const x = column(simulateFromGraph(g("x\n"), { n, seed: 2, types: { x: "nominal" } }), "x");
    const [lo, hi] = binomialInterval(n, 1 / 3, 0.999);
    for (const level of ["A", "B", "C"]) {
      const k = x.filter((v) => v === level).length;
      expect(k).toBeGreaterThanOrEqual(lo);
      expect(k).toBeLessThanOrEqual(hi);
    }
  });

  it("<-> is a shared latent term: correlation γ²/(γ² + 1) between two roots (±4 SE)", () => {
    const n = 100_000;
    const data = simulateFromGraph(g("a <-> b\n"), { n, seed: 4, effects: 0.5 });
    const { r } = slope(column(data, "a") as number[], column(data, "b") as number[]);
    expect(Math.abs(r - 0.25 / 1.25)).toBeLessThan(4 / Math.sqrt(n));
    expect(data.model.shared_causes).toEqual([{ a: "a", b: "b", loading: 0.5 }]);
  });

  it("unmeasured nodes are generated but not written; their children still depend on them", () => {
    const data = simulateFromGraph(g("unmeasured: u\nu -> a\nu -> b\n"), { n: 50_000, seed: 8, effects: 0.6 });
    expect(data.columns.map((c) => c.name)).toEqual(["a", "b"]);
    const { r } = slope(column(data, "a") as number[], column(data, "b") as number[]);
    expect(r).toBeGreaterThan(0.2); // 0.36/1.36 ≈ 0.26
    expect(data.model.nodes.find((v) => v.name === "u")).toEqual({ name: "u", type: "continuous", measured: false });
  });

  it("missing cells are missing completely at random at the rate asked (exact band)", () => {
    const n = 10_000;
    const data = simulateFromGraph(g("a -> b\n"), { n, seed: 1, missingRate: 0.1 });
    const empty = data.columns.reduce((s, c) => s + c.values.filter((v) => v === null).length, 0);
    const [lo, hi] = binomialInterval(2 * n, 0.1);
    expect(empty).toBeGreaterThanOrEqual(lo);
    expect(empty).toBeLessThanOrEqual(hi);
    // the values that remain are those of the run without missing cells
    const full = simulateFromGraph(g("a -> b\n"), { n, seed: 1 });
    const a = column(data, "a");
    expect(a.every((v, i) => v === null || v === column(full, "a")[i])).toBe(true);
  });

  it("random effects are ±U[0.1, 0.5] per arrow, drawn from the seed", () => {
    const m1 = simulateFromGraph(g("a -> b -> c\na -> c\n"), { n: 10, seed: 21, effects: "random" }).model;
    const m2 = simulateFromGraph(g("a -> b -> c\na -> c\n"), { n: 10, seed: 21, effects: "random" }).model;
    expect(m1.arrows).toEqual(m2.arrows);
    for (const e of m1.arrows) expect(Math.abs(e.coefficient) >= 0.1 && Math.abs(e.coefficient) <= 0.5).toBe(true);
  });

  it("single arrows can carry their own weight (library option), the others keep theirs", () => {
    const m = simulateFromGraph(g("a -> b\nc -> b\n"), { n: 10, seed: 1, effects: 0.5, coefficients: { "c -> b": 0.2 } }).model;
    expect(m.arrows).toEqual([{ from: "a", to: "b", coefficient: 0.5 }, { from: "c", to: "b", coefficient: 0.2 }]);
    expect(() => simulateFromGraph(g("a -> b\n"), { n: 10, seed: 1, coefficients: { "b -> a": 0.2 } })).toThrow(/"b -> a", which is not an arrow/);
  });

  it("refuses bad options with what to do", () => {
    const graph = g("a -> b\n");
    expect(() => simulateFromGraph(graph, { n: 0, seed: 1 })).toThrow(/n must be a whole number from 1/);
    expect(() => simulateFromGraph(graph, { n: 10, seed: 1, missingRate: 1 })).toThrow(/missing rate must be at least 0 and below 1/);
    expect(() => simulateFromGraph(graph, { n: 10, seed: 1, types: { c: "binary" } })).toThrow(/"c", which is not a node/);
  });
});

describe("simulate then test: true claims are contradicted at the nominal rate", () => {
  it("400 seeded data sets from a 5-node graph, mixed types, n = 400: unadjusted rejections at 0.05 inside the exact 99% band", () => {
    const graph = g("age -> bmi -> sbp\nage -> sbp\nsmoker -> sbp\nsbp -> stroke\n");
    let rejected = 0;
    let tested = 0;
    for (let rep = 0; rep < 400; rep++) {
      const data = simulateFromGraph(graph, { n: 400, seed: 1000 + rep, effects: 0.4, types: { smoker: "binary", stroke: "binary" } });
      const table = createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
      const result = runAudit(graph, table, { settings: { adjust: "none" } });
      for (const c of result.claims) {
        tested++;
        if (c.p < 0.05) rejected++;
      }
    }
    const [lo, hi] = binomialInterval(tested, 0.05);
    expect(tested).toBeGreaterThan(1000);
    expect(rejected).toBeGreaterThanOrEqual(lo);
    expect(rejected).toBeLessThanOrEqual(hi);
  }, 120_000);
});

describe("arrowaudit simulate", () => {
  it("writes the CSV and the model beside it; the same seed gives the same bytes", async () => {
    writeFileSync(join(work, "g.txt"), "unmeasured: u\nperiod: age\nperiod: bmi\nu -> bmi\nage -> bmi\nbmi <-> sbp\nage -> smoker\n");
    const run1 = await runCli(["simulate", "g.txt", "--n", "200", "--seed", "7", "--types", "smoker=binary", "--missing-rate", "0.05", "--out", "d1.csv"], { cwd: work });
    expect(run1.code).toBe(0);
    expect(run1.stderr).toMatch(/simulated 200 rows of 4 measured variables \(invented data, seed 7\) into d1\.csv; model in d1\.model\.json/);
    const run2 = await runCli(["simulate", "g.txt", "--n", "200", "--seed", "7", "--types", "smoker=binary", "--missing-rate", "0.05", "--out", "d2.csv"], { cwd: work });
    expect(run2.code).toBe(0);
    const a = readFileSync(join(work, "d1.csv"));
    expect(a.equals(readFileSync(join(work, "d2.csv")))).toBe(true);
    const lines = a.toString("utf8").trimEnd().split("\n");
    expect(lines[0]).toBe("age,bmi,sbp,smoker");
    expect(lines).toHaveLength(201);
    const model = JSON.parse(readFileSync(join(work, "d1.model.json"), "utf8"));
    expect(model).toMatchObject({ generator: "arrowaudit simulate", graph: "g.txt", data: "d1.csv", seed: 7, n: 200, effects: 0.3, missing_rate: 0.05 });
    expect(model.arrows).toContainEqual({ from: "u", to: "bmi", coefficient: 0.3 });
    expect(model.shared_causes).toEqual([{ a: "bmi", b: "sbp", loading: 0.3 }]);
    const other = await runCli(["simulate", "g.txt", "--n", "200", "--seed", "8"], { cwd: work });
    expect(other.stdout).not.toBe(a.toString("utf8"));
  });

  it("prints the CSV to stdout without --out, and the data can be audited as written", async () => {
    writeFileSync(join(work, "chain.txt"), "a -> b -> c\n");
    const r = await runCli(["simulate", "chain.txt", "--n", "300", "--quiet"], { cwd: work });
    expect(r.code).toBe(0);
    expect(r.stderr).toBe("");
    writeFileSync(join(work, "chain.csv"), r.stdout);
    const t = await runCli(["test", "chain.txt", "chain.csv", "--json"], { cwd: work });
    expect(t.code).toBe(0);
    expect(JSON.parse(t.stdout).claims).toHaveLength(1);
  });

  it("refuses to overwrite the graph (exit 2), unknown --types names and bad numbers (usage errors, exit 1)", async () => {
    writeFileSync(join(work, "g2.txt"), "a -> b\n");
    const over = await runCli(["simulate", "g2.txt", "--n", "10", "--out", "g2.txt"], { cwd: work });
    expect(over.code).toBe(2);
    expect(over.stderr).toMatch(/g2\.txt/);
    expect(readFileSync(join(work, "g2.txt"), "utf8")).toBe("a -> b\n");
    const types = await runCli(["simulate", "g2.txt", "--n", "10", "--types", "c=binary"], { cwd: work });
    expect(types.code).toBe(1);
    expect(types.stderr).toMatch(/--types names "c", not a node of g2\.txt/);
    const n = await runCli(["simulate", "g2.txt", "--n", "0"], { cwd: work });
    expect(n.code).toBe(1);
    expect(n.stderr).toMatch(/--n must be a whole number from 1 to 10000000/);
    const e = await runCli(["simulate", "g2.txt", "--n", "5", "--effects", "strong"], { cwd: work });
    expect(e.code).toBe(1);
    expect(e.stderr).toMatch(/--effects must be a number from -10 to 10, got "strong"/);
  });
});

import { describe, expect, it } from "vitest";
import { MAX_AUDIT_CLAIMS, runAudit } from "../../src/audit/runAudit.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { createTable } from "../../src/data/createTable.js";
import { normalQuantile } from "../../src/stats/quantiles.js";
import { normalTwoSided } from "../../src/stats/pvalues.js";
import { binomialInterval, simulateLinear } from "../helpers/simulate.js";

describe("binomialInterval (test helper)", () => {
  it("binomialInterval(500, 0.05) matches scipy.stats.binom.ppf(0.005 / 0.995)", () => {
    // scipy.stats.binom.ppf(0.005, 500, 0.05) = 13, binom.ppf(0.995, 500, 0.05) = 38
    expect(binomialInterval(500, 0.05)).toEqual([13, 38]);
  });
});

describe("runAudit on linear Gaussian data", () => {
  // Generating graph: a -> b -> c -> d, a -> d, and b -> d which the tested graph omits.
  const truth = { arrows: [["a", "b"], ["b", "c"], ["c", "d"], ["a", "d"], ["b", "d"]] as [string, string][] };
  const tested = createGraph({ arrows: [["a", "b"], ["b", "c"], ["c", "d"], ["a", "d"]] });
  const data = simulateLinear(truth, 2000, 11, { "b->d": 0.3 });

  it("runAudit(graph, table) ranks the omitted arrow first, contradicted, with its repair arrows", () => {
    const result = runAudit(tested, createTable(data));
    const first = result.claims[0]!;
    expect([first.x, first.y].sort()).toEqual(["b", "d"]);
    expect(first.verdict).toBe("contradicted");
    expect(first.rank).toBe(1);
    expect(first.arrows).toContain("b -> d");
    // b is an ancestor of d in the tested graph, so d -> b would close a cycle and is not offered
    expect(first.arrows).not.toContain("d -> b");
    expect(first.arrows).toContain("b <-> d");
    // the other claims (a ⫫ c | b) hold in the generating model
    const others = result.claims.filter((c) => c !== first);
    expect(others.every((c) => c.verdict === "consistent")).toBe(true);
    expect(result.global.k).toBe(result.claims.length);
    expect(result.global.df).toBe(2 * result.claims.length);
    expect(result.global.p).toBeLessThan(0.001);
  });

  it("runAudit result: every claim carries the JSON contract fields with finite numbers", () => {
    const result = runAudit(tested, createTable(data));
    for (const c of result.claims) {
      for (const k of ["x", "y", "given", "n", "test", "statistic", "df", "p", "p_adjusted", "effect", "ci", "verdict", "rank", "arrows"]) expect(c).toHaveProperty(k);
      expect(Number.isFinite(c.p) && c.p > 0).toBe(true);
      expect(c.p_adjusted).toBeGreaterThanOrEqual(c.p);
      expect(c.ci[0]).toBeLessThanOrEqual(c.effect);
      expect(c.ci[1]).toBeGreaterThanOrEqual(c.effect);
    }
    expect(result.data).toMatchObject({ rows: 2000, rows_used: 2000, patterns: 1 });
  });

  it("runAudit with --min-effect above the omitted effect makes it consistent (relevance floor)", () => {
    const result = runAudit(tested, createTable(data), { settings: { min_effect: 0.9 } });
    expect(result.claims.every((c) => c.verdict === "consistent")).toBe(true);
  });

  it("runAudit uses complete cases per claim and reports n; --listwise uses rows complete on all", () => {
    const withMissing = Object.fromEntries(Object.entries(data).map(([k, v]) => [k, Array.from(v)])) as Record<string, (number | null)[]>;
    for (let r = 0; r < 100; r++) withMissing.a![r] = null; // 100 missing in a
    for (let r = 100; r < 150; r++) withMissing.c![r] = null; // 50 missing in c
    const t = createTable(withMissing);
    const result = runAudit(tested, t);
    const ac = result.claims.find((c) => [c.x, c.y].sort().join() === "a,c")!;
    expect(ac.given).toEqual(["b"]);
    expect(ac.n).toBe(1850); // rows with a, b and c all observed
    expect(result.data.patterns).toBe(3);
    const lw = runAudit(tested, t, { settings: { listwise: true } });
    expect(lw.claims.every((c) => c.n === 1850)).toBe(true);
    expect(lw.data.rows_used).toBe(1850);
  });

  it("runAudit with no testable claim gives a global test of nothing (C = 0, df = 0, p = 1) and says so", () => {
    const t = createTable({ ...data, a: new Float64Array(2000).fill(1), c: new Float64Array(2000).fill(3) });
    const result = runAudit(tested, t);
    expect(result.claims).toHaveLength(0);
    expect(result.global).toMatchObject({ statistic: 0, df: 0, p: 1, k: 0, contradicted: 0 });
    expect(result.global.note).toMatch(/no claim could be tested/);
  });

  it("runAudit marks claims with a constant variable untestable with the reason", () => {
    const t = createTable({ ...data, c: new Float64Array(2000).fill(3) });
    const result = runAudit(tested, t);
    const u = result.untestable.find((x) => x.reason.includes('"c" is constant'));
    expect(u).toBeDefined();
    expect(result.claims.some((c) => c.given.includes("c") || c.x === "c" || c.y === "c")).toBe(false);
  });
});

describe("runAudit refuses what no test can use and what it cannot hold", () => {
  it("a claim on an identifier-like nominal column (one row per level) is untestable with the reason, the others are tested", () => {
    // 200 rows, "pid" has 200 distinct labels: a chi-square table would have one count per cell
    const data = simulateLinear({ arrows: [["a", "b"], ["b", "c"]] }, 200, 5);
    const pid = Array.from({ length: 200 }, (_, i) => `P${String(i).padStart(4, "0")}`);
    const graph = createGraph({ nodes: ["pid"], arrows: [["a", "b"], ["b", "c"]] }); // pid: no arrows
    const result = runAudit(graph, createTable({ ...data, pid }));
    const u = result.untestable.filter((x) => x.x === "pid" || x.y === "pid" || (x.given ?? []).includes("pid"));
    expect(u.length).toBeGreaterThan(0);
    for (const x of u) expect(x.reason).toMatch(/"pid" has 200 levels among 200 observed rows/);
    expect(result.claims.some((c) => c.x === "pid" || c.y === "pid" || c.given.includes("pid"))).toBe(false);
    // a ⫫ c | b does not involve pid and is still tested
    expect(result.claims.some((c) => [c.x, c.y].sort().join() === "a,c")).toBe(true);
  });

  it("a nominal column with many rows per level is tested as before", () => {
    const data = simulateLinear({ arrows: [["a", "b"], ["b", "c"]] }, 600, 6);
    const site = Array.from({ length: 600 }, (_, i) => `S${i % 60}`); // 60 levels, 10 rows each
    const graph = createGraph({ arrows: [["a", "b"], ["b", "c"], ["site", "c"]] });
    const result = runAudit(graph, createTable({ ...data, site }));
    expect(result.untestable.some((x) => x.reason.includes('"site"'))).toBe(false);
    expect(result.claims.some((c) => c.x === "site" || c.y === "site")).toBe(true);
  });

  it("a graph with more missing arrows than MAX_AUDIT_CLAIMS is refused before any claim is derived", () => {
    // 450 measured nodes with no arrows: 450 · 449 / 2 = 101,025 missing arrows > 100,000
    const nodes = Array.from({ length: 450 }, (_, i) => `v${i}`);
    const graph = createGraph({ nodes, arrows: [] });
    const table = createTable(Object.fromEntries(nodes.map((n) => [n, [1, 2, 3]])));
    expect(MAX_AUDIT_CLAIMS).toBe(100_000);
    expect(() => runAudit(graph, table)).toThrow(/101,025 missing arrows among 450 measured nodes.*at most 100,000/);
  });
});

describe("calibration of the partial-correlation test (seeded simulation)", () => {
  // Tested graph = generating graph (a fork z -> x, z -> y): the claim x ⫫ y | z is true.
  const graph = createGraph({ arrows: [["z", "x"], ["z", "y"]] });

  it("rejects a true claim at alpha = 0.05 in a share inside the 99% binomial interval (500 replications)", () => {
    const R = 500;
    let rejected = 0;
    for (let rep = 0; rep < R; rep++) {
      const d = simulateLinear({ arrows: [["z", "x"], ["z", "y"]] }, 200, 1000 + rep);
      const res = runAudit(graph, createTable(d));
      expect(res.claims).toHaveLength(1);
      if (res.claims[0]!.p < 0.05) rejected++;
    }
    const [lo, hi] = binomialInterval(R, 0.05, 0.99); // exact binomial, see helper
    expect(rejected).toBeGreaterThanOrEqual(lo);
    expect(rejected).toBeLessThanOrEqual(hi);
  });

  it("detects an omitted arrow with partial r = 0.1 at n = 2,000 at the Fisher-z power within 5 points", () => {
    // x = 0.5 z + e1, y = 0.5 z + b x + e2: partial r(x, y | z) = b / sqrt(b² + 1) = 0.1
    const b = 0.1 / Math.sqrt(0.99);
    const R = 500;
    const n = 2000;
    let detected = 0;
    for (let rep = 0; rep < R; rep++) {
      const d = simulateLinear({ arrows: [["z", "x"], ["z", "y"], ["x", "y"]] }, n, 5000 + rep, { "x->y": b });
      const res = runAudit(graph, createTable(d));
      if (res.claims[0]!.p < 0.05) detected++;
    }
    // Fisher-z power (common practice): Φ(|atanh ρ|·√(n − c − 3) − z₀.₉₇₅) + Φ(−|atanh ρ|·√(n − c − 3) − z₀.₉₇₅)
    const zr = Math.atanh(0.1) * Math.sqrt(n - 1 - 3);
    const z975 = normalQuantile(0.975);
    const Phi = (x: number) => 1 - normalUpper(x);
    const power = Phi(zr - z975) + Phi(-zr - z975);
    expect(Math.abs(detected / R - power)).toBeLessThan(0.05);
  });
});

/** Upper normal tail Φ̄(x), from the library's two-sided normal p-value (erfc, @stdlib). */
function normalUpper(x: number): number {
  const half = normalTwoSided(x) / 2;
  return x >= 0 ? half : 1 - half;
}

describe("runAudit: the default test's linear-adjustment check", () => {
  // Invented data: x and y both depend on s², not on each other, so x ⫫ y | s holds. A straight
  // line in s leaves the shared s² in both residuals (partial r ≈ 0.6, far beyond any threshold),
  // while the flexible adjustment removes it: the verdict changes, and the audit says so.
  it("runAudit marks details.linear_adjustment.verdict_differs and warns when linear adjustment would contradict a true claim", () => {
    const n = 800;
    const d = simulateLinear({ nodes: ["s", "e1", "e2"] }, n, 77);
    const s = d.s!;
    const x = s.map((v, i) => v * v + d.e1![i]!);
    const y = s.map((v, i) => v * v + d.e2![i]!);
    const graph = createGraph({ arrows: [["s", "x"], ["s", "y"]] });
    const result = runAudit(graph, createTable({ s, x, y }));
    const claim = result.claims.find((c) => c.x === "x" || c.y === "x")!;
    expect(claim.test).toBe("gcm");
    expect(claim.verdict).toBe("consistent");
    const lin = claim.details!.linear_adjustment as { p: number; verdict: string; verdict_differs: boolean; effect: number };
    expect(lin.p).toBeLessThan(1e-20);
    expect(lin.effect).toBeGreaterThan(0.4);
    expect(lin.verdict).toBe("contradicted");
    expect(lin.verdict_differs).toBe(true);
    expect(result.warnings.some((w) => w.startsWith("1 claim changes verdict when the conditioning set enters linearly"))).toBe(true);
    // and the forced linear test is the one that contradicts it
    const linear = runAudit(graph, createTable({ s, x, y }), { settings: { method: "linear" } });
    expect(linear.claims[0]!.verdict).toBe("contradicted");
    expect(linear.claims[0]!.p).toBeCloseTo(lin.p, 10);
  });
});

/**
 * `summarizeSite` and `poolSiteSummaries` as a library: edge cases (one row, a column all
 * missing, a column constant within sites, Unicode names), inputs not mutated, and the pooled
 * partial correlation against the stacked rows' partial correlation given site indicators,
 * computed here by ordinary least squares on the stacked rows.
 */
import { describe, expect, it } from "vitest";
import { createTable } from "../../src/data/createTable.js";
import type { CellValue } from "../../src/data/createTable.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { summarizeSite, type SiteSummary, type SiteSummarySettings } from "../../src/audit/siteSummary.js";
import { parseSiteSummary, poolSiteSummaries } from "../../src/audit/poolSiteSummaries.js";
import type { Graph } from "../../src/graph/Graph.js";
import { createRng } from "../../src/stats/rng.js";

const SHA = "ab".repeat(32);
const SETTINGS: SiteSummarySettings = { sets: "union-parents", method: "auto", listwise: false, min_cell: 5, unmeasured: [] };
const LINEAR: SiteSummarySettings = { ...SETTINGS, method: "linear" };

function graphOf(text: string): Graph {
  return parseGraph(text, { file: "g.txt" }).graph;
}

function site(graph: Graph, data: Record<string, ArrayLike<CellValue>>, name: string, settings = SETTINGS): SiteSummary {
  const measured = graph.nodes.filter((n) => graph.isMeasured(n));
  const { claims } = deriveClaims(graph, { sets: settings.sets, cap: 100 });
  return summarizeSite(createTable(data, { file: `${name}.csv` }), { graphSha256: SHA, site: name, settings, measured, claims });
}

function deepFreeze<T>(o: T): T {
  if (o && typeof o === "object") {
    Object.freeze(o);
    for (const v of Object.values(o)) deepFreeze(v);
  }
  return o;
}

/** Seeded normal draws (Box–Muller on the project's stream). */
function normals(seed: number, n: number): number[] {
  const rng = createRng(seed, "normals");
  return Array.from({ length: n }, () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat()));
}

const GRAPH = "a -> b\nb -> c\n";

describe("summarizeSite(table, options)", () => {
  it("summarizeSite on one row leaves it out (a pattern of 1 < 5 rows) and writes no number", () => {
    const g = graphOf(GRAPH);
    const s = site(g, { a: [1], b: [2], c: [3] }, "one");
    expect(s.suppressed).toEqual({ rows: 1, patterns: 1 });
    expect(s.claims.every((c) => c.kind === "untestable")).toBe(true);
    expect(JSON.stringify(s)).not.toContain('"means"');
  });

  it("summarizeSite with a column all missing: its claims are untestable with 0 complete cases", () => {
    const g = graphOf(GRAPH);
    const n = 30;
    const s = site(g, { a: normals(1, n), b: normals(2, n), c: new Array<null>(n).fill(null) }, "miss");
    const ac = s.claims.find((c) => c.x === "a" && c.y === "c")!;
    expect(ac.kind).toBe("untestable");
    expect((ac as { reason: string }).reason).toContain("0 complete cases");
  });

  it("summarizeSite makes a linear claim untestable when two categorical variables share a combination of fewer than k rows", () => {
    const g = graphOf("b -> c\nc -> a\n"); // the claim a ⫫ b | c: binary b, nominal c in S
    const n = 40;
    // b binary, c nominal; each level has at least 5 rows, but b = 1 with c = "z" only 2
    const b = Array.from({ length: n }, (_, i) => (i < 20 ? 0 : 1));
    const c = Array.from({ length: n }, (_, i) => (i < 20 ? ["x", "y", "z"][i % 3]! : i < 38 ? ["x", "y"][i % 2]! : "z"));
    const s = site(g, { a: normals(6, n), b, c }, "pairs");
    const ab = s.claims.find((cl) => [cl.x, cl.y].sort().join() === "a,b")!;
    expect(ab.kind).toBe("untestable");
    expect((ab as { reason: string }).reason).toMatch(/"[bc]" = "[1z]" with "[bc]" = "[1z]" has 2 rows/);
  });

  it("summarizeSite refuses --min-cell below 3 (two rows' mean and sum of squares give both values)", () => {
    const g = graphOf(GRAPH);
    expect(() => site(g, { a: [1, 2, 3], b: [1, 2, 3], c: [1, 2, 3] }, "x", { ...SETTINGS, min_cell: 2 })).toThrow(RangeError);
  });

  it("summarizeSite output survives JSON and parseSiteSummary unchanged (Unicode names)", () => {
    const g = graphOf("ålder -> blodtryck\nblodtryck -> 心拍\n");
    const n = 40;
    const s = site(g, { "ålder": normals(3, n), blodtryck: normals(4, n), "心拍": normals(5, n) }, "Malmö");
    expect(parseSiteSummary(JSON.stringify(s), "s.json")).toEqual(s);
    expect(s.claims[0]!.kind).toBe("residuals"); // --method auto: the flexible test's sums
    const lin = site(g, { "ålder": normals(3, n), blodtryck: normals(4, n), "心拍": normals(5, n) }, "Malmö", LINEAR);
    expect(parseSiteSummary(JSON.stringify(lin), "s.json")).toEqual(lin);
    expect(lin.claims[0]!.kind).toBe("moments");
  });
});

describe("parseSiteSummary(text, file)", () => {
  it("parseSiteSummary refuses a residuals claim whose sums do not fit its side columns, naming the field", () => {
    const g = graphOf("s -> x\ns -> y\n");
    const n = 40;
    const s = site(g, { s: normals(7, n), x: normals(8, n), y: normals(9, n) }, "R");
    const k = s.claims.findIndex((c) => c.kind === "residuals");
    expect(k).toBeGreaterThanOrEqual(0);
    expect(parseSiteSummary(JSON.stringify(s), "r.json")).toEqual(s);
    const edited = JSON.parse(JSON.stringify(s)) as { claims: Record<string, unknown>[] };
    edited.claims[k]!.product_variance = [[1, 2], [3, 4]]; // one product: a 1 × 1 matrix
    expect(() => parseSiteSummary(JSON.stringify(edited), "r.json")).toThrow(`r.json: field "claims[${k}].product_variance" must be a 1 × 1 matrix of finite numbers`);
    const noSides = JSON.parse(JSON.stringify(s)) as { claims: Record<string, unknown>[] };
    noSides.claims[k]!.sides = [["x"], []];
    expect(() => parseSiteSummary(JSON.stringify(noSides), "r.json")).toThrow(`r.json: field "claims[${k}].sides" must be two non-empty lists of column names`);
  });
});

describe("poolSiteSummaries(graph, sha, file, sites)", () => {
  it("poolSiteSummaries of --method linear summaries equals the stacked rows' partial correlation given S and site indicators (least squares here, 1e-9) and does not mutate its inputs", () => {
    const g = graphOf(GRAPH);
    const sizes = [25, 40, 33];
    const stacked: { a: number; b: number; c: number; s: number }[] = [];
    const sites = sizes.map((n, k) => {
      const a = normals(10 + k, n).map((v) => v + 3 * k);
      const e = normals(20 + k, n);
      const b = a.map((v, i) => 0.5 * v + e[i]! - k);
      const f = normals(30 + k, n);
      const c = b.map((v, i) => 0.3 * v + 0.2 * a[i]! + f[i]! + 2 * k);
      a.forEach((_, i) => stacked.push({ a: a[i]!, b: b[i]!, c: c[i]!, s: k }));
      return deepFreeze({ file: `s${k}.json`, summary: site(g, { a, b, c }, `s${k}`, LINEAR) });
    });
    const result = poolSiteSummaries(g, SHA, "g.txt", sites);
    const ac = result.claims.find((c) => [c.x, c.y].sort().join() === "a,c")!;
    // reference: residuals of a and c on [b, site indicators] by normal equations, then their correlation
    const X = stacked.map((r) => [r.b, r.s === 0 ? 1 : 0, r.s === 1 ? 1 : 0, r.s === 2 ? 1 : 0]);
    const resid = (y: number[]): number[] => {
      const p = X[0]!.length;
      const A = Array.from({ length: p }, (_, i) => Array.from({ length: p }, (_, j) => X.reduce((s, x) => s + x[i]! * x[j]!, 0)));
      const v = Array.from({ length: p }, (_, i) => X.reduce((s, x, r) => s + x[i]! * y[r]!, 0));
      for (let i = 0; i < p; i++) for (let j = i + 1; j < p; j++) {
        const f = A[j]![i]! / A[i]![i]!;
        for (let q = i; q < p; q++) A[j]![q] = A[j]![q]! - f * A[i]![q]!;
        v[j] = v[j]! - f * v[i]!;
      }
      const beta = new Array<number>(p).fill(0);
      for (let i = p - 1; i >= 0; i--) beta[i] = (v[i]! - A[i]!.slice(i + 1).reduce((s, x, q) => s + x * beta[i + 1 + q]!, 0)) / A[i]![i]!;
      return y.map((yy, r) => yy - X[r]!.reduce((s, x, q) => s + x * beta[q]!, 0));
    };
    const ra = resid(stacked.map((r) => r.a));
    const rc = resid(stacked.map((r) => r.c));
    const dot = (u: number[], w: number[]) => u.reduce((s, x, i) => s + x * w[i]!, 0);
    const r = dot(ra, rc) / Math.sqrt(dot(ra, ra) * dot(rc, rc)); // residuals have mean 0 within sites (site indicators)
    expect(Math.abs(ac.effect - r) / Math.abs(r)).toBeLessThan(1e-9); // Frisch–Waugh: partial correlation given b and site
    expect(ac.n).toBe(98);
    expect(ac.df).toBe(98 - 2 - 1 - 2); // one column of b, two site indicators
  });

  it("poolSiteSummaries says a column constant within every site is untestable (it is the site), for moments and for residual sums", () => {
    const g = graphOf(GRAPH);
    const data = (k: number, n = 20) => ({ a: new Array<number>(n).fill(k), b: normals(40 + k, n), c: normals(50 + k, n) });
    const sites = [0, 1].map((k) => ({ file: `s${k}.json`, summary: site(g, data(k), `s${k}`, LINEAR) }));
    const result = poolSiteSummaries(g, SHA, "g.txt", sites);
    const ac = result.untestable.find((c) => [c.x, c.y].sort().join() === "a,c");
    expect(ac?.reason).toContain('"a" is constant within every site');
    // auto: each site's flexible fit finds "a" constant and writes no sums, so no site tests it
    const auto = [0, 1].map((k) => ({ file: `s${k}.json`, summary: site(g, data(k), `s${k}`) }));
    expect(auto[0]!.summary.claims.find((c) => [c.x, c.y].sort().join() === "a,c")!.kind).toBe("untestable");
    const pooled = poolSiteSummaries(g, SHA, "g.txt", auto);
    expect(pooled.untestable.find((c) => [c.x, c.y].sort().join() === "a,c")?.reason).toBe('untestable at every site: "a" is constant among the 20 complete rows; the claim cannot be tested');
  });
});

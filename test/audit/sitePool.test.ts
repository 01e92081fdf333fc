/**
 * The site pool (`src/audit/sitePool.ts`): summaries reduced claim by claim as they are read. Small
 * hand-made summaries whose sums are whole numbers, so every pooled number is checked exactly
 * against hand arithmetic; and, on summaries made from rows, the pooled audit of a pool built file
 * by file equals the one of `poolSiteSummaries` (which the pooling tests check against the stacked
 * rows, numpy and scipy).
 */
import { describe, expect, it } from "vitest";
import { claimPoolOf, poolSites, SitePoolBuilder } from "../../src/audit/sitePool.js";
import type { ClaimSummary, ResidualsClaimSummary, SiteSummary } from "../../src/audit/siteSummary.js";
import { poolSitePool, poolSiteSummaries } from "../../src/audit/poolSiteSummaries.js";
import { summarizeSite } from "../../src/audit/siteSummary.js";
import { createTable } from "../../src/data/createTable.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { createRng } from "../../src/stats/rng.js";

const SHA = "cd".repeat(32);

function residuals(k: number, opts: Partial<ResidualsClaimSummary> = {}): ResidualsClaimSummary {
  return {
    x: "x", y: "y", given: ["z", "w"], kind: "residuals", test: "gcm", n: 10 * k, params: k, sides: [["x"], ["y"]],
    residual_cross_products: [[k, 2 * k], [2 * k, 3 * k]],
    product_variance: [[5 * k]],
    fourth_order: { uu: k, vv: 2 * k, uv: 3 * k, uuvv: 4 * k, uuuv: 5 * k, uvvv: 6 * k, uuuu: 7 * k, vvvv: 8 * k },
    linear: { params: 2 * k, residual_cross_products: [[10 * k, k], [k, 20 * k]] },
    flexibility: { level: k, max_level: 5, level_x: 0, level_y: k, parameters: k },
    adjustment: [{ variable: "z", entered: k === 2 ? "spline" : "linear", columns: k }],
    aliased: k === 3 ? 1 : 0,
    ...opts,
  };
}

function summary(site: string, claims: ClaimSummary[]): SiteSummary {
  return {
    format: "arrowaudit-site-summary", version: 2, graph_sha256: SHA, site, n: 100, suppressed: { rows: 0, patterns: 0 },
    settings: { sets: "union-parents", method: "auto", listwise: false, min_cell: 5, unmeasured: [] },
    variables: [{ name: "x", type: "continuous" }, { name: "y", type: "continuous" }, { name: "z", type: "continuous" }, { name: "w", type: "binary" }],
    claims,
  };
}

describe("SitePoolBuilder", () => {
  it("adds a residuals claim's sums over the sites that kept it and lists the others with their reasons (hand arithmetic)", () => {
    const b = new SitePoolBuilder();
    b.add({ file: "a.json", summary: summary("A", [residuals(1)]) });
    b.add({ file: "b.json", summary: summary("B", [{ x: "x", y: "y", given: ["z", "w"], kind: "untestable", reason: "only 3 complete cases" }]) });
    b.add({ file: "c.json", summary: summary("C", [residuals(2)]) });
    b.add({ file: "d.json", summary: summary("D", [residuals(3)]) });
    const { sites, claims, pools } = b.pool;
    expect(sites.map((s) => [s.file, s.site, s.sameClaims])).toEqual([["a.json", "A", true], ["b.json", "B", true], ["c.json", "C", true], ["d.json", "D", true]]);
    expect(claims).toEqual([{ x: "x", y: "y", given: ["z", "w"] }]);
    const p = pools[0]!;
    expect(p.untestable).toEqual([{ site: 1, reason: "only 3 complete cases" }]);
    expect(p.kept).toEqual([0, 2, 3]);
    expect(p.kinds).toEqual(["residuals"]);
    const r = p.residuals!;
    // sites 1, 2 and 3 of the helper: k = 1 + 2 + 3 = 6
    expect([r.n, r.params, r.linParams]).toEqual([60, 6, 12]);
    expect([...r.cross]).toEqual([6, 12, 12, 18]);
    expect([...r.linCross]).toEqual([60, 6, 6, 120]);
    expect([...r.scatter]).toEqual([30]);
    expect([...r.fourth!]).toEqual([6, 12, 18, 24, 30, 36, 42, 48]);
    expect(r.flexibility.map((f) => [f.site, f.flexibility.level])).toEqual([[0, 1], [2, 2], [3, 3]]);
    expect(r.members).toEqual([{ variable: "z", spline: true, linear: true, columns: 6 }, { variable: "w", spline: false, linear: false, columns: 0 }]);
    expect(r.aliased).toEqual([{ site: 3, k: 1 }]);
    expect([r.first, r.odd, r.testDiffers]).toEqual([0, -1, false]);
  });

  it("records the first site whose side columns differ and adds nothing of it; a site without fourth-order sums drops them", () => {
    const pool = claimPoolOf([residuals(1), residuals(2, { fourth_order: undefined }), residuals(3, { sides: [["x"], ["y=b", "y=c"]], residual_cross_products: [[1, 0, 0], [0, 1, 0], [0, 0, 1]], product_variance: [[1, 0], [0, 1]], linear: { params: 1, residual_cross_products: [[1, 0, 0], [0, 1, 0], [0, 0, 1]] } })]);
    const r = pool.residuals!;
    expect([r.odd, r.oddSides]).toEqual([2, [["x"], ["y=b", "y=c"]]]);
    expect(r.n).toBe(30);
    expect(r.fourth).toBeUndefined();
  });

  it("sums only the first kind when the sites wrote different kinds, and keeps tables parts as they are", () => {
    const tables: ClaimSummary = { x: "x", y: "y", given: ["z", "w"], kind: "tables", n: 12, strata: [{ given: ["0", "1"], counts: [[6, 0], [0, 6]] }], dropped: { strata: 0, rows: 0 } };
    const mixed = claimPoolOf([tables, residuals(1), tables]);
    expect(mixed.kinds).toEqual(["tables", "residuals"]);
    expect(mixed.residuals).toBeUndefined();
    expect(mixed.parts).toEqual([tables, tables]);
  });

  it("marks a site that lists other claims and adds none of its numbers", () => {
    const other = residuals(5, { given: ["z"] });
    const pool = poolSites([{ file: "a.json", summary: summary("A", [residuals(1)]) }, { file: "b.json", summary: summary("B", [other]) }]);
    expect(pool.sites.map((s) => s.sameClaims)).toEqual([true, false]);
    expect(pool.pools[0]!.residuals!.n).toBe(10);
  });
});

describe("poolSitePool on a pool built file by file", () => {
  it("gives the audit poolSiteSummaries gives on the same summaries, and keeps none of their claims", () => {
    const graph = parseGraph("z -> x\nz -> y\nw -> y\nk -> x\n", { file: "g.txt" }).graph;
    const measured = graph.nodes.filter((n) => graph.isMeasured(n));
    const { claims } = deriveClaims(graph, { sets: "union-parents", cap: 100 });
    const sites = ["A", "B", "C"].map((name, s) => {
      const rng = createRng(40 + s, "site-pool");
      const n = 120;
      const z = Array.from({ length: n }, () => rng.nextFloat());
      const k = Array.from({ length: n }, () => (rng.nextFloat() < 0.4 ? "lo" : rng.nextFloat() < 0.5 ? "mid" : "hi"));
      const w = Array.from({ length: n }, () => (rng.nextFloat() < 0.5 ? 1 : 0));
      const x = z.map((v, i) => Math.sin(3 * v) + (k[i] === "hi" ? 0.5 : 0) + rng.nextFloat());
      const y = z.map((v, i) => v * v + w[i]! + rng.nextFloat());
      const summary = summarizeSite(createTable({ x, y, z, w, k }, { file: `${name}.csv` }), {
        graphSha256: SHA, site: name, settings: { sets: "union-parents", method: "auto", listwise: false, min_cell: 5, unmeasured: [] }, measured, claims,
      });
      return { file: `${name}.json`, summary };
    });
    const builder = new SitePoolBuilder();
    for (const s of sites) builder.add(s);
    const fromPool = poolSitePool(graph, SHA, "g.txt", builder.pool);
    const direct = poolSiteSummaries(graph, SHA, "g.txt", sites);
    expect(fromPool.claims.length).toBeGreaterThan(3);
    expect(JSON.stringify(fromPool)).toBe(JSON.stringify(direct));
    const held = JSON.stringify(builder.pool, (_, v: unknown) => (v instanceof Float64Array ? [...v] : v));
    expect(held).not.toContain("residual_cross_products");
    expect(held).not.toContain("product_variance");
  });
});

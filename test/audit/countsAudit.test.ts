/**
 * Audits of counted cells (`runAuditOnCounts`, the `--counts` path for audits whose claims all
 * take tables of counts) against the audit of the same cells expanded to one row per unit
 * (`expandCounts`, itself checked against pandas' expansion in test/cli/countsInput.test.ts):
 * every field equal, on seeded random count tables with binary, ordinal and nominal variables,
 * missing values, cells of count 0, repeated cells, sparse strata (permutation p-values),
 * `--method auto` and `chisq`, with and without `--listwise`.
 */
import { describe, expect, it } from "vitest";
import { runAudit, runAuditOnCounts, type AuditOptions } from "../../src/audit/runAudit.js";
import type { AuditResult } from "../../src/audit/types.js";
import { createTable, type CellValue } from "../../src/data/createTable.js";
import { countsTable, expandCounts } from "../../src/data/expandCounts.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { createRng } from "../../src/stats/rng.js";

const GRAPH = parseGraph("a -> b\nb -> c\na -> d\nd -> e\nc -> e\nb -> f\n", { file: "g.txt" }).graph;
const TYPES = { a: "binary", b: "ordinal", c: "nominal", d: "binary", e: "ordinal", f: "nominal" } as const;

/** A seeded table of `cells` rows: a chain-like dependence so that some claims are contradicted, missing cells at `missing`, counts 0..`maxCount`. */
function cellsOf(seed: number, cells: number, maxCount: number, missing: number): Record<string, CellValue[]> {
  const rng = createRng(seed, "counts-audit");
  const pick = <T,>(xs: readonly T[]) => xs[Math.floor(rng.nextFloat() * xs.length)]!;
  const out: Record<string, CellValue[]> = { a: [], b: [], c: [], d: [], e: [], f: [], n: [] };
  for (let i = 0; i < cells; i++) {
    const a = pick(["no", "yes"]);
    const b = a === "yes" && rng.nextFloat() < 0.5 ? 4 : pick([1, 2, 3, 4]);
    const c = b >= 3 && rng.nextFloat() < 0.4 ? "z" : pick(["x", "y", "z"]);
    const d = a === "yes" && rng.nextFloat() < 0.3 ? 1 : pick([0, 1]);
    const e = c === "z" && rng.nextFloat() < 0.5 ? 3 : pick([1, 2, 3]);
    const f = pick(["p", "q", "r", "s"]);
    const row: Record<string, CellValue> = { a, b, c, d, e, f };
    for (const k of Object.keys(row)) out[k]!.push(rng.nextFloat() < missing ? null : row[k]!);
    out.n!.push(rng.nextFloat() < 0.15 ? 0 : 1 + Math.floor(rng.nextFloat() * maxCount));
  }
  return out;
}

function bothWays(data: Record<string, CellValue[]>, options: AuditOptions): { counted: AuditResult; expanded: AuditResult } {
  const table = createTable(data, { file: "cells.csv", types: { ...TYPES } });
  const expanded = runAudit(GRAPH, expandCounts(table, "n", { file: "cells.csv" }), options);
  const cells = countsTable(table, "n", { file: "cells.csv" });
  const counted = runAuditOnCounts(GRAPH, cells.table, cells.weights, options);
  expect(counted, "every claim takes a table test here").toBeDefined();
  return { counted: counted!, expanded };
}

/** The two results without the line each writes about the counts; those lines are checked apart. */
function withoutNote(r: AuditResult): AuditResult {
  return { ...r, warnings: r.warnings.filter((w) => !/ stand for [\d,]+ units by the counts in "n"/.test(w)) };
}

describe("runAuditOnCounts against the audit of the expanded table", () => {
  const cases = [
    { name: "dense cells, auto", seed: 1, cells: 120, max: 40, missing: 0.03, options: {} },
    { name: "dense cells, chisq, listwise", seed: 2, cells: 120, max: 40, missing: 0.05, options: { settings: { method: "chisq" as const, listwise: true } } },
    { name: "sparse cells (permutation p-values), auto", seed: 3, cells: 40, max: 3, missing: 0.02, options: {} },
    { name: "sparse cells, chisq, Benjamini-Hochberg, 400 draws", seed: 4, cells: 30, max: 4, missing: 0, options: { settings: { method: "chisq" as const, adjust: "bh" as const, permutations: 400 } } },
  ];
  for (const c of cases) {
    it(`${c.name}: every field equal but the line about the counts`, () => {
      const { counted, expanded } = bothWays(cellsOf(c.seed, c.cells, c.max, c.missing), c.options);
      expect(counted.claims.length + counted.untestable.length).toBeGreaterThan(5);
      expect(JSON.stringify(withoutNote(counted))).toBe(JSON.stringify(withoutNote(expanded)));
      const note = counted.warnings.find((w) => / stand for /.test(w))!;
      expect(note).toMatch(new RegExp(`^\\d+ rows of cells\\.csv stand for ${counted.data.rows.toLocaleString("en-US")} units by the counts in "n" \\(\\d+ rows? of count 0 add none\\); every claim was tested from tables of counts, each row counted as its units$`));
    });
  }

  it("the sparse case does take permutation p-values, and the dense one asymptotic ones (the paths compared above)", () => {
    const sparse = bothWays(cellsOf(3, 40, 3, 0.02), {}).counted;
    const dense = bothWays(cellsOf(1, 120, 40, 0.03), {}).counted;
    expect(sparse.claims.some((t) => t.p_method === "permutation")).toBe(true);
    expect(dense.claims.some((t) => t.p_method === "asymptotic")).toBe(true);
    expect(new Set(dense.claims.map((t) => t.test))).toEqual(new Set(["stratified-chisq", "linear-by-linear"]));
  });

  it("a level seen only in cells of count 0 is absent among the units: a variable constant among them is untestable, as after expansion", () => {
    const data = cellsOf(5, 60, 20, 0);
    data.f = data.f!.map(() => "p");
    data.f[7] = "q";
    data.n![7] = 0;
    const { counted, expanded } = bothWays(data, {});
    expect(counted.untestable.some((u) => /"f" is constant \(every observed value is "p"\)/.test(u.reason))).toBe(true);
    expect(JSON.stringify(withoutNote(counted))).toBe(JSON.stringify(withoutNote(expanded)));
  });

  it("edges: every count 0 (no unit: nothing observed), and an identifier-like column of 60 levels (one unit each, or many units each)", () => {
    const none = cellsOf(8, 40, 5, 0);
    none.n = none.n!.map(() => 0);
    const empty = bothWays(none, {});
    expect(empty.counted.data.rows).toBe(0);
    expect(JSON.stringify(withoutNote(empty.counted))).toBe(JSON.stringify(withoutNote(empty.expanded)));
    for (const per of [1, 3]) {
      const ids = cellsOf(9, 120, 5, 0.02);
      ids.f = ids.f!.map((_, i) => `id${i % 60}`);
      ids.n = ids.n!.map((_, i) => (i < 60 ? per : 0));
      const { counted, expanded } = bothWays(ids, {});
      expect(counted.untestable.some((u) => /"f" has 60 levels/.test(u.reason))).toBe(per === 1);
      expect(JSON.stringify(withoutNote(counted))).toBe(JSON.stringify(withoutNote(expanded)));
    }
  });

  it("counts of more units than expandCounts takes (2·10^7 units of 6 variables) are tested from their 60 cells", () => {
    const data = cellsOf(6, 60, 40, 0.02);
    data.n = data.n!.map((v, i) => (v === 0 ? 0 : 400_000 + i));
    const table = createTable(data, { file: "cells.csv", types: { ...TYPES } });
    const cells = countsTable(table, "n", { file: "cells.csv" });
    expect(cells.units).toBeGreaterThan(1e8 / 6);
    expect(() => expandCounts(table, "n", { file: "cells.csv" })).toThrow(/cells arrowaudit expands counts to/);
    const r = runAuditOnCounts(GRAPH, cells.table, cells.weights)!;
    expect(r.data.rows).toBe(cells.units);
    expect(r.variables.find((v) => v.name === "a")!.missing).toBe(data.a!.reduce<number>((m, v, i) => (v === null ? m + (data.n![i] as number) : m), 0));
    expect(r.claims.length).toBeGreaterThan(5);
    expect(r.claims.every((t) => t.n <= cells.units && t.n > 1e6)).toBe(true);
  });

  it("returns undefined when a claim needs another test: a continuous variable, or --method regression", () => {
    const data = cellsOf(7, 50, 10, 0);
    const cells = countsTable(createTable(data, { file: "cells.csv", types: { ...TYPES } }), "n", { file: "cells.csv" });
    expect(runAuditOnCounts(GRAPH, cells.table, cells.weights, { settings: { method: "regression" } })).toBeUndefined();
    const withAge = { ...data, f: data.f!.map((_, i) => 20 + (i % 37) + 0.5) };
    const cont = countsTable(createTable(withAge, { file: "cells.csv", types: { ...TYPES, f: "continuous" } }), "n", { file: "cells.csv" });
    expect(runAuditOnCounts(GRAPH, cont.table, cont.weights)).toBeUndefined();
  });
});

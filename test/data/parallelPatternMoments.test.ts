import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { parallelPatternMoments } from "../../cli/parallelPatternMoments.js";
import { parallelReadTable } from "../../cli/parallelReadTable.js";
import { buildPatternMoments } from "../../src/data/buildPatternMoments.js";
import { createTable } from "../../src/data/createTable.js";
import type { Moments, PatternMoments } from "../../src/data/Moments.js";
import type { Table } from "../../src/data/Table.js";
import { flexibleBasis } from "../../src/stats/flexibleBasis.js";

// The reference is the one-thread buildPatternMoments (itself checked against pandas in
// buildPatternMoments.test.ts) and, for the complete-case counts, the rows themselves: the two-thread
// moments must agree to 1e-12 relative (only the order of floating-point summation differs).

const dir = mkdtempSync(join(tmpdir(), "arrowaudit-pm-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Seeded mixed data: continuous with missing cells, binary, ordinal, nominal text with missing cells. */
function generated(rows: number, seed: number): Record<string, (number | string | null)[]> {
  let s = seed;
  const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
  const data: Record<string, (number | string | null)[]> = { x: [], y: [], b: [], ord: [], region: [], z: [] };
  for (let i = 0; i < rows; i++) {
    const x = rnd() < 0.05 ? null : 1e4 + rnd() * 200 - 100;
    data.x!.push(x);
    data.y!.push(rnd() < 0.03 ? null : x === null ? rnd() : 0.3 * x + rnd());
    data.b!.push(rnd() < 0.5 ? 0 : 1);
    data.ord!.push(rnd() < 0.02 ? null : Math.floor(rnd() * 5));
    data.region!.push(rnd() < 0.04 ? null : i > rows * 0.8 && rnd() < 0.3 ? "far" : ["north", "south", "east"][Math.floor(rnd() * 3)]!);
    data.z!.push(rnd() * 3 - 1.5);
  }
  return data;
}
const TYPES = { b: "binary", ord: "ordinal", region: "nominal" } as const;
const ALL = ["x", "y", "b", "ord", "region", "z"];

function toCsv(data: Record<string, (number | string | null)[]>): string {
  const names = Object.keys(data);
  const lines = [names.join(",")];
  for (let i = 0; i < data[names[0]!]!.length; i++) lines.push(names.map((n) => data[n]![i] ?? "").join(","));
  return lines.join("\n") + "\n";
}

function expectSameMoments(a: Moments, b: Moments, tol: number): void {
  expect(b.n).toBe(a.n);
  expect(b.design).toEqual(a.design);
  const d = a.design.length;
  for (let i = 0; i < d; i++) {
    const sd = Math.sqrt(a.cov[i * d + i]!);
    expect(Math.abs(b.means[i]! - a.means[i]!)).toBeLessThanOrEqual(tol * Math.max(Math.abs(a.means[i]!), sd));
    for (let j = 0; j < d; j++) {
      const scale = Math.sqrt(a.cov[i * d + i]! * a.cov[j * d + j]!);
      expect(Math.abs(b.cov[i * d + j]! - a.cov[i * d + j]!)).toBeLessThanOrEqual(tol * scale);
    }
  }
}

function expectSame(one: PatternMoments, two: PatternMoments, subsets: string[][]): void {
  expect(two.patterns).toBe(one.patterns);
  expect(two.completeRows).toBe(one.completeRows);
  expect(two.patternList()).toEqual(one.patternList());
  for (const vars of subsets) expectSameMoments(one.momentsFor(vars), two.momentsFor(vars), 1e-12);
}

/** Rows complete on `vars`, counted from the columns (NaN marks missing in every column type). */
function completeOn(t: Table, vars: string[]): number {
  let n = 0;
  for (let i = 0; i < t.rows; i++) if (vars.every((v) => !Number.isNaN(t.column(v)!.values[i]!))) n++;
  return n;
}

const SUBSETS = [ALL, ["region", "x"], ["ord", "b", "y"], ["z"], ["y", "region", "z", "x"]];

describe("parallelPatternMoments", () => {
  it("parallelPatternMoments(table, opts) equals buildPatternMoments on mixed data with missing values and a nominal column (2 threads)", async () => {
    const table = createTable(generated(5001, 3), { types: TYPES });
    expect(table.column("region")!.type).toBe("nominal");
    let threads = 0;
    const two = await parallelPatternMoments(table, { variables: ALL }, { minRows: 0, onThreads: (t) => (threads = t) });
    expect(threads).toBe(2);
    const one = buildPatternMoments(table, { variables: ALL });
    expect(one.patterns).toBeGreaterThan(5);
    expectSame(one, two, SUBSETS);
    expect(two.completeRows).toBe(completeOn(table, ALL));
    for (const vars of SUBSETS) expect(two.momentsFor(vars).n).toBe(completeOn(table, vars));
    // both sides: the moments over two variables differ from those over all six
    expect(two.momentsFor(["x", "y"]).n).toBeGreaterThan(two.momentsFor(ALL).n);
  });

  it("parallelPatternMoments reads shared column buffers from the two-thread reader and matches with a row filter", async () => {
    const path = join(dir, "mixed.csv");
    writeFileSync(path, toCsv(generated(8000, 17)));
    let readThreads = 0;
    const table = await parallelReadTable(path, { file: path, types: TYPES }, { minBytes: 0, onRead: (t) => (readThreads = t) });
    expect(readThreads).toBe(2);
    expect(table.column("x")!.values.buffer).toBeInstanceOf(SharedArrayBuffer);
    const rowFilter = new Uint8Array(table.rows).map((_, i) => (i % 7 === 3 ? 0 : 1));
    let threads = 0;
    const two = await parallelPatternMoments(table, { variables: ALL, rowFilter }, { minRows: 0, onThreads: (t) => (threads = t) });
    expect(threads).toBe(2);
    const one = buildPatternMoments(table, { variables: ALL, rowFilter });
    expectSame(one, two, SUBSETS);
    const rowsInPatterns = two.patternList().reduce((s, p) => s + p.rows, 0);
    expect(rowsInPatterns).toBe(table.rows - Math.floor((table.rows + 3) / 7));
  });

  it("parallelPatternMoments equals buildPatternMoments with indicator, rank and flexible-basis columns (the default test's expansions)", async () => {
    const table = createTable(generated(6001, 11), { types: TYPES });
    const zs = Float64Array.from(table.column("z")!.values).sort();
    const xs = Float64Array.from(table.column("x")!.values).filter((v) => !Number.isNaN(v)).sort();
    const expansions = { indicators: ["ord"], ranks: ["y"], basis: new Map([["z", flexibleBasis(zs, 2)], ["x", flexibleBasis(xs, 1)]]) };
    let threads = 0;
    const two = await parallelPatternMoments(table, { variables: ALL, expansions }, { minRows: 0, onThreads: (t) => (threads = t) });
    expect(threads).toBe(2);
    const one = buildPatternMoments(table, { variables: ALL, expansions });
    expectSame(one, two, SUBSETS);
    const every = ALL.flatMap((v) => one.columnsOf(v).map((c) => c.index));
    expect(every.length).toBe(4 + 2 + 1 + 5 + 3 + 8); // x (score, 3 spline terms), y (score, rank), b, ord (score, 4 indicators), region (3 indicators), z (score, 3 spline terms, 4 hinges)
    expectSameMoments(one.momentsForColumns(every), two.momentsForColumns(every), 1e-12);
  });

  it("parallelPatternMoments uses one thread for small tables, ranks and ungrouped patterns, with the same moments", async () => {
    const table = createTable(generated(900, 5), { types: TYPES });
    const cases: [string, Parameters<typeof parallelPatternMoments>[1], Parameters<typeof parallelPatternMoments>[2]][] = [
      ["small table", { variables: ALL }, {}],
      ["ranks", { variables: ALL, useRanks: true }, { minRows: 0 }],
      ["too many patterns to group", { variables: ALL, maxPatternBytes: 0 }, { minRows: 0 }],
    ];
    for (const [why, options, opts] of cases) {
      let threads = 0;
      let reason: string | undefined;
      const pm = await parallelPatternMoments(table, options, { ...opts, onThreads: (t, r) => ((threads = t), (reason = r)) });
      expect([threads, reason]).toEqual([1, why]);
      expectSame(buildPatternMoments(table, options), pm, SUBSETS);
    }
  });

  it("parallelPatternMoments splits even tables of one and two rows, and an empty table", async () => {
    for (const rows of [0, 1, 2]) {
      const table = createTable({ x: [1.5, null].slice(0, rows), y: [2, 3].slice(0, rows) });
      const two = await parallelPatternMoments(table, { variables: ["x", "y"] }, { minRows: 0 });
      expectSame(buildPatternMoments(table, { variables: ["x", "y"] }), two, []);
      expect(two.momentsFor(["y"]).n).toBe(rows);
    }
  });
});

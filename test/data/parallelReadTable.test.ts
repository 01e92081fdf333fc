import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { parallelReadTable } from "../../cli/parallelReadTable.js";
import { DataError } from "../../src/errors.js";
import { readTable } from "../../src/data/readTable.js";
import type { ReadOptions } from "../../src/data/readOptions.js";
import type { Table } from "../../src/data/Table.js";
import { tableSnapshot } from "../helpers/tableSnapshot.js";

// The reference is the one-thread reader (readTable), itself checked against pandas in readTable.test.ts:
// the two-thread reader must give the identical table (values bit for bit, NaN and -0 apart) or the identical error.

const dir = mkdtempSync(join(tmpdir(), "arrowaudit-par-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let fileNo = 0;
function writeCsv(text: string): string {
  const path = join(dir, `t${fileNo++}.csv`);
  writeFileSync(path, text);
  return path;
}

/** A seeded table: continuous (some with 17 digits, exponents, -0, empty cells), binary, ordinal, nominal text, blank lines. */
function generated(rows: number, seed: number): string {
  let s = seed;
  const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
  const lines = ["x,y,bin,ord,region,z"];
  for (let i = 0; i < rows; i++) {
    const x = rnd() < 0.05 ? "" : (rnd() * 200 - 100).toFixed(4);
    const y = rnd() < 0.03 ? "NA" : rnd() < 0.1 ? String(rnd() * 1e-7) : rnd() < 0.02 ? "-0" : (rnd() * 10).toExponential(3);
    const bin = rnd() < 0.5 ? "0" : "1";
    const ord = String(Math.floor(rnd() * 5));
    // "far" appears only late in the file, so only the second half sees it
    const region = rnd() < 0.02 ? "" : i > rows * 0.8 && rnd() < 0.3 ? "far" : ["north", "south", "east"][Math.floor(rnd() * 3)]!;
    const z = String(rnd() * 3 - 1.5);
    lines.push([x, y, bin, ord, region, z].join(","));
    if (rnd() < 0.01) lines.push("");
  }
  return lines.join("\n") + "\n";
}

async function bothWays(text: string, options: ReadOptions = {}): Promise<{ one: Table; two: Table; threads: number; reason?: string }> {
  const path = writeCsv(text);
  const one = await readTable(new TextEncoder().encode(text), { ...options, file: path });
  let threads = 0;
  let reason: string | undefined;
  const two = await parallelReadTable(path, { ...options, file: path }, { minBytes: 0, onRead: (t, r) => ((threads = t), (reason = r)) });
  return { one, two, threads, reason };
}

async function errorOf(p: Promise<unknown>): Promise<Error> {
  try {
    await p;
  } catch (e) {
    return e as Error;
  }
  throw new Error("expected an error");
}

describe("parallelReadTable", () => {
  it("parallelReadTable(path) gives the same table as readTable on generated mixed data (LF, CRLF, no final newline, kept columns)", async () => {
    const text = generated(3000, 7);
    const variants: [string, string, ReadOptions][] = [
      ["LF", text, {}],
      ["CRLF", text.replace(/\n/g, "\r\n"), {}],
      ["no final newline", text.slice(0, -1), {}],
      ["kept columns", text, { columns: ["y", "region"] }],
      ["declared types", text, { types: { ord: "ordinal", bin: "nominal" }, missing: ["-0"] }],
    ];
    for (const [, t, opts] of variants) {
      const { one, two, threads } = await bothWays(t, opts);
      expect(threads).toBe(2);
      expect(tableSnapshot(two)).toEqual(tableSnapshot(one));
      // the columns stay in shared memory (a helper thread of the audit then shares them instead of copying)
      for (const c of two.columns) {
        expect(c.values.buffer).toBeInstanceOf(SharedArrayBuffer);
        if (c.codes) expect(c.codes.buffer).toBeInstanceOf(SharedArrayBuffer);
      }
    }
    const { two } = await bothWays(text);
    expect(two.rows).toBe(3000);
    expect(two.column("region")!.levels).toContain("far");
    expect(two.warnings.some((w) => w.includes("blank line"))).toBe(true);
  });

  it("parallelReadTable gives the same table when the rows outnumber the estimate from the sample (columns grow out of shared memory)", async () => {
    const lines = ["id,v,note"];
    // long rows in the first 64 KiB sample, short rows after: both halves hold more rows than estimated
    for (let i = 0; i < 400; i++) lines.push(`${i},${(i * 0.37).toFixed(3)},${"w".repeat(200 + (i % 7))}`);
    for (let i = 400; i < 20000; i++) lines.push(`${i},${(i * 0.37).toFixed(3)},${i % 3 === 0 ? "" : "s" + (i % 5)}`);
    const { one, two, threads } = await bothWays(lines.join("\n") + "\n", { types: { note: "nominal" } });
    expect(threads).toBe(2);
    expect(two.rows).toBe(20000);
    expect(tableSnapshot(two)).toEqual(tableSnapshot(one));
  });

  it("parallelReadTable falls back to one thread at a quote in the second half and still matches readTable", async () => {
    const lines = generated(2000, 11).split("\n");
    lines[1800] = `"1.5",2,0,1,"north, upper",3`;
    const { one, two, threads, reason } = await bothWays(lines.join("\n"));
    expect(threads).toBe(1);
    expect(reason).toContain("second half");
    expect(tableSnapshot(two)).toEqual(tableSnapshot(one));
    expect(two.column("region")!.levels).toContain("north, upper");
  });

  it("parallelReadTable reports a ragged row, stray text and a value outside declared levels in the second half with readTable's message and line", async () => {
    const base = generated(2000, 13).split("\n");
    const ragged = [...base];
    ragged[1700] = "1,2,3";
    const stray = [...base];
    stray[1750] = "abc,1,0,1,north,2";
    const levels = [...base];
    levels[1900] = "1,1,0,7,north,2";
    const cases: [string[], ReadOptions][] = [
      [ragged, {}],
      [stray, {}],
      [levels, { levels: { ord: ["0", "1", "2", "3", "4"] } }],
    ];
    for (const [lines, opts] of cases) {
      const text = lines.join("\n");
      const path = writeCsv(text);
      const a = await errorOf(readTable(new TextEncoder().encode(text), { ...opts, file: path }));
      let threads = 0;
      const b = await errorOf(parallelReadTable(path, { ...opts, file: path }, { minBytes: 0, onRead: (t) => (threads = t) }));
      expect(threads).toBe(lines === ragged ? 1 : 2); // a ragged row sends the file back to one thread; typing errors come after the join
      expect(b).toBeInstanceOf(DataError);
      expect(b.message).toBe(a.message);
      expect((b as DataError).line).toBe((a as DataError).line);
      expect((b as DataError).line).toBeGreaterThan(1000);
    }
  });

  it("parallelReadTable gives the same table as readTable (byte scanner and papaparse) with declared levels: numeric and text codes, binary, ordinal and nominal", async () => {
    const text = generated(3000, 17);
    const variants: [string, ReadOptions][] = [
      // numeric codes out of increasing order (scored by position), a text ordinal whose level "far" only the second half sees
      ["reversed", { levels: { ord: ["4", "3", "2", "1", "0"], bin: ["1", "0"], region: ["south", "north", "east", "far"] } }],
      // numeric codes in increasing order, with a level that never occurs (the codes stay the scores)
      ["increasing", { levels: { ord: ["0", "1", "2", "3", "4", "9"], bin: ["0", "1"] } }],
      // nominal columns, numeric and text, the first declared level as the reference
      ["nominal", { types: { ord: "nominal", bin: "nominal", region: "nominal" }, levels: { ord: ["2", "0", "4", "1", "3"], bin: ["1", "0"], region: ["far", "east", "north", "south"] } }],
      // a declaration that is not kept and kept columns
      ["kept columns", { levels: { ord: ["4", "3", "2", "1", "0"], bin: ["1", "0"] }, columns: ["ord", "region"] }],
    ];
    for (const [label, opts] of variants) {
      const { one, two, threads } = await bothWays(text, opts);
      const viaPapa = await readTable(new TextEncoder().encode(text), { ...opts, file: one.file, engine: "papaparse" });
      expect([label, threads]).toEqual([label, 2]);
      expect(tableSnapshot(two)).toEqual(tableSnapshot(one));
      expect(tableSnapshot(viaPapa)).toEqual(tableSnapshot(one));
      for (const [name, declared] of Object.entries(opts.levels!)) {
        const col = two.column(name);
        if (!col) continue; // not kept
        expect(col.levels).toEqual(declared);
        expect(col.typeSource).toBe("declared");
      }
    }
    // the declared order is what the scores follow, in both halves of the file
    const { two } = await bothWays(text, variants[0]![1]);
    const lines = text.trimEnd().split("\n").slice(1).filter((l) => l !== "");
    const ord = two.column("ord")!;
    const bin = two.column("bin")!;
    const region = two.column("region")!;
    expect(two.rows).toBe(lines.length);
    lines.forEach((l, i) => {
      const [, , b, o, r] = l.split(",");
      expect(ord.values[i]).toBe(4 - Number(o)); // position in 4|3|2|1|0
      expect(ord.codes![i]).toBe(4 - Number(o));
      expect(bin.values[i]).toBe(1 - Number(b)); // position in 1|0
      if (r === "") expect(region.codes![i]).toBe(-1);
      else expect(region.levels![region.codes![i]!]).toBe(r);
    });
    expect(two.warnings.filter((w) => w.includes("--levels lists its numeric codes out of increasing order"))).toHaveLength(2);
  });

  it("parallelReadTable reports values outside declared levels in both halves with readTable's message and first line", async () => {
    const lines = generated(2000, 19).split("\n");
    lines[300] = "1,1,0,7,north,2";
    lines[1900] = "1,1,0,8,north,2";
    lines[1950] = "1,1,0,7,north,2";
    const text = lines.join("\n");
    const opts: ReadOptions = { levels: { ord: ["0", "1", "2", "3", "4"] } };
    const path = writeCsv(text);
    const a = await errorOf(readTable(new TextEncoder().encode(text), { ...opts, file: path }));
    let threads = 0;
    const b = await errorOf(parallelReadTable(path, { ...opts, file: path }, { minBytes: 0, onRead: (t) => (threads = t) }));
    expect(threads).toBe(2);
    expect(b).toBeInstanceOf(DataError);
    expect(b.message).toBe(a.message);
    expect(b.message).toContain('column "ord" has 2 values that are not among its levels (0, 1, 2, 3, 4): "7" (line 301), "8" (line 1901)');
    expect((b as DataError).line).toBe(301);
    expect((a as DataError).line).toBe(301);
  });

  it("parallelReadTable reads small files and a one-row file like readTable, and refuses a header-only file like it", async () => {
    for (const text of ["a,b\n1,2\n", "a\n1\n\n2\n", generated(50, 3)]) {
      const path = writeCsv(text);
      const one = await readTable(new TextEncoder().encode(text), { file: path });
      expect(tableSnapshot(await parallelReadTable(path, { file: path }))).toEqual(tableSnapshot(one)); // default: one thread below 16 MiB
      expect(tableSnapshot(await parallelReadTable(path, { file: path }, { minBytes: 0 }))).toEqual(tableSnapshot(one));
    }
    // a header-only file (regression: it was a table of zero rows) and one whose rows are all blank, on either path
    for (const text of ["a,b\n", "a,b\n\n\n"]) {
      const path = writeCsv(text);
      const one = await errorOf(readTable(new TextEncoder().encode(text), { file: path }));
      expect(one).toBeInstanceOf(DataError);
      expect(one.message).toContain("no data rows");
      expect((await errorOf(parallelReadTable(path, { file: path }))).message).toBe(one.message);
      expect((await errorOf(parallelReadTable(path, { file: path }, { minBytes: 0 }))).message).toBe(one.message);
    }
  });
});

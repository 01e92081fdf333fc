/**
 * Files as they come from spreadsheets, statistics packages and other countries: long headers,
 * decimal commas, UTF-16 and other encodings, names in two Unicode forms, R's row names, ragged
 * rows, header-only files, identifier columns, ignored columns and per-column missing codes.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { parallelReadTable } from "../../cli/parallelReadTable.js";
import { DataError, UsageError } from "../../src/errors.js";
import { findHighCardinalityColumns } from "../../src/data/findHighCardinalityColumns.js";
import { decodeHead, readHeader } from "../../src/data/readHeader.js";
import type { ReadOptions } from "../../src/data/readOptions.js";
import { readTable } from "../../src/data/readTable.js";
import { tableSnapshot } from "../helpers/tableSnapshot.js";

const enc = new TextEncoder();
const bytes = (s: string) => enc.encode(s);
const dir = mkdtempSync(join(tmpdir(), "arrowaudit-real-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function* chunked(data: Uint8Array, size: number): AsyncIterable<Uint8Array> {
  for (let i = 0; i < data.length; i += size) yield data.slice(i, i + size);
}
async function errorOf(p: Promise<unknown> | (() => unknown)): Promise<Error> {
  try {
    await (typeof p === "function" ? p() : p);
  } catch (e) {
    return e as Error;
  }
  throw new Error("expected an error");
}
/** The same table read whole, in chunks of `sizes` bytes, by papaparse, and by the two-thread reader. */
async function everyWay(data: Uint8Array, options: ReadOptions, sizes = [1, 7, 64]) {
  const ref = tableSnapshot(await readTable(data, options));
  for (const size of sizes) expect(tableSnapshot(await readTable(chunked(data, size), options))).toEqual(ref);
  expect(tableSnapshot(await readTable(data, { ...options, engine: "papaparse" }))).toEqual(ref);
  const path = join(dir, `t${Math.random().toString(36).slice(2)}.csv`);
  writeFileSync(path, data);
  expect(tableSnapshot(await parallelReadTable(path, options, { minBytes: 0 }))).toEqual(ref);
  return ref;
}
/** The same error from every way of reading (papaparse, which decodes before it splits fields, does not name the column). */
async function sameErrorEveryWay(data: Uint8Array, options: ReadOptions): Promise<Error> {
  const e = await errorOf(readTable(data, options));
  for (const size of [1, 7, 64]) expect((await errorOf(readTable(chunked(data, size), options))).message).toBe(e.message);
  const noColumn = (m: string) => m.replace(/, column "[^"]*" has/, " has");
  expect(noColumn((await errorOf(readTable(data, { ...options, engine: "papaparse" }))).message)).toBe(noColumn(e.message));
  const path = join(dir, `e${Math.random().toString(36).slice(2)}.csv`);
  writeFileSync(path, data);
  expect((await errorOf(parallelReadTable(path, options, { minBytes: 0 }))).message).toBe(e.message);
  return e;
}
/** Seeded rows of three numeric columns. */
function rows(n: number, sep = ",", mark = "."): string[] {
  let s = 7;
  const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
  return Array.from({ length: n }, () => [rnd() * 100, rnd() * 10, rnd()].map((v) => v.toFixed(2).replace(".", mark)).join(sep));
}

describe("long headers", () => {
  // regression: the header was cut at 1 MiB, so the last of 9,003 columns were reported missing
  const names = Array.from({ length: 9003 }, (_, i) => `variable_${String(i).padStart(5, "0")}_${"x".repeat(110)}`);
  const text = [names.join(","), ...Array.from({ length: 5 }, (_, r) => names.map((_, i) => String((r * 31 + i) % 97)).join(","))].join("\n") + "\n";
  const data = bytes(text);

  it("readHeader and decodeHead return every one of 9,003 names of a 1 MiB+ header, read in growing pieces", () => {
    expect(names.join(",").length).toBeGreaterThan(1 << 20);
    expect(decodeHead(data.subarray(0, 1 << 20), false, "w.csv")).toBeUndefined(); // the first MiB ends inside the header: read more
    const head = decodeHead(data.subarray(0, 2 << 20), false, "w.csv")!;
    expect(readHeader(head, { file: "w.csv" })).toEqual(names);
  });

  it("readTable and parallelReadTable keep the last columns of a 1 MiB+ header", async () => {
    const keep = names.slice(-3);
    const t = await everyWay(data, { file: "w.csv", columns: keep }, [4096, 65536]);
    expect(t.columns.map((c) => c.name)).toEqual(keep);
    expect(t.rows).toBe(5);
    expect(t.columns[2]!.values[0]).toBe(9002 % 97);
  });
});

describe("decimal commas", () => {
  const semicolon = ["weight;height;score", ...rows(30, ";", ",")].join("\n") + "\n";

  it("readTable stops at numbers written with decimal commas in a semicolon or tab file read without decimalComma, naming the fix", async () => {
    // regression: such a file was read as all-nominal columns and tested with chi-square
    const e = await sameErrorEveryWay(bytes(semicolon), { file: "d.csv" });
    expect(e).toBeInstanceOf(DataError);
    expect(e.message).toMatch(/^d\.csv:2: column "weight" has 30 numbers written with a decimal comma \("\d+,\d\d" on line 2\) in a file separated by semicolons, but the file is read with a decimal point, which would make them text; read it with --decimal-comma, or, if they are labels, declare --types weight=nominal$/);
    expect((e as DataError).column).toBe(1);
    const tab = semicolon.replace(/;/g, "\t");
    expect((await errorOf(readTable(bytes(tab), { file: "d.tsv" }))).message).toContain("in a file separated by tabs");
  });

  it("readTable reads the same file with decimalComma as numbers, and a declared text column as text", async () => {
    const t = await readTable(bytes(semicolon), { decimalComma: true });
    expect(t.columns.map((c) => c.type)).toEqual(["continuous", "continuous", "continuous"]);
    const declared = await readTable(bytes(semicolon), { types: { weight: "nominal", height: "nominal", score: "nominal" } });
    expect(declared.column("weight")!.type).toBe("nominal");
  });

  it("readTable leaves quoted decimal commas in a comma file, and a few labels like 1,2 among other text, alone", async () => {
    const quoted = ["x,y", ...Array.from({ length: 10 }, (_, i) => `"${i},5",${i}`)].join("\n");
    expect((await readTable(bytes(quoted))).column("x")!.type).toBe("nominal"); // comma-separated: not the decimal-comma pattern's business
    const labels = ["pair;y", ...Array.from({ length: 12 }, (_, i) => `${i % 3 === 0 ? "1,2" : ["left", "right"][i % 2]};${i}`)].join("\n");
    expect((await readTable(bytes(labels))).column("pair")!.type).toBe("nominal"); // 4 of 12 text cells: not more than half
  });

  it("readTable refuses decimalComma on a comma-separated file with its own error (line 1 and the fix), not a missing column", async () => {
    // regression: this said '--columns: column "a" is not in the file header', an option never given
    const e = await errorOf(readTable(bytes("a,b,c\n1,2,3\n"), { file: "c.csv", decimalComma: true, columns: ["a"] }));
    expect(e).toBeInstanceOf(UsageError);
    expect(e.message).toBe(
      'c.csv:1: --decimal-comma is for files separated by semicolons or tabs, but this header is separated by commas ("a,b,c"); drop --decimal-comma (a comma-separated file writes decimals with a point), or save the file with semicolons',
    );
  });
});

describe("encodings", () => {
  const text = ["âge,sbp,town", "61,130.5,Ødegård", "70,,Zürich", "58,141,Tromsø"].join("\r\n") + "\r\n";

  it("readTable reads UTF-16 with a byte-order mark (little- and big-endian) as the same table as UTF-8", async () => {
    const ref = tableSnapshot(await readTable(bytes(text), { file: "u.csv" }));
    // Node Buffer's utf16le codec, byte-swapped for big-endian
    const le = new Uint8Array(Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, "utf16le")]));
    const be = new Uint8Array(Buffer.concat([Buffer.from([0xfe, 0xff]), Buffer.from(text, "utf16le").swap16()]));
    expect(await everyWay(le, { file: "u.csv" })).toEqual(ref);
    expect(await everyWay(be, { file: "u.csv" })).toEqual(ref);
    expect(readHeader(decodeHead(le, true, "u.csv")!)).toEqual(["âge", "sbp", "town"]);
  });

  it("readTable refuses UTF-16 without a byte-order mark as not UTF-8 text, on line 1, with the hint", async () => {
    // regression: this gave "nodes are not columns" with "did you mean" the same names
    const le = new Uint8Array(Buffer.from(text, "utf16le"));
    const e = await sameErrorEveryWay(le, { file: "u.csv" });
    expect(e).toBeInstanceOf(DataError);
    // "â" is E2 00 in UTF-16LE: E2 opens a 3-byte UTF-8 sequence that 00 breaks
    expect(e.message).toBe(
      "u.csv:1: the file is not UTF-8 text: line 1 has the byte 0xE2, which is not valid UTF-8; every other byte is NUL, so this looks like UTF-16 text without a byte-order mark: save it as CSV UTF-8 (or as UTF-16 with a byte-order mark)",
    );
    expect(() => decodeHead(le, true, "u.csv")).toThrow(/^u\.csv:1: the file is not UTF-8 text/);
  });

  it("readTable names the line and column of the first byte that is not UTF-8 text, in a kept or a skipped column, on every path", async () => {
    const latin1 = (s: string) => Uint8Array.from(s, (ch) => ch.charCodeAt(0)); // ISO 8859-1: one byte per character
    const body = Array.from({ length: 40 }, (_, i) => `${i},${i % 7},${i === 33 ? "Z\u00fcrich" : "Bergen"}`);
    const data = latin1(["id,n,town", ...body].join("\n") + "\n");
    const e = await sameErrorEveryWay(data, { file: "l.csv" });
    expect(e.message).toBe(
      'l.csv:35: the file is not UTF-8 text: line 35, column "town" has the byte 0xFC, which is not valid UTF-8; save the file as CSV UTF-8 (files from older spreadsheet programs are often Latin-1 or Windows-1252)',
    );
    expect((e as DataError).line).toBe(35);
    // a column the caller does not keep is still checked
    const skipped = await sameErrorEveryWay(data, { file: "l.csv", columns: ["id"] });
    expect(skipped.message).toMatch(/^l\.csv:35: the file is not UTF-8 text: line 35 has the byte 0xFC/);
    // a NUL byte in a number column; and in a quoted file (papaparse from the first quote)
    const nul = bytes(["a,b", "1,2", "3,4\u0000", "5,6"].join("\n"));
    expect((await sameErrorEveryWay(nul, { file: "n.csv" })).message).toMatch(/^n\.csv:3: the file is not UTF-8 text: line 3, column "b" has a NUL byte \(0x00\)/);
    const quoted = bytes(['a,b', '"x",2', '"y",3', '"z\u0000",4'].join("\n"));
    expect((await sameErrorEveryWay(quoted, { file: "q.csv" })).message).toMatch(/^q\.csv:4: the file is not UTF-8 text: line 4 has a NUL byte/);
    // in the header
    const header = latin1("id,t\u00e9l\n1,2\n");
    expect((await sameErrorEveryWay(header, { file: "h.csv" })).message).toMatch(/^h\.csv:1: the file is not UTF-8 text: line 1 has the byte 0xE9/);
  });
});

describe("Unicode forms of names", () => {
  const nfc = "\u00e2ge"; // â as one code point (NFC)
  const nfd = "a\u0302ge"; // a + combining circumflex (NFD)

  it("readTable matches a requested name to a header in another Unicode form (UAX #15, NFC), keeps the requested spelling and says so", async () => {
    // regression: the graph's "âge" (NFC) against the file's "âge" (NFD) gave "âge (did you mean âge?)"
    const t = await readTable(bytes(`${nfd},sbp\n61,130\n70,141\n`), { file: "f.csv", columns: [nfc, "sbp"], types: { [nfc]: "continuous" } });
    expect(t.columns.map((c) => c.name)).toEqual([nfc, "sbp"]);
    expect(t.column(nfd)).toBe(t.column(nfc));
    expect(t.warnings).toContain(
      `column "${nfd}" is written in another Unicode form in the file than "${nfc}" (NFD in the file, NFC asked for); they were matched after normalising both to NFC, and the column is called "${nfc}"`,
    );
    expect(t.column(nfc)!.typeSource).toBe("declared");
    // option names in another form find the column too
    const m = await readTable(bytes(`${nfc},sbp\n0,130\n70,141\n`), { missingByColumn: { [nfd]: ["0"] } });
    expect(m.column(nfc)!.missing).toBe(1);
  });

  it("readTable and readHeader refuse two columns whose names differ only in Unicode form", async () => {
    const data = bytes(`${nfc},sbp,${nfd}\n1,2,3\n`);
    const e = await errorOf(readTable(data, { file: "f.csv" }));
    expect(e).toBeInstanceOf(DataError);
    expect(e.message).toBe(`f.csv:1: columns 1 and 3 are both named "${nfc}", written in two Unicode forms (NFC and NFD) that look alike and would match the same graph node; rename one of them`);
    expect(() => readHeader(`${nfc},sbp,${nfd}\n`, { file: "f.csv" })).toThrow(e.message);
  });
});

describe("header shapes", () => {
  it("readTable and readHeader read an empty first header cell (R's write.csv) as row labels, left out with a note", async () => {
    // regression: this was refused with "column 1 has an empty name"
    const r = ['"","age","sbp"', '"1",61,130', '"2",70,141', '"3",58,'].join("\n") + "\n";
    const t = await everyWay(bytes(r), { file: "r.csv" });
    expect(t.columns.map((c) => c.name)).toEqual(["age", "sbp"]);
    expect(t.warnings).toContain("column 1 has no name: it was read as row labels (as R's write.csv writes them) and left out");
    expect(readHeader(r)).toEqual(["age", "sbp"]);
    // an empty name anywhere else is still an error, and so is a lone unnamed column
    expect((await errorOf(readTable(bytes("age,,sbp\n1,2,3\n"), { file: "e.csv" }))).message).toBe("e.csv:1: column 2 has no name; name every column in the header line");
    expect((await errorOf(readTable(bytes('""\n1\n'), { file: "e.csv" }))).message).toBe("e.csv:1: column 1 has no name; name every column in the header line");
  });

  it("readTable reports a ragged row as ragged (file, line, fix), also when only some columns are kept", async () => {
    // regression: "a,b,c" then "1,2" was read as one column "a,b,c" (semicolon-separated) and reported '--columns: column "a" is not in the file header'
    for (const options of [{ file: "g.csv" }, { file: "g.csv", columns: ["a", "c"] }]) {
      const e = await errorOf(readTable(bytes("a,b,c\n1,2\n"), options));
      expect(e).toBeInstanceOf(DataError);
      expect(e.message).toBe("g.csv:2: row has 2 fields but the header has 3; check the delimiter and quoting on this line");
    }
    expect(readHeader("a,b,c\n1,2\n")).toEqual(["a", "b", "c"]);
  });

  it("readTable names a column repeated many times once, with its count", async () => {
    const header = ["a", ...Array.from({ length: 500 }, () => "b")].join(",");
    const e = await errorOf(readTable(bytes(`${header}\n`), { file: "r.csv" }));
    expect(e.message).toBe('r.csv:1: column name "b" appears 500 times (columns 2, 3, 4, 5, 6, ...); make the names unique');
  });
});

describe("columns left out, and identifiers", () => {
  const data = bytes(["id,visit_date,age", ...Array.from({ length: 120 }, (_, i) => `P${1000 + i},2024-01-${String((i % 28) + 1).padStart(2, "0")},${40 + (i % 30)}`)].join("\n"));

  it("readTable leaves out ignored columns, refusing a name not in the header or one that is also kept", async () => {
    const t = await readTable(data, { ignore: ["id", "visit_date"] });
    expect(t.columns.map((c) => c.name)).toEqual(["age"]);
    const e = await errorOf(readTable(data, { ignore: ["idd"] }));
    expect(e).toBeInstanceOf(UsageError);
    expect(e.message).toBe('--ignore: column "idd" is not in the file header (id, visit_date, age); did you mean "id"?');
    await expect(readTable(data, { ignore: ["id"], columns: ["id", "age"] })).rejects.toBeInstanceOf(UsageError);
  });

  it("readTable warns about an identifier-like column naming --ignore, and a high-cardinality one as untestable; findHighCardinalityColumns finds it", async () => {
    const t = await readTable(data, { file: "v.csv" });
    expect(t.warnings).toContain(
      'column "id" has 120 levels among 120 observed rows (more than half of them, and more than 50), like an identifier, so claims that involve it cannot be tested; leave it out (--ignore id, or --unmeasured id when it is a graph node)',
    );
    // the identifier note is replaced by the stronger warning, not repeated
    expect(t.warnings.filter((w) => w.startsWith('column "id"'))).toHaveLength(1);
    // 28 dates in 120 rows: more than 20 distinct texts but fewer than half the rows, so neither
    expect(t.warnings.join(" ")).not.toContain("visit_date");
    const found = findHighCardinalityColumns(t);
    expect([...found.keys()]).toEqual(["id"]);
    expect(found.get("id")).toBe('"id" has 120 levels among 120 observed rows (about one row per level, like an identifier), so no test can use it');
    // 30 texts in 30 rows: an identifier note naming --ignore, not high-cardinality (at most 50 levels)
    const small = await readTable(bytes(["pid,x", ...Array.from({ length: 30 }, (_, i) => `P${i},${i % 2}`)].join("\n")));
    expect(small.warnings.join(" ")).toContain("leave it out with --ignore pid");
    expect(findHighCardinalityColumns(small).size).toBe(0);
    // numeric codes declared nominal count too, with the --types hint
    const codes = await readTable(bytes(["code", ...Array.from({ length: 60 }, (_, i) => String(1000 + i))].join("\n")), { types: { code: "nominal" } });
    expect(codes.warnings.join(" ")).toContain("or, if its values are measurements, declare --types code=continuous");
  });
});

describe("per-column missing codes", () => {
  const data = bytes(["fage,fedu,kids", "0,0,0", "34,2,1", "41,9,0", "-9,3,2", "29,1,0"].join("\n"));

  it("readTable applies a code to one column only, and a bare code to every column (numbers by value)", async () => {
    const t = await readTable(data, { missing: ["-9"], missingByColumn: { fage: ["0"], fedu: ["0.0", "9"] } });
    expect(t.column("fage")!.missing).toBe(2); // 0 and -9
    expect(t.column("fedu")!.missing).toBe(2); // 0 (as 0.0) and 9
    expect(t.column("kids")!.missing).toBe(0); // 0 is a real count here
    expect(t.column("kids")!.values[0]).toBe(0);
  });

  it("readTable refuses a per-column code for a column not in the header, and hints at quoting a code that holds =", async () => {
    const e = await errorOf(readTable(data, { missingByColumn: { ">": ["90"] } }));
    expect(e).toBeInstanceOf(UsageError);
    expect(e.message).toBe(`--missing: column ">" is not in the file header (fage, fedu, kids); check the spelling; a code that holds "=" goes in double quotes (--missing '">=..."')`);
  });
});

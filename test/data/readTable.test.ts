import { readFileSync } from "node:fs";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { DataError, UsageError } from "../../src/errors.js";
import { readTable } from "../../src/data/readTable.js";
import type { ReadOptions } from "../../src/data/readOptions.js";
import { tableSnapshot } from "../helpers/tableSnapshot.js";

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../fixtures/data/${name}`, import.meta.url)));
const enc = new TextEncoder();
const bytes = (s: string) => enc.encode(s);

// pandas read_csv(dtype=str) + Python float(), written by test/fixtures/data/make_parse_reference.py
const reference = JSON.parse(readFileSync(new URL("../fixtures/data/parse-reference.json", import.meta.url), "utf8")) as {
  files: Record<string, Record<string, (number | string | null)[]>>;
};
const fixtureOptions: Record<string, ReadOptions> = {
  "mixed.csv": {},
  "quoted.csv": {},
  "decimal-comma.csv": { decimalComma: true },
  "tab.tsv": {},
  "unicode.csv": {},
  "codes.csv": { missing: ["-9", "999"] },
};

async function* chunked(data: Uint8Array, size: number): AsyncIterable<Uint8Array> {
  for (let i = 0; i < data.length; i += size) yield data.slice(i, i + size);
}

function withCrlf(data: Uint8Array): Uint8Array {
  return bytes(new TextDecoder().decode(data).replace(/\n/g, "\r\n"));
}
function withBom(data: Uint8Array): Uint8Array {
  const out = new Uint8Array(data.length + 3);
  out.set([0xef, 0xbb, 0xbf]);
  out.set(data, 3);
  return out;
}

async function readError(data: Uint8Array, options: ReadOptions = {}): Promise<Error> {
  try {
    await readTable(data, options);
  } catch (e) {
    return e as Error;
  }
  throw new Error("expected readTable to throw");
}

describe("readTable", () => {
  for (const [name, options] of Object.entries(fixtureOptions)) {
    for (const engine of ["auto", "papaparse"] as const) {
      it(`readTable(${name}, engine ${engine}) matches pandas read_csv cell by cell`, async () => {
        const t = await readTable(fixture(name), { ...options, file: name, engine });
        const expected = reference.files[name]!;
        expect(t.columns.map((c) => c.name)).toEqual(Object.keys(expected));
        for (const col of t.columns) {
          const cells = expected[col.name]!;
          expect(t.rows).toBe(cells.length);
          expect(col.missing).toBe(cells.filter((c) => c === null).length);
          cells.forEach((cell, i) => {
            if (cell === null) {
              expect(Number.isNaN(col.values[i]!)).toBe(true);
              if (col.codes) expect(col.codes[i]).toBe(-1);
            } else if (typeof cell === "number") {
              if (col.type === "continuous" || /^-?[\d.]/.test(col.levels?.[0] ?? "0")) expect(col.values[i]).toBe(cell);
              else expect(col.levels![col.codes![i]!]).toBe(String(cell));
            } else {
              expect(col.levels![col.codes![i]!]).toBe(cell);
            }
          });
        }
      });
    }
  }

  it("readTable(mixed.csv) infers continuous, binary, ordinal and nominal types and notes the ordinal guess", async () => {
    const t = await readTable(fixture("mixed.csv"), { file: "mixed.csv" });
    const types = Object.fromEntries(t.columns.map((c) => [c.name, c.type]));
    expect(types).toEqual({
      id: "continuous",
      age: "continuous",
      sex: "binary",
      smoker: "binary",
      edu: "ordinal",
      region: "nominal",
      sbp: "continuous",
      visit: "nominal",
    });
    expect(t.columns.every((c) => c.typeSource === "inferred")).toBe(true);
    expect(t.column("sex")!.levels).toEqual(["F", "M"]);
    expect(t.column("smoker")!.levels).toEqual(["0", "1"]);
    expect(t.column("edu")!.levels).toEqual(["1", "2", "3", "4"]);
    expect(t.column("region")!.levels).toEqual(["east", "north", "south"]);
    // numeric binary/ordinal: values are the numbers, codes index the sorted levels
    const edu = t.column("edu")!;
    for (let i = 0; i < t.rows; i++) {
      if (edu.codes![i]! >= 0) expect(edu.values[i]).toBe(Number(edu.levels![edu.codes![i]!]));
    }
    // text binary: values are the level index
    const sex = t.column("sex")!;
    for (let i = 0; i < t.rows; i++) expect(sex.values[i]).toBe(sex.codes![i]);
    expect(t.warnings.some((w) => w.includes('column "edu": inferred ordinal from 4 integer levels'))).toBe(true);
    expect(t.warnings.some((w) => w.includes('"age"'))).toBe(false);
    expect(t.column("nope")).toBeUndefined();
  });

  const variants: [string, (d: Uint8Array) => Uint8Array][] = [
    ["as is", (d) => d],
    ["CRLF", withCrlf],
    ["BOM", withBom],
    ["BOM + CRLF", (d) => withBom(withCrlf(d))],
  ];
  for (const name of Object.keys(fixtureOptions)) {
    for (const [label, variant] of variants) {
      it(`readTable(${name}, ${label}) gives identical tables from the byte scanner, papaparse and 1/7/64-byte chunks`, async () => {
        const data = variant(fixture(name));
        const frozen = data.slice();
        const opts = { ...fixtureOptions[name], file: name };
        const ref = tableSnapshot(await readTable(data, { ...opts, engine: "papaparse" }));
        expect(tableSnapshot(await readTable(data, opts))).toEqual(ref);
        for (const size of [1, 7, 64]) expect(tableSnapshot(await readTable(chunked(data, size), opts))).toEqual(ref);
        expect(data).toEqual(frozen); // input bytes not mutated
        expect(ref.columns[0]!.name.charCodeAt(0)).not.toBe(0xfeff); // BOM stripped
      });
    }
  }

  it("readTable gives identical tables from both engines on generated numbers (negatives, exponents, codes, CRLF, decimal comma)", async () => {
    const cell = fc.oneof(
      fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e12, max: 1e12 }).map((v) => String(v)),
      fc.tuple(fc.double({ noNaN: true, noDefaultInfinity: true }), fc.integer({ min: 0, max: 20 })).map(([v, d]) => v.toExponential(d)),
      fc.integer({ min: -1000, max: 1000 }).map(String),
      fc.constantFrom("", "NA", "-9", "-9.0", "999", ".", " 3.5 ", "+.5", "5.", "1e", "-", "x", "007", "-0", "123456789012345678901"),
    );
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.array(cell, { minLength: 3, maxLength: 3 }), { minLength: 1, maxLength: 30 }),
        fc.constantFrom(",", ";", "\t"),
        fc.boolean(),
        fc.boolean(),
        async (rows, delimiter, crlf, decimalComma) => {
          if (decimalComma && delimiter === ",") decimalComma = false;
          const nl = crlf ? "\r\n" : "\n";
          const fix = (s: string) => (decimalComma ? s.replace(".", ",") : s);
          const text = ["a", "b", "c"].join(delimiter) + nl + rows.map((r) => r.map(fix).join(delimiter)).join(nl) + nl;
          const data = bytes(text);
          const opts: ReadOptions = { decimalComma, missing: ["-9", "999"], types: { a: "nominal", b: "nominal", c: "nominal" } };
          const viaPapa = tableSnapshot(await readTable(data, { ...opts, engine: "papaparse" }));
          const viaScan = tableSnapshot(await readTable(data, opts));
          expect(viaScan).toEqual(viaPapa);
          // numbers read by value: every level that is a number equals Number(text) of some cell
          const contOpts: ReadOptions = { decimalComma, missing: ["-9", "999"] };
          let a: unknown;
          let b: unknown;
          try {
            a = tableSnapshot(await readTable(data, { ...contOpts, engine: "papaparse" }));
          } catch (e) {
            a = String(e);
          }
          try {
            b = tableSnapshot(await readTable(chunked(data, 5), contOpts));
          } catch (e) {
            b = String(e);
          }
          expect(b).toEqual(a);
        },
      ),
      { numRuns: 150, seed: 11 },
    );
  });

  it("readTable parses numbers to the correctly rounded double (Number) on the byte path", async () => {
    const texts = ["0.1", "-2.5e-3", "1.7976931348623157e308", "5e-324", "123456789012345678", "9007199254740993", "0.30000000000000004", "1e22", "1e23", "-0", "4.35", "+.5", "5."];
    const t = await readTable(bytes("x\n" + texts.join("\n") + "\n"));
    texts.forEach((s, i) => expect(Object.is(t.column("x")!.values[i], Number(s))).toBe(true)); // ECMAScript Number()
  });

  it("readTable reads plain decimals of 1 to 12 digits as Number() does, at both sides of the 9-digit integer fast path", async () => {
    // ECMAScript Number() is the correctly rounded reference (common practice); 9 digits fit the
    // 32-bit mantissa of the scanner's fast path, 10 or more take the double-mantissa path
    const decimal = fc
      .tuple(fc.boolean(), fc.stringMatching(/^[0-9]{1,12}$/), fc.nat({ max: 12 }), fc.boolean())
      .map(([neg, digits, at, lastCell]) => {
        const k = Math.min(at, digits.length);
        return { text: `${neg ? "-" : ""}${digits.slice(0, k)}.${digits.slice(k)}`, lastCell };
      });
    await fc.assert(
      fc.asyncProperty(fc.array(decimal, { minLength: 1, maxLength: 40 }), async (cells) => {
        const lines = cells.map((c) => (c.lastCell ? `0,${c.text}` : `${c.text},0`));
        const t = await readTable(bytes("a,b\n" + lines.join("\n") + "\n"));
        cells.forEach((c, i) => {
          const got = t.column(c.lastCell ? "b" : "a")!.values[i];
          expect([c.text, Object.is(got, Number(c.text))]).toEqual([c.text, true]);
        });
      }),
      { numRuns: 200, seed: 23 },
    );
    const edge = ["999999999", "1000000000", "-999999999", "0.999999999", "-0.0000", "-.5", ".5", "-5.", "0.123456789", "12345.6789", "2147483647", "4294967296.5"];
    const t = await readTable(bytes("x,y\n" + edge.map((e) => `${e},${e}`).join("\n") + "\n"));
    edge.forEach((e, i) => {
      expect(Object.is(t.column("x")!.values[i], Number(e))).toBe(true); // ECMAScript Number()
      expect(Object.is(t.column("y")!.values[i], Number(e))).toBe(true); // last cell of the line
    });
    // not numbers: a lone sign, sign and mark, two signs, two marks (text among numbers is reported) ...
    for (const bad of ["-", "--5", "-+5", "1.2.3", "-."]) {
      await expect(readTable(bytes(`x\n1\n2\n${bad}\n`), { types: { x: "continuous" } })).rejects.toThrow(DataError);
    }
    // ... while a lone mark is a default missing code (DEFAULT_MISSING_CODES) and an empty cell is missing
    const dots = await readTable(bytes("x,y\n1,.\n.,\n"), { types: { x: "continuous", y: "continuous" } });
    expect([...dots.column("x")!.values, ...dots.column("y")!.values]).toEqual([1, NaN, NaN, NaN]);
  });

  it("readTable hands over to papaparse at a late quote and still matches papaparse alone", async () => {
    const lines = ["id,score,name"];
    for (let i = 1; i <= 3000; i++) lines.push(`${i},${(i * 0.37 - 500).toFixed(3)},${i === 2500 ? '"Doe, J"' : "n" + (i % 5)}`);
    const data = bytes(lines.join("\n") + "\n");
    const opts = { types: { name: "nominal" as const } };
    const ref = tableSnapshot(await readTable(data, { ...opts, engine: "papaparse" }));
    expect(tableSnapshot(await readTable(data, opts))).toEqual(ref);
    expect(tableSnapshot(await readTable(chunked(data, 4096), opts))).toEqual(ref);
    expect(ref.rows).toBe(3000);
  });

  it("readTable reads quoted fields with delimiters, doubled quotes and newlines, and keeps line numbers after them", async () => {
    const t = await readTable(fixture("quoted.csv"));
    expect(t.column("comment")!.levels).toContain("two\nlines");
    expect(t.column("score")!.type).toBe("continuous");
    // line 6 follows a record spanning lines 3-4 and the record of line 5
    const bad = bytes('a,b\n1,"x\ny"\n2,z\n3\n');
    for (const engine of ["auto", "papaparse"] as const) {
      const e = await readError(bad, { file: "q.csv", engine });
      expect(e).toBeInstanceOf(DataError);
      expect((e as DataError).line).toBe(5);
    }
  });

  it("readTable reports stray text among numbers with the first lines and the fixes (golden message)", async () => {
    const e = await readError(fixture("stray-text.csv"), { file: "stray-text.csv" });
    expect(e).toBeInstanceOf(DataError);
    expect(e.message).toBe(
      'stray-text.csv:6: column "sbp" has text ">180" among numbers (also "n/d" on line 13); declare it with --missing ">180", read the column as text with --types sbp=nominal, or fix the file',
    );
    expect((e as DataError).line).toBe(6);
    expect((e as DataError).column).toBe(2);
    const ok = await readTable(fixture("stray-text.csv"), { missing: [">180", "n/d"] });
    expect(ok.column("sbp")!.type).toBe("continuous");
    expect(ok.column("sbp")!.missing).toBe(2);
  });

  it("readTable suggests --decimal-comma for 12,5 among numbers in a semicolon file", async () => {
    const rows = ["id;sbp", ...Array.from({ length: 20 }, (_, i) => `${i};${120 + i}`), "21;12,5"];
    const e = await readError(bytes(rows.join("\n")), { file: "d.csv" });
    expect(e.message).toContain('d.csv:22: column "sbp" has text "12,5" among numbers');
    expect(e.message).toContain("--decimal-comma");
    const t = await readTable(bytes(rows.join("\n")), { decimalComma: true });
    expect(t.column("sbp")!.values[20]).toBe(12.5);
  });

  it("readTable reads a column with less than 90% numbers as nominal, with a note", async () => {
    const rows = ["g", ...Array.from({ length: 8 }, (_, i) => String(i % 3)), "unknown", "unknown"];
    const t = await readTable(bytes(rows.join("\n")));
    expect(t.column("g")!.type).toBe("nominal");
    expect(t.column("g")!.levels).toEqual(["0", "1", "2", "unknown"]);
    expect(t.warnings.join(" ")).toContain("mixes numbers and text");
  });

  it("readTable rejects ragged rows with the line and both field counts", async () => {
    for (const engine of ["auto", "papaparse"] as const) {
      const e = await readError(fixture("ragged.csv"), { file: "ragged.csv", engine });
      expect(e).toBeInstanceOf(DataError);
      expect(e.message).toBe("ragged.csv:3: row has 2 fields but the header has 3; check the delimiter and quoting on this line");
    }
    // a skipped column still counts for raggedness
    const e2 = await readError(fixture("ragged.csv"), { columns: ["a"] });
    expect(e2).toBeInstanceOf(DataError);
  });

  it("readTable rejects empty files, empty first lines, empty and duplicate column names", async () => {
    expect((await readError(bytes(""), { file: "e.csv" })).message).toMatch(/^e\.csv:1: the file is empty; the first line must name the columns/);
    expect(await readError(withBom(bytes("")))).toBeInstanceOf(DataError);
    expect((await readError(bytes("\n1,2\n"))).message).toContain("the first line is empty");
    const empty = await readError(bytes("a,,c\n1,2,3\n"), { file: "n.csv" });
    expect(empty.message).toBe("n.csv:1: column 2 has no name; name every column in the header line");
    const dup = await readError(bytes("a,b,a\n1,2,3\n"), { file: "n.csv" });
    expect(dup.message).toBe('n.csv:1: column name "a" appears twice (columns 1 and 3); make the names unique');
    expect((dup as DataError).column).toBe(3);
  });

  it("readTable refuses a header-only file naming it, and reads a one-row file", async () => {
    // regression: a header-only file used to give a table of zero rows and an audit that ran on nothing, exit 0
    const h = await readError(bytes("a,b\n"), { file: "h.csv" });
    expect(h).toBeInstanceOf(DataError);
    expect(h.message).toBe("h.csv: the file has a header line but no data rows; give a file with one row per participant below the header");
    expect((await readError(bytes("a;b"), { file: "h.csv" })).message).toMatch(/^h\.csv: the file has a header line but no data rows/);
    expect((await readError(bytes("a,b\n\n\n"), { file: "h.csv" })).message).toContain("no data rows (only 2 blank lines)");
    const one = await readTable(bytes("a,b\n1.5,x"));
    expect(one.rows).toBe(1);
    expect(one.column("a")!.values[0]).toBe(1.5);
    expect(one.column("b")!.levels).toEqual(["x"]);
  });

  it("readTable keeps an all-missing column and a constant column, noting both", async () => {
    const t = await readTable(bytes("a,b,c\n1,NA,5\n2,,5\n3,.,5\n"));
    expect(t.column("b")!.type).toBe("continuous");
    expect(t.column("b")!.missing).toBe(3);
    expect(t.column("c")!.type).toBe("continuous");
    expect(t.warnings).toContain('column "b" is entirely missing');
    expect(t.warnings).toContain('column "c" is constant');
  });

  it("readTable reads Unicode column names and text (unicode.csv, quoted.csv)", async () => {
    const t = await readTable(fixture("unicode.csv"));
    expect(t.columns.map((c) => c.name)).toEqual(["âge", "血压", "Größe"]);
    expect(t.column("血压")!.values[1]).toBe(135.5);
    const q = await readTable(fixture("quoted.csv"));
    expect(q.column("name")!.levels).toContain("Ødegård, Per");
  });

  it("readTable matches numeric missing codes by value (-9 matches -9.0, -9e0) but not -9.5", async () => {
    const t = await readTable(fixture("codes.csv"), { missing: ["-9", "999"] });
    expect([...t.column("b")!.values].map((v) => (Number.isNaN(v) ? null : v))).toEqual([null, null, 3, null, 6]);
    expect(t.column("a")!.values[2]).toBe(-9.5);
    const plain = await readTable(fixture("codes.csv"));
    expect(plain.column("b")!.missing).toBe(0);
  });

  it("readTable detects comma, semicolon and tab delimiters and honours an explicit one", async () => {
    expect((await readTable(fixture("tab.tsv"))).columns.map((c) => c.name)).toEqual(["x", "y", "label"]);
    expect((await readTable(fixture("decimal-comma.csv"), { decimalComma: true })).columns.length).toBe(3);
    expect((await readTable(bytes("a;b\n1,5;2\n"), { decimalComma: true })).column("a")!.values[0]).toBe(1.5);
    const single = await readTable(bytes("a;b\n1;2\n"), { delimiter: "," });
    expect(single.columns.map((c) => c.name)).toEqual(["a;b"]);
    await expect(readTable(bytes("a;b\n"), { delimiter: ",", decimalComma: true })).rejects.toBeInstanceOf(UsageError);
  });

  it("readTable skips blank lines in multi-column files (counted) and reads them as missing in one-column files", async () => {
    const t = await readTable(bytes("a,b\n1,2\n\n3,4\r\n\r\n"));
    expect(t.rows).toBe(2);
    expect(t.warnings).toContain("2 blank lines were skipped");
    const one = await readTable(bytes("a\n1\n\n3\n"));
    expect(one.rows).toBe(3);
    expect(one.column("a")!.missing).toBe(1);
  });

  it("readTable keeps only --columns, in file order", async () => {
    const t = await readTable(fixture("mixed.csv"), { columns: ["sbp", "id"] });
    expect(t.columns.map((c) => c.name)).toEqual(["id", "sbp"]);
    await expect(readTable(fixture("mixed.csv"), { columns: ["nope"] })).rejects.toBeInstanceOf(UsageError);
  });

  it("readTable applies declared types and levels, and rejects contradictions", async () => {
    const data = bytes("edu,sex,y\nlow,f,1\nhigh,m,2\nmid,f,3\nmid,m,1\n");
    const t = await readTable(data, { levels: { edu: ["low", "mid", "high"] }, types: { y: "nominal" } });
    const edu = t.column("edu")!;
    expect(edu.type).toBe("ordinal");
    expect(edu.typeSource).toBe("declared");
    expect([...edu.codes!]).toEqual([0, 2, 1, 1]);
    expect([...edu.values]).toEqual([0, 2, 1, 1]);
    expect(t.column("y")!.type).toBe("nominal");
    expect([...t.column("y")!.values]).toEqual([0, 1, 2, 0]); // nominal values are level indices
    const noLevels = await readError(data, { file: "o.csv", types: { edu: "ordinal" } });
    expect(noLevels.message).toBe(
      'o.csv: column "edu" is ordinal but its levels are text (high, low, mid); give their order low to high with --levels "edu=high|low|mid"',
    );
    const bin = await readError(data, { types: { y: "binary" } });
    expect(bin.message).toContain('column "y" is declared binary but has 3 distinct values (1, 2, 3)');
    const outside = await readError(data, { file: "o.csv", levels: { edu: ["low", "high"] } });
    expect(outside.message).toBe(
      'o.csv:4: column "edu" has "mid", which is not among its levels (low, high); add it to --levels or declare it with --missing "mid"',
    );
    const cont = await readError(data, { types: { sex: "continuous" } });
    expect(cont.message).toContain('column "sex" has text "f" among numbers');
    await expect(readTable(data, { types: { nope: "binary" } })).rejects.toBeInstanceOf(UsageError);
    // numeric levels declared out of increasing order: codes and scores follow the declared order
    // (regression: the scores used to stay the numeric codes 3, 1, 2, so the declaration changed nothing)
    const num = await readTable(bytes("s\n3\n1\n2\n"), { levels: { s: ["3", "2", "1"] } });
    expect([...num.column("s")!.codes!]).toEqual([0, 2, 1]);
    expect([...num.column("s")!.values]).toEqual([0, 2, 1]);
    expect(num.warnings).toContain('column "s": --levels lists its numeric codes out of increasing order (3|2|1), so each level scores its position in that order (0 to 2), not its code');
    // ... and in increasing order they keep the numbers as scores
    const inc = await readTable(bytes("s\n3\n1\n2\n"), { levels: { s: ["1", "2", "3"] } });
    expect([...inc.column("s")!.values]).toEqual([3, 1, 2]);
    expect(inc.warnings).toEqual([]);
  });

  it("readTable warns that a text column with mostly distinct values looks like an identifier", async () => {
    const rows = ["pid,x", ...Array.from({ length: 30 }, (_, i) => `P${1000 + i},${i % 2}`)];
    const t = await readTable(bytes(rows.join("\n")));
    expect(t.warnings.join(" ")).toContain('column "pid" has 30 distinct texts in 30 rows and looks like an identifier');
    const few = await readTable(bytes(["g", ...Array.from({ length: 30 }, (_, i) => `G${i % 3}`)].join("\n")));
    expect(few.warnings.join(" ")).not.toContain("identifier");
  });

  it("readTable rejects an unterminated quote and text after a closing quote", async () => {
    expect(await readError(bytes('a,b\n1,"open\n2,3\n'))).toBeInstanceOf(DataError);
    expect(await readError(bytes('a,b\n1,"x"y\n'))).toBeInstanceOf(DataError);
  });

  it("readTable reads numbers out of double range (1e400) as text, so they are reported", async () => {
    const rows = ["x", ...Array.from({ length: 20 }, (_, i) => String(i)), "1e400"];
    const e = await readError(bytes(rows.join("\n")), { file: "big.csv" });
    expect(e.message).toContain('big.csv:22: column "x" has text "1e400" among numbers');
  });
});

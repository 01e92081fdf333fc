/**
 * The DuckDB data engine (cli/readDuckdbTable.ts, --engine, --table): the same table and the
 * same audit as the memory engine on one delimited file, on a Parquet file and on a DuckDB
 * table written from it; a Parquet file of every column type DuckDB writes loads like the CSV
 * DuckDB writes of it; and the input errors.
 *
 * Reference: the memory engine (`parallelReadTable`, the project's existing CSV reader, tested
 * against its own fixtures) on the same values, as the issue asks ("the engines agree"); the
 * Parquet and database files are written by DuckDB's own `COPY ... TO` and `CREATE TABLE AS`.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chooseEngine, formatOfHead } from "../../cli/dataFormat.js";
import { parallelReadTable } from "../../cli/parallelReadTable.js";
import { readDuckdbTable } from "../../cli/readDuckdbTable.js";
import type { Table } from "../../src/data/Table.js";
import { mulberry32 } from "../../src/stats/mulberry32.js";
import { momentsFromDuckdb, ROWS_FREE_WARNING } from "../../cli/duckdbMomentsAudit.js";
import { createGraph } from "../../src/graph/createGraph.js";
import type { VariableType } from "../../src/data/Table.js";
import { runCli } from "../helpers/runCli.js";
import { duckdbSql } from "../helpers/duckdbSql.js";

const work = mkdtempSync(join(tmpdir(), "arrowaudit-duckdb-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));
const at = (name: string) => join(work, name);
const sqlPath = (name: string) => `'${at(name).replace(/'/g, "''")}'`;


// A seeded cohort with missing values (empty cells and NA) and categorical columns of every
// kind: binary text (smoker), nominal text (region), ordinal integers (stage), continuous.
function cohortCsv(N: number): string {
  const rng = mulberry32(20261203);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rng())) * Math.cos(2 * Math.PI * rng());
  const lines = ["age,smoker,region,stage,sbp,chol"];
  for (let i = 0; i < N; i++) {
    const age = 50 + 10 * gauss();
    const smoker = rng() < 0.3 + 0.01 * (age - 50) ? "yes" : "no";
    const region = ["north", "south", "east"][Math.floor(rng() * 3)]!;
    const stage = 1 + Math.min(3, Math.floor(rng() * 2 + (smoker === "yes" ? 1.5 : 0) + rng()));
    const sbp = 120 + 0.5 * age + 4 * stage + 8 * gauss();
    const chol = 5 + 0.02 * age + (region === "south" ? 0.3 : 0) + gauss();
    const cell = (v: string, p: number, code: string) => (rng() < p ? code : v);
    lines.push([cell(age.toFixed(3), 0.03, ""), cell(smoker, 0.02, "NA"), region, cell(String(stage), 0.04, ""), cell(sbp.toFixed(2), 0.05, "NA"), cell(chol.toFixed(4), 0.03, "")].join(","));
  }
  return lines.join("\n") + "\n";
}
const GRAPH = "age -> smoker\nage -> sbp\nsmoker -> stage\nstage -> sbp\nage -> chol\nregion -> chol\n";

beforeAll(async () => {
  writeFileSync(at("cohort.csv"), cohortCsv(1500));
  // Above the 20,000 rows up to which the default test reads each claim's rows: the moment path.
  writeFileSync(at("large.csv"), cohortCsv(25_000));
  writeFileSync(at("graph.txt"), GRAPH);
  writeFileSync(at("graph-extra.txt"), GRAPH + "bmi -> sbp\n");
  // Typed as DuckDB sniffs them among BIGINT, DOUBLE and VARCHAR (yes/no would otherwise become
  // BOOLEAN, written back as false/true), NA and empty cells as NULL.
  const typed = `SELECT * FROM read_csv(${sqlPath("cohort.csv")}, nullstr = ['NA', ''], auto_type_candidates = ['BIGINT', 'DOUBLE', 'VARCHAR'])`;
  await duckdbSql(
    `COPY (${typed}) TO ${sqlPath("cohort.parquet")} (FORMAT parquet, ROW_GROUP_SIZE 500)`,
    `COPY (SELECT * FROM read_csv(${sqlPath("large.csv")}, nullstr = ['NA', ''], auto_type_candidates = ['BIGINT', 'DOUBLE', 'VARCHAR'])) TO ${sqlPath("large.parquet")} (FORMAT parquet)`,
    `ATTACH ${sqlPath("cohort.duckdb")} AS db`,
    `CREATE TABLE db.cohort AS ${typed}`,
    `CREATE TABLE db.sites AS SELECT 1 AS site`,
    `DETACH db`,
    `ATTACH ${sqlPath("one.duckdb")} AS one`,
    `CREATE TABLE one.cohort AS ${typed}`,
    `DETACH one`,
    `ATTACH ${sqlPath("empty.duckdb")} AS e`,
    `DETACH e`,
  );
  writeFileSync(at("broken.parquet"), "PAR1 this is not the rest of a Parquet file");
});

/** Every column equal: name, type, levels, codes, missing count, values bit for bit (NaN as NaN). */
function expectSameTable(actual: Table, expected: Table): void {
  expect(actual.rows).toBe(expected.rows);
  expect(actual.columns.map((c) => [c.name, c.type, c.typeSource, c.levels, c.missing])).toEqual(expected.columns.map((c) => [c.name, c.type, c.typeSource, c.levels, c.missing]));
  expected.columns.forEach((e, j) => {
    const a = actual.columns[j]!;
    expect(Array.from(a.values)).toEqual(Array.from(e.values));
    expect(a.codes && Array.from(a.codes)).toEqual(e.codes && Array.from(e.codes));
  });
  expect(actual.warnings).toEqual(expected.warnings);
}

/** Numbers within `rel` relative (or both exactly 0), everything else equal, at every path. */
function expectClose(actual: unknown, expected: unknown, rel: number, path = "$"): void {
  if (typeof expected === "number" && typeof actual === "number") {
    if (Number.isNaN(expected)) return void expect(actual, path).toBeNaN();
    const scale = Math.max(Math.abs(expected), Math.abs(actual));
    if (Math.abs(actual - expected) > rel * scale) expect(actual, path).toBe(expected);
    return;
  }
  if (Array.isArray(expected)) {
    expect(Array.isArray(actual), path).toBe(true);
    expect((actual as unknown[]).length, path).toBe(expected.length);
    expected.forEach((e, i) => expectClose((actual as unknown[])[i], e, rel, `${path}[${i}]`));
    return;
  }
  if (expected !== null && typeof expected === "object") {
    expect(Object.keys(actual as object).sort(), path).toEqual(Object.keys(expected).sort());
    for (const [k, e] of Object.entries(expected)) expectClose((actual as Record<string, unknown>)[k], e, rel, `${path}.${k}`);
    return;
  }
  expect(actual, path).toEqual(expected);
}

/** `test --json` on a data file; the parsed result. */
async function auditJson(data: string, ...extra: string[]): Promise<Record<string, unknown>> {
  const r = await runCli(["test", "graph.txt", data, "--json", "--quiet", ...extra], { cwd: work });
  expect(r.stderr).toBe("");
  expect(r.code).toBe(0);
  return JSON.parse(r.stdout) as Record<string, unknown>;
}

/** The parts of a result that must not depend on the engine (the data file's name may). */
const comparable = (j: Record<string, unknown>) => ({ ...j, data: { ...(j.data as object), file: undefined }, tool: undefined });

describe("readDuckdbTable", () => {
  it("readDuckdbTable(csv) gives the memory engine's table on a CSV with missing values and categorical columns", async () => {
    const columns = ["age", "smoker", "region", "stage", "sbp", "chol"];
    const memory = await parallelReadTable(at("cohort.csv"), { file: "cohort.csv", columns });
    const viaDuckdb = await readDuckdbTable({ path: at("cohort.csv"), name: "cohort.csv", format: "csv" }, { file: "cohort.csv", columns });
    // the memory reader (reference) reads the cohort as planned: every kind of column, with missing cells
    expect(memory.columns.map((c) => c.type)).toEqual(["continuous", "binary", "nominal", "ordinal", "continuous", "continuous"]);
    expect(memory.columns.every((c) => c.missing > 0 || c.name === "region")).toBe(true);
    expectSameTable(viaDuckdb, memory);
  });

  it("readDuckdbTable(csv) types cells that DuckDB's own number grammar would take (0x10, 1_000, inf, nan, 1e400, blanks) as the memory engine does", async () => {
    writeFileSync(at("odd.csv"), "a,b,c,d\n1, 2 ,1e400,0x10\n.5,3.,NaN,1_000\n-0,+4,nan,7\n2,5e-3, 7 ,inf\n");
    const memory = await parallelReadTable(at("odd.csv"), { file: "odd.csv" });
    const viaDuckdb = await readDuckdbTable({ path: at("odd.csv"), name: "odd.csv", format: "csv" }, { file: "odd.csv" });
    // the memory reader (reference): "nan", "1e400", "0x10", "1_000" and "inf" are text, so c and d are nominal
    expect(memory.columns.map((c) => c.type)).toEqual(["continuous", "continuous", "nominal", "nominal"]);
    expectSameTable(viaDuckdb, memory);
  });

  it("readDuckdbTable(csv) stops at text among numbers after DuckDB's 20,480-row sniffing sample with the memory engine's error and line", async () => {
    const rows = ["a,b"];
    for (let i = 0; i < 30_000; i++) rows.push(`${i === 25_000 ? "abc" : i * 0.5},${i % 7}`);
    writeFileSync(at("late.csv"), rows.join("\n") + "\n");
    const message = await parallelReadTable(at("late.csv"), { file: "late.csv" }).then(() => "", (e: Error) => e.message);
    expect(message).toContain('late.csv:25002: column "a" has text "abc" among numbers');
    await expect(readDuckdbTable({ path: at("late.csv"), name: "late.csv", format: "csv" }, { file: "late.csv" })).rejects.toThrow(message);
  });

  it("readDuckdbTable(csv) reads 1_000 after DuckDB's sniffing sample as text, as the memory engine does (DuckDB alone would read 1000)", async () => {
    const rows = ["a,b"];
    for (let i = 0; i < 30_000; i++) rows.push(`${i === 25_000 ? "1_000" : i * 0.5},${i % 7}`);
    writeFileSync(at("underscore.csv"), rows.join("\n") + "\n");
    const message = await parallelReadTable(at("underscore.csv"), { file: "underscore.csv" }).then(() => "", (e: Error) => e.message);
    expect(message).toContain('underscore.csv:25002: column "a" has text "1_000" among numbers');
    await expect(readDuckdbTable({ path: at("underscore.csv"), name: "underscore.csv", format: "csv" }, { file: "underscore.csv" })).rejects.toThrow(message);
  });

  it("readDuckdbTable(parquet) and a DuckDB table written from the CSV give the memory engine's table of the CSV", async () => {
    const memory = await parallelReadTable(at("cohort.csv"), { file: "cohort.csv" });
    const parquet = await readDuckdbTable({ path: at("cohort.parquet"), name: "cohort.parquet", format: "parquet" }, { file: "cohort.parquet" });
    const table = await readDuckdbTable({ path: at("cohort.duckdb"), name: "cohort.duckdb", format: "duckdb", table: "cohort" }, { file: "cohort.duckdb" });
    expectSameTable(parquet, memory);
    expectSameTable(table, memory);
  });

  it("readDuckdbTable(parquet) of every column type DuckDB writes (integers, decimals, floats, doubles, booleans, strings, dates, NULLs) types each column as the memory engine types the CSV DuckDB writes of it", async () => {
    const rows: string[] = [];
    for (let i = 0; i < 40; i++) {
      const nul = (v: string) => (i % 7 === 3 ? "NULL" : v);
      rows.push(
        `(${nul(String(i % 3))}::TINYINT, ${nul(String(100 + i))}::SMALLINT, ${i % 2}::INTEGER, ${nul(String(2 ** 40 + i))}::BIGINT, ` +
          `${nul(String(i * 0.25))}::DECIMAL(9,3), ${nul(String(i / 8))}::FLOAT, ${nul(String(i * 1.1))}::DOUBLE, ${nul(i % 3 === 0 ? "true" : "false")}::BOOLEAN, ` +
          `${nul(`'${["low", "mid", "high"][i % 3]}'`)}::VARCHAR, ${nul(`'${["x", "y"][i % 2]}'`)}::VARCHAR, DATE '2020-01-01' + ${i % 4}, ${"NULL"}::DOUBLE)`,
      );
    }
    const names = "i8, i16, i32, i64, dec, f32, f64, flag, grade, letter, day, nothing";
    await duckdbSql(
      `CREATE TABLE t AS SELECT * FROM (VALUES ${rows.join(", ")}) v(${names})`,
      `COPY t TO ${sqlPath("types.parquet")} (FORMAT parquet)`,
      `COPY t TO ${sqlPath("types.csv")} (FORMAT csv, HEADER)`,
    );
    const declared = { levels: { grade: ["low", "mid", "high"] } };
    const memory = await parallelReadTable(at("types.csv"), { file: "types.csv", ...declared });
    const parquet = await readDuckdbTable({ path: at("types.parquet"), name: "types.parquet", format: "parquet" }, { file: "types.parquet", ...declared });
    // what the memory reader (reference) makes of DuckDB's CSV: integers with few values ordinal, true/false and two integers binary, dates (text) nominal
    expect(Object.fromEntries(memory.columns.map((c) => [c.name, c.type]))).toEqual({
      i8: "ordinal", i16: "continuous", i32: "binary", i64: "continuous", dec: "continuous", f32: "continuous", f64: "continuous",
      flag: "binary", grade: "ordinal", letter: "binary", day: "nominal", nothing: "continuous",
    });
    expectSameTable(parquet, memory);
  });
});

describe("arrowaudit test --engine", () => {
  it("test --engine duckdb equals --engine memory to 1e-9 relative (p-values, effects, statistics of every claim) on the CSV", async () => {
    const memory = await auditJson("cohort.csv", "--engine", "memory");
    const viaDuckdb = await auditJson("cohort.csv", "--engine", "duckdb");
    expect((memory.claims as unknown[]).length).toBeGreaterThan(5);
    expectClose(comparable(viaDuckdb), comparable(memory), 1e-9);
  });

  it("test on the Parquet file (auto: DuckDB) and on the DuckDB table equals the memory engine on the CSV to 1e-9 relative", async () => {
    const memory = await auditJson("cohort.csv");
    const before = ["cohort.parquet", "cohort.duckdb", "one.duckdb"].map((f) => readFileSync(at(f)));
    const parquet = await auditJson("cohort.parquet");
    const table = await auditJson("cohort.duckdb", "--table", "cohort");
    const single = await auditJson("one.duckdb");
    // the input files are read, never written (the database is attached read-only)
    ["cohort.parquet", "cohort.duckdb", "one.duckdb"].forEach((f, i) => expect(readFileSync(at(f)).equals(before[i]!), f).toBe(true));
    expect((parquet.data as { file: string }).file).toBe("cohort.parquet");
    for (const r of [parquet, table, single]) expectClose(comparable(r), comparable(memory), 1e-9);
  });

  it("test on 25,000 rows (the moment path of the default test) agrees across engines to 1e-9: memory CSV, DuckDB CSV, Parquet", async () => {
    const memory = await auditJson("large.csv", "--engine", "memory");
    expect((memory.data as { rows: number }).rows).toBe(25_000);
    const paths = (memory.claims as { test: string; details: { path?: string } }[]).filter((c) => c.test === "gcm").map((c) => c.details.path);
    expect(paths.length).toBeGreaterThan(0);
    expect(paths.every((p) => p === "moments")).toBe(true);
    for (const other of [await auditJson("large.csv", "--engine", "duckdb"), await auditJson("large.parquet")]) expectClose(comparable(other), comparable(memory), 1e-9);
  });

  it("test on the bundled demo cohort (numeric missing codes -9 and 999, text levels declared with --levels) prints the same JSON with both engines", async () => {
    const root = join(import.meta.dirname, "..", "..");
    const args = ["test", "data/demo/graph.txt", "data/demo/cohort.csv", "--missing", "-9,999", "--levels", "education=primary|secondary|tertiary", "--json"];
    const memory = await runCli([...args, "--engine", "memory"], { cwd: root });
    const viaDuckdb = await runCli([...args, "--engine", "duckdb"], { cwd: root });
    expect(memory.code).toBe(0);
    expect(viaDuckdb.code).toBe(0);
    expect(viaDuckdb.stdout).toBe(memory.stdout);
  });

  it("claims --columns checks the graph against a Parquet file's and a DuckDB table's columns as against the CSV header", async () => {
    const csv = await runCli(["claims", "graph-extra.txt", "--columns", "cohort.csv"], { cwd: work });
    expect(csv.code).toBe(2);
    expect(csv.stderr).toContain("arrowaudit: cohort.csv: a graph node is not a column of the data");
    for (const [file, extra] of [["cohort.parquet", []], ["cohort.duckdb", ["--table", "cohort"]]] as const) {
      const r = await runCli(["claims", "graph-extra.txt", "--columns", file, ...extra], { cwd: work });
      expect(r.code).toBe(2);
      expect(r.stderr).toBe(csv.stderr.replaceAll("cohort.csv", file));
      const ok = await runCli(["claims", "graph.txt", "--columns", file, ...extra, "--json"], { cwd: work });
      expect(ok.code).toBe(0);
      expect(ok.stdout).toBe((await runCli(["claims", "graph.txt", "--columns", "cohort.csv", "--json"], { cwd: work })).stdout);
    }
    const table = await runCli(["claims", "graph.txt", "--columns", "cohort.csv", "--table", "cohort"], { cwd: work });
    expect(table.code).toBe(1);
  });

  it("a missing table is an input error (exit 2) naming the file, the table and the closest name", async () => {
    const r = await runCli(["test", "graph.txt", "cohort.duckdb", "--table", "cohrt"], { cwd: work });
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('cohort.duckdb: no table "cohrt" in the database; did you mean "cohort"?');
    expect(r.stderr).toContain('(tables: "cohort", "sites")');
  });

  it("a database of several tables without --table is a usage error (exit 1) listing them; one without tables an input error (exit 2)", async () => {
    const several = await runCli(["test", "graph.txt", "cohort.duckdb"], { cwd: work });
    expect(several.code).toBe(1);
    expect(several.stderr).toContain('cohort.duckdb: the database holds 2 tables ("cohort", "sites"); choose one with --table NAME');
    const none = await runCli(["test", "graph.txt", "empty.duckdb"], { cwd: work });
    expect(none.code).toBe(2);
    expect(none.stderr).toContain("empty.duckdb: the database holds no tables");
  });

  it("a measured node stored as a nested Parquet type (list, struct) is an input error (exit 2) naming the file, the column and its type; nested columns the graph does not use are left alone", async () => {
    // pins: a LIST column was read as text, one nominal level per distinct list
    await duckdbSql(`COPY (SELECT i / 7.0 AS a, (i % 3)::INTEGER AS b, [i, i + 1] AS l, {'k': i} AS st FROM range(60) t(i)) TO ${sqlPath("nested.parquet")} (FORMAT parquet)`);
    writeFileSync(at("nested-ok.txt"), "a -> b\n");
    writeFileSync(at("nested-list.txt"), "a -> l\nl -> b\n");
    writeFileSync(at("nested-struct.txt"), "a -> st\nst -> b\n");
    expect((await runCli(["test", "nested-ok.txt", "nested.parquet", "--quiet"], { cwd: work })).code).toBe(0);
    const list = await runCli(["test", "nested-list.txt", "nested.parquet"], { cwd: work });
    expect(list.code).toBe(2);
    expect(list.stderr).toContain('nested.parquet: column "l" is of the nested type BIGINT[], not one value per row');
    const struct = await runCli(["summarize", "nested-struct.txt", "nested.parquet", "--out", "nested.json"], { cwd: work });
    expect(struct.code).toBe(2);
    expect(struct.stderr).toContain('column "st" is of the nested type STRUCT(k BIGINT)');
  });

  it("an unreadable Parquet file is an input error (exit 2) naming the file", async () => {
    const r = await runCli(["test", "graph.txt", "broken.parquet"], { cwd: work });
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^arrowaudit: broken\.parquet: DuckDB cannot read this Parquet file \(.+\); check that the file is complete/);
  });

  it("a graph node that is not a column of the Parquet file is an input error (exit 2) naming the file and the node", async () => {
    const r = await runCli(["test", "graph-extra.txt", "cohort.parquet"], { cwd: work });
    expect(r.code).toBe(2);
    expect(r.stderr).toContain("arrowaudit: cohort.parquet: a graph node is not a column of the data");
    expect(r.stderr).toContain("--unmeasured bmi");
  });

  it("--engine memory on Parquet, --table on a CSV file and --delimiter on Parquet are usage errors (exit 1)", async () => {
    const memory = await runCli(["test", "graph.txt", "cohort.parquet", "--engine", "memory"], { cwd: work });
    expect(memory.code).toBe(1);
    expect(memory.stderr).toContain("--engine memory reads delimited text only, and cohort.parquet is a Parquet file; use --engine duckdb or auto");
    const table = await runCli(["test", "graph.txt", "cohort.csv", "--table", "cohort"], { cwd: work });
    expect(table.code).toBe(1);
    expect(table.stderr).toContain("--table names a table of a DuckDB database file, but cohort.csv is not one");
    const delimiter = await runCli(["test", "graph.txt", "cohort.parquet", "--delimiter", ";"], { cwd: work });
    expect(delimiter.code).toBe(1);
    expect(delimiter.stderr).toContain("--delimiter is for delimited text, and cohort.parquet is a Parquet file; drop it");
  });

  it("--engine duckdb on standard input is a usage error (exit 1): DuckDB reads files", async () => {
    const { Readable } = await import("node:stream");
    const r = await runCli(["test", "graph.txt", "-", "--engine", "duckdb"], { cwd: work, stdin: Readable.from([Buffer.from("age,sbp\n1,2\n")]) });
    expect(r.code).toBe(1);
    expect(r.stderr).toContain("standard input is a stream, and DuckDB (--engine duckdb, --table) reads files");
  });
});

describe("chooseEngine", () => {
  it("formatOfHead reads the format from the magic bytes: PAR1 (Apache Parquet file format specification), DUCK at byte 8 (DuckDB's file header)", () => {
    const bytes = (s: string) => new TextEncoder().encode(s);
    expect(formatOfHead(bytes("PAR1\u0015\u0004"))).toBe("parquet"); // Apache Parquet spec: 4-byte magic "PAR1"
    expect(formatOfHead(bytes("\0\0\0\0\0\0\0\0DUCK\u0040"))).toBe("duckdb"); // DuckDB storage: "DUCK" after the 8-byte checksum
    expect(formatOfHead(bytes("age,sbp\n"))).toBe("csv");
    expect(formatOfHead(bytes("PAR"))).toBe("csv");
  });

  it("chooseEngine(auto) picks DuckDB for Parquet and database files and the memory engine for text of any size", () => {
    expect(chooseEngine("auto", "parquet", 10, "a.parquet")).toBe("duckdb");
    expect(chooseEngine("auto", "duckdb", 10, "a.duckdb")).toBe("duckdb");
    expect(chooseEngine("auto", "csv", 1e12, "a.csv")).toBe("memory");
    expect(chooseEngine("duckdb", "csv", 10, "a.csv")).toBe("duckdb");
    expect(chooseEngine("memory", "csv", 1e12, "a.csv")).toBe("memory");
  });
});

// The rows-free linear audit (cli/duckdbMomentsAudit.ts): a seeded cohort of continuous and binary
// variables with missing values in several patterns, whole-number and two-valued fractional
// columns, a column with the sentinel code -9, a constant column and one entirely missing.
function rowsFreeCsv(N: number): string {
  const rng = mulberry32(20261204);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rng())) * Math.cos(2 * Math.PI * rng());
  const lines = ["age,smoker,sbp,chol,steps,dose,score,flat,empty"];
  for (let i = 0; i < N; i++) {
    const age = 50 + 10 * gauss();
    const smoker = rng() < 0.3 + 0.01 * (age - 50) ? 1 : 0;
    const sbp = 120 + 0.5 * age + 6 * smoker + 8 * gauss();
    const chol = 5 + 0.02 * sbp + gauss();
    const steps = Math.round(8000 + 1500 * gauss()); // whole numbers, many values: continuous
    const dose = rng() < 0.4 ? 2.5 : 7.25; // two fractional values: binary
    const score = rng() < 0.01 ? -9 : (30 + 3 * gauss() + 0.1 * chol).toFixed(3); // -9 far below the others: a sentinel warning
    const cell = (v: string | number, p: number) => (rng() < p ? "" : String(v));
    lines.push([cell(age.toFixed(3), 0.03), cell(smoker, 0.05), cell(sbp.toFixed(2), 0.04), cell(chol.toFixed(4), 0.06), cell(steps, 0.02), dose, cell(score, 0.03), 4, ""].join(","));
  }
  return lines.join("\n") + "\n";
}
const ROWS_FREE_GRAPH = "age -> smoker\nage, smoker -> sbp\nsbp -> chol\nsteps -> sbp\ndose -> chol\nchol -> score\nflat -> score\nempty -> age\n";

describe("rows-free linear audit (DuckDB computes the moments)", () => {
  beforeAll(async () => {
    writeFileSync(at("rowsfree.csv"), rowsFreeCsv(4000));
    writeFileSync(at("rowsfree-graph.txt"), ROWS_FREE_GRAPH);
    // DOUBLE for every column (the all-empty one too), empty cells as NULL; small row groups so the two halves split inside the file
    const typed = `SELECT * FROM read_csv(${sqlPath("rowsfree.csv")}, nullstr = [''], auto_type_candidates = ['DOUBLE'], types = {'empty': 'DOUBLE'})`;
    await duckdbSql(
      `COPY (${typed}) TO ${sqlPath("rowsfree.parquet")} (FORMAT parquet, ROW_GROUP_SIZE 700)`,
      `ATTACH ${sqlPath("rowsfree.duckdb")} AS db`,
      `CREATE TABLE db.cohort AS ${typed}`,
      `DETACH db`,
    );
  });

  const linearJson = async (data: string, ...extra: string[]) => {
    const r = await runCli(["test", "rowsfree-graph.txt", data, "--json", "--quiet", "--method", "linear", ...extra], { cwd: work });
    expect(r.stderr).toBe("");
    expect(r.code).toBe(0);
    return JSON.parse(r.stdout) as { claims: Record<string, unknown>[]; untestable: unknown[]; variables: unknown[]; warnings: string[]; data: Record<string, unknown> };
  };

  it("test --method linear on Parquet and on a DuckDB table (no rows loaded) equals the memory engine on the CSV to 1e-9 relative: statistics, p-values, intervals, n, missing counts, warnings", async () => {
    const memory = await linearJson("rowsfree.csv"); // reference: the row path (memory engine) on the same values
    // the cohort is what the test needs: several missing-data patterns, a binary 0/1 and a binary 2.5/7.25 variable, a sentinel warning, untestable variables
    expect((memory.data.patterns as number)).toBeGreaterThan(10);
    expect(memory.variables).toContainEqual(expect.objectContaining({ name: "dose", type: "binary", levels: ["2.5", "7.25"] }));
    expect(memory.variables).toContainEqual(expect.objectContaining({ name: "steps", type: "continuous" }));
    expect(memory.warnings.some((w) => w.includes('column "score" has') && w.includes("of -9"))).toBe(true);
    expect(memory.untestable.length).toBeGreaterThan(0);
    for (const data of ["rowsfree.parquet", "rowsfree.duckdb"]) {
      const rowsFree = await linearJson(data);
      expect(rowsFree.warnings.at(-1)).toBe(ROWS_FREE_WARNING); // the rows-free path ran
      expect(rowsFree.warnings.slice(0, -1)).toEqual(memory.warnings);
      expect(rowsFree.variables).toEqual(memory.variables);
      expect(rowsFree.untestable).toEqual(memory.untestable);
      expect({ ...rowsFree.data, file: undefined }).toEqual({ ...memory.data, file: undefined });
      expectClose(rowsFree.claims, memory.claims, 1e-9);
    }
  });

  it("momentsFromDuckdb types every column as the memory engine does (binary 0/1 and 2.5/7.25, whole-number and fractional continuous, constant, all missing), declared types too", async () => {
    const columns = ["age", "smoker", "sbp", "chol", "steps", "dose", "score", "flat", "empty"];
    const graph = createGraph({ nodes: columns });
    for (const types of [{}, { smoker: "continuous", dose: "continuous" }, { flat: "binary" }] as Record<string, VariableType>[]) {
      const memory = await parallelReadTable(at("rowsfree.csv"), { file: "rowsfree.csv", columns, types });
      const viaSql = await momentsFromDuckdb({ path: at("rowsfree.parquet"), name: "rowsfree.csv", format: "parquet" }, graph, { file: "rowsfree.csv", columns, types });
      expect(viaSql).toBeDefined();
      const shape = (t: Table) => t.columns.map((c) => [c.name, c.type, c.typeSource, c.missing, c.type === "continuous" ? undefined : c.levels]);
      expect(shape(viaSql!.table)).toEqual(shape(memory));
      expect(viaSql!.table.rows).toBe(memory.rows);
      expect(viaSql!.table.warnings).toEqual(memory.warnings);
    }
  });

  it("a run with an ordinal variable (3 whole-number levels) does not qualify and reads the rows: the same result as the memory engine, without the rows-free warning", async () => {
    writeFileSync(at("ordinal.csv"), "a,b,c\n" + Array.from({ length: 60 }, (_, i) => `${i % 3},${(i * 7) % 11}.5,${(i * 13) % 17}.25`).join("\n") + "\n");
    await duckdbSql(`COPY (SELECT * FROM read_csv(${sqlPath("ordinal.csv")}, auto_type_candidates = ['DOUBLE'])) TO ${sqlPath("ordinal.parquet")} (FORMAT parquet)`);
    writeFileSync(at("ordinal-graph.txt"), "a -> b\nb -> c\n");
    const graph = createGraph({ nodes: ["a", "b", "c"] });
    expect(await momentsFromDuckdb({ path: at("ordinal.parquet"), name: "ordinal.parquet", format: "parquet" }, graph, { columns: ["a", "b", "c"] })).toBeUndefined();
    const run = async (data: string) => JSON.parse((await runCli(["test", "ordinal-graph.txt", data, "--json", "--method", "linear"], { cwd: work })).stdout) as { warnings: string[] };
    const [memory, parquet] = [await run("ordinal.csv"), await run("ordinal.parquet")];
    expect(parquet.warnings).not.toContain(ROWS_FREE_WARNING);
    expectClose(comparable(parquet as unknown as Record<string, unknown>), comparable(memory as unknown as Record<string, unknown>), 1e-9);
  });

  it("the rows-free audit is deterministic: two runs print the same bytes (regression: DuckDB's parallel sums differed in the last bits between runs)", async () => {
    const a = await runCli(["test", "rowsfree-graph.txt", "rowsfree.parquet", "--json", "--method", "linear"], { cwd: work });
    const b = await runCli(["test", "rowsfree-graph.txt", "rowsfree.parquet", "--json", "--method", "linear"], { cwd: work });
    expect(a.stdout).toBe(b.stdout);
  });
});

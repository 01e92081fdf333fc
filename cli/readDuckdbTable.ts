/**
 * The DuckDB data engine: reads a Parquet file, a table of a DuckDB database file, or a delimited
 * text file through embedded DuckDB (`@duckdb/node-api`), streaming its result chunks (2,048
 * rows each) into the same column builder as the memory reader (`src/data/columnBuilder.ts`), so
 * that types, levels, scores, missing codes, declarations and warnings follow one rule.
 *
 * Terms: a *source* is what DuckDB scans (`read_parquet`, `read_csv`, or a table of the attached
 * database); its *fields* are the source's columns in order, playing the part of a CSV header;
 * *kept* fields are those the builder keeps (the graph's measured nodes), the only ones selected.
 *
 * How each field reaches the builder:
 * - numeric types (integers of every width, DECIMAL, FLOAT, DOUBLE) are cast to DOUBLE and given
 *   as numbers (`ColumnBuilder.num`), NULL and NaN as missing (a FLOAT is widened exactly, so
 *   it reads as the double nearest its decimal text only when that text has few digits); ±Infinity, which a CSV file can
 *   only hold as text, is given as the text "Infinity" or "-Infinity" (so it is refused as stray
 *   text, as in a file);
 * - every other type (VARCHAR, BOOLEAN, DATE, TIMESTAMP, ENUM, ...) is cast to VARCHAR and given
 *   as text (`ColumnBuilder.text`), which applies missing codes and the number grammar, exactly
 *   as for a cell of a delimited file; so a Parquet file loads with the type inference of the CSV
 *   file that holds the same values (a BOOLEAN reads as the labels `false`/`true`).
 * - a delimited file's header, delimiter and row-label column come from our own header reader
 *   (`planTable`), so names are checked as for the memory engine; DuckDB's DOUBLE fields are
 *   used only where they hold exactly our number grammar (`parseNumberText`), else every cell is
 *   read as text and converted inside DuckDB where it matches that grammar (see `readCsv`), the
 *   doubles correctly rounded, as JavaScript's `Number`. So both engines type every cell alike.
 *
 * Rows keep the source's order (DuckDB preserves insertion order), so sampled rows and seeded
 * choices are the same as with the memory engine. Messages that name a line give, for a delimited
 * file, the data row's line assuming no blank lines or line breaks inside quotes before it; for
 * Parquet files and tables, the row number (1-based).
 */
import { mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { DuckDBConnection, DuckDBDataChunk, DuckDBInstance, DuckDBVector } from "@duckdb/node-api";
import { ArrowauditError, DataError, InputError, UsageError } from "../src/errors.js";
import { findClosestNames } from "../src/graph/checkColumns.js";
import { ColumnBuilder } from "../src/data/columnBuilder.js";
import type { ReadOptions } from "../src/data/readOptions.js";
import { createBuilder, estimateRecords, finishTable, planTable } from "../src/data/readTable.js";
import type { Table } from "../src/data/Table.js";
import { readFileHead } from "./dataFormat.js";
import type { DataFormat } from "./dataFormat.js";

/** What to read: the file, its format, and for a database file the table. */
export interface DuckdbSource {
  /** Absolute path of the file. */
  path: string;
  /** The file as named in messages (the path as given). */
  name: string;
  format: DataFormat;
  /** Table of a database file (`--table`); may be omitted when the database holds one table. */
  table?: string;
}

/** DuckDB type names read as numbers; every other type is read as text. */
export const NUMERIC_TYPES = /^(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|UHUGEINT|FLOAT|DOUBLE|DECIMAL(\(\d+,\s*\d+\))?)$/u;

/** A SQL string literal. */
const literal = (s: string): string => `'${s.replace(/'/g, "''")}'`;
/** A SQL identifier. */
export const identifier = (s: string): string => `"${s.replace(/"/g, '""')}"`;

/**
 * An open DuckDB session (an in-memory database, with a database file attached read-only when
 * the source is one) and the SQL expression that scans the source. Close it with `close()`.
 */
export interface DuckdbSession {
  connection: DuckDBConnection;
  /** The instance, for more connections (queries on two connections run in parallel). */
  instance: DuckDBInstance;
  /** The FROM clause that reads the source (a table function call or a qualified table name). */
  from: string;
  close(): void;
}

/**
 * Open a DuckDB session on a source. Spill files, if DuckDB needs any, go to a fresh folder
 * under the system's temporary folder, removed on close; the source is never written. `threads`
 * limits DuckDB's threads per query (the rows-free audit uses 1 for reproducible sums).
 * Cost: about 0.3 s the first time (loading DuckDB), then O(1).
 * @throws InputError naming the file when DuckDB cannot open it or the table is not there
 */
export async function openDuckdbSession(source: DuckdbSource, csvOptions = "", threads?: number): Promise<DuckdbSession> {
  const { DuckDBInstance } = await import("@duckdb/node-api");
  const spill = mkdtempSync(join(tmpdir(), "arrowaudit-duckdb-"));
  let instance: DuckDBInstance | undefined;
  let connection: DuckDBConnection | undefined;
  const close = () => {
    connection?.closeSync();
    instance?.closeSync();
    rmSync(spill, { recursive: true, force: true });
  };
  try {
    instance = await DuckDBInstance.create(":memory:", { temp_directory: spill, ...(threads !== undefined ? { threads: String(threads) } : {}) });
    connection = await instance.connect();
    let from: string;
    if (source.format === "parquet") from = `read_parquet(${literal(source.path)})`;
    else if (source.format === "csv") from = `read_csv(${literal(source.path)}${csvOptions})`;
    else {
      try {
        await connection.run(`ATTACH ${literal(source.path)} AS src (READ_ONLY)`);
      } catch (e) {
        throw new InputError(`${source.name}: DuckDB cannot open this database file (${firstLine(e)}); check that it is a DuckDB database of a compatible version`, { file: source.name });
      }
      const tables = (await connection.runAndReadAll(`SELECT schema_name, table_name FROM duckdb_tables() WHERE database_name = 'src' UNION ALL SELECT schema_name, view_name FROM duckdb_views() WHERE database_name = 'src' AND NOT internal ORDER BY 1, 2`)).getRows() as [string, string][];
      const names = tables.map(([schema, t]) => (schema === "main" ? t : `${schema}.${t}`));
      const wanted = source.table ?? (names.length === 1 ? names[0] : undefined);
      if (names.length === 0) throw new InputError(`${source.name}: the database holds no tables; give a database with the cohort table`, { file: source.name });
      if (wanted === undefined) {
        throw new UsageError(`${source.name}: the database holds ${names.length} tables (${names.map((n) => `"${n}"`).join(", ")}); choose one with --table NAME`);
      }
      const i = names.findIndex((n) => n === wanted);
      const j = i >= 0 ? i : names.findIndex((n) => n.toLowerCase() === wanted.toLowerCase());
      if (j < 0) {
        const near = findClosestNames(wanted, names);
        throw new InputError(
          `${source.name}: no table "${wanted}" in the database${near.length > 0 ? `; did you mean ${near.map((n) => `"${n}"`).join(" or ")}?` : ""} (tables: ${names.map((n) => `"${n}"`).join(", ") || "none"}); give one of them with --table`,
          { file: source.name },
        );
      }
      const [schema, table] = tables[j]!;
      from = `src.${identifier(schema)}.${identifier(table)}`;
    }
    return { connection, instance, from, close };
  } catch (e) {
    close();
    throw e;
  }
}

/** The source's fields and their DuckDB type names. @throws InputError naming the file when DuckDB cannot read it */
export async function describe(session: DuckdbSession, source: DuckdbSource): Promise<{ name: string; type: string }[]> {
  try {
    const rows = (await session.connection.runAndReadAll(`DESCRIBE SELECT * FROM ${session.from}`)).getRows();
    return rows.map((r) => ({ name: String(r[0]), type: String(r[1]) }));
  } catch (e) {
    throw unreadable(source, e);
  }
}

/** The error for a source DuckDB cannot read, naming the file and DuckDB's reason. */
export function unreadable(source: DuckdbSource, e: unknown): InputError {
  const what = source.format === "parquet" ? "Parquet file" : source.format === "csv" ? "delimited text file" : "database table";
  return new DataError(`${source.name}: DuckDB cannot read this ${what} (${firstLine(e)}); check that the file is complete and of that format, or read it with --engine memory if it is delimited text`, { file: source.name });
}

/** First line of an error's message, without DuckDB's error class prefix. */
function firstLine(e: unknown): string {
  const m = e instanceof Error ? e.message : String(e);
  return m.split("\n")[0]!.replace(/^[A-Za-z ]+Error: /u, "").trim();
}

/**
 * The field names of a Parquet file or database table, in order (the part a CSV header plays),
 * for checking the graph's names before the rows are read. Cost: opening DuckDB and reading the
 * file's schema.
 * @throws InputError naming the file when DuckDB cannot read it or the table is missing
 * @example await listDuckdbFields({ path: "/abs/cohort.parquet", name: "cohort.parquet", format: "parquet" }) // ["age", "sbp", ...]
 */
export async function listDuckdbFields(source: DuckdbSource): Promise<string[]> {
  const session = await openDuckdbSession(source);
  try {
    return (await describe(session, source)).map((f) => f.name);
  } finally {
    session.close();
  }
}

/** Bytes of a delimited file's head read for its header and dialect. */
const HEAD_BYTES = 256 * 1024;

/**
 * Read a table through DuckDB, keeping `options.columns` (all fields when absent).
 * Same result as the memory engine on a delimited file (see the module comment for the
 * exceptions); Parquet and database tables as the CSV file with the same values.
 * Cost: O(rows · kept columns) time; memory: the columns plus DuckDB's buffers (one row group
 * or a few chunks at a time).
 * @throws DataError, UsageError as `readTable` (the builder's checks); InputError naming the
 *   file when DuckDB cannot read it or the table is missing
 * @example await readDuckdbTable({ path: "/abs/cohort.parquet", name: "cohort.parquet", format: "parquet" }, { file: "cohort.parquet", columns: ["age"] })
 */
export async function readDuckdbTable(source: DuckdbSource, options: ReadOptions): Promise<Table> {
  if (source.format === "csv") return readCsv(source, options);
  const session = await openDuckdbSession(source);
  try {
    const fields = await describe(session, source);
    refuseNestedFields(fields, options, source);
    const builder = new ColumnBuilder(
      fields.map((f) => f.name),
      { ...options, file: source.name },
    );
    const rows = Number((await session.connection.runAndReadAll(`SELECT count(*) FROM ${session.from}`)).getRows()[0]![0]);
    useSharedStorage(builder, rows);
    await streamInto(session, source, builder, fields, 1);
    return finishTable(builder);
  } finally {
    session.close();
  }
}

/** DuckDB's names of nested types: lists (`T[]`), arrays (`T[n]`), structs, maps and unions. */
const NESTED_TYPE = /^(STRUCT|MAP|UNION)\b|\[\d*\]$/u;

/**
 * A column the audit reads (a measured node, or every column when none are named) whose type is
 * nested is an input error naming the file, the column and its type: its cells are not one value
 * of a variable (read as text, each list would be a level of its own).
 * @throws DataError naming the file and the column
 */
function refuseNestedFields(fields: readonly { name: string; type: string }[], options: ReadOptions, source: DuckdbSource): void {
  const wanted = options.columns ? new Set(options.columns.map((c) => c.normalize("NFC"))) : undefined;
  const nested = fields.find((f) => NESTED_TYPE.test(f.type) && (!wanted || wanted.has(f.name.normalize("NFC"))));
  if (nested) {
    throw new DataError(`${source.name}: column ${JSON.stringify(nested.name)} is of the nested type ${nested.type}, not one value per row; give the variable as a plain column (a number, text, true/false or a date), or declare the node unmeasured (--unmeasured ${nested.name})`, { file: source.name });
  }
}

/**
 * A delimited file: our header reader for the names, DuckDB for the rows, in one of two ways
 * that type every cell as the memory engine does.
 * - Fast: DuckDB chooses DOUBLE or VARCHAR per field from its sample of rows; a DOUBLE field is
 *   taken as numbers when no cell of it holds "_" (DuckDB reads `1_000` as 1000, we as text),
 *   and the query stops at a cell that is not a finite number (`inf`, `nan`, `NaN`, which we
 *   read as text or a missing code). Within those limits DuckDB's DOUBLE cells are exactly our
 *   number grammar with blanks around: a sign, digits with one decimal point, an exponent.
 * - Exact, when the fast way stops (any error: such a cell, or text after DuckDB's sample) or
 *   with a decimal comma: every field read as text, the cells that match our number grammar
 *   converted inside DuckDB, the others handed over as their text.
 * Cost: fast, O(bytes) twice (the "_" check is a second scan); exact, about twice the fast way.
 */
async function readCsv(source: DuckdbSource, options: ReadOptions): Promise<Table> {
  const head = readFileHead(source.path, HEAD_BYTES);
  const size = statSync(source.path).size;
  const plan = planTable(head, head.length === size, { ...options, file: source.name });
  if (!plan) throw new DataError(`${source.name}: no line end in the first ${HEAD_BYTES / 1024} KiB, so the header cannot be read; check that this is a delimited text file`, { file: source.name });
  const dialect = `, delim = ${literal(plan.delimiter)}, header = true, quote = '"', escape = '"'`;
  const read = async (fast: boolean): Promise<Table> => {
    const session = await openDuckdbSession(source, dialect + (fast ? `, auto_type_candidates = ['DOUBLE', 'VARCHAR']` : `, all_varchar = true`));
    try {
      const fields = await describe(session, source);
      if (fields.length !== plan.names.length) {
        throw new DataError(`${source.name}: DuckDB reads ${fields.length} fields per row but the header has ${plan.names.length}; check the delimiter and quoting, or read the file with --engine memory`, { file: source.name });
      }
      const builder = createBuilder(plan, { ...options, file: source.name });
      if (fast) {
        const numeric = fields.filter((f, i) => builder.fieldToColumn[i]! >= 0 && NUMERIC_TYPES.test(f.type)).map((f) => identifier(f.name));
        if (numeric.length > 0) {
          const text = `read_csv(${literal(source.path)}${dialect}, all_varchar = true)`;
          const underscores = (await session.connection.runAndReadAll(`SELECT count(*) FROM ${text} WHERE ${numeric.map((c) => `contains(${c}, '_')`).join(" OR ")}`)).getRows()[0]![0];
          if (Number(underscores) > 0) throw new FastPathStop();
        }
      }
      useSharedStorage(builder, estimateRecords(plan, size - plan.headerEnd - 1));
      await streamInto(session, source, builder, fields, plan.firstLine, fast ? "finite" : options.decimalComma ? "comma" : "dot");
      return finishTable(builder);
    } catch (e) {
      throw fast && !(e instanceof ArrowauditError) ? new FastPathStop() : e;
    } finally {
      session.close();
    }
  };
  if (options.decimalComma) return read(false);
  try {
    return await read(true);
  } catch (e) {
    if (e instanceof FastPathStop) return read(false);
    throw e;
  }
}

/** The fast way of reading a delimited file met a cell it cannot type as we do: read it the exact way. */
class FastPathStop extends Error {}

/** Our number grammar (`parseNumberText`) as RE2 patterns for DuckDB, blanks around allowed. */
const NUMBER_PATTERN = {
  dot: "[ \\t]*[+-]?([0-9]+\\.?[0-9]*|\\.[0-9]+)([eE][+-]?[0-9]+)?[ \\t]*",
  comma: "[ \\t]*[+-]?([0-9]+,?[0-9]*|,[0-9]+)([eE][+-]?[0-9]+)?[ \\t]*",
} as const;

/**
 * Give the builder columns of `rows` rows in shared memory, as the two-thread memory reader
 * does, so that the moments' second thread and the claim helper see them without a copy (more
 * rows than that grow into ordinary memory). Cost: O(rows · kept columns) of zeroed memory.
 */
function useSharedStorage(builder: ColumnBuilder, rows: number): void {
  if (rows <= 0) return;
  builder.useStorage(builder.names.map(() => new Float64Array(new SharedArrayBuffer(8 * rows))));
}

/** How a kept field arrives: as a number, as text, or (a delimited file's cell) as a number or else its text. */
type FieldKind = "number" | "text" | "cell";

/**
 * The query that streams the kept fields. Parquet and tables: one column per field, numeric
 * types cast to DOUBLE, others to VARCHAR. A delimited file (`cells`): per field a DOUBLE, NULL
 * unless the cell matches our number grammar and converts to a finite double, then one last
 * column, NULL unless some cell of the row is text, holding the row's cells as a list (so the
 * rare rows with text cost a list, and the others nothing). `finiteOnly`: the query stops at a
 * numeric cell that is not finite. Cost: O(fields) text.
 */
function streamQuery(from: string, fields: readonly { name: string; type: string }[], builder: ColumnBuilder, cells?: "dot" | "comma", finiteOnly = false): { sql: string; kept: { column: number; kind: FieldKind }[] } {
  const kept: { column: number; kind: FieldKind }[] = [];
  const inner: string[] = [];
  const outer: string[] = [];
  const texts: string[] = [];
  const anyText: string[] = [];
  builder.fieldToColumn.forEach((c, f) => {
    if (c < 0) return;
    const col = identifier(fields[f]!.name);
    const j = kept.length;
    if (cells) {
      const value = cells === "comma" ? `replace(trim(${col}), ',', '.')` : `trim(${col})`;
      inner.push(`${col} AS c_${j}`, `TRY_CAST(CASE WHEN regexp_full_match(${col}, ${literal(NUMBER_PATTERN[cells])}) THEN ${value} END AS DOUBLE) AS n_${j}`);
      outer.push(`CASE WHEN isfinite(n_${j}) THEN n_${j} END`);
      texts.push(`c_${j}`);
      anyText.push(`(c_${j} IS NOT NULL AND NOT coalesce(isfinite(n_${j}), false))`);
      kept.push({ column: c, kind: "cell" });
    } else if (NUMERIC_TYPES.test(fields[f]!.type)) {
      inner.push(`CAST(${col} AS DOUBLE) AS n_${j}`);
      outer.push(finiteOnly ? `CASE WHEN isfinite(n_${j}) OR n_${j} IS NULL THEN n_${j} ELSE error('not a finite number') END` : `n_${j}`);
      kept.push({ column: c, kind: "number" });
    } else {
      inner.push(`CAST(${col} AS VARCHAR) AS t_${j}`);
      outer.push(`t_${j}`);
      kept.push({ column: c, kind: "text" });
    }
  });
  if (kept.length === 0) return { sql: `SELECT 0 FROM ${from}`, kept };
  if (cells) outer.push(`CASE WHEN ${anyText.join(" OR ")} THEN [${texts.join(", ")}] END`);
  return { sql: `SELECT ${outer.join(", ")} FROM (SELECT ${inner.join(", ")} FROM ${from})`, kept };
}

/**
 * Stream the kept fields of the source into the builder, one record per row. `mode`: "dot" or
 * "comma" when every field is a delimited file's text, read by our number grammar with that
 * decimal mark; "finite" when a numeric field must hold finite numbers only (the query stops
 * at any other).
 * Cost: O(rows · kept columns).
 */
async function streamInto(session: DuckdbSession, source: DuckdbSource, builder: ColumnBuilder, fields: { name: string; type: string }[], startLine: number, mode?: "finite" | "dot" | "comma"): Promise<void> {
  const cells = mode === "dot" || mode === "comma" ? mode : undefined;
  const { sql, kept } = streamQuery(session.from, fields, builder, cells, mode === "finite");
  let result;
  try {
    result = await session.connection.stream(sql);
  } catch (e) {
    throw mode === "finite" ? new FastPathStop(firstLine(e)) : unreadable(source, e);
  }
  const width = builder.header.length;
  let line = startLine;
  for (;;) {
    let chunk: DuckDBDataChunk | null;
    try {
      chunk = await result.fetchChunk();
    } catch (e) {
      throw mode === "finite" ? new FastPathStop(firstLine(e)) : unreadable(source, e);
    }
    if (!chunk || chunk.rowCount === 0) break;
    const n = chunk.rowCount;
    const numbers: (Float64Array | undefined)[] = [];
    const texts: (DuckDBVector | undefined)[] = [];
    kept.forEach((k, j) => {
      const v = chunk.getColumnVector(j);
      numbers.push(k.kind === "text" ? undefined : doublesOf(v, n));
      texts.push(k.kind === "text" ? v : undefined);
    });
    let rowTexts: DuckDBVector | undefined;
    if (cells && kept.length > 0) {
      const v = chunk.getColumnVector(kept.length);
      if (!allNull(v, n)) rowTexts = v;
    }
    for (let r = 0; r < n; r++) {
      builder.beginRecord(line++);
      const cellTexts = rowTexts ? (rowTexts.getItem(r) as { items: readonly unknown[] } | null)?.items : undefined;
      for (let j = 0; j < kept.length; j++) {
        const c = kept[j]!.column;
        const tv = texts[j];
        if (tv !== undefined) {
          const t = tv.getItem(r) as string | null;
          if (t === null) builder.miss(c);
          else builder.text(c, t);
          continue;
        }
        const x = numbers[j]![r]!;
        if (x !== x) {
          const t = cellTexts?.[j];
          if (typeof t === "string") builder.text(c, t);
          else builder.miss(c);
        } else if (x === Infinity || x === -Infinity) builder.text(c, x > 0 ? "Infinity" : "-Infinity");
        else if (builder.plain[c] === 1) builder.vals[c]![builder.rows] = x;
        else builder.num(c, x);
      }
      builder.endRecord(width);
    }
  }
}

/**
 * Whether every one of the first n rows of a vector is NULL, read from its validity mask when the
 * library exposes it (see {@link doublesOf}); false when it cannot tell. Cost: O(rows / 64).
 */
function allNull(v: DuckDBVector, n: number): boolean {
  const raw = v as unknown as { validity?: { data?: unknown; offset?: unknown } };
  const mask = raw.validity?.data;
  if (raw.validity?.offset !== 0 || !(mask instanceof BigUint64Array)) return false;
  const full = Math.floor(n / 64);
  for (let w = 0; w < full; w++) if (mask[w] !== 0n) return false;
  const rest = n - 64 * full;
  return rest === 0 || (mask[full]! & ((1n << BigInt(rest)) - 1n)) === 0n;
}

/** A 64-row validity word with every row valid. */
const ALL_VALID = 0xffffffffffffffffn;

/**
 * The values of a DOUBLE vector as a Float64Array with NaN for NULL. When the library exposes
 * the vector's buffer (`items`) and validity mask (`validity.data`, 64 rows per word, bit set =
 * valid, as in DuckDB's C API), the buffer itself if no row is NULL, else a copy with NaN at the
 * NULL rows; otherwise a copy read item by item through the public `getItem`.
 * Cost: O(rows / 64), or O(rows) for a copy.
 */
function doublesOf(v: DuckDBVector, n: number): Float64Array {
  const raw = v as unknown as { items?: unknown; validity?: { data?: unknown; offset?: unknown } };
  const items = raw.items;
  const mask = raw.validity?.data;
  if (items instanceof Float64Array && items.length >= n && raw.validity?.offset === 0 && (mask === null || mask instanceof BigUint64Array)) {
    if (mask === null) return items;
    const words = Math.ceil(n / 64);
    let out: Float64Array | undefined;
    for (let w = 0; w < words; w++) {
      const word = mask[w]!;
      if (word === ALL_VALID) continue;
      out ??= items.slice(0, n);
      for (let b = 0; b < 64 && w * 64 + b < n; b++) if (((word >> BigInt(b)) & 1n) === 0n) out[w * 64 + b] = NaN;
    }
    return out ?? items;
  }
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = (v.getItem(i) as number | null) ?? NaN;
  return out;
}

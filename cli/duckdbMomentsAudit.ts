/**
 * The rows-free linear audit: `test --method linear` on a Parquet file or a DuckDB table, with
 * the DuckDB engine, never loads the rows. DuckDB computes, in SQL, the linear tests' sufficient
 * statistics per missing-data pattern (`patternMomentsSql`) and everything the row path learns
 * from the rows about these variables; the audit runs on those moments (`runAuditOnMoments`).
 *
 * Terms: the run *qualifies* when `--method linear`, no `--listwise`, no `--counts`, no
 * `--levels` for a measured variable, the engine is DuckDB and the file is Parquet or a DuckDB
 * database (not text), every measured field has a numeric DuckDB type, and every measured
 * variable is continuous or binary (declared, or inferred by the builder's rule `inferType`
 * from counts made in SQL: `typeNumericColumn`). Such a claim is always tested by the partial
 * correlation of the scores, and a continuous or binary numeric variable's score is its value,
 * so the moments of the raw values are those of the row path. Ordinal and nominal variables
 * (which need level indicators), text fields, ±Infinity, values of magnitude 1e150 or more or a
 * variance below 1e-250 (the row path scales such values by powers of two), a header whose names
 * differ from the graph's in Unicode form, and an empty table do not qualify: the run then reads
 * the rows as before (`auditFromDuckdbMoments` returns undefined), with the same result.
 *
 * What is computed in SQL, as the row path computes it from the rows: the rows; per variable the
 * observed and missing counts (NULL, NaN and numeric `--missing` codes are missing), the range,
 * the values that are not whole numbers and the distinct values (exactly up to 11 where the type
 * rule needs it), hence the type, the notes of an entirely missing or constant column and the
 * untestable reasons of such variables; the sentinel-code warnings (`findSentinelCodes`: counts of
 * -9, -99, …, the range and the type-7 quartiles of the other values); per pattern the rows,
 * shifted sums and cross-products, hence n per claim, the rows used and the patterns. Nothing the
 * row path checks for these variables is left out (the high-cardinality check is for categorical
 * variables of more than 50 levels, which do not qualify). A warning in the result says which
 * path ran.
 *
 * Determinism: DuckDB's parallel sums add partial sums in whatever order its threads finish, so
 * the same file gave results differing in the last bits between runs. The instance runs one
 * thread per query, and the rows are split in two halves by row number, queried on two
 * connections at once and added half by half in a fixed order.
 */
import { statSync } from "node:fs";
import { resolve } from "node:path";
import type { DuckDBConnection } from "@duckdb/node-api";
import { constantReason, runAuditOnMoments } from "../src/audit/runAudit.js";
import type { AuditResult, AuditSettings } from "../src/audit/types.js";
import { ColumnBuilder, numberLabel } from "../src/data/columnBuilder.js";
import { MIN_OTHER_VALUES, SENTINEL_VALUES } from "../src/data/findSentinelCodes.js";
import { MAX_INFERRED_ORDINAL_LEVELS } from "../src/data/inferType.js";
import { parseNumberText } from "../src/data/parseNumberText.js";
import { mergePatternSums, patternMomentsSql, profileOfPatterns, readPatternSums, type PatternSums } from "../src/data/patternMomentsSql.js";
import { patternSumsMoments } from "../src/data/patternSumsMoments.js";
import { DEFAULT_MISSING_CODES, quoteName, type ReadOptions } from "../src/data/readOptions.js";
import type { Column, Table, VariableType } from "../src/data/Table.js";
import { assembleTable } from "../src/data/columnBuilder.js";
import { typeNumericColumn } from "../src/data/typeNumericColumn.js";
import { quantileSortedType7 } from "../src/stats/flexibleBasis.js";
import { checkColumns } from "../src/graph/checkColumns.js";
import type { Graph } from "../src/graph/Graph.js";
import { checkInputFile } from "./checkPaths.js";
import { chooseEngine, probeFile } from "./dataFormat.js";
import type { Io } from "./io.js";
import { checkClaimCount, MAX_TESTED_CLAIMS } from "./limits.js";
import { loadGraph } from "./loadGraph.js";
import { readOptionsFrom } from "./readOptionsFrom.js";
import { describe, identifier, NUMERIC_TYPES, openDuckdbSession, unreadable, type DuckdbSource } from "./readDuckdbTable.js";
import { checkOneStdin, inputName } from "./readStdin.js";

/** Rows whose median gives each column's shift (the first rows, in the source's order). */
const SHIFT_ROWS = 10_000;
/** Magnitudes from which the row path's power-of-two scaling matters: such data take the row path. */
const LARGEST_MAGNITUDE = 1e150;
const SMALLEST_VARIANCE = 1e-250;

/** The warning that says which path ran. */
export const ROWS_FREE_WARNING =
  "the rows were not loaded (rows-free linear audit): DuckDB computed the counts, sums and cross-products of every missing-data pattern, and the row checks (types, missing codes, constant columns, sentinel codes), in SQL";

/**
 * Whether the options allow the rows-free audit before the file is opened (see the module
 * comment; the data decide the rest). Cost: O(1).
 * @example rowsFreeOptions({ method: "linear" }) // true
 */
export function rowsFreeOptions(opts: Record<string, unknown>): boolean {
  return opts.method === "linear" && !opts.listwise && opts.counts === undefined;
}

/**
 * The audit of `test --method linear` computed in DuckDB without loading the rows, or undefined
 * when the run does not qualify (see the module comment); the caller then reads the rows.
 * Cost: one pass of DuckDB over the measured fields (two halves in parallel), plus, for a column
 * of whole numbers or one whose range leaves the type open, one pass over those columns; then
 * O(claims · P · d²).
 * @throws as the row path for the graph, the paths and the declarations (InputError, UsageError)
 */
export async function auditFromDuckdbMoments(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>, settings: Partial<AuditSettings>, version: string): Promise<AuditResult | undefined> {
  if (!rowsFreeOptions(opts) || dataPath === "-") return undefined;
  const full = resolve(io.cwd, dataPath);
  let probe: ReturnType<typeof probeFile>;
  try {
    if (!statSync(full).isFile()) return undefined;
    probe = probeFile(full);
  } catch {
    return undefined; // the row path words the error
  }
  if (probe.format === "csv") return undefined;
  const table = typeof opts.table === "string" ? opts.table : undefined;
  if (chooseEngine(opts.engine as string | undefined, probe.format, probe.size, dataPath, table) !== "duckdb") return undefined;
  checkOneStdin({ graph: graphPath, data: dataPath });
  checkInputFile(io, { path: graphPath, role: "graph file" });
  checkInputFile(io, { path: dataPath, role: "data file" });
  const graph = await loadGraph(io, graphPath, opts);
  checkClaimCount(graph, inputName(graphPath), MAX_TESTED_CLAIMS, "test and report test", "test the part of the graph you are asking about (a graph file with those nodes and their ancestors), or declare the nodes you will not test unmeasured (--unmeasured)");
  const source: DuckdbSource = { path: full, name: dataPath, format: probe.format, ...(table !== undefined ? { table } : {}) };
  const measured = graph.nodes.filter((n) => graph.isMeasured(n));
  const data = await momentsFromDuckdb(source, graph, readOptionsFrom(opts, dataPath, measured));
  if (!data) return undefined;
  const result = runAuditOnMoments(graph, data, { settings, version });
  result.warnings.push(ROWS_FREE_WARNING);
  return result;
}

/** What the rows-free audit needs: the table description, the moments and the untestable variables. */
export type DuckdbMoments = Parameters<typeof runAuditOnMoments>[1];

/**
 * The table description, pattern moments and untestable variables of the measured fields of a
 * Parquet file or DuckDB table, computed in SQL, or undefined when the data do not qualify (see
 * the module comment). Cost: as {@link auditFromDuckdbMoments} without the claims.
 * @throws UnknownNodeError when a measured node is not a field; UsageError for declarations of
 *   unknown columns; InputError naming the file when DuckDB cannot read it
 * @example await momentsFromDuckdb({ path: "/abs/c.parquet", name: "c.parquet", format: "parquet" }, graph, { file: "c.parquet", columns: ["a", "b"] })
 */
export async function momentsFromDuckdb(source: DuckdbSource, graph: Graph, options: ReadOptions): Promise<DuckdbMoments | undefined> {
  const session = await openDuckdbSession(source, "", 1);
  try {
    const fields = await describe(session, source);
    checkColumns(graph, fields.map((f) => f.name), { file: source.name });
    const builder = new ColumnBuilder(fields.map((f) => f.name), { ...options, file: source.name }); // checks the declarations as the row path does
    const kept: { name: string; field: string }[] = [];
    let ok = true;
    builder.fieldToColumn.forEach((c, f) => {
      if (c < 0) return;
      const field = fields[f]!;
      if (builder.names[c] !== field.name || !NUMERIC_TYPES.test(field.type)) ok = false;
      kept.push({ name: builder.names[c]!, field: field.name });
    });
    const declaredLevels = Object.keys(options.levels ?? {}).map((n) => n.normalize("NFC"));
    if (!ok || kept.length === 0 || kept.some((k) => declaredLevels.includes(k.name.normalize("NFC")))) return undefined;
    const values = kept.map((k, j) => `${valueExpression(k.field, numericMissingCodes(options, k.name))} AS c${j}`).join(", ");
    const names = kept.map((_, j) => `c${j}`);
    const medians = (await query(session.connection, source, `SELECT ${names.map((c) => `median(${c})`).join(", ")} FROM (SELECT ${values} FROM ${session.from} LIMIT ${SHIFT_ROWS})`))[0]!;
    const shifts = medians.map((m) => (m !== null && Number.isFinite(Number(m)) ? Number(m) : 0));
    const patterns = await patternSums(session, source, values, names, shifts);
    const rows = patterns.reduce((s, p) => s + p.rows, 0);
    if (rows === 0) return undefined;
    const profile = profileOfPatterns(patterns, kept.length);
    if (profile.some((p) => Math.abs(p.min) >= LARGEST_MAGNITUDE || Math.abs(p.max) >= LARGEST_MAGNITUDE)) return undefined;
    const moments = patternSumsMoments(kept.map((k) => k.name), patterns, shifts);

    // distinct values, where the type rule needs them
    const distinct: number[] = profile.map((p) => (p.observed === 0 ? 0 : p.min === p.max ? 1 : 2));
    const exact: string[] = [];
    const exactOf: { j: number; kind: "count" | "between" }[] = [];
    profile.forEach((p, j) => {
      if (distinct[j]! < 2) return;
      const m = moments.momentsForColumns([j]);
      const variance = (m.cov[0]! * (m.n - 1)) / m.n;
      if (!(variance >= SMALLEST_VARIANCE)) ok = false;
      const gap = (m.means[0]! - p.min) * (p.max - m.means[0]!) - variance;
      if (p.fractional > 0 && gap > 1e-6 * (p.max - p.min) ** 2) distinct[j] = 3; // a third value for certain (see typeNumericColumn)
      else if (p.fractional > 0) {
        exact.push(`sum(CASE WHEN c${j} > ${sqlNumber(p.min)} AND c${j} < ${sqlNumber(p.max)} THEN 1 ELSE 0 END)`);
        exactOf.push({ j, kind: "between" });
      } else {
        exact.push(`count(DISTINCT c${j})`);
        exactOf.push({ j, kind: "count" });
      }
    });
    if (!ok) return undefined;
    if (exact.length > 0) {
      const got = (await query(session.connection, source, `SELECT ${exact.join(", ")} FROM (SELECT ${values} FROM ${session.from})`))[0]!;
      exactOf.forEach(({ j, kind }, i) => {
        const v = Number(got[i]);
        distinct[j] = kind === "count" ? Math.min(v, MAX_INFERRED_ORDINAL_LEVELS + 1) : v > 0 ? 3 : 2;
      });
    }

    const warnings: string[] = [];
    const columns: Column[] = [];
    const untestable = new Map<string, string>();
    for (let j = 0; j < kept.length; j++) {
      const { name } = kept[j]!;
      const p = profile[j]!;
      if (p.observed > 0 && (SENTINEL_VALUES.includes(p.min) || SENTINEL_VALUES.includes(p.max))) {
        warnings.push(...(await sentinelNotes(session.connection, source, `(SELECT ${values} FROM ${session.from})`, j, name)));
      }
      const declared = declaredType(options, name);
      const typed = typeNumericColumn({ name, observed: p.observed, fractional: p.fractional, distinct: distinct[j]! }, declared);
      if ("fallback" in typed) return undefined;
      if (typed.note) warnings.push(typed.note);
      const levels = typed.type === "binary" ? [...new Set([p.min, p.max].filter((v) => !Number.isNaN(v)))].map((v) => numberLabel(v, false)) : undefined;
      columns.push({ name, type: typed.type, typeSource: declared !== undefined ? "declared" : "inferred", values: new Float64Array(0), missing: rows - p.observed, ...(levels ? { levels } : {}) });
    }
    const described: Table = assembleTable(source.name, rows, columns, warnings);
    for (let j = 0; j < kept.length; j++) {
      const why = constantReason(described, kept[j]!.name, Math.min(distinct[j]!, 2), profile[j]!.min, false);
      if (why) untestable.set(kept[j]!.name, why);
    }
    return { table: described, moments, untestableVariables: untestable };
  } finally {
    session.close();
  }
}

/**
 * The per-pattern sums, with the profile, over two halves of the rows queried at once on two
 * connections (one thread each) and added in a fixed order; one query when the source has no
 * row number to split by (a view). Cost: one pass over the measured fields.
 */
async function patternSums(session: Awaited<ReturnType<typeof openDuckdbSession>>, source: DuckdbSource, values: string, names: string[], shifts: number[]): Promise<PatternSums[]> {
  const columns = names.map((name, j) => ({ name, shift: shifts[j]! }));
  const k = names.length;
  const sqlOf = (from: string) => patternMomentsSql(from, columns, { profile: true });
  const total = Number((await query(session.connection, source, `SELECT count(*) FROM ${session.from}`))[0]![0]);
  const half = Math.floor(total / 2);
  const rowNumber = source.format === "parquet" ? "file_row_number" : "rowid";
  const scan = source.format === "parquet" ? session.from.replace(/\)$/u, ", file_row_number = true)") : session.from;
  const part = (where: string) => `(SELECT ${values} FROM ${scan} WHERE ${where})`;
  let parts: unknown[][][];
  const second = await session.instance.connect();
  try {
    parts = await Promise.all([
      query(session.connection, source, sqlOf(part(`${rowNumber} < ${half}`))),
      query(second, source, sqlOf(part(`${rowNumber} >= ${half}`))),
    ]);
  } catch {
    parts = [await query(session.connection, source, sqlOf(`(SELECT ${values} FROM ${session.from})`))]; // a view has no rowid
  } finally {
    second.closeSync();
  }
  return mergePatternSums(parts.map((rows) => readPatternSums(rows, k, { profile: true })));
}

/** A query's rows. @throws InputError naming the file when DuckDB fails */
async function query(connection: DuckDBConnection, source: DuckdbSource, sql: string): Promise<unknown[][]> {
  try {
    return (await connection.runAndReadAll(sql)).getRows() as unknown[][];
  } catch (e) {
    throw unreadable(source, e);
  }
}

/** A field as the row path reads it: a DOUBLE, NULL for NULL, NaN and the numeric missing codes. */
function valueExpression(field: string, codes: readonly number[]): string {
  const x = `CAST(${identifier(field)} AS DOUBLE)`;
  const missing = [`isnan(${x})`, ...(codes.length > 0 ? [`${x} IN (${codes.map(sqlNumber).join(", ")})`] : [])];
  return `CASE WHEN ${missing.join(" OR ")} THEN NULL ELSE ${x} END`;
}

/** A finite number as SQL text that reads back as the same double. */
function sqlNumber(v: number): string {
  return Object.is(v, -0) ? "0" : String(v).replace("Infinity", "'Infinity'::DOUBLE");
}

/** The missing codes of a column that are numbers (they match number cells by value; text codes never match a number). */
function numericMissingCodes(options: ReadOptions, name: string): number[] {
  const own = Object.entries(options.missingByColumn ?? {}).filter(([n]) => n.normalize("NFC") === name.normalize("NFC")).flatMap(([, codes]) => codes);
  const out: number[] = [];
  for (const code of [...DEFAULT_MISSING_CODES, ...(options.missing ?? []), ...own]) {
    const v = parseNumberText(code.trim(), false);
    if (v !== undefined && !out.includes(v)) out.push(v);
  }
  return out;
}

/** The declared type of a column (names compared after NFC, as the builder compares them). */
function declaredType(options: ReadOptions, name: string): VariableType | undefined {
  return Object.entries(options.types ?? {}).find(([n]) => n.normalize("NFC") === name.normalize("NFC"))?.[1];
}

/**
 * The sentinel-code warnings of column j, in the words of the column builder: the counts of the
 * sentinel values, and the range and type-7 quartiles of the other values, from SQL (the two
 * order statistics each quartile interpolates between, read by their rank), then the rule of
 * `findSentinelCodes` (same wording as `ColumnBuilder.noteSentinels`; a test compares them). Cost: one pass over the column and two sorted reads.
 */
async function sentinelNotes(connection: DuckDBConnection, source: DuckdbSource, scan: string, j: number, name: string): Promise<string[]> {
  const c = `c${j}`;
  const list = SENTINEL_VALUES.map(sqlNumber).join(", ");
  const base = `(SELECT ${c} FROM ${scan} WHERE ${c} IS NOT NULL)`;
  const counts = (await query(connection, source, `SELECT ${SENTINEL_VALUES.map((s) => `sum(CASE WHEN ${c} = ${sqlNumber(s)} THEN 1 ELSE 0 END)`).join(", ")}, sum(CASE WHEN ${c} IN (${list}) THEN 0 ELSE 1 END) FROM ${base}`))[0]!;
  const others = Number(counts[SENTINEL_VALUES.length]);
  if (others < MIN_OTHER_VALUES) return [];
  const at = async (ranks: number[]): Promise<Map<number, number>> => {
    const wanted = [...new Set(ranks)];
    const rows = await query(connection, source, `SELECT r, v FROM (SELECT row_number() OVER (ORDER BY ${c}) - 1 AS r, ${c} AS v FROM ${base} WHERE ${c} NOT IN (${list})) WHERE r IN (${wanted.join(", ")})`);
    return new Map(rows.map((r) => [Number(r[0]), Number(r[1])]));
  };
  const ranksOf = (p: number) => {
    const lo = Math.floor((others - 1) * p);
    return [lo, Math.min(others - 1, lo + 1)];
  };
  const got = await at([0, others - 1, ...ranksOf(0.25), ...ranksOf(0.75)]);
  // an array-like of the sorted other values holding only the order statistics the quartiles read
  const sorted: ArrayLike<number> = Object.assign(Object.fromEntries(got), { length: others });
  const q = (p: number) => quantileSortedType7(sorted, p);
  const min = got.get(0)!;
  const max = got.get(others - 1)!;
  const iqr = q(0.75) - q(0.25);
  const notes: string[] = [];
  SENTINEL_VALUES.forEach((value, i) => {
    const cells = Number(counts[i]);
    if (cells > 0 && (value > max + iqr || value < min - iqr)) {
      const code = numberLabel(value, false);
      const fmt = (v: number) => numberLabel(Number(v.toPrecision(6)), false);
      notes.push(
        `column "${name}" has ${cells} cell${cells === 1 ? "" : "s"} of ${code}, beyond its other values (${fmt(min)} to ${fmt(max)}) by more than their interquartile range (${fmt(iqr)}); ${code} is a common code for "unknown": if it is one here, declare it with --missing ${JSON.stringify(`${quoteName(name)}=${code}`)}`,
      );
    }
  });
  return notes;
}

/**
 * Tables given as counts: one row per cell (a combination of values) with a frequency column.
 *
 * Terms. A *count* is the number of units (participants) that share a row's values: a whole
 * number ≥ 0. The *expanded table* has one row per unit: each row repeated as often as its count
 * (a row of count 0 contributes nothing), so n, the number of rows every test sees, is the sum of
 * the counts. Every test then weights the rows by their counts exactly as it would see the
 * individual records: moments and cross-products, grouped tables, row-level fits, mid-ranks and
 * permutations of units alike, with no method left out. The cost is memory for n rows, so the
 * expansion is refused above {@link MAX_EXPANDED_CELLS} cells (units × columns). Types and levels
 * were inferred from the file's rows before the expansion, rows of count 0 included.
 * When every claim is tested from tables of counts, the audit needs no expansion: {@link countsTable}
 * gives the rows with their counts as weights, for `runAuditOnCounts`.
 */
import { DataError } from "../errors.js";
import type { Column, Table } from "./Table.js";

/** Most cells (units × kept columns) an expanded table may hold: 8 bytes each, about 800 MB. */
export const MAX_EXPANDED_CELLS = 100_000_000;

export interface CountsOptions {
  /** The data file, for messages. */
  file: string;
  /** 1-based field of the count column in the header, for messages. */
  field?: number;
  /** Line of each data row (1-based), when known; the messages name the data row by its number either way. */
  lineOf?: (row: number) => number | undefined;
}

/**
 * The count of every row of `table` in its column `countColumn`, and their sum (the units).
 * Cost: O(rows).
 * @throws DataError naming the file, the row and the column when a count is missing, text,
 *   negative or not a whole number
 * @example readCounts(table, "n", { file: "cells.csv" }).units // the sum of the column "n"
 */
export function readCounts(table: Table, countColumn: string, options: CountsOptions): { counts: Float64Array; units: number } {
  const { file } = options;
  const col = table.column(countColumn);
  if (!col) throw new DataError(`${file}: the count column "${countColumn}" was not read; this is a bug, please report it`, { file });
  const where = (r: number) => {
    const line = options.lineOf?.(r);
    const field = options.field !== undefined ? `:${options.field}` : "";
    return { at: line !== undefined ? `${file}:${line}${field}` : `${file}${field !== "" ? `, field ${options.field}` : ""}`, pos: { file, ...(line !== undefined ? { line } : {}), ...(options.field !== undefined ? { column: options.field } : {}) } };
  };
  const counts = new Float64Array(table.rows);
  let n = 0;
  for (let r = 0; r < table.rows; r++) {
    let v = col.values[r]!;
    if (col.type === "nominal") {
      // a nominal column's values are level indices: read the level's text as a number
      const code = col.codes?.[r] ?? -1;
      const text = code >= 0 ? (col.levels?.[code] ?? "") : undefined;
      v = text === undefined ? NaN : /^\s*[+-]?\d+(\.\d*)?([eE][+-]?\d+)?\s*$/.test(text) ? Number(text) : NaN;
      if (text !== undefined && Number.isNaN(v)) {
        const w = where(r);
        throw new DataError(`${w.at}: the count column "${countColumn}" holds ${JSON.stringify(text)} in data row ${r + 1}; every count must be a whole number of units (0, 1, 2, …)`, w.pos);
      }
    }
    if (Number.isNaN(v)) {
      const w = where(r);
      throw new DataError(`${w.at}: the count column "${countColumn}" is empty or missing in data row ${r + 1}; write the row's number of units (0 if none), or remove the row`, w.pos);
    }
    if (!(v >= 0) || !Number.isInteger(v)) {
      const w = where(r);
      throw new DataError(`${w.at}: the count column "${countColumn}" holds ${v} in data row ${r + 1}; a count must be a whole number ≥ 0 (the number of units with the row's values)`, w.pos);
    }
    counts[r] = v;
    n += v;
  }
  return { counts, units: n };
}

/**
 * Expand a table of counts to one row per unit (see the module comment); the count column is left
 * out of the result, and a warning records the expansion.
 * Cost: O(n · columns) time and memory for n units.
 * @throws DataError naming the file, the row and the column when a count is missing, text,
 *   negative or not a whole number, or when the expansion would exceed {@link MAX_EXPANDED_CELLS}
 * @example expandCounts(table, "n", { file: "cells.csv" }).rows // the sum of the column "n"
 */
export function expandCounts(table: Table, countColumn: string, options: CountsOptions): Table {
  const { file } = options;
  const { counts, units: n } = readCounts(table, countColumn, options);
  const col = table.column(countColumn)!;
  const kept = table.columns.filter((c) => c !== col);
  if (n * Math.max(1, kept.length) > MAX_EXPANDED_CELLS) {
    throw new DataError(
      `${file}: the counts of "${countColumn}" add up to ${n.toLocaleString("en-US")} units, and ${kept.length} columns of that many rows exceed the ${MAX_EXPANDED_CELLS.toLocaleString("en-US")} cells arrowaudit expands counts to; test fewer variables (declare the others unmeasured) or merge cells`,
      { file },
    );
  }
  const columns: Column[] = kept.map((c) => {
    const values = new Float64Array(n);
    const codes = c.codes ? new Int32Array(n) : undefined;
    let missing = 0;
    let k = 0;
    for (let r = 0; r < table.rows; r++) {
      const times = counts[r]!;
      if (times === 0) continue;
      const v = c.values[r]!;
      values.fill(v, k, k + times);
      if (codes) codes.fill(c.codes![r]!, k, k + times);
      if (Number.isNaN(v)) missing += times;
      k += times;
    }
    return { ...c, values, ...(codes ? { codes } : {}), missing };
  });
  const byName = new Map(columns.map((c) => [c.name, c]));
  const zero = counts.reduce((z, v) => z + (v === 0 ? 1 : 0), 0);
  const note = `${table.rows.toLocaleString("en-US")} rows of ${file} stand for ${n.toLocaleString("en-US")} units by the counts in "${countColumn}"${zero > 0 ? ` (${zero.toLocaleString("en-US")} rows of count 0 add none)` : ""}; every test sees one row per unit`;
  return {
    ...(table.file !== undefined ? { file: table.file } : {}),
    rows: n,
    columns,
    warnings: [...table.warnings, note],
    column: (name) => byName.get(name),
  };
}

/**
 * The table of cells with its counts as weights, for the audits that count each row as its units
 * without copying it (`runAuditOnCounts`: every claim tested from tables of counts): the count
 * column is left out, the rows stay one per cell, and a warning records the counts as
 * `expandCounts` records the expansion. Cost: O(rows).
 * @throws as {@link readCounts}
 * @example countsTable(table, "n", { file: "cells.csv" }).units // the sum of the column "n"
 */
export function countsTable(table: Table, countColumn: string, options: CountsOptions): { table: Table; weights: Float64Array; units: number } {
  const { counts, units } = readCounts(table, countColumn, options);
  const col = table.column(countColumn)!;
  const columns = table.columns.filter((c) => c !== col);
  const byName = new Map(columns.map((c) => [c.name, c]));
  const zero = counts.reduce((z, v) => z + (v === 0 ? 1 : 0), 0);
  const note = `${table.rows.toLocaleString("en-US")} rows of ${options.file} stand for ${units.toLocaleString("en-US")} units by the counts in "${countColumn}"${zero > 0 ? ` (${zero.toLocaleString("en-US")} rows of count 0 add none)` : ""}; every claim was tested from tables of counts, each row counted as its units`;
  return {
    table: { ...(table.file !== undefined ? { file: table.file } : {}), rows: table.rows, columns, warnings: [...table.warnings, note], column: (name) => byName.get(name) },
    weights: counts,
    units,
  };
}

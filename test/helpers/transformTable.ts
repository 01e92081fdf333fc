import type { Column, Table } from "../../src/data/Table.js";

/**
 * A copy of a table whose named columns have their values mapped by `f` (missing values stay
 * NaN); types, codes and levels are kept. Other columns are shared, not copied. For tests that
 * rescale a column (e.g. by a power of two) or plant extreme values in it.
 */
export function mapColumnValues(table: Table, names: readonly string[], f: (value: number, row: number) => number): Table {
  const columns: Column[] = table.columns.map((c) =>
    names.includes(c.name) ? { ...c, values: Float64Array.from(c.values, (v, i) => (Number.isNaN(v) ? v : f(v, i))) } : c,
  );
  const byName = new Map(columns.map((c) => [c.name, c]));
  return { ...(table.file !== undefined ? { file: table.file } : {}), rows: table.rows, columns, warnings: table.warnings, column: (name) => byName.get(name) };
}

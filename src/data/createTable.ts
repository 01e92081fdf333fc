/**
 * Build a {@link Table} from columns held in memory, with the same typing rules, missing codes
 * and checks as reading a file (cells go through the same column builder). Line numbers in
 * messages are 1-based row numbers.
 */
import { DataError } from "../errors.js";
import { ColumnBuilder } from "./columnBuilder.js";
import type { ReadOptions } from "./readOptions.js";
import type { Table } from "./Table.js";

/** A cell: a number (NaN is missing), a text (classified like file text), or null/undefined (missing). */
export type CellValue = number | string | null | undefined;

export type CreateTableOptions = Pick<ReadOptions, "file" | "decimalComma" | "missing" | "types" | "levels" | "columns">;

/**
 * Create a table from in-memory columns keyed by name (insertion order is column order).
 * Numbers are taken as they are (NaN, null and undefined are missing; numeric missing codes
 * apply); strings are read like file cells (trimmed, missing codes, numbers parsed). Declared
 * levels set the level order and the scores as in a file (see `columnBuilder`).
 * Cost: O(rows · columns).
 * @throws DataError when columns differ in length, a name is empty, or a number is infinite;
 *   and the reader's typing errors (stray text among numbers, values outside declared levels, ...)
 * @throws UsageError for declarations that name no column or contradict themselves
 * @example createTable({ x: [1, 2, 3.5], smoker: ["yes", "no", null] }).column("smoker")?.type // "binary"
 */
export function createTable(data: Readonly<Record<string, ArrayLike<CellValue>>>, options: CreateTableOptions = {}): Table {
  const names = Object.keys(data);
  const file = options.file;
  const where = `${file ?? "table"}: `;
  const rows = names.length === 0 ? 0 : data[names[0]!]!.length;
  for (const name of names) {
    if (name.trim() === "") throw new DataError(`${where}a column has an empty name; name every column`, { file });
    const len = data[name]!.length;
    if (len !== rows) {
      throw new DataError(
        `${where}column "${name}" has ${len} values but column "${names[0]}" has ${rows}; give every column the same length`,
        { file },
      );
    }
  }
  const builder = new ColumnBuilder(names, options);
  const arrays = names.map((n) => data[n]!);
  const map = builder.fieldToColumn;
  for (let i = 0; i < rows; i++) {
    builder.beginRecord(i + 1);
    for (let f = 0; f < arrays.length; f++) {
      const c = map[f]!;
      if (c < 0) continue;
      const v = arrays[f]![i];
      if (typeof v === "number") {
        if (v !== v) builder.miss(c);
        else if (!Number.isFinite(v)) {
          throw new DataError(`${where}column "${names[f]}" row ${i + 1} is ${v}; use finite numbers, or NaN for missing`, {
            file,
            line: i + 1,
            column: f + 1,
          });
        } else builder.num(c, v);
      } else if (typeof v === "string") builder.text(c, v);
      else builder.miss(c);
    }
    builder.endRecord(arrays.length);
  }
  return builder.finish();
}

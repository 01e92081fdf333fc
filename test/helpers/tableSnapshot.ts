import type { Table } from "../../src/data/Table.js";

/** Everything a Table holds, in a form toEqual compares exactly (NaN and -0 kept apart). */
export function tableSnapshot(t: Table) {
  return {
    file: t.file,
    rows: t.rows,
    warnings: t.warnings,
    columns: t.columns.map((c) => ({
      name: c.name,
      type: c.type,
      typeSource: c.typeSource,
      values: [...c.values].map((v) => (Object.is(v, -0) ? "-0" : Number.isNaN(v) ? "NaN" : v)),
      codes: c.codes ? [...c.codes] : undefined,
      levels: c.levels,
      missing: c.missing,
    })),
  };
}

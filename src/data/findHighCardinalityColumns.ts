/**
 * Categorical columns with about one row per level (identifiers, free text, dates), which no
 * test can use: a table of x by such a column has about one count per cell, and a regression on
 * its level indicators has about one parameter per row.
 *
 * Terms: the *observed levels* of a categorical column are its levels that occur in a
 * non-missing row. A categorical column is *high-cardinality* when its observed levels are more
 * than half its observed rows and more than {@link HIGH_CARDINALITY_MIN_LEVELS}.
 */
import type { Column, Table } from "./Table.js";

/** More observed levels than this (and than half the observed rows) make a column high-cardinality. */
export const HIGH_CARDINALITY_MIN_LEVELS = 50;

/**
 * The observed levels and rows of a high-cardinality categorical column, or undefined (for a
 * continuous column too); with `weights` (units per row, as `--counts` gives them), rows are
 * counted as their units and rows of weight 0 left out. Cost: O(rows).
 * @example highCardinality(table.column("pid")!) // { levels: 200, observed: 200 }
 */
export function highCardinality(column: Column, weights?: Float64Array): { levels: number; observed: number } | undefined {
  const codes = column.codes;
  if (column.type === "continuous" || codes === undefined || column.levels === undefined) return undefined;
  if (column.levels.length <= HIGH_CARDINALITY_MIN_LEVELS) return undefined;
  const seen = new Uint8Array(column.levels.length);
  let levels = 0;
  let observed = 0;
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i]!;
    if (c < 0 || weights?.[i] === 0) continue;
    observed += weights ? weights[i]! : 1;
    if (seen[c] === 0) {
      seen[c] = 1;
      levels++;
    }
  }
  return levels > HIGH_CARDINALITY_MIN_LEVELS && 2 * levels > observed ? { levels, observed } : undefined;
}

/**
 * Why a claim that involves a high-cardinality column cannot be tested (one sentence, for the
 * claim's untestable reason). Cost: O(1).
 * @example highCardinalityReason("pid", 200, 200)
 */
export function highCardinalityReason(name: string, levels: number, observed: number): string {
  return `"${name}" has ${levels} levels among ${observed} observed rows (about one row per level, like an identifier), so no test can use it`;
}

/**
 * The high-cardinality columns among `names` (default: every column), each with the reason a
 * claim involving it is untestable (see {@link highCardinalityReason}); `weights` as for {@link highCardinality}. Cost: O(rows · columns).
 * @example findHighCardinalityColumns(table, ["pid", "age"]) // Map { "pid" => "\"pid\" has 200 levels ..." }
 */
export function findHighCardinalityColumns(table: Table, names?: readonly string[], weights?: Float64Array): Map<string, string> {
  const out = new Map<string, string>();
  for (const name of names ?? table.columns.map((c) => c.name)) {
    const column = table.column(name);
    const found = column && highCardinality(column, weights);
    if (found) out.set(name, highCardinalityReason(name, found.levels, found.observed));
  }
  return out;
}

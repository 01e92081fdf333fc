/**
 * The pattern moments of one claim's design columns, with categorical members of the
 * conditioning set entered as categories.
 *
 * Terms: the *default* design columns of a variable are its score (continuous, binary, ordinal)
 * or the 0/1 indicators of a nominal variable's levels but the first (`Moments.ts`). A member of
 * the conditioning set that is ordinal enters instead as indicators of its levels (never as a
 * score, which would assume its effect is linear in the codes); a binary member's score spans the
 * same space as its indicator. The audit builds those indicator columns for the ordinal members
 * of every moment-based claim (`momentExpansions.ts`).
 */
import type { Moments, PatternMoments } from "../../data/Moments.js";
import type { Table } from "../../data/Table.js";

/**
 * Moments over the complete rows of the default columns of `sides` and of the given members,
 * the ordinal members of `given` as level indicators; undefined when the moments hold no
 * indicator columns for an ordinal member. Cost: O(P · d²) for P patterns and d columns.
 * @example claimMoments(ctx.moments, ctx.table, ["sbp", "smoker"], ["age", "education"])?.design
 */
export function claimMoments(pm: PatternMoments, table: Table, sides: readonly string[], given: readonly string[]): Moments | undefined {
  const ordinal = given.filter((g) => table.column(g)?.type === "ordinal");
  if (ordinal.length === 0) return pm.momentsFor([...sides, ...given]);
  const idx: number[] = [];
  for (const v of [...sides, ...given]) {
    const cols = pm.columnsOf(v);
    const nominal = table.column(v)?.type === "nominal";
    if (ordinal.includes(v) && !sides.includes(v)) {
      const ind = cols.filter((c) => c.column.kind === "indicator");
      if (ind.length === 0) return undefined;
      idx.push(...ind.map((c) => c.index));
    } else idx.push(...cols.filter((c) => c.column.kind === "score" || (nominal && c.column.kind === "indicator")).map((c) => c.index));
  }
  return pm.momentsForColumns(idx);
}

/** The reason given when the moments lack the indicators of ordinal members. */
export function missingIndicatorsReason(given: readonly string[]): string {
  return `the pattern moments hold no level indicators for the ordinal members of ${given.map((g) => `"${g}"`).join(", ")}; build them with the audit's moment expansions`;
}

/**
 * How each member of a claim's conditioning set entered its test, and which model each side got,
 * in the claim's details (one shape for every test method).
 *
 * Terms: a member enters as *strata* (every combination of the categorical members' levels is
 * its own stratum: no model of the set at all), as *indicators* of its levels (categories, never a
 * score), as a *spline* (the flexible basis of `stats/flexibleBasis.ts`) or *linear* (a straight
 * line in its values).
 */
import type { Table } from "../../data/Table.js";

export interface AdjustmentEntry {
  variable: string;
  entered: "strata" | "indicators" | "spline" | "linear";
  /** Design columns it contributed (not for strata). */
  columns?: number;
}

export interface SideModel {
  variable: string;
  model: string;
}

/**
 * Entries of a set adjusted linearly: continuous and binary members as one column (a binary
 * member's score is its indicator), ordinal and nominal members as indicators of their levels.
 * Cost: O(k).
 * @example linearAdjustment(table, ["age", "region"]) // [{ variable: "age", entered: "linear", columns: 1 }, { variable: "region", entered: "indicators", columns: 3 }]
 */
export function linearAdjustment(table: Table, given: readonly string[]): AdjustmentEntry[] {
  return given.map((g) => {
    const c = table.column(g);
    if (c && (c.type === "ordinal" || c.type === "nominal")) return { variable: g, entered: "indicators", columns: Math.max(0, (c.levels?.length ?? 1) - 1) };
    if (c && c.type === "binary") return { variable: g, entered: "indicators", columns: 1 };
    return { variable: g, entered: "linear", columns: 1 };
  });
}

/** Entries of a set whose members define strata. Cost: O(k). */
export function strataAdjustment(given: readonly string[]): AdjustmentEntry[] {
  return given.map((g) => ({ variable: g, entered: "strata" }));
}

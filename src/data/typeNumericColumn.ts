/**
 * The type of a numeric column from counts made where the data live (SQL), by the same rule as
 * the column builder (`inferType`), or why those counts cannot settle it the same way.
 *
 * Terms: a *numeric column* holds numbers only (no text cell); its *facts* are the observed
 * values, their range, how many are not whole numbers, and how many distinct values there are.
 * The builder counts distinct numbers up to 11 and notes whether those seen are whole numbers;
 * `inferType` then needs only: none observed, one, two, 3–10 whole numbers (ordinal), otherwise.
 * So `distinct` must be exact up to 11 for a column of whole numbers; for a column with a value
 * that is not a whole number any value of 3 or more gives the same answer (continuous).
 */
import { inferType, MAX_INFERRED_ORDINAL_LEVELS } from "./inferType.js";
import type { VariableType } from "./Table.js";

export interface NumericColumnFacts {
  name: string;
  observed: number;
  /** Values that are not whole numbers. */
  fractional: number;
  /** Distinct observed values: exact up to 11 (more counts as 11); for a column with fractional values, 3 may stand for "three or more". */
  distinct: number;
}

/** The column's type and the builder's note, or `fallback` with the reason the rows are needed. */
export type NumericColumnType = { type: VariableType; note?: string } | { fallback: string };

/**
 * The type of a numeric column (declared, else inferred by `inferType` from its facts) when it
 * is continuous or binary, which score moments can test; else a fallback reason (ordinal and
 * nominal variables need level indicators; a declared binary column with more than two values is
 * an error the row reader words). Cost: O(1).
 * @example typeNumericColumn({ name: "smoker", observed: 90, fractional: 0, distinct: 2 }) // { type: "binary" }
 */
export function typeNumericColumn(facts: NumericColumnFacts, declared?: VariableType): NumericColumnType {
  const { name } = facts;
  if (declared === "continuous") return { type: "continuous" };
  if (declared === "binary") return facts.distinct <= 2 ? { type: "binary" } : { fallback: `"${name}" is declared binary but has more than two values` };
  if (declared !== undefined) return { fallback: `"${name}" is declared ${declared}, which needs level indicators` };
  const inferred = inferType({
    name,
    observed: facts.observed,
    numbers: facts.observed,
    texts: 0,
    distinctNumbers: Math.min(facts.distinct, MAX_INFERRED_ORDINAL_LEVELS + 1),
    allIntegers: facts.fractional === 0,
    distinctTexts: 0,
  });
  if (inferred.kind !== "type") return { fallback: `"${name}" has text` };
  if (inferred.type !== "continuous" && inferred.type !== "binary") return { fallback: `"${name}" is inferred ${inferred.type}, which needs level indicators` };
  return inferred.note !== undefined ? { type: inferred.type, note: inferred.note } : { type: inferred.type };
}

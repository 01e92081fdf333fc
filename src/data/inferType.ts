/**
 * Variable type inference for an undeclared column, from a summary of its cells.
 *
 * Terms: an *observed* cell is one that is not missing; a *number* cell parses as a decimal
 * number; a *text* cell is any other observed cell. Rules, in order:
 * 1. no observed cell: continuous (all missing; noted);
 * 2. text cells among at least 90% number cells: stray text, a data error (the column is a
 *    measurement with a few unreadable entries, e.g. `>90` or `12,5`);
 * 3. exactly two distinct values (numbers or labels): binary;
 * 4. numbers only, all integers, 3 to 10 distinct values: ordinal (noted, so the user can
 *    declare it otherwise);
 * 5. numbers only otherwise: continuous (a single distinct value is noted as constant);
 * 6. text (possibly mixed with a minority of numbers): nominal; more than 20 levels covering
 *    more than half the observed cells is noted as a likely identifier.
 */
import { quoteName } from "./readOptions.js";
import type { VariableType } from "./Table.js";

/** Share of number cells among observed cells from which remaining text cells are stray text. */
export const STRAY_TEXT_NUMBER_SHARE = 0.9;
/** Most distinct integer values read as an ordinal scale. */
export const MAX_INFERRED_ORDINAL_LEVELS = 10;

export interface ColumnSummary {
  name: string;
  /** Observed (non-missing) cells. */
  observed: number;
  /** Observed cells that are numbers. */
  numbers: number;
  /** Observed cells that are text. */
  texts: number;
  /** Distinct numeric values, counted up to MAX_INFERRED_ORDINAL_LEVELS + 1 (more is reported as that). */
  distinctNumbers: number;
  /** Whether every number seen (while distinct numbers were still being counted) is an integer. */
  allIntegers: boolean;
  /** Distinct text labels. */
  distinctTexts: number;
}

export type InferredType =
  | { kind: "type"; type: VariableType; note?: string }
  | { kind: "strayText" };

/**
 * Infer the variable type of a column from its summary, by the rules in the module comment.
 * Cost: O(1).
 * @throws never (stray text is returned as `{ kind: "strayText" }` for the caller to report)
 * @example inferType({ name: "smoker", observed: 10, numbers: 10, texts: 0, distinctNumbers: 2, allIntegers: true, distinctTexts: 0 }) // { kind: "type", type: "binary" }
 */
export function inferType(s: ColumnSummary): InferredType {
  if (s.observed === 0) {
    return { kind: "type", type: "continuous", note: `column "${s.name}" is entirely missing` };
  }
  if (s.texts > 0 && s.numbers >= STRAY_TEXT_NUMBER_SHARE * s.observed) return { kind: "strayText" };
  const distinct = s.distinctNumbers + s.distinctTexts;
  if (distinct === 2) return { kind: "type", type: "binary" };
  if (s.texts === 0) {
    if (distinct === 1) return { kind: "type", type: "continuous", note: `column "${s.name}" is constant` };
    if (s.allIntegers && distinct >= 3 && distinct <= MAX_INFERRED_ORDINAL_LEVELS) {
      return {
        kind: "type",
        type: "ordinal",
        note: `column "${s.name}": inferred ordinal from ${distinct} integer levels; declare it with --types ${s.name}=continuous (or nominal) if not`,
      };
    }
    return { kind: "type", type: "continuous" };
  }
  const notes: string[] = [];
  if (distinct === 1) notes.push(`column "${s.name}" is constant`);
  if (s.numbers > 0) {
    notes.push(`column "${s.name}" mixes numbers and text (${s.texts} text cells); read as nominal`);
  }
  if (s.distinctTexts > 20 && s.distinctTexts > 0.5 * s.observed) notes.push(identifierNote(s.name, s.distinctTexts, s.observed));
  return notes.length > 0
    ? { kind: "type", type: "nominal", note: notes.join("; ") }
    : { kind: "type", type: "nominal" };
}

/**
 * The note for a text column that looks like an identifier (rule 6), naming the options that
 * leave it out. Cost: O(1).
 * @example identifierNote("pid", 30, 30)
 */
export function identifierNote(name: string, distinctTexts: number, observed: number): string {
  const n = quoteName(name);
  return `column "${name}" has ${distinctTexts} distinct texts in ${observed} rows and looks like an identifier; leave it out with --ignore ${n} (or, if it is a graph node, take it out of the graph or declare it unmeasured with --unmeasured ${n})`;
}

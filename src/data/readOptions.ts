/**
 * Options for reading a cohort file, and the parsers for their command-line spellings.
 *
 * Terms: a *missing code* is a cell text that stands for "not measured". A cell is missing
 * when its trimmed text equals one of the codes exactly, or, when both the cell and a code
 * parse as numbers, when their numeric values are equal (so the code `-9` also matches
 * `-9.0` and `-9e0`, but the text code `NA` never matches `na`). The defaults are the empty
 * cell, `NA`, `N/A`, `NaN`, `.` and `NULL`; user codes are added to them, never replace them.
 */
import { UsageError } from "../errors.js";
import type { VariableType } from "./Table.js";

/** Missing codes that always apply (compared with the trimmed cell text, case-sensitive). */
export const DEFAULT_MISSING_CODES: readonly string[] = ["", "NA", "N/A", "NaN", ".", "NULL"];

export interface ReadOptions {
  /** File name for messages and reports; the reader never opens it. */
  file?: string;
  /** Field delimiter; detected among comma, semicolon and tab from the header and the first rows when absent. */
  delimiter?: "," | ";" | "\t";
  /** Numbers use a comma as the decimal mark (`1,5`); the delimiter is then semicolon or tab. */
  decimalComma?: boolean;
  /** Extra missing codes, added to {@link DEFAULT_MISSING_CODES}. */
  missing?: string[];
  /** Declared variable types by column name; undeclared columns are inferred. */
  types?: Record<string, VariableType>;
  /**
   * Declared level order by column name (low to high for ordinal; the first is the reference for
   * nominal). A column with declared levels is binary when two are given, else ordinal, unless
   * `types` says otherwise; every value in the column must be one of them (numbers by value).
   * The order sets the scores of a binary or ordinal column: numeric levels listed in increasing
   * order keep their numbers as scores, any other order scores each level by its position
   * (0 to k − 1), with a warning when the levels are numbers (see `scoreLevels` in columnBuilder.ts).
   */
  levels?: Record<string, string[]>;
  /** Keep only these columns (file order is kept); the others are skipped but still counted for ragged rows. */
  columns?: string[];
  /**
   * Parsing engine, for tests and benchmarks: `auto` (default) scans bytes and hands over to
   * papaparse at the first quote character; `papaparse` parses everything with papaparse.
   */
  engine?: "auto" | "papaparse";
}

const VARIABLE_TYPES: readonly VariableType[] = ["continuous", "binary", "ordinal", "nominal"];

/**
 * Parse a comma-separated list of missing codes, as given to `--missing`.
 * Items are trimmed; an empty list gives []. Cost: O(length).
 * @throws never
 * @example parseMissingCodes("-9, 999") // ["-9", "999"]
 */
export function parseMissingCodes(text: string): string[] {
  if (text.trim() === "") return [];
  return text.split(",").map((s) => s.trim());
}

/**
 * Parse type declarations `name=type,name=type`, as given to `--types`.
 * Types: continuous, binary, ordinal, nominal. Cost: O(length).
 * @throws UsageError when an item has no `=`, an empty name, an unknown type, or a name twice
 * @example parseTypeDeclarations("education=ordinal,region=nominal") // { education: "ordinal", region: "nominal" }
 */
export function parseTypeDeclarations(text: string): Record<string, VariableType> {
  const out: Record<string, VariableType> = {};
  for (const [name, value] of splitAssignments(text, "--types")) {
    const type = value as VariableType;
    if (!VARIABLE_TYPES.includes(type)) {
      throw new UsageError(
        `--types: "${value}" for column "${name}" is not a type; use one of ${VARIABLE_TYPES.join(", ")}`,
      );
    }
    out[name] = type;
  }
  return out;
}

/**
 * Parse level declarations `name=a|b|c,name=x|y`, as given to `--levels`: levels are
 * separated by `|`, declarations by `,`; the order is kept (it sets the codes and, for binary
 * and ordinal columns, the scores; see {@link ReadOptions.levels}). Cost: O(length).
 * @throws UsageError when an item has no `=`, fewer than two levels, an empty or repeated level, or a name twice
 * @example parseLevelDeclarations("education=low|mid|high") // { education: ["low", "mid", "high"] }
 */
export function parseLevelDeclarations(text: string): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const [name, value] of splitAssignments(text, "--levels")) {
    const levels = value.split("|").map((s) => s.trim());
    if (levels.length < 2) {
      throw new UsageError(`--levels: column "${name}" has only the level "${value}"; list at least two levels separated by |`);
    }
    const seen = new Set<string>();
    for (const level of levels) {
      if (level === "") throw new UsageError(`--levels: column "${name}" has an empty level in "${value}"; remove the extra |`);
      if (seen.has(level)) throw new UsageError(`--levels: column "${name}" lists the level "${level}" twice; list each level once`);
      seen.add(level);
    }
    out[name] = levels;
  }
  return out;
}

function splitAssignments(text: string, flag: string): [string, string][] {
  const out: [string, string][] = [];
  const seen = new Set<string>();
  if (text.trim() === "") return out;
  for (const raw of text.split(",")) {
    const item = raw.trim();
    const eq = item.indexOf("=");
    if (eq < 0) throw new UsageError(`${flag}: "${item}" has no "="; write name=value`);
    const name = item.slice(0, eq).trim();
    const value = item.slice(eq + 1).trim();
    if (name === "") throw new UsageError(`${flag}: "${item}" has no column name before "="; write name=value`);
    if (seen.has(name)) throw new UsageError(`${flag}: column "${name}" is given twice; give it once`);
    seen.add(name);
    out.push([name, value]);
  }
  return out;
}

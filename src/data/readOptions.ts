/**
 * Options for reading a cohort file, and the parsers for their command-line spellings.
 *
 * Terms: a *missing code* is a cell text that stands for "not measured". A cell is missing
 * when its trimmed text equals one of the codes exactly, or, when both the cell and a code
 * parse as numbers, when their numeric values are equal (so the code `-9` also matches
 * `-9.0` and `-9e0`, but the text code `NA` never matches `na`). The defaults are the empty
 * cell, `NA`, `N/A`, `NaN`, `.` and `NULL`; user codes are added to them, never replace them.
 * A code is given for every column, or for one column only (`fage=0`).
 *
 * *Option lists* (`--missing`, `--types`, `--levels`, `--ignore`) share one grammar:
 *
 * ```ebnf
 * list   = [ item , { "," , item } ] ;
 * item   = field , [ "=" , field ] ;                (* name=value; --missing also takes a bare code *)
 * field  = quoted | plain ;                         (* blank space around a field is dropped *)
 * quoted = '"' , { char - '"' | '""' } , '"' ;      (* may hold "," and "=", '""' is one quote *)
 * plain  = { char - ( "," | '"' ) } ;               (* a name stops at the first "="; a value may hold "=" *)
 * ```
 *
 * So `--missing 'fage=0,fedu=0,-9'` declares 0 missing in fage and fedu and -9 in every column;
 * `--missing '"weight, kg"=0'` names a column with a comma; `--missing '"<=5"'` is the bare code
 * `<=5` (quoted because it holds "="). Names are matched to the file's header after Unicode
 * normalisation to NFC (see `columnBuilder`).
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
  /** Extra missing codes for every column, added to {@link DEFAULT_MISSING_CODES}. */
  missing?: readonly string[];
  /**
   * Extra missing codes of single columns, by column name, added to the codes of every column
   * (read with own-property lookups only, so any name is safe, `__proto__` included).
   */
  missingByColumn?: Readonly<Record<string, readonly string[]>>;
  /** Declared variable types by column name; undeclared columns are inferred. */
  types?: Readonly<Record<string, VariableType>>;
  /**
   * Declared level order by column name (low to high for ordinal; the first is the reference for
   * nominal). A column with declared levels is binary when two are given, else ordinal, unless
   * `types` says otherwise; every value in the column must be one of them (numbers by value).
   * The order sets the scores of a binary or ordinal column: numeric levels listed in increasing
   * order keep their numbers as scores, any other order scores each level by its position
   * (0 to k − 1), with a warning when the levels are numbers (see `scoreLevels` in columnBuilder.ts).
   */
  levels?: Readonly<Record<string, readonly string[]>>;
  /** Keep only these columns (file order is kept); the others are skipped but still counted for ragged rows. */
  columns?: readonly string[];
  /** Leave these columns out (each must be in the header, and none may be in `columns`). */
  ignore?: readonly string[];
  /**
   * Parsing engine, for tests and benchmarks: `auto` (default) scans bytes and hands over to
   * papaparse at the first quote character; `papaparse` parses everything with papaparse.
   */
  engine?: "auto" | "papaparse";
}

const VARIABLE_TYPES: readonly VariableType[] = ["continuous", "binary", "ordinal", "nominal"];

/**
 * A column name as typed in an option list: in double quotes (a quote doubled) when it holds a
 * comma, "=", a quote or blank space, else as it is. Cost: O(length).
 * @example quoteName("weight, kg") // "\"weight, kg\""
 */
export function quoteName(name: string): string {
  return /[,="\s]/u.test(name) ? `"${name.replace(/"/g, '""')}"` : name;
}

/** One item of an option list: `name=value`, or a bare `value` (name undefined). */
export interface OptionItem {
  name?: string;
  value: string;
  /** The item as written, for messages. */
  text: string;
}

/**
 * Split an option list into items by the grammar in the module comment (quotes, `=`, `,`).
 * Cost: O(length).
 * @throws UsageError for an unclosed quote, or text between a closing quote and the next `,` or `=`
 * @example splitOptionList('"a,b"=1, c', "--missing") // [{ name: "a,b", value: "1", ... }, { value: "c", ... }]
 */
export function splitOptionList(text: string, flag: string): OptionItem[] {
  const items: OptionItem[] = [];
  if (text.trim() === "") return items;
  let i = 0;
  const n = text.length;
  /** Read one field from i; stops at "," (and at "=" when `name`). */
  const field = (name: boolean): { value: string; quoted: boolean } => {
    while (i < n && /\s/u.test(text[i]!)) i++;
    if (text[i] === '"') {
      let out = "";
      i++;
      for (;;) {
        if (i >= n) throw new UsageError(`${flag}: a double quote is never closed in "${text}"; close it, and double a quote inside quotes ("")`);
        const ch = text[i]!;
        if (ch === '"') {
          if (text[i + 1] === '"') {
            out += '"';
            i += 2;
            continue;
          }
          i++;
          break;
        }
        out += ch;
        i++;
      }
      while (i < n && /\s/u.test(text[i]!)) i++;
      if (i < n && text[i] !== "," && !(name && text[i] === "=")) {
        throw new UsageError(`${flag}: text after a closing quote in "${text}"; put the whole name or code in the quotes`);
      }
      return { value: out, quoted: true };
    }
    const start = i;
    while (i < n && text[i] !== "," && !(name && text[i] === "=")) {
      if (text[i] === '"') {
        throw new UsageError(`${flag}: a double quote inside "${text}"; quote the whole name or code ("...") and double a quote inside it ("")`);
      }
      i++;
    }
    return { value: text.slice(start, i).trim(), quoted: false };
  };
  for (;;) {
    const start = i;
    const first = field(true);
    let item: OptionItem;
    if (text[i] === "=") {
      i++;
      const second = field(false);
      item = { name: first.value, value: second.value, text: text.slice(start, i).trim() };
    } else {
      item = { value: first.value, text: text.slice(start, i).trim() };
    }
    items.push(item);
    if (i >= n) break;
    i++; // the comma
  }
  return items;
}

/** Per-column and all-column missing codes, as parsed from `--missing`. */
export interface MissingSpec {
  /** Codes for every column. */
  codes: string[];
  /** Codes for single columns (a null-prototype record: any name is an own key). */
  byColumn: Record<string, string[]>;
}

/**
 * Parse `--missing`: bare codes apply to every column, `name=code` to one column (a name may be
 * given several times); see the grammar in the module comment. Cost: O(length).
 * @throws UsageError for bad quoting or an empty column name before "="
 * @example parseMissingSpec("fage=0,fedu=0,-9") // { codes: ["-9"], byColumn: { fage: ["0"], fedu: ["0"] } }
 */
export function parseMissingSpec(text: string): MissingSpec {
  const codes: string[] = [];
  const byColumn = Object.create(null) as Record<string, string[]>;
  for (const item of splitOptionList(text, "--missing")) {
    if (item.name === undefined) {
      codes.push(item.value);
      continue;
    }
    if (item.name === "") throw new UsageError(`--missing: "${item.text}" has no column name before "="; write name=code, or quote a code that holds "=" ("...")`);
    (Object.hasOwn(byColumn, item.name) ? byColumn[item.name]! : (byColumn[item.name] = [])).push(item.value);
  }
  return { codes, byColumn };
}

/**
 * Parse a comma-separated list of missing codes for every column, as given to `--missing`
 * without column names. Items are trimmed; an empty list gives []. Cost: O(length).
 * @throws UsageError when the list names a column (`name=code`): use {@link parseMissingSpec}
 * @example parseMissingCodes("-9, 999") // ["-9", "999"]
 */
export function parseMissingCodes(text: string): string[] {
  const spec = parseMissingSpec(text);
  const named = Object.keys(spec.byColumn);
  if (named.length > 0) throw new UsageError(`--missing: codes for single columns (${named.join(", ")}) need parseMissingSpec`);
  return spec.codes;
}

/**
 * Parse a list of column names, as given to `--ignore` (same quoting as the other lists).
 * Cost: O(length).
 * @throws UsageError for an item with "=", an empty name or a name given twice
 * @example parseNameList("id, visit_date") // ["id", "visit_date"]
 */
export function parseNameList(text: string, flag: string): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  for (const item of splitOptionList(text, flag)) {
    if (item.name !== undefined) throw new UsageError(`${flag}: "${item.text}" holds "="; quote a name that holds "=" ("...")`);
    if (item.value === "") throw new UsageError(`${flag}: an empty name in "${text}"; remove the extra comma`);
    const key = item.value.normalize("NFC");
    if (seen.has(key)) throw new UsageError(`${flag}: column "${item.value}" is given twice; give it once`);
    seen.add(key);
    out.push(item.value);
  }
  return out;
}

/**
 * Parse type declarations `name=type,name=type`, as given to `--types`.
 * Types: continuous, binary, ordinal, nominal. The result has no prototype, so any column name
 * (`constructor`, `__proto__`) is an own key. Cost: O(length).
 * @throws UsageError when an item has no `=`, an empty name, an unknown type, or a name twice
 * @example parseTypeDeclarations("education=ordinal,region=nominal") // { education: "ordinal", region: "nominal" }
 */
export function parseTypeDeclarations(text: string): Record<string, VariableType> {
  const out = Object.create(null) as Record<string, VariableType>;
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
 * and ordinal columns, the scores; see {@link ReadOptions.levels}). The result has no prototype.
 * Cost: O(length).
 * @throws UsageError when an item has no `=`, fewer than two levels, an empty or repeated level, or a name twice
 * @example parseLevelDeclarations("education=low|mid|high") // { education: ["low", "mid", "high"] }
 */
export function parseLevelDeclarations(text: string): Record<string, string[]> {
  const out = Object.create(null) as Record<string, string[]>;
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

/** The `name=value` items of a list; a name is compared after NFC normalisation for repeats. */
function splitAssignments(text: string, flag: string): [string, string][] {
  const out: [string, string][] = [];
  const seen = new Set<string>();
  for (const item of splitOptionList(text, flag)) {
    if (item.name === undefined) throw new UsageError(`${flag}: "${item.text}" has no "="; write name=value`);
    if (item.name === "") throw new UsageError(`${flag}: "${item.text}" has no column name before "="; write name=value`);
    const key = item.name.normalize("NFC");
    if (seen.has(key)) throw new UsageError(`${flag}: column "${item.name}" is given twice; give it once`);
    seen.add(key);
    out.push([item.name, item.value]);
  }
  return out;
}

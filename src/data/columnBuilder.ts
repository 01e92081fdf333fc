/**
 * Column builder: receives the cells of a table row by row (as parsed numbers or as text)
 * and produces typed columns once, without keeping the text of number cells.
 *
 * Storage while reading: per column, one Float64Array of `capacity` doubles written in place
 * (NaN for a missing or a text cell) and, only for columns that contain text, one Int32Array
 * of text codes (-1 for no text) into a per-column dictionary of distinct labels. The capacity
 * starts at the caller's estimate of the row count (see {@link ColumnBuilder.reserve}) and
 * grows by half when exceeded, one column at a time; at the end a column with more than 1/8
 * unused capacity is copied once to its exact length, otherwise it is handed over as a view,
 * so the peak is the data plus at most one column. Number cells are classified by {@link ColumnBuilder.num},
 * text cells by {@link ColumnBuilder.text}; both paths of the reader go through these two
 * methods, which is what makes them produce identical tables.
 *
 * Levels and scores of categorical columns (done once, in {@link ColumnBuilder.finish}, after
 * the two-thread reader has joined its halves, so both readers apply the same rule). The
 * *levels* are the declared ones (`--levels`, in the declared order), else the distinct numbers
 * ascending followed by the text labels in code-unit order; `codes` holds each row's level index
 * in that order. A number cell matches a level by value (`1.0` is the level `1`), a text cell by
 * label; a value outside declared levels is an error that names it. The *score* of a binary or
 * ordinal level (the column's `values`) is its number when all levels are numbers listed in
 * increasing order (the spacing of numeric codes is meaningful), otherwise its position in the
 * level order, 0 to k − 1. So a declared order sets the scores: declaring numeric codes out of
 * increasing order (`pain=3|1|2`) scores them by position, and a warning says so; see
 * {@link scoreLevels}. Nominal values are the level positions.
 *
 * Names: a column is found by a name (kept columns, declarations, ignored columns, per-column
 * missing codes) when both are equal after Unicode normalisation to NFC; a kept column takes the
 * spelling it was asked for, and a warning says when that differs from the file's. Each kept
 * column has its own missing codes (the defaults, the codes for every column and its own).
 * Checks when a column is finished, besides typing: numbers written with a decimal comma in a
 * semicolon or tab file read with a decimal point stop the read; a sentinel code far outside a
 * numeric column's values (`findSentinelCodes`) and a categorical column with about one row per
 * level (`findHighCardinalityColumns`) are warnings.
 */
import { DataError, UsageError } from "../errors.js";
import { findClosestNames } from "../graph/checkColumns.js";
import { findSentinelCodes } from "./findSentinelCodes.js";
import { magnitudesOf, rememberMagnitudes } from "../stats/powerOfTwoScale.js";
import { highCardinality, HIGH_CARDINALITY_MIN_LEVELS } from "./findHighCardinalityColumns.js";
import { checkHeaderNames } from "./headerNames.js";
import { identifierNote, inferType, MAX_INFERRED_ORDINAL_LEVELS } from "./inferType.js";
import { DEFAULT_MISSING_CODES, quoteName, type ReadOptions } from "./readOptions.js";
import { parseNumberText } from "./parseNumberText.js";
import type { Column, Table, VariableType } from "./Table.js";

const INITIAL_CAPACITY = 1024;
const TRACK_LIMIT = MAX_INFERRED_ORDINAL_LEVELS + 1;

/** A builder's state as plain data; see {@link ColumnBuilder.exportState}. */
export interface BuilderState {
  rows: number;
  inGivenStorage: boolean;
  vals: Float64Array[];
  textCodes: (Int32Array | undefined)[];
  missingCount: Float64Array;
  textCount: Float64Array;
  distinct: Float64Array[];
  distinctN: Int32Array;
  overflow: Uint8Array;
  allInt: Uint8Array;
  labels: string[][];
  firstTexts: { line: number; text: string }[][];
  lineRows: number[];
  lineOffsets: number[];
  blankLines: number;
}

/** What the column builder needs of the read options (documented on {@link ReadOptions}), and where the cells come from. */
export interface BuilderOptions extends Pick<ReadOptions, "decimalComma" | "missing" | "missingByColumn" | "types" | "levels" | "columns" | "ignore"> {
  file?: string;
  /** The file's delimiter, when the cells come from a file (for the decimal-comma check). */
  delimiter?: string;
  /** Whether header field 1 is an unnamed row-label column, left out (see `headerNames`). */
  rowLabels?: boolean;
}

/** A text cell that is a number written with a decimal comma: sign, digits, one comma, digits. */
const DECIMAL_COMMA_CELL = /^[+-]?\d+,\d+$/u;

/** Format a number as a level label (decimal comma when the file uses one). */
export function numberLabel(v: number, decimalComma: boolean): string {
  const s = Object.is(v, -0) ? "0" : String(v);
  return decimalComma ? s.replace(".", ",") : s;
}

export class ColumnBuilder {
  /** Names of all header fields, in file order. */
  readonly header: readonly string[];
  /** Names of the kept columns, in file order. */
  readonly names: string[];
  /** Header field index → kept column index, or -1 when skipped. */
  readonly fieldToColumn: Int32Array;
  readonly decimalComma: boolean;
  readonly file?: string;

  /** Rows finished so far; the record being read is written at this index. */
  rows = 0;
  /** Rows the columns can hold before they grow. */
  capacity = 0;
  /** Values per kept column (capacity long; the first `rows` are filled). */
  readonly vals: Float64Array[] = [];
  /**
   * Per kept column, 1 when a number cell needs no classification beyond storing it (no
   * numeric missing codes, distinct-value tracking finished): then `vals[c][rows] = v` is
   * exactly what {@link ColumnBuilder.num} does. The byte scanner uses it to skip the call.
   */
  readonly plain: Uint8Array;
  /** Line (1-based) of the record being read. */
  line = 0;
  blankLines = 0;

  private readonly textCodes: (Int32Array | undefined)[] = [];
  private readonly missingCount: Float64Array;
  private readonly textCount: Float64Array;
  private readonly distinct: Float64Array[] = [];
  private readonly distinctN: Int32Array;
  private readonly overflow: Uint8Array;
  private readonly allInt: Uint8Array;
  private readonly dict: Map<string, number>[] = [];
  private readonly labels: string[][] = [];
  private readonly firstTexts: { line: number; text: string }[][] = [];
  /** Per kept column: the missing codes as text and as numbers (columns without codes of their own share one set). */
  private readonly textMissing: Set<string>[] = [];
  private readonly numericMissing: number[][] = [];
  /** Per kept column: the declared type and levels, if any. */
  private readonly declaredTypes: (VariableType | undefined)[] = [];
  private readonly declaredLevels: (readonly string[] | undefined)[] = [];
  /** Notes about the header and the names, for the table's warnings. */
  private readonly headerNotes: string[] = [];
  /** Rows where (line − row) changes: parallel arrays, for mapping rows back to lines. */
  private readonly lineRows: number[] = [];
  private readonly lineOffsets: number[] = [];
  private readonly options: BuilderOptions;

  constructor(header: readonly string[], options: BuilderOptions) {
    this.options = options;
    this.file = options.file;
    this.header = header;
    this.decimalComma = options.decimalComma ?? false;
    const rowLabels = options.rowLabels === true && header.length > 1 && header[0] === "";
    checkHeaderNames(header, this.file);
    const names = new HeaderIndex(header, rowLabels, this.file);

    // Which fields are kept, and under which name (a requested name keeps its own spelling).
    const ignored = new Set((options.ignore ?? []).map((n) => names.field(n, "--ignore")));
    let requested: Map<number, string> | undefined;
    if (options.columns) {
      requested = new Map();
      for (const name of options.columns) {
        const f = names.field(name, undefined);
        if (ignored.has(f)) throw new UsageError(`--ignore: column "${header[f]}" is left out with --ignore but is needed (asked for as "${name}"); remove it from --ignore`);
        const other = requested.get(f);
        if (other !== undefined && other !== name) {
          throw new UsageError(`the names "${other}" and "${name}" differ only in their Unicode form and both match column ${f + 1} ("${header[f]}"); use one spelling`);
        }
        requested.set(f, name);
      }
    }
    this.fieldToColumn = new Int32Array(header.length).fill(-1);
    this.names = [];
    header.forEach((name, f) => {
      if ((f === 0 && rowLabels) || ignored.has(f)) return;
      const as = requested ? requested.get(f) : name;
      if (as === undefined) return;
      if (as !== name) {
        this.headerNotes.push(
          `column "${name}" is written in another Unicode form in the file than "${as}" (${unicodeForms(name, as)}); they were matched after normalising both to NFC, and the column is called "${as}"`,
        );
      }
      this.fieldToColumn[f] = this.names.length;
      this.names.push(as);
    });
    if (rowLabels) this.headerNotes.push(`column 1 has no name: it was read as row labels (as R's write.csv writes them) and left out`);

    // Declarations, by header field (checked for every column of the header, kept or not).
    const typeOf = new Map<number, VariableType>();
    const levelsOf = new Map<number, readonly string[]>();
    const codesOf = new Map<number, string[]>();
    for (const [name, type] of Object.entries(options.types ?? {})) {
      const f = names.field(name, "--types");
      if (typeOf.has(f)) throw new UsageError(`--types: column "${header[f]}" is given twice; give it once`);
      typeOf.set(f, type);
    }
    for (const [name, list] of Object.entries(options.levels ?? {})) {
      const f = names.field(name, "--levels");
      if (levelsOf.has(f)) throw new UsageError(`--levels: column "${header[f]}" is given twice; give it once`);
      checkLevelDeclaration(header[f]!, list, typeOf.get(f), this.decimalComma);
      levelsOf.set(f, list);
    }
    for (const [name, list] of Object.entries(options.missingByColumn ?? {})) {
      const f = names.field(name, "--missing");
      codesOf.set(f, [...(codesOf.get(f) ?? []), ...list]);
    }
    const shared = [...DEFAULT_MISSING_CODES, ...(options.missing ?? [])].map((s) => s.trim());
    const sharedText = new Set(shared);
    const sharedNumbers = this.numericCodes(shared);
    this.fieldToColumn.forEach((c, f) => {
      if (c < 0) return;
      this.declaredTypes[c] = typeOf.get(f);
      this.declaredLevels[c] = levelsOf.get(f);
      const own = codesOf.get(f);
      if (own === undefined) {
        this.textMissing[c] = sharedText;
        this.numericMissing[c] = sharedNumbers;
      } else {
        const all = [...shared, ...own.map((s) => s.trim())];
        this.textMissing[c] = new Set(all);
        this.numericMissing[c] = this.numericCodes(all);
      }
    });
    const k = this.names.length;
    this.missingCount = new Float64Array(k);
    this.textCount = new Float64Array(k);
    this.distinctN = new Int32Array(k);
    this.overflow = new Uint8Array(k);
    this.allInt = new Uint8Array(k).fill(1);
    this.plain = new Uint8Array(k);
    for (let c = 0; c < k; c++) {
      this.textCodes.push(undefined);
      this.vals.push(new Float64Array(0));
      this.distinct.push(new Float64Array(TRACK_LIMIT));
      this.dict.push(new Map());
      this.labels.push([]);
      this.firstTexts.push([]);
    }
  }

  /** The distinct numbers among missing codes (codes that parse as numbers). */
  private numericCodes(codes: readonly string[]): number[] {
    const out: number[] = [];
    for (const code of codes) {
      const v = parseNumberText(code, this.decimalComma);
      if (v !== undefined && !out.includes(v)) out.push(v);
    }
    return out;
  }

  /**
   * Write the columns into the given arrays (one per kept column, e.g. views of shared memory)
   * until they are full; then the columns grow into memory of their own. Call before the first
   * record. Cost: O(columns).
   */
  useStorage(vals: readonly Float64Array[]): void {
    if (vals.length !== this.vals.length || this.rows > 0) throw new RangeError("useStorage needs one array per kept column, before the first record");
    for (let c = 0; c < vals.length; c++) this.vals[c] = vals[c]!;
    this.capacity = vals.reduce((m, v) => Math.min(m, v.length), Infinity);
    if (vals.length === 0) this.capacity = Infinity;
    this.inGivenStorage = true;
  }

  /** True while the columns are still the arrays given to {@link ColumnBuilder.useStorage}. */
  inGivenStorage = false;

  /**
   * The builder's state as plain data (structured-cloneable), for {@link ColumnBuilder.absorb}
   * in another thread. Cost: O(columns + distinct labels).
   */
  exportState(): BuilderState {
    return {
      rows: this.rows,
      inGivenStorage: this.inGivenStorage,
      vals: this.vals.map((v) => v.subarray(0, this.rows)),
      textCodes: this.textCodes.map((t) => t?.subarray(0, this.rows)),
      missingCount: this.missingCount,
      textCount: this.textCount,
      distinct: this.distinct,
      distinctN: this.distinctN,
      overflow: this.overflow,
      allInt: this.allInt,
      labels: this.labels,
      firstTexts: this.firstTexts,
      lineRows: this.lineRows,
      lineOffsets: this.lineOffsets,
      blankLines: this.blankLines,
    };
  }

  /**
   * Append the rows of another builder over the same header and options (read from a later part
   * of the same file), as if this builder had read them itself: values and text codes are
   * appended, counts added, labels merged, distinct-value tracking combined. `lineBase` is
   * added to the other builder's line numbers. When this builder is still in given storage and
   * `placedAt` says where in the same buffers the other's rows already are, they are moved down
   * within the buffers instead of copied. Cost: O(rows of the other · columns).
   */
  absorb(s: BuilderState, lineBase: number, placedAt?: number): void {
    const total = this.rows + s.rows;
    const inPlace = placedAt !== undefined && this.inGivenStorage && s.inGivenStorage;
    for (let c = 0; c < this.vals.length; c++) {
      if (inPlace) {
        const mine = this.vals[c]!;
        const full = new Float64Array(mine.buffer, mine.byteOffset, placedAt! + s.rows);
        full.copyWithin(this.rows, placedAt!, placedAt! + s.rows);
        this.vals[c] = full;
      }
    }
    if (inPlace) this.capacity = Math.max(total, this.vals.reduce((m, v) => Math.min(m, v.length), Infinity));
    else {
      this.reserve(total);
      for (let c = 0; c < this.vals.length; c++) this.vals[c]!.set(s.vals[c]!.subarray(0, s.rows), this.rows);
    }
    for (let c = 0; c < this.vals.length; c++) {
      this.missingCount[c]! += s.missingCount[c]!;
      const theirs = s.textCodes[c];
      if (theirs !== undefined && s.textCount[c]! > 0) {
        const remap = s.labels[c]!.map((t) => this.textCode(c, t));
        let codes = this.textCodes[c];
        if (codes === undefined || codes.length < total) {
          const grown = new Int32Array(Math.max(total, this.capacity)).fill(-1);
          if (codes !== undefined) grown.set(codes.subarray(0, this.rows));
          codes = grown;
          this.textCodes[c] = codes;
        }
        for (let r = 0; r < s.rows; r++) {
          const t = theirs[r]!;
          codes[this.rows + r] = t < 0 ? -1 : remap[t]!;
        }
        this.textCount[c]! += s.textCount[c]!;
        const ft = this.firstTexts[c]!;
        for (const x of s.firstTexts[c]!) if (ft.length < 3) ft.push({ line: x.line + lineBase, text: x.text });
      }
      if (s.overflow[c] === 1) {
        if (this.allInt[c] === 1 && s.allInt[c] === 0) this.allInt[c] = 0;
        if (this.overflow[c] === 0) {
          this.overflow[c] = 1;
          this.distinctN[c] = TRACK_LIMIT;
          if (this.numericMissing[c]!.length === 0) this.plain[c] = 1;
        }
      } else {
        const d = s.distinct[c]!;
        for (let i = 0; i < s.distinctN[c]! && this.overflow[c] === 0; i++) this.track(c, d[i]!);
      }
    }
    for (let k = 0; k < s.lineRows.length; k++) {
      const row = s.lineRows[k]! + this.rows;
      const offset = s.lineOffsets[k]! + lineBase - this.rows;
      const n = this.lineOffsets.length;
      if (n === 0 || this.lineOffsets[n - 1] !== offset) {
        this.lineRows.push(row);
        this.lineOffsets.push(offset);
      }
    }
    this.blankLines += s.blankLines;
    this.rows = total;
  }

  /**
   * Make room for at least `rows` rows in every column (an estimate of the final row count
   * avoids regrowing). Cost: O(rows · columns) when it grows, else O(1).
   */
  reserve(rows: number): void {
    if (rows <= this.capacity) return;
    const cap = Math.ceil(rows);
    this.inGivenStorage = false;
    for (let c = 0; c < this.vals.length; c++) {
      const v = new Float64Array(cap);
      v.set(this.vals[c]!.subarray(0, this.rows));
      this.vals[c] = v;
      const t = this.textCodes[c];
      if (t !== undefined) {
        const u = new Int32Array(cap).fill(-1);
        u.set(t.subarray(0, this.rows));
        this.textCodes[c] = u;
      }
    }
    this.capacity = cap;
  }

  /** Start a record that begins on `line`. Cost: O(1) amortised (the columns grow by half when full). */
  beginRecord(line: number): void {
    this.line = line;
    const offset = line - this.rows;
    const n = this.lineOffsets.length;
    if (n === 0 || this.lineOffsets[n - 1] !== offset) {
      this.lineRows.push(this.rows);
      this.lineOffsets.push(offset);
    }
    if (this.rows === this.capacity) this.reserve(Math.max(INITIAL_CAPACITY, this.capacity * 1.5));
  }

  /** Finish the record; `fields` is the number of fields it had. @throws DataError on a ragged row */
  endRecord(fields: number): void {
    if (fields !== this.header.length) this.raggedError(fields);
    this.rows++;
  }

  raggedError(fields: number): never {
    throw new DataError(
      `${this.where(this.line)}row has ${fields} field${fields === 1 ? "" : "s"} but the header has ${this.header.length}; check the delimiter and quoting on this line`,
      { file: this.file, line: this.line },
    );
  }

  /** A number cell (already parsed). */
  num(c: number, v: number): void {
    const nm = this.numericMissing[c]!;
    if (nm.length > 0 && nm.includes(v)) {
      this.miss(c);
      return;
    }
    this.vals[c]![this.rows] = v;
    if (this.overflow[c] === 0) this.track(c, v);
  }

  /** A missing cell. */
  miss(c: number): void {
    this.vals[c]![this.rows] = NaN;
    this.missingCount[c]!++;
  }

  /** A cell given as text (untrimmed): classified as missing, number or text. */
  text(c: number, raw: string): void {
    const t = raw.trim();
    if (this.textMissing[c]!.has(t)) {
      this.miss(c);
      return;
    }
    const v = parseNumberText(t, this.decimalComma);
    if (v !== undefined) {
      this.num(c, v);
      return;
    }
    this.vals[c]![this.rows] = NaN;
    this.textCount[c]!++;
    const code = this.textCode(c, t);
    let codes = this.textCodes[c];
    if (codes === undefined) {
      codes = new Int32Array(this.capacity).fill(-1);
      this.textCodes[c] = codes;
    }
    codes[this.rows] = code;
    const ft = this.firstTexts[c]!;
    if (ft.length < 3) ft.push({ line: this.line, text: t });
  }

  /** Column c's code of text t, a new one (the next in order of first appearance) when t is new. Cost: O(1). */
  private textCode(c: number, t: string): number {
    const dict = this.dict[c]!;
    let code = dict.get(t);
    if (code === undefined) {
      code = dict.size;
      dict.set(t, code);
      this.labels[c]!.push(t);
    }
    return code;
  }

  private track(c: number, v: number): void {
    const d = this.distinct[c]!;
    const n = this.distinctN[c]!;
    for (let i = 0; i < n; i++) if (d[i] === v) return;
    if (!Number.isInteger(v)) this.allInt[c] = 0;
    if (n === TRACK_LIMIT - 1) {
      this.overflow[c] = 1;
      this.distinctN[c] = TRACK_LIMIT;
      if (this.numericMissing[c]!.length === 0) this.plain[c] = 1;
      return;
    }
    d[n] = v;
    this.distinctN[c] = n + 1;
  }

  /** Line number of a data row (0-based row index). */
  lineOf(row: number): number {
    let lo = 0;
    let hi = this.lineRows.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.lineRows[mid]! <= row) lo = mid;
      else hi = mid - 1;
    }
    return row + (this.lineOffsets[lo] ?? 0);
  }

  private where(line?: number): string {
    const f = this.file ?? "data";
    return line === undefined ? `${f}: ` : `${f}:${line}: `;
  }

  /**
   * Type every column and assemble the table. Cost: O(rows · columns) plus a sort of each
   * categorical column's levels.
   * @throws DataError for stray text in a numeric column, undeclared levels, values outside declared levels
   */
  finish(): Table {
    const warnings: string[] = [];
    if (this.blankLines > 0) {
      warnings.push(`${this.blankLines} blank line${this.blankLines === 1 ? " was" : "s were"} skipped`);
    }
    if (this.rows === 0) warnings.push("the file has a header but no data rows");
    warnings.push(...this.headerNotes);
    const columns: Column[] = [];
    for (let c = 0; c < this.names.length; c++) {
      columns.push(this.finishColumn(c, warnings));
      this.vals[c] = new Float64Array(0);
      this.textCodes[c] = undefined;
    }
    return assembleTable(this.file, this.rows, columns, warnings);
  }

  /** The column's values (and text codes) at their exact length: a view when little capacity is unused, else a copy. */
  private gather(c: number): { values: Float64Array; texts?: Int32Array } {
    const n = this.rows;
    const exact = <T extends Float64Array | Int32Array>(a: T): T =>
      (a.length === n ? a : 8 * (a.length - n) <= a.length ? a.subarray(0, n) : copyLike(a, n)) as T;
    const values = exact(this.vals[c]!);
    if (this.textCount[c] === 0) return { values };
    return { values, texts: exact(this.textCodes[c]!) };
  }

  private finishColumn(c: number, warnings: string[]): Column {
    const name = this.names[c]!;
    const { values, texts } = this.gather(c);
    const missing = this.missingCount[c]!;
    const nText = this.textCount[c]!;
    const observed = this.rows - missing;
    const declaredLevels = this.declaredLevels[c];
    let declared = this.declaredTypes[c];
    if (declared === undefined && declaredLevels !== undefined) {
      declared = declaredLevels.length === 2 ? "binary" : "ordinal";
    }
    // Numeric codes for "unknown" left among the numbers (read before the values become level
    // scores); a column that stays continuous keeps its magnitudes for the moments' scaling
    const magnitudes = nText === 0 ? magnitudesOf(values) : undefined;
    if (magnitudes && observed > 0) this.noteSentinels(c, values, magnitudes, warnings);
    if (declared === "continuous") {
      if (nText > 0) this.strayTextError(c, true);
      if (magnitudes) rememberMagnitudes(values, magnitudes);
      return { name, type: "continuous", typeSource: "declared", values, missing };
    }
    if (declared !== undefined) {
      const notes: string[] = [];
      const column = this.categorical(c, name, declared, "declared", values, texts, missing, declaredLevels, notes);
      warnings.push(...notes, ...this.highCardinalityNote(column));
      return column;
    }
    const inferred = inferType({
      name,
      observed,
      numbers: observed - nText,
      texts: nText,
      distinctNumbers: this.distinctN[c]!,
      allIntegers: this.allInt[c] === 1,
      distinctTexts: this.labels[c]!.length,
    });
    if (inferred.kind === "strayText") this.strayTextError(c, false);
    if (nText > 0) this.decimalCommaCheck(c, texts!);
    if (inferred.type === "continuous") {
      if (inferred.note) warnings.push(inferred.note);
      if (magnitudes) rememberMagnitudes(values, magnitudes);
      return { name, type: "continuous", typeSource: "inferred", values, missing };
    }
    const notes: string[] = [];
    const column = this.categorical(c, name, inferred.type, "inferred", values, texts, missing, undefined, notes);
    const high = this.highCardinalityNote(column);
    // The high-cardinality warning says more than the identifier note, so it replaces it.
    const id = identifierNote(name, this.labels[c]!.length, observed);
    const note = high.length > 0 ? inferred.note?.replace(`; ${id}`, "").replace(id, "") : inferred.note;
    if (note) warnings.push(note);
    warnings.push(...notes, ...high);
    return column;
  }

  /** The header field (0-based) of kept column c. */
  private fieldOf(c: number): number {
    return this.fieldToColumn.indexOf(c);
  }

  /** Warn about sentinel values far outside a numeric column's other values (see `findSentinelCodes`). */
  private noteSentinels(c: number, values: Float64Array, range: { lo: number; hi: number }, warnings: string[]): void {
    const name = this.names[c]!;
    for (const f of findSentinelCodes(values, this.rows, range)) {
      const code = numberLabel(f.value, this.decimalComma);
      const fmt = (v: number) => numberLabel(Number(v.toPrecision(6)), this.decimalComma);
      warnings.push(
        `column "${name}" has ${f.cells} cell${f.cells === 1 ? "" : "s"} of ${code}, beyond its other values (${fmt(f.min)} to ${fmt(f.max)}) by more than their interquartile range (${fmt(f.iqr)}); ${code} is a common code for "unknown": if it is one here, declare it with --missing ${JSON.stringify(`${quoteName(name)}=${code}`)}`,
      );
    }
  }

  /** The high-cardinality warning of a finished categorical column (see `findHighCardinalityColumns`), or none. */
  private highCardinalityNote(column: Column): string[] {
    const found = highCardinality(column);
    if (!found) return [];
    const name = quoteName(column.name);
    const numeric = column.levels!.every((l) => parseNumberText(l, this.decimalComma) !== undefined);
    return [
      `column "${column.name}" has ${found.levels} levels among ${found.observed} observed rows (more than half of them, and more than ${HIGH_CARDINALITY_MIN_LEVELS}), like an identifier, so claims that involve it cannot be tested; leave it out (--ignore ${name}, or --unmeasured ${name} when it is a graph node)${numeric ? `, or, if its values are measurements, declare --types ${name}=continuous` : ""}`,
    ];
  }

  /**
   * In a semicolon- or tab-separated file read with a decimal point, stop at a column whose text
   * cells are mostly numbers written with a decimal comma (`12,5`): read as text they would make
   * a measurement a nominal variable with a level per value. A *decimal-comma cell* is a text
   * cell matching `[+-]digits,digits`; the column is refused when at least one such cell exists
   * and they are more than half of its text cells. Cost: O(rows) when a label matches, else O(labels).
   * @throws DataError naming the column, the first such cell and its line, and the fix
   */
  private decimalCommaCheck(c: number, texts: Int32Array): void {
    if (this.decimalComma || (this.options.delimiter !== ";" && this.options.delimiter !== "\t")) return;
    const labels = this.labels[c]!;
    const isDecimal = labels.map((t) => DECIMAL_COMMA_CELL.test(t));
    if (!isDecimal.includes(true)) return;
    let cells = 0;
    let firstRow = -1;
    for (let i = 0; i < this.rows; i++) {
      const t = texts[i]!;
      if (t >= 0 && isDecimal[t]) {
        cells++;
        if (firstRow < 0) firstRow = i;
      }
    }
    if (2 * cells <= this.textCount[c]!) return;
    const name = this.names[c]!;
    const line = this.lineOf(firstRow);
    const example = labels[texts[firstRow]!]!;
    const delimiter = this.options.delimiter === ";" ? "semicolons" : "tabs";
    throw new DataError(
      `${this.where(line)}column "${name}" has ${cells} number${cells === 1 ? "" : "s"} written with a decimal comma ("${example}" on line ${line}) in a file separated by ${delimiter}, but the file is read with a decimal point, which would make them text; read it with --decimal-comma, or, if they are labels, declare --types ${quoteName(name)}=nominal`,
      { file: this.file, line, column: this.fieldOf(c) + 1 },
    );
  }

  private strayTextError(c: number, declared: boolean): never {
    const name = this.names[c]!;
    const ft = this.firstTexts[c]!;
    const first = ft[0]!;
    const more =
      ft.length > 1
        ? ` (also ${ft
            .slice(1)
            .map((t) => `"${t.text}" on line ${t.line}`)
            .join(", ")}${this.textCount[c]! > ft.length ? `, ${this.textCount[c]! - ft.length} more` : ""})`
        : "";
    const hints = [`declare it with --missing "${first.text}"`];
    if (!declared) hints.push(`read the column as text with --types ${name}=nominal`);
    if (!this.decimalComma && /^[+-]?\d*,\d+$/.test(first.text)) hints.push("use --decimal-comma");
    hints.push("or fix the file");
    throw new DataError(
      `${this.where(first.line)}column "${name}" has text "${first.text}" among numbers${more}; ${hints.join(", ")}`,
      { file: this.file, line: first.line, column: this.fieldOf(c) + 1 },
    );
  }

  /**
   * Finish a binary, ordinal or nominal column: its levels (declared, else numbers ascending
   * then text labels in code-unit order), the level index of every row (`codes`) and the
   * values, which become scores by {@link scoreLevels} (nominal: the level index). Cost: O(rows)
   * plus a sort of the distinct values.
   * @throws DataError for text levels of an ordinal column without --levels, more than two levels
   *   of a binary column, and values outside the declared levels
   */
  private categorical(
    c: number,
    name: string,
    type: VariableType,
    source: "declared" | "inferred",
    values: Float64Array,
    texts: Int32Array | undefined,
    missing: number,
    declaredLevels: readonly string[] | undefined,
    warnings: string[],
  ): Column {
    const n = this.rows;
    const textLabels = this.labels[c]!;
    // Distinct numbers over the whole column.
    const numSet = new Set<number>();
    for (let i = 0; i < n; i++) {
      const v = values[i]!;
      if (v === v) numSet.add(Object.is(v, -0) ? 0 : v);
    }
    const nums = [...numSet].sort((a, b) => a - b);
    let levels: string[];
    // The number each level stands for, undefined for a text level.
    let levelNumbers: (number | undefined)[];
    if (declaredLevels !== undefined) {
      levels = [...declaredLevels];
      levelNumbers = levels.map((l) => parseNumberText(l.trim(), this.decimalComma));
    } else {
      const textSorted = [...textLabels].sort(compareText);
      levels = [...nums.map((v) => numberLabel(v, this.decimalComma)), ...textSorted];
      if (type === "ordinal" && textSorted.length > 0) {
        throw new DataError(
          `${this.where()}column "${name}" is ordinal but its levels are text (${listLevels(levels)}); give their order low to high with --levels "${name}=${levels.join("|")}"`,
          { file: this.file, column: this.fieldOf(c) + 1 },
        );
      }
      levelNumbers = [...nums, ...textSorted.map(() => undefined)];
    }
    if (type === "binary" && levels.length > 2) {
      throw new DataError(
        `${this.where()}column "${name}" is declared binary but has ${levels.length} distinct values (${listLevels(levels)}); declare it ordinal or nominal`,
        { file: this.file, column: this.fieldOf(c) + 1 },
      );
    }
    const { scores, byPosition } = scoreLevels(levelNumbers, type, declaredLevels !== undefined);
    if (byPosition) {
      warnings.push(
        `column "${name}": --levels lists its numeric codes out of increasing order (${levels.join("|")}), so each level scores its position in that order (0 to ${levels.length - 1}), not its code`,
      );
    }
    // Number cells match a level by value (so 1.0 in the file is the declared level 1), text
    // cells by label; -1 marks a value outside the levels.
    const byNumber = new Map<number, number>();
    levelNumbers.forEach((v, i) => {
      if (v !== undefined && !byNumber.has(v)) byNumber.set(v, i);
    });
    const byLabel = new Map<string, number>();
    levels.forEach((l, i) => byLabel.set(l, i));
    const textIndex = textLabels.map((t) => byLabel.get(t) ?? -1);
    // The values become level scores in place (each is read before it is written); the codes go
    // into the same kind of memory as the values, so a table read into shared memory stays shareable.
    const codes = values.buffer instanceof SharedArrayBuffer ? new Int32Array(new SharedArrayBuffer(4 * n)) : new Int32Array(n);
    const out = values;
    let outside: Map<string, number> | undefined; // value → its first row, made at the first value outside the levels
    const noteOutside = (value: string, row: number): void => {
      outside ??= new Map();
      if (!outside.has(value)) outside.set(value, row);
    };
    for (let i = 0; i < n; i++) {
      const v = values[i]!;
      let code: number;
      if (v === v) {
        code = byNumber.get(v) ?? -1;
        if (code < 0) noteOutside(numberLabel(v, this.decimalComma), i);
      } else {
        const t = texts === undefined ? -1 : texts[i]!;
        if (t < 0) {
          codes[i] = -1;
          out[i] = NaN;
          continue;
        }
        code = textIndex[t]!;
        if (code < 0) noteOutside(textLabels[t]!, i);
      }
      codes[i] = code;
      out[i] = code < 0 ? NaN : scores[code]!;
    }
    if (outside !== undefined) this.outsideLevels(c, name, outside, levels);
    return { name, type, typeSource: source, values: out, codes, levels, missing };
  }

  /**
   * Report the values of a column that are not among its declared levels (every such value is
   * found by a declaration, as inferred levels hold all values): the first by line, and up to
   * five in all with the line where each first appears.
   */
  private outsideLevels(c: number, name: string, outside: ReadonlyMap<string, number>, levels: readonly string[]): never {
    const found = [...outside].sort((a, b) => a[1] - b[1]);
    const [firstValue, firstRow] = found[0]!;
    const line = this.lineOf(firstRow);
    const where = { file: this.file, line, column: this.fieldOf(c) + 1 };
    if (found.length === 1) {
      throw new DataError(
        `${this.where(line)}column "${name}" has "${firstValue}", which is not among its levels (${listLevels(levels)}); add it to --levels or declare it with --missing "${firstValue}"`,
        where,
      );
    }
    const shown = found.slice(0, 5);
    const rest = found.length - shown.length;
    const listed = shown.map(([v, row]) => `"${v}" (line ${this.lineOf(row)})`).join(", ") + (rest > 0 ? `, ${rest} more` : "");
    throw new DataError(
      `${this.where(line)}column "${name}" has ${found.length} values that are not among its levels (${listLevels(levels)}): ${listed}; add them to --levels or declare them with --missing "${shown.map(([v]) => v).join(",")}"`,
      where,
    );
  }
}

/**
 * Level scores of a binary or ordinal column (the `values` of its rows), by this rule:
 * - levels that are all numbers (a numeric-coded column) in increasing numeric order score
 *   their numbers, because the spacing of the codes is meaningful (1, 2, 5 stay 1, 2, 5).
 *   Inferred levels are always in that order (they are sorted); declared ones when the
 *   declaration lists them increasing;
 * - a declared order of numeric codes that is not increasing sets the scores: each level scores
 *   its position in the declared order, 0, 1, …, k − 1 (`3|1|2` scores 3 as 0, 1 as 1, 2 as 2),
 *   and `byPosition` is true so the reader can say so;
 * - levels that are not all numbers (text labels) score their position, 0, 1, …, k − 1.
 * Nominal levels are unordered: their "scores" are the level indices, which the tests never
 * use as numbers. Cost: O(levels).
 * @example scoreLevels([3, 1, 2], "ordinal", true) // { scores: [0, 1, 2], byPosition: true }
 */
export function scoreLevels(
  levelNumbers: readonly (number | undefined)[],
  type: VariableType,
  declared: boolean,
): { scores: Float64Array; byPosition: boolean } {
  const k = levelNumbers.length;
  const positions = Float64Array.from({ length: k }, (_, i) => i);
  if (type !== "binary" && type !== "ordinal") return { scores: positions, byPosition: false };
  if (!levelNumbers.every((v): v is number => v !== undefined)) return { scores: positions, byPosition: false };
  let increasing = true;
  for (let i = 1; i < k; i++) if (!(levelNumbers[i]! > levelNumbers[i - 1]!)) increasing = false;
  if (increasing) return { scores: Float64Array.from(levelNumbers, (v) => (Object.is(v, -0) ? 0 : v)), byPosition: false };
  return { scores: positions, byPosition: declared };
}

/** The first n entries of a typed array in a new array of the same kind of memory (shared or not). */
function copyLike<T extends Float64Array | Int32Array>(a: T, n: number): T {
  if (!(a.buffer instanceof SharedArrayBuffer)) return a.slice(0, n) as T;
  const out = (a instanceof Float64Array ? new Float64Array(new SharedArrayBuffer(8 * n)) : new Int32Array(new SharedArrayBuffer(4 * n))) as T;
  out.set(a.subarray(0, n));
  return out;
}

function listLevels(levels: readonly string[]): string {
  const shown = levels.slice(0, 8).join(", ");
  return levels.length > 8 ? `${shown}, ... ${levels.length} in all` : shown;
}

/** Code-unit order: deterministic and locale-independent. */
function compareText(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * The header's names for lookups by name: a name matches a field when both are equal after
 * Unicode normalisation to NFC (see `headerNames`); a row-label column has no name to match.
 */
class HeaderIndex {
  private readonly byName = new Map<string, number>();
  constructor(
    private readonly header: readonly string[],
    rowLabels: boolean,
    private readonly file: string | undefined,
  ) {
    header.forEach((name, f) => {
      if (!(f === 0 && rowLabels)) this.byName.set(name.normalize("NFC"), f);
    });
  }

  /**
   * The field a name matches. `flag` names the option the name came from, for the message.
   * @throws UsageError for a name that is not in the header (with close names, and a hint when the
   *   header looks split at the wrong delimiter or, for --missing, when the name may be a code with "=")
   */
  field(name: string, flag: string | undefined): number {
    const f = this.byName.get(name.normalize("NFC"));
    if (f !== undefined) return f;
    const all = this.header.filter((n) => n !== "");
    const shown = all.slice(0, 12).join(", ") + (all.length > 12 ? ", ..." : "");
    const near = findClosestNames(name, all);
    const hints = [near.length > 0 ? `did you mean ${near.map((n) => `"${n}"`).join(", ")}?` : "check the spelling"];
    if (all.length === 1 && /[,;\t]/u.test(all[0]!)) hints.push("the header was read as one column, so the delimiter may be wrong: give it with --delimiter");
    if (flag === "--missing") hints.push(`a code that holds "=" goes in double quotes (--missing '"${name}=..."')`);
    const where = this.file !== undefined ? `${this.file}: ` : "";
    throw new UsageError(`${flag ? flag + ": " : where}column "${name}" is not in the file header (${shown}); ${hints.join("; ")}`);
  }
}

/** Which Unicode forms two spellings of one name are in, for messages ("NFD in the file, NFC asked for"). */
function unicodeForms(inFile: string, asked: string): string {
  const form = (s: string) => (s === s.normalize("NFC") ? "NFC" : s === s.normalize("NFD") ? "NFD" : "another form");
  return `${form(inFile)} in the file, ${form(asked)} asked for`;
}

/**
 * Check one column's declared levels before reading: a column declared continuous has no levels,
 * and no level is listed twice, as the same label or as the same number (`1` and `1.0`), since a
 * cell could then belong to either. Cost: O(declared levels).
 * @throws UsageError naming the column and the clashing declarations
 */
function checkLevelDeclaration(name: string, list: readonly string[], type: VariableType | undefined, decimalComma: boolean): void {
  if (type === "continuous") {
    throw new UsageError(`--levels: column "${name}" is declared continuous with --types, and continuous columns have no levels; drop one of the two declarations`);
  }
  const labels = new Set<string>();
  const numbers = new Map<number, string>();
  for (const level of list) {
    if (labels.has(level)) throw new UsageError(`--levels: column "${name}" lists the level "${level}" twice; list each level once`);
    labels.add(level);
    const v = parseNumberText(level.trim(), decimalComma);
    if (v === undefined) continue;
    const same = numbers.get(v);
    if (same !== undefined) {
      throw new UsageError(`--levels: column "${name}" lists "${same}" and "${level}", which are the same number; list each level once`);
    }
    numbers.set(v, level);
  }
}

class ColumnTable implements Table {
  private readonly byName: Map<string, Column>;
  private byNfc: Map<string, Column> | undefined;
  constructor(
    readonly file: string | undefined,
    readonly rows: number,
    readonly columns: readonly Column[],
    readonly warnings: readonly string[],
  ) {
    this.byName = new Map(columns.map((col) => [col.name, col]));
  }
  /** The column of that name; a name in another Unicode form finds it too (compared in NFC). */
  column(name: string): Column | undefined {
    const exact = this.byName.get(name);
    if (exact !== undefined) return exact;
    if (this.byNfc === undefined) this.byNfc = new Map(this.columns.map((col) => [col.name.normalize("NFC"), col]));
    return this.byNfc.get(name.normalize("NFC"));
  }
}

/** Wrap finished columns as a {@link Table}. Cost: O(columns). */
export function assembleTable(
  file: string | undefined,
  rows: number,
  columns: readonly Column[],
  warnings: readonly string[],
): Table {
  return new ColumnTable(file, rows, columns, warnings);
}

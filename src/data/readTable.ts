/**
 * Read a delimited cohort file (CSV, semicolon or tab separated) into typed columns.
 *
 * Terms: the *header* is the first record and names the columns; a *record* is one row of
 * fields, ending at a line feed outside quotes (CRLF and LF are both accepted; files that end
 * lines with a lone CR are read by papaparse); a *quoted field* is enclosed in `"` and may hold
 * delimiters, line feeds and doubled quotes `""`. Every field is trimmed of surrounding white
 * space. A blank line is skipped (and counted) when the file has more than one column; in a
 * one-column file it is a missing value. Dialect, quoting and text cells follow RFC 4180
 * (Shafranovich 2005, "Common Format and MIME Type for CSV Files", IETF RFC 4180).
 *
 * Two engines produce the same table: a byte scanner ({@link scanUnquotedRecords}) reads
 * records while no quote character appears, and papaparse takes over for the rest of the
 * input from the first record that contains one (and for lone-CR files).
 */
import Papa from "papaparse";
import { DataError, UsageError } from "../errors.js";
import { ColumnBuilder } from "./columnBuilder.js";
import { decodeBytes, scanUnquotedRecords } from "./fastNumericScan.js";
import { checkHeaderNames } from "./headerNames.js";
import type { ReadOptions } from "./readOptions.js";
import type { Table } from "./Table.js";
import { assertText, findNonTextByte, lineAt, nonTextError, transcodeUtf16, utf16ByteOrderMark } from "./textBytes.js";

const LF = 10;
const CR = 13;
const QUOTE = 34;
const SAMPLE_BYTES = 64 * 1024;
const SLICE_BYTES = 8 * 1024 * 1024;
const SAMPLE_ROWS = 20;
const CANDIDATES = [",", ";", "\t"] as const;
type Delimiter = (typeof CANDIDATES)[number];

/** Facts about the input that make reading cheaper; never change the result. */
export interface ReadHints {
  /** Total size of the input in bytes (e.g. from the file's size), to size the columns once. */
  totalBytes?: number;
}

/**
 * Read a table from the bytes of a delimited text file (UTF-8, optional BOM; UTF-16 with its
 * byte-order mark is transcoded first, see `textBytes`), given whole or as a stream of chunks. Cells are parsed once into typed columns (Float64Array values,
 * Int32Array codes for categorical columns); types are inferred unless declared (see
 * `inferType`), missing codes are described in `readOptions`, declared levels set the level
 * order and the scores as described in `columnBuilder`. Never mutates the input bytes.
 * Cost: O(bytes) time; memory O(rows · columns) for the columns plus one chunk.
 * Source: RFC 4180 (Shafranovich 2005) for the dialect.
 * @throws DataError for an empty file, a header without data rows, bytes that are not UTF-8
 *   text (a NUL byte, invalid UTF-8), empty or duplicate column names (also in two Unicode
 *   forms), ragged rows, bad quoting, stray text among numbers, numbers written with a decimal
 *   comma without `decimalComma`, text levels of an ordinal column without --levels, values
 *   outside declared levels
 * @throws UsageError for contradictory options (a level listed twice, levels for a continuous
 *   column, --decimal-comma with a comma delimiter or on a comma-separated file, a column both
 *   kept and ignored) or option names not in the header
 * @example await readTable(new TextEncoder().encode("a,b\n1,x\n2,y\n"), { file: "t.csv" }) // 2 rows, a binary, b binary
 */
export async function readTable(
  source: Uint8Array | AsyncIterable<Uint8Array>,
  options: ReadOptions = {},
  hints: ReadHints = {},
): Promise<Table> {
  const file = options.file;
  const where = (line?: number) => `${file ?? "data"}${line === undefined ? "" : ":" + line}: `;
  const it = textChunks(source, file)[Symbol.asyncIterator]();

  // Head: enough bytes for the header record and a sample of rows. The chunks are joined, and
  // the header looked for, each time the head has doubled, so a long header in small chunks
  // costs O(bytes), not O(bytes²).
  let head: Uint8Array = new Uint8Array(0);
  let pending: Uint8Array[] = [];
  let pendingBytes = 0;
  let done = false;
  let plan: TablePlan | undefined;
  for (;;) {
    if (done || pendingBytes >= Math.max(SAMPLE_BYTES - head.length, head.length)) {
      head = concatAll([head, ...pending]);
      pending = [];
      pendingBytes = 0;
      plan = planTable(head, done, options);
      if (plan) break;
    }
    const next = await it.next();
    if (next.done) done = true;
    else {
      pending.push(next.value);
      pendingBytes += next.value.length;
    }
  }
  const { delimiter, lineEnd, headerEnd } = plan;
  const builder = createBuilder(plan, options);
  let line = plan.firstLine;
  const totalBytes = source instanceof Uint8Array ? source.length : hints.totalBytes;
  if (totalBytes !== undefined) builder.reserve(estimateRecords(plan, totalBytes - headerEnd - 1));

  // Data.
  const delimByte = delimiter.charCodeAt(0);
  let papa: PapaFeeder | undefined =
    options.engine === "papaparse" || lineEnd === "\r"
      ? new PapaFeeder(builder, delimiter, lineEnd, line, where)
      : undefined;
  let carry: Uint8Array | undefined;

  /** Scan buf[start, end) (ending after an LF); hand over to papaparse at a quote. */
  const scan = (buf: Uint8Array, start: number, end: number): number => {
    const q = buf.indexOf(QUOTE, start);
    if (q >= 0 && q < end) {
      const recordStart = Math.max(start, buf.lastIndexOf(LF, q) + 1);
      line = scanUnquotedRecords(buf, start, recordStart, builder, delimByte, line);
      papa = new PapaFeeder(builder, delimiter, lineEnd, line, where);
      return recordStart;
    }
    line = scanUnquotedRecords(buf, start, end, builder, delimByte, line);
    return end;
  };

  const feed = (chunk: Uint8Array): void => {
    if (papa) {
      papa.feed(chunk);
      return;
    }
    let pos = 0;
    if (carry) {
      const lf = chunk.indexOf(LF);
      if (lf < 0) {
        carry = concat(carry, chunk);
        return;
      }
      const joined = concat(carry, chunk.subarray(0, lf + 1));
      carry = undefined;
      const stop = scan(joined, 0, joined.length);
      if (papa) {
        (papa as PapaFeeder).feed(joined.subarray(stop));
        (papa as PapaFeeder).feed(chunk.subarray(lf + 1));
        return;
      }
      pos = lf + 1;
    }
    const last = chunk.lastIndexOf(LF);
    if (last < pos) {
      if (pos < chunk.length) carry = chunk.slice(pos);
      return;
    }
    const stop = scan(chunk, pos, last + 1);
    if (papa) {
      (papa as PapaFeeder).feed(chunk.subarray(stop));
      return;
    }
    if (last + 1 < chunk.length) carry = chunk.slice(last + 1);
  };

  if (headerEnd < head.length) feed(head.subarray(headerEnd + 1));
  head = new Uint8Array(0);
  while (!done) {
    const next = await it.next();
    if (next.done) break;
    if (next.value.length > 0) feed(next.value);
  }
  if (papa) (papa as PapaFeeder).finish();
  else if (carry) {
    const joined = concat(carry, Uint8Array.of(LF));
    carry = undefined;
    const stop = scan(joined, 0, joined.length);
    if (papa) {
      (papa as PapaFeeder).feed(joined.subarray(stop, joined.length - 1));
      (papa as PapaFeeder).finish();
    }
  }
  return finishTable(builder);
}

/**
 * The table of a finished read. Cost: as {@link ColumnBuilder.finish}.
 * @throws DataError when the file has a header but no data rows (naming the file)
 */
export function finishTable(builder: ColumnBuilder): Table {
  if (builder.rows === 0) {
    const blank = builder.blankLines > 0 ? ` (only ${builder.blankLines} blank line${builder.blankLines === 1 ? "" : "s"})` : "";
    throw new DataError(
      `${builder.file ?? "data"}: the file has a header line but no data rows${blank}; give a file with one row per participant below the header`,
      { file: builder.file, line: 2 },
    );
  }
  return builder.finish();
}

/** Where the data start and how the file is written, from its first bytes. */
export interface TablePlan {
  /** Header field names (trimmed), in file order; a row-label column's name is "". */
  names: string[];
  /** Whether the first field is an unnamed row-label column (see `headerNames`), left out of the table. */
  rowLabels: boolean;
  delimiter: Delimiter;
  lineEnd: "\n" | "\r";
  /** Index of the byte that ends the header (its line end), or the head's length. */
  headerEnd: number;
  /** Line number of the first data record. */
  firstLine: number;
  /** Records and bytes in the sample after the header (complete records only). */
  sampleRecords: number;
  sampleBytes: number;
}

/**
 * Read the header and dialect from the first bytes of a file: undefined while `head` is too
 * short to decide (fewer than 64 KiB and not the whole file, `complete` false). Cost: O(head).
 * @throws DataError for an empty file or first line, a header that is not UTF-8 text, an unnamed
 *   or repeated column name (see `checkHeaderNames`)
 * @throws UsageError for --decimal-comma with a comma delimiter, or without a delimiter on a
 *   file whose header is separated by commas
 * @example planTable(new TextEncoder().encode("a;b\n1;2\n"), true, {})?.delimiter // ";"
 */
export function planTable(head: Uint8Array, complete: boolean, options: ReadOptions): TablePlan | undefined {
  const file = options.file;
  const decimalComma = options.decimalComma ?? false;
  if (decimalComma && options.delimiter === ",") {
    throw new UsageError("--decimal-comma needs a semicolon or tab delimiter, not a comma; drop --delimiter or choose ; or tab");
  }
  const where = (line?: number) => `${file ?? "data"}${line === undefined ? "" : ":" + line}: `;
  const done = complete;
  let headerEnd = -1;
  let lineEnd: "\n" | "\r" = "\n";
  const enough = head.length >= SAMPLE_BYTES || done;
  const lf = findRecordEnd(head, LF);
  if (lf >= 0 && enough) headerEnd = lf;
  else if (lf < 0 && enough) {
    const cr = findRecordEnd(head, CR);
    if (cr >= 0 && cr + 1 < head.length && head[cr + 1] !== LF) {
      headerEnd = cr;
      lineEnd = "\r";
    } else if (done) headerEnd = head.length;
  }
  if (headerEnd < 0) return undefined;
  let bom = 0;
  if (head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf) bom = 3;
  if (headerEnd < bom) headerEnd = bom;
  assertText(head, bom, headerEnd, file, 1);
  const headerText = decodeBytes(head, bom, headerEnd);
  if (headerText.trim() === "") {
    throw new DataError(
      `${where(1)}${done && headerEnd >= head.length ? "the file is empty" : "the first line is empty"}; the first line must name the columns, separated by commas, semicolons or tabs`,
      { file, line: 1 },
    );
  }

  // Dialect.
  const sampleEnd = done ? head.length : head.lastIndexOf(lineEnd === "\n" ? LF : CR) + 1;
  const sampleText = decodeBytes(head, bom, Math.max(sampleEnd, headerEnd));
  const delimiter = options.delimiter ?? detectDelimiter(sampleText, lineEnd, decimalComma, !done);
  const fieldsBy = (d: Delimiter) => (Papa.parse<string[]>(headerText, { delimiter: d, newline: lineEnd }).data[0] ?? []).map((s) => s.trim());
  const fields = fieldsBy(delimiter);
  if (decimalComma && options.delimiter === undefined && fields.length === 1 && fieldsBy(",").length > 1) {
    throw new UsageError(
      `${where(1)}--decimal-comma is for files separated by semicolons or tabs, but this header is separated by commas (${clip(headerText)}); drop --decimal-comma (a comma-separated file writes decimals with a point), or save the file with semicolons`,
    );
  }
  const { rowLabels } = checkHeaderNames(fields, file);
  const nl = lineEnd === "\n" ? LF : CR;
  return {
    names: fields,
    rowLabels,
    delimiter,
    lineEnd,
    headerEnd,
    firstLine: 2 + countByte(head, nl, bom, headerEnd),
    sampleRecords: sampleEnd > headerEnd + 1 ? countByte(head, nl, headerEnd + 1, sampleEnd) : 0,
    sampleBytes: Math.max(0, sampleEnd - headerEnd - 1),
  };
}

/**
 * The column builder for a planned table (header, missing codes, declared types and levels,
 * kept columns). Cost: O(columns).
 * @throws UsageError for option names not in the header
 * @example createBuilder(planTable(bytes, true, {})!, {}).names
 */
export function createBuilder(plan: TablePlan, options: ReadOptions): ColumnBuilder {
  return new ColumnBuilder(plan.names, {
    file: options.file,
    decimalComma: options.decimalComma ?? false,
    delimiter: plan.delimiter,
    rowLabels: plan.rowLabels,
    missing: options.missing,
    missingByColumn: options.missingByColumn,
    types: options.types,
    levels: options.levels,
    columns: options.columns,
    ignore: options.ignore,
  });
}

/**
 * Estimate of the records in `bytes` bytes of data from the sample's bytes per record, with a
 * 3% margin (the columns grow if it is short; at most one record per two bytes). Cost: O(1).
 * @example estimateRecords(plan, 1e6)
 */
export function estimateRecords(plan: TablePlan, bytes: number): number {
  if (plan.sampleRecords === 0 || bytes <= 0) return 0;
  const perRecord = plan.sampleBytes / plan.sampleRecords;
  return Math.ceil(Math.min(1.03 * (bytes / perRecord) + 16, bytes / 2 + 16));
}

/** Hands records to the builder from papaparse's incremental parser, keeping line numbers. */
class PapaFeeder {
  private readonly decoder = new TextDecoder("utf-8", { fatal: true });
  private readonly parser: Papa.Parser;
  private text = "";
  /** The bytes of a character cut at the end of the last chunk (at most 3), which the decoder holds back. */
  private pending: Uint8Array = new Uint8Array(0);
  private rowStart = 0;
  private readonly nl: string;

  constructor(
    private readonly builder: ColumnBuilder,
    delimiter: string,
    newline: "\n" | "\r",
    private line: number,
    private readonly where: (line?: number) => string,
  ) {
    this.nl = newline;
    this.parser = new Papa.Parser({
      delimiter,
      newline,
      step: (r: Papa.ParseStepResult<string[][]>) => this.onRow(r),
    } as Papa.ParseConfig);
  }

  feed(bytes: Uint8Array): void {
    if (bytes.length === 0) return;
    this.append(bytes, false);
    this.run(true);
  }

  finish(): void {
    this.append(new Uint8Array(0), true);
    this.run(true);
    if (this.text.length > 0) this.run(false);
  }

  /**
   * Decode bytes as UTF-8 text onto the unparsed text, refusing a NUL byte or invalid UTF-8 with
   * the line of the first bad byte (the lines of the unparsed text are counted from `line`).
   */
  private append(bytes: Uint8Array, last: boolean): void {
    let piece: string | undefined;
    try {
      piece = this.decoder.decode(bytes, { stream: !last });
    } catch {
      piece = undefined;
    }
    // The decoder holds back a character cut at the end of a chunk; keep the same bytes, to find a bad byte among them.
    const joined = this.pending.length > 0 ? concat(this.pending, bytes) : bytes;
    const complete = last ? joined.length : joined.length - incompleteSuffix(joined);
    if (piece === undefined || piece.includes("\0")) {
      const bad = findNonTextByte(joined, 0, complete) ?? { at: complete, kind: "invalid" as const };
      let line = this.line;
      for (let i = this.text.indexOf(this.nl); i >= 0; i = this.text.indexOf(this.nl, i + 1)) line++;
      throw nonTextError(this.builder.file, lineAt(joined, 0, bad.at, line, this.nl.charCodeAt(0)), bad, joined);
    }
    this.pending = joined.slice(complete);
    this.text += piece;
  }

  private run(ignoreLastRow: boolean): void {
    if (this.text.length === 0) return;
    this.rowStart = 0;
    const res = this.parser.parse(this.text, 0, ignoreLastRow) as Papa.ParseResult<string[]>;
    for (const e of res.errors) this.quoteError(e);
    const cursor = ignoreLastRow ? res.meta.cursor : this.text.length;
    this.text = this.text.slice(cursor);
  }

  private quoteError(e: Papa.ParseError): never {
    throw new DataError(
      `${this.where(this.line)}${e.code === "MissingQuotes" ? "a quoted field is never closed" : "a quoted field has text after its closing quote"}; quotes inside a quoted field must be doubled ("")`,
      { file: this.builder.file, line: this.line },
    );
  }

  private onRow(r: Papa.ParseStepResult<string[][]>): void {
    for (const e of r.errors) this.quoteError(e);
    const row = r.data[0]!;
    const end = r.meta.cursor;
    const b = this.builder;
    const blank = row.length === 1 && (row[0] === "" || row[0] === "\r");
    if (blank && b.header.length > 1) {
      b.blankLines++;
    } else {
      b.beginRecord(this.line);
      if (row.length !== b.header.length) b.raggedError(row.length);
      const map = b.fieldToColumn;
      for (let f = 0; f < row.length; f++) {
        const c = map[f]!;
        if (c >= 0) b.text(c, row[f]!);
      }
      b.endRecord(row.length);
    }
    let i = this.text.indexOf(this.nl, this.rowStart);
    while (i >= 0 && i < end) {
      this.line++;
      i = this.text.indexOf(this.nl, i + 1);
    }
    this.rowStart = end;
  }
}

/**
 * Choose the delimiter among comma, semicolon and tab. Preferred, in order: a header of more
 * than one field (a header that splits at a candidate is split at it, even when the rows are
 * ragged, so that a ragged row is reported as such); one that most sampled rows match; all rows
 * matching the header; more header fields; then the order comma, semicolon, tab. Cost: O(sample).
 */
function detectDelimiter(sample: string, newline: "\n" | "\r", decimalComma: boolean, truncated: boolean): Delimiter {
  let best: Delimiter = decimalComma ? ";" : ",";
  let bestScore = -1;
  for (const cand of CANDIDATES) {
    if (decimalComma && cand === ",") continue;
    const rows = Papa.parse<string[]>(sample, { delimiter: cand, newline, preview: SAMPLE_ROWS + 1 }).data.filter(
      (r) => !(r.length === 1 && (r[0] === "" || r[0] === "\r")),
    );
    if (truncated && rows.length > 1) rows.pop();
    if (rows.length === 0) continue;
    const count = rows[0]!.length;
    const matching = rows.filter((r) => r.length === count).length;
    const score = (count > 1 ? 4e6 : 0) + (count > 1 && 2 * matching > rows.length ? 2e6 : 0) + (matching === rows.length ? 1e6 : 0) + count;
    if (score > bestScore) {
      bestScore = score;
      best = cand;
    }
  }
  return best;
}

/** Index of the first `byte` outside double quotes, or -1. */
function findRecordEnd(buf: Uint8Array, byte: number): number {
  let quoted = false;
  for (let i = 0; i < buf.length; i++) {
    const b = buf[i]!;
    if (b === QUOTE) quoted = !quoted;
    else if (b === byte && !quoted) return i;
  }
  return -1;
}

/** A header line for a message: quoted, at most 60 characters. */
function clip(text: string): string {
  const t = text.trim();
  return JSON.stringify(t.length > 60 ? `${t.slice(0, 57)}...` : t);
}

/** Length (0 to 3) of a UTF-8 sequence that starts near the end of `buf` and needs more bytes than remain. */
function incompleteSuffix(buf: Uint8Array): number {
  for (let k = 1; k <= 3 && k <= buf.length; k++) {
    const b = buf[buf.length - k]!;
    if (b < 0x80) return 0;
    if (b >= 0xc0) {
      const need = b >= 0xf0 ? 4 : b >= 0xe0 ? 3 : 2;
      return need > k ? k : 0;
    }
  }
  return 0;
}

function countByte(buf: Uint8Array, byte: number, start: number, end: number): number {
  let n = 0;
  for (let i = start; i < end; i++) if (buf[i] === byte) n++;
  return n;
}

function concat(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a, 0);
  out.set(b, a.length);
  return out;
}

/** The input as UTF-8 chunks: as given, or transcoded when it opens with a UTF-16 byte-order mark. */
async function* textChunks(source: Uint8Array | AsyncIterable<Uint8Array>, file: string | undefined): AsyncIterable<Uint8Array> {
  const it = chunksOf(source)[Symbol.asyncIterator]();
  let first: Uint8Array = new Uint8Array(0);
  let ended = false;
  while (first.length < 2) {
    const next = await it.next();
    if (next.done) {
      ended = true;
      break;
    }
    first = concat(first, next.value);
  }
  async function* rest(): AsyncIterable<Uint8Array> {
    if (first.length > 0) yield first;
    if (ended) return;
    for (;;) {
      const next = await it.next();
      if (next.done) return;
      yield next.value;
    }
  }
  const encoding = utf16ByteOrderMark(first);
  if (encoding) yield* transcodeUtf16(rest(), encoding, file);
  else yield* rest();
}

function concatAll(parts: readonly Uint8Array[]): Uint8Array {
  if (parts.length === 1) return parts[0]!;
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

async function* chunksOf(source: Uint8Array | AsyncIterable<Uint8Array>): AsyncIterable<Uint8Array> {
  if (source instanceof Uint8Array) {
    for (let i = 0; i < source.length; i += SLICE_BYTES) yield source.subarray(i, i + SLICE_BYTES);
    return;
  }
  yield* source;
}

/**
 * Byte-level record scanner for the common case of a delimited file without quote characters:
 * it splits records at LF (a CR before the LF is dropped), fields at the delimiter, and parses
 * number cells straight from the bytes into the column builder, without making strings.
 *
 * Number cells follow the grammar of {@link parseNumberText}. A cell is converted exactly when
 * its digits form an integer mantissa m ≤ 2⁵³ − 1 and its decimal exponent e satisfies
 * |e| ≤ 22: then m and 10^|e| are exact doubles and one IEEE multiplication or division gives
 * the correctly rounded result (Clinger 1990, "How to read floating point numbers accurately",
 * PLDI '90, fast path). Any other cell (text, more digits, larger exponents, surrounding spaces)
 * is decoded and handed to the builder's text path, so both paths give identical values.
 *
 * Every byte that is not a number is decoded as text in a cell, or, in a skipped column, checked
 * for a high bit or a NUL; so a NUL byte or invalid UTF-8 anywhere in the records is refused with
 * its line (see `textBytes`) at no cost to number cells, which are ASCII digits by grammar.
 */
import type { ColumnBuilder } from "./columnBuilder.js";
import { findNonTextByte, nonTextError } from "./textBytes.js";

const LF = 10;
const QUOTE = 34;
const CR = 13;
const PLUS = 43;
const MINUS = 45;
const DOT = 46;
const COMMA = 44;
const MAX_SAFE = 9007199254740991;
/** Digits that always fit a 32-bit integer mantissa (10⁹ − 1 < 2³¹). */
const MAX_INT_DIGITS = 9;
const SIGN = Float64Array.of(1, -1);
const POW10 = Float64Array.from({ length: 23 }, (_, i) => Number(`1e${i}`));
const utf8 = new TextDecoder("utf-8");
const strictUtf8 = new TextDecoder("utf-8", { fatal: true });

/** Decode bytes [start, end) as UTF-8 (short ASCII runs without TextDecoder). */
export function decodeBytes(buf: Uint8Array, start: number, end: number): string {
  if (end - start <= 32) {
    let s = "";
    for (let i = start; i < end; i++) {
      const b = buf[i]!;
      if (b >= 0x80) return utf8.decode(buf.subarray(start, end));
      s += String.fromCharCode(b);
    }
    return s;
  }
  return utf8.decode(buf.subarray(start, end));
}

/**
 * Decode the text cell buf[start, end) of column `c` (or of a skipped column, c < 0) as UTF-8.
 * Cost: O(end − start).
 * @throws DataError (not UTF-8 text) for a NUL byte or invalid UTF-8, naming the file, line and column
 */
export function decodeCell(buf: Uint8Array, start: number, end: number, b: ColumnBuilder, c: number): string {
  let ascii = true;
  for (let i = start; i < end; i++) {
    const x = buf[i]!;
    if (x === 0 || x >= 0x80) {
      ascii = false;
      break;
    }
  }
  if (ascii) return decodeBytes(buf, start, end);
  const bad = findNonTextByte(buf, start, end);
  if (bad) throw nonTextError(b.file, b.line, bad, buf, c >= 0 ? b.names[c] : undefined);
  return strictUtf8.decode(buf.subarray(start, end));
}

/**
 * Scan the records in buf[start, end) into the builder. Preconditions: the range holds no
 * quote character and ends just after an LF. `line` is the line of the first record; returns
 * the line after the last. Cost: O(end − start).
 *
 * The loop reads a cell as a plain decimal (optional sign, digits, optional mark and digits)
 * with its 1 to 9 digits accumulated in a 32-bit integer m, and stores ±m / 10^frac (both exact,
 * so one correctly rounded division) when the cell ends at the delimiter or the LF right after
 * those digits; every other cell (empty, exponent, CR, text, more digits) goes to
 * {@link scanOtherCell}, which reads up to 2⁵³ − 1 in the mantissa the same way.
 * @throws DataError (from the builder) on a ragged row
 * @example scanUnquotedRecords(bytes, 0, bytes.length, builder, 44, 2)
 */
export function scanUnquotedRecords(
  buf: Uint8Array,
  start: number,
  end: number,
  b: ColumnBuilder,
  delim: number,
  line: number,
): number {
  const map = b.fieldToColumn;
  const vals = b.vals;
  const plain = b.plain;
  const nf = map.length;
  const mark = b.decimalComma ? COMMA : DOT;
  let p = start;
  while (p < end) {
    const first = buf[p]!;
    if (nf > 1 && (first === LF || (first === CR && buf[p + 1] === LF))) {
      b.blankLines++;
      p += first === LF ? 1 : 2;
      line++;
      continue;
    }
    b.beginRecord(line);
    const row = b.rows;
    let f = 0;
    for (;;) {
      const c = f < nf ? map[f]! : -1;
      let q = p;
      let x = buf[q]!;
      if (c >= 0) {
        // A minus sign without a branch (signs are unpredictable); a plus sign leaves no digits
        // here and goes to scanOtherCell.
        const minus = +(x === MINUS);
        q += minus;
        x = buf[q]!;
        // Digits accumulate in a 32-bit integer (a short dependency chain); exact up to 9 digits.
        const d0 = q;
        let m = 0;
        let d = x - 48;
        while (d >>> 0 < 10) {
          m = (m * 10 + d) | 0;
          x = buf[++q]!;
          d = x - 48;
        }
        let digits = q - d0;
        let frac = 0;
        if (x === mark) {
          const f0 = q + 1;
          x = buf[++q]!;
          d = x - 48;
          while (d >>> 0 < 10) {
            m = (m * 10 + d) | 0;
            x = buf[++q]!;
            d = x - 48;
          }
          frac = q - f0;
          digits += frac;
        }
        if ((x === delim || x === LF) && (digits - 1) >>> 0 < MAX_INT_DIGITS) {
          // × −1 flips the sign exactly (and gives −0 for "-0.0")
          const v = (m / POW10[frac]!) * SIGN[minus]!;
          if (plain[c] === 1) vals[c]![row] = v;
          else b.num(c, v);
        } else {
          q = scanOtherCell(buf, p, b, c, delim, mark);
          x = buf[q]!;
        }
      } else {
        // A skipped column: only checked to be text (a high bit or a NUL sends it to decodeCell).
        let odd = 0;
        while (x !== delim && x !== LF) {
          odd |= (x & 0x80) | +(x === 0);
          x = buf[++q]!;
        }
        if (odd !== 0) decodeCell(buf, p, q, b, -1);
      }
      f++;
      if (x === delim) {
        p = q + 1;
        continue;
      }
      p = x === LF ? q + 1 : q + 2;
      break;
    }
    b.endRecord(f);
    line++;
  }
  return line;
}

/**
 * Read the cell starting at buf[p] into column c of the builder when it is not a plain decimal
 * ending at the delimiter or LF: a number with an exponent, a cell before a CR LF, an empty
 * cell, more digits than a double holds exactly, or text. Returns the index of the byte that
 * ends the cell (the delimiter, the LF, or the CR of a CR LF). Cost: O(cell length).
 */
function scanOtherCell(buf: Uint8Array, p: number, b: ColumnBuilder, c: number, delim: number, mark: number): number {
  let q = p;
  let x = buf[q]!;
  let neg = false;
  if (x === MINUS) {
    neg = true;
    x = buf[++q]!;
  } else if (x === PLUS) {
    x = buf[++q]!;
  }
  let m = 0;
  let digits = 0;
  let frac = 0;
  while (x >= 48 && x <= 57) {
    m = m * 10 + (x - 48);
    digits++;
    x = buf[++q]!;
  }
  if (x === mark) {
    x = buf[++q]!;
    while (x >= 48 && x <= 57) {
      m = m * 10 + (x - 48);
      digits++;
      frac++;
      x = buf[++q]!;
    }
  }
  let ok = digits > 0;
  let exp = 0;
  if (ok && (x === 101 || x === 69)) {
    x = buf[++q]!;
    let eneg = false;
    if (x === MINUS) {
      eneg = true;
      x = buf[++q]!;
    } else if (x === PLUS) {
      x = buf[++q]!;
    }
    let ed = 0;
    while (x >= 48 && x <= 57) {
      if (exp < 100000) exp = exp * 10 + (x - 48);
      ed++;
      x = buf[++q]!;
    }
    if (ed === 0) ok = false;
    if (eneg) exp = -exp;
  }
  const atEnd = x === delim || x === LF || (x === CR && buf[q + 1] === LF);
  if (ok && atEnd) {
    const e10 = exp - frac;
    if (m <= MAX_SAFE && e10 >= -22 && e10 <= 22) {
      let v = e10 < 0 ? m / POW10[-e10]! : m * POW10[e10]!;
      if (neg) v = -v;
      b.num(c, v);
    } else {
      b.text(c, decodeCell(buf, p, q, b, c));
    }
    return q;
  }
  if (q === p && atEnd) {
    b.miss(c);
    return q;
  }
  let y = buf[q]!;
  while (y !== delim && y !== LF) y = buf[++q]!;
  b.text(c, decodeCell(buf, p, q, b, c));
  return q;
}

/**
 * Feeds chunks of a quote-free, LF-terminated region of a delimited file to
 * {@link scanUnquotedRecords}, carrying a partial record from one chunk to the next (the
 * chunks may be reused by the caller after each call). Stops at the first quote character:
 * then `feed` returns false and the reader takes no more input (the caller reads the file
 * another way). Cost: O(bytes).
 * @throws DataError (from the builder) on a ragged row
 * @example const r = new UnquotedRecordReader(builder, 44, 2); r.feed(chunk); r.finish()
 */
export class UnquotedRecordReader {
  private carry: Uint8Array | undefined;
  private stopped = false;

  constructor(
    private readonly builder: ColumnBuilder,
    private readonly delim: number,
    /** Line of the next record. */
    public line: number,
  ) {}

  /** Scan the complete records of `chunk` (plus the carried part); false at a quote. */
  feed(chunk: Uint8Array): boolean {
    if (this.stopped) return false;
    let pos = 0;
    if (this.carry) {
      const lf = chunk.indexOf(LF);
      if (lf < 0) {
        this.carry = join(this.carry, chunk);
        return true;
      }
      const joined = join(this.carry, chunk.subarray(0, lf + 1));
      this.carry = undefined;
      if (!this.scan(joined, 0, joined.length)) return false;
      pos = lf + 1;
    }
    const last = chunk.lastIndexOf(LF);
    if (last < pos) {
      if (pos < chunk.length) this.carry = chunk.slice(pos);
      return true;
    }
    if (!this.scan(chunk, pos, last + 1)) return false;
    if (last + 1 < chunk.length) this.carry = chunk.slice(last + 1);
    return true;
  }

  /** Scan a last record that has no line feed; false at a quote. */
  finish(): boolean {
    if (this.stopped) return false;
    if (!this.carry) return true;
    const joined = join(this.carry, Uint8Array.of(LF));
    this.carry = undefined;
    return this.scan(joined, 0, joined.length);
  }

  private scan(buf: Uint8Array, start: number, end: number): boolean {
    const q = buf.indexOf(QUOTE, start);
    if (q >= 0 && q < end) {
      this.stopped = true;
      return false;
    }
    this.line = scanUnquotedRecords(buf, start, end, this.builder, this.delim, this.line);
    return true;
  }
}

function join(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a, 0);
  out.set(b, a.length);
  return out;
}

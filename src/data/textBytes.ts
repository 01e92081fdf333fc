/**
 * Telling text from other bytes in a data file, and the error that says which byte is wrong.
 *
 * Terms: a data file is *text* when its bytes are UTF-8 (RFC 3629, Yergeau 2003, §4: no
 * overlong forms, no surrogates, nothing above U+10FFFF) and hold no NUL byte (a NUL never
 * occurs in text typed by people; it marks UTF-16 or a binary file). A file that opens with a
 * UTF-16 byte-order mark (FF FE little-endian, FE FF big-endian; The Unicode Standard, §23.8) is
 * read as UTF-16 and transcoded to UTF-8 before anything else looks at it; UTF-16 without the
 * mark cannot be told apart reliably and is refused with a hint (every other byte is NUL).
 */
import { DataError } from "../errors.js";

const NUL = 0;
const LF = 10;

/** What is wrong with the first byte that is not text. */
export interface BadByte {
  /** Offset of the byte in the range searched. */
  at: number;
  kind: "nul" | "invalid";
}

/**
 * The first byte of bytes[start, end) that breaks UTF-8 text (a NUL byte, or a byte that is not
 * part of a valid UTF-8 sequence; a sequence cut by `end` counts as invalid), or undefined.
 * Cost: O(end − start).
 * Source: RFC 3629 §4 (the UTF-8 byte-sequence grammar).
 * @example findNonTextByte(Uint8Array.of(0x61, 0xe9, 0x62))?.at // 1 (Latin-1 "é")
 */
export function findNonTextByte(bytes: Uint8Array, start = 0, end = bytes.length): BadByte | undefined {
  let i = start;
  while (i < end) {
    const b = bytes[i]!;
    if (b < 0x80) {
      if (b === NUL) return { at: i, kind: "nul" };
      i++;
      continue;
    }
    let need: number;
    let lo = 0x80;
    let hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      if (b === 0xe0) lo = 0xa0;
      if (b === 0xed) hi = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      if (b === 0xf0) lo = 0x90;
      if (b === 0xf4) hi = 0x8f;
    } else return { at: i, kind: "invalid" };
    for (let k = 1; k <= need; k++) {
      const c = i + k < end ? bytes[i + k]! : -1;
      if (k === 1 ? c < lo || c > hi : c < 0x80 || c > 0xbf) return { at: i, kind: "invalid" };
    }
    i += need + 1;
  }
  return undefined;
}

/** The UTF-16 encoding named by a byte-order mark at the start of `bytes`, if there is one. */
export function utf16ByteOrderMark(bytes: Uint8Array): "utf-16le" | "utf-16be" | undefined {
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return "utf-16le";
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return "utf-16be";
  return undefined;
}

/**
 * The error for a byte that is not text: names the file, the line, the byte (in hex) and, when
 * known, the column, and says what to do; a hint when the bytes look like UTF-16 without a
 * byte-order mark or like a spreadsheet (a ZIP archive). `context` is a few bytes around the bad
 * one (from `bytes[from, ...)`) used only for those hints.
 * @example nonTextError("d.csv", 4, { at: 0, kind: "nul" }, Uint8Array.of(0)).message
 */
export function nonTextError(file: string | undefined, line: number, bad: BadByte, bytes: Uint8Array, column?: string): DataError {
  const name = file ?? "data";
  const byte = bytes[bad.at]!;
  const hex = `0x${byte.toString(16).toUpperCase().padStart(2, "0")}`;
  const where = column === undefined ? `line ${line}` : `line ${line}, column "${column}"`;
  const what = bad.kind === "nul" ? `a NUL byte (${hex})` : `the byte ${hex}, which is not valid UTF-8`;
  let fix: string;
  if (bytes[0] === 0x50 && bytes[1] === 0x4b && bytes[2] === 0x03 && bytes[3] === 0x04) {
    fix = "this looks like a spreadsheet or ZIP archive, not a CSV file: export the sheet as CSV (UTF-8)";
  } else if (looksLikeUtf16(bytes)) {
    fix = "every other byte is NUL, so this looks like UTF-16 text without a byte-order mark: save it as CSV UTF-8 (or as UTF-16 with a byte-order mark)";
  } else if (bad.kind === "nul") {
    fix = "a text file never holds NUL bytes: check that this is the CSV file you meant, or save it again as CSV UTF-8";
  } else {
    fix = "save the file as CSV UTF-8 (files from older spreadsheet programs are often Latin-1 or Windows-1252)";
  }
  return new DataError(`${name}:${line}: the file is not UTF-8 text: ${where} has ${what}; ${fix}`, {
    file,
    line,
  });
}

/** Whether about every other byte of the first 64 is NUL (UTF-16 of mostly ASCII text). */
function looksLikeUtf16(bytes: Uint8Array): boolean {
  const n = Math.min(bytes.length, 64);
  if (n < 4) return false;
  let even = 0;
  let odd = 0;
  for (let i = 0; i < n; i++) if (bytes[i] === NUL) (i % 2 === 0 ? even++ : odd++);
  return Math.max(even, odd) >= 0.4 * n;
}

/** 1-based line of byte offset `at` among bytes[start, ...), counting line ends (LF unless given) from `firstLine`. Cost: O(at − start). */
export function lineAt(bytes: Uint8Array, start: number, at: number, firstLine: number, newline = LF): number {
  let line = firstLine;
  for (let i = start; i < at; i++) if (bytes[i] === newline) line++;
  return line;
}

/**
 * Check that bytes[start, end) are text, else throw {@link nonTextError} with the line of the
 * first bad byte (lines counted from `firstLine` at `start`). Cost: O(end − start).
 * @throws DataError naming the file, line and byte
 */
export function assertText(bytes: Uint8Array, start: number, end: number, file: string | undefined, firstLine: number, column?: string): void {
  const bad = findNonTextByte(bytes, start, end);
  if (bad) throw nonTextError(file, lineAt(bytes, start, bad.at, firstLine), bad, bytes, column);
}

/**
 * Transcode a UTF-16 byte stream (its byte-order mark first) to UTF-8 chunks, so that the
 * reader sees the same text it would see in a UTF-8 file (the mark is dropped). Cost: O(bytes).
 * @throws DataError for a lone surrogate or an odd number of bytes (not UTF-16), naming the file
 * @example for await (const c of transcodeUtf16(stream, "utf-16le", "d.csv")) ...
 */
export async function* transcodeUtf16(
  source: AsyncIterable<Uint8Array>,
  encoding: "utf-16le" | "utf-16be",
  file?: string,
): AsyncIterable<Uint8Array> {
  const decoder = new TextDecoder(encoding, { fatal: true });
  const encoder = new TextEncoder();
  let line = 1;
  const fail = (): never => {
    throw new DataError(
      `${file ?? "data"}:${line}: the file starts with a UTF-16 byte-order mark but is not valid UTF-16 near line ${line}; save it as CSV UTF-8`,
      { file, line },
    );
  };
  for await (const chunk of source) {
    let text: string;
    try {
      text = decoder.decode(chunk, { stream: true });
    } catch {
      return fail();
    }
    if (text.length > 0) {
      const out = encoder.encode(text);
      for (let i = 0; i < out.length; i++) if (out[i] === LF) line++;
      yield out;
    }
  }
  let rest: string;
  try {
    rest = decoder.decode();
  } catch {
    return fail();
  }
  if (rest.length > 0) yield encoder.encode(rest);
}

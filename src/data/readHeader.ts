/**
 * The column names of a delimited text file, from its first bytes, without reading the rows:
 * the same header, delimiter detection and checks as {@link readTable} (through `planTable`),
 * so a name that passes here is a column there.
 */
import { planTable } from "./readTable.js";
import { assertText, utf16ByteOrderMark } from "./textBytes.js";

const LF = 10;
const CR = 13;
const QUOTE = 34;

/**
 * The column names of a delimited text file from its first line(s) and a sample of rows. The
 * delimiter is detected among comma, semicolon and tab unless given (as `readTable` does); a
 * UTF-8 BOM is removed; quoted names may contain delimiters; an unnamed first column of row
 * labels is left out. Cost: O(length of the text).
 * @throws DataError when there is no header line, or a column name is empty or repeated (also
 *   in two Unicode forms)
 * @throws UsageError as `planTable` (--decimal-comma on a comma-separated header)
 * @example readHeader('age,"systolic bp",sex\n61,130,f') // ["age", "systolic bp", "sex"]
 */
export function readHeader(text: string, options: { file?: string; delimiter?: string; decimalComma?: boolean } = {}): string[] {
  const d = options.delimiter;
  const delimiter = d === "," || d === ";" || d === "\t" ? d : undefined;
  const plan = planTable(new TextEncoder().encode(text), true, {
    file: options.file ?? "data",
    ...(delimiter ? { delimiter } : {}),
    decimalComma: options.decimalComma ?? false,
  })!;
  return plan.names.filter((_, i) => !(i === 0 && plan.rowLabels));
}

/**
 * The text of a file's first bytes for {@link readHeader}: the whole header record, however
 * long, and the complete rows after it; undefined while `bytes` (the first bytes of the file,
 * all of it when `complete`) end inside the header, so the caller reads more. UTF-16 with a
 * byte-order mark is decoded; other bytes must be UTF-8 text. Cost: O(bytes).
 * @throws DataError (not UTF-8 text) for a NUL byte or invalid UTF-8, with the file and line
 * @example decodeHead(new TextEncoder().encode("a,b\n1,2\n3"), false, "d.csv") // "a,b\n1,2\n"
 */
export function decodeHead(bytes: Uint8Array, complete: boolean, file?: string): string | undefined {
  const utf16 = utf16ByteOrderMark(bytes);
  if (utf16) {
    const usable = complete ? bytes.length : bytes.length - (bytes.length % 2);
    const text = new TextDecoder(utf16).decode(bytes.subarray(0, usable));
    const cut = complete ? text.length : Math.max(text.lastIndexOf("\n"), text.lastIndexOf("\r")) + 1;
    if (!complete && !hasRecordEnd(text, 0, cut)) return undefined;
    return text.slice(0, cut);
  }
  let cut = bytes.length;
  if (!complete) {
    cut = Math.max(bytes.lastIndexOf(LF), bytes.lastIndexOf(CR)) + 1;
    if (cut === 0 || !hasRecordEnd(bytes, 0, cut)) return undefined;
  }
  assertText(bytes, 0, cut, file, 1);
  return new TextDecoder("utf-8").decode(bytes.subarray(0, cut));
}

/** Whether text or bytes [start, end) hold a line end outside double quotes. */
function hasRecordEnd(s: Uint8Array | string, start: number, end: number): boolean {
  let quoted = false;
  for (let i = start; i < end; i++) {
    const b = typeof s === "string" ? s.charCodeAt(i) : s[i]!;
    if (b === QUOTE) quoted = !quoted;
    else if ((b === LF || b === CR) && !quoted) return true;
  }
  return false;
}

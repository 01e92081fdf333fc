import { InputError } from "../errors.js";
import { findNonTextByte } from "../data/textBytes.js";
import { parseDot } from "./parseDot.js";
import { type ParsedGraph, parseGraph } from "./parseGraph.js";

export type GraphFormat = "auto" | "arrows" | "dot";

export interface ReadGraphSourceOptions {
  /** File name, for messages and for choosing the format by extension (`.dot`, `.gv`). */
  file?: string;
  /** "arrows" (arrowaudit's own format), "dot", or "auto" (the default: by extension, then by content). */
  format?: GraphFormat;
}

/** 1-based line of byte offset `at` (counts LF bytes before it). */
function lineOfByte(bytes: Uint8Array, at: number): number {
  let line = 1;
  for (let i = 0; i < at; i++) if (bytes[i] === 0x0a) line++;
  return line;
}

/** Skip blank space and comments of either format at the start of `text`, return the rest. */
function stripLeadingComments(text: string): string {
  let s = text;
  for (;;) {
    const before = s;
    s = s.replace(/^\s+/u, "");
    if (s.startsWith("#") || s.startsWith("//")) s = s.replace(/^[^\r\n]*/u, "");
    else if (s.startsWith("/*")) {
      const end = s.indexOf("*/", 2);
      s = end < 0 ? "" : s.slice(end + 2);
    }
    if (s === before) return s;
  }
}

/**
 * Detect DOT text: true when, after blank space and comments, the text opens with
 * `[strict] digraph` or `[strict] graph`, an optional name, then `{` (a file in arrowaudit's own
 * format cannot contain `{`). O(n) at worst, usually O(1).
 * @example
 * looksLikeDot("// exported\ndigraph G {"); // true
 * looksLikeDot("digraph -> b"); // false: a node called digraph
 */
export function looksLikeDot(text: string): boolean {
  const s = stripLeadingComments(text.replace(/^\uFEFF/u, ""));
  return /^(strict\s+)?(di)?graph\b\s*("(?:[^"\\]|\\.)*"|[^\s{"]+)?\s*\{/iu.test(s);
}

/**
 * Read a graph file's bytes: decode them as UTF-8 text, choose the format and parse.
 *
 * The format is DOT when `format` is "dot"; when `format` is "auto" (the default) and the file
 * name ends in `.dot` or `.gv` (any case); or when the text, after blank space and comments,
 * opens with `digraph`/`strict digraph`/`graph` and a `{` (see looksLikeDot). Otherwise it is
 * arrowaudit's own format (parseGraph). A UTF-8 byte-order mark is dropped. The bytes are not
 * modified.
 *
 * Cost: O(n) for n bytes plus the parser's cost.
 * Source: UTF-8 validity as defined in RFC 3629 (Yergeau, 2003), section 4.
 *
 * @throws InputError `<file>: this is not a text file ...` for bytes that are not UTF-8 text
 *   (invalid UTF-8, a NUL byte, or a UTF-16 byte-order mark), and whatever the parser throws.
 * @example
 * const bytes = new TextEncoder().encode("digraph { a -> b }");
 * readGraphSource(bytes, { file: "g.txt" }).graph.arrows; // [["a", "b"]]
 */
export function readGraphSource(bytes: Uint8Array, options: ReadGraphSourceOptions = {}): ParsedGraph {
  const file = options.file;
  const label = file !== undefined && file !== "" ? file : "the graph input";
  const format = options.format ?? "auto";
  if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
    throw new InputError(
      `${label}: this is not a text file arrowaudit can read: it is UTF-16 encoded; save it as UTF-8 text`,
      { file },
    );
  }
  const nul = bytes.indexOf(0);
  if (nul >= 0) {
    throw new InputError(
      `${label}: this is not a text file: byte ${nul} (line ${lineOfByte(bytes, nul)}) is a NUL byte; ` +
        `give a graph written as UTF-8 text`,
      { file, line: lineOfByte(bytes, nul) },
    );
  }
  const bad = findNonTextByte(bytes)?.at ?? -1; // no NUL is left by now, so this is a byte that breaks UTF-8
  if (bad >= 0) {
    throw new InputError(
      `${label}: this is not a text file: byte ${bad} (line ${lineOfByte(bytes, bad)}) is not valid UTF-8; ` +
        `save the graph as UTF-8 text (files from older editors are often Latin-1 or Windows-1252)`,
      { file, line: lineOfByte(bytes, bad) },
    );
  }
  // ignoreBOM: false (the default) drops a leading byte-order mark.
  const text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  const byExtension = file !== undefined && /\.(dot|gv)$/iu.test(file);
  const dot = format === "dot" || (format === "auto" && (byExtension || looksLikeDot(text)));
  return dot ? parseDot(text, { file }) : parseGraph(text, { file });
}

/**
 * Escaping of data-derived text for a terminal.
 *
 * Terms. A *control character* is one a terminal acts on instead of showing: the C0 controls
 * U+0000–U+001F (ESC, U+001B, starts the sequences that move the cursor, change colours or, with
 * OSC, retitle the window), DEL U+007F and the C1 controls U+0080–U+009F (U+009B is a one-byte
 * CSI in some terminals) (ECMA-48, 5th ed., 1991, §5). A *bidirectional override* is one of the
 * embedding, override and isolate formatting characters U+202A–U+202E and U+2066–U+2069, which
 * reorder the text that follows them on screen, so a name could be shown backwards or hide what
 * follows it (Unicode Standard Annex #9, "Unicode Bidirectional Algorithm", §2.1–2.4; the
 * "Trojan Source" attack on source code, CVE-2021-42574, uses them).
 *
 * Every such character is written as a visible escape: `\xHH` for C0, DEL and C1, `\uHHHH` for the
 * bidirectional ones (lower-case hex). The result is unambiguous: a backslash that the reader
 * could take as the start of an escape (followed by another backslash, by `x` and two hex
 * digits, by `u` and four hex digits, or by a character that is itself escaped) is doubled, so
 * the original text can always be recovered. Other backslashes, as in a Windows path, stay as
 * they are.
 */

/** The characters escaped: C0, DEL, C1 and the bidirectional embeddings, overrides and isolates. */
const UNSAFE = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g;
/** The same, keeping line feeds (for multi-line messages). */
const UNSAFE_KEEP_LF = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g;
/** A backslash that would read as the start of an escape. */
const AMBIGUOUS_BACKSLASH = /\\(?=\\|x[0-9a-fA-F]{2}|u[0-9a-fA-F]{4}|[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069])/g;

function escapeChar(c: string): string {
  const cp = c.charCodeAt(0);
  return cp <= 0xff ? `\\x${cp.toString(16).padStart(2, "0")}` : `\\u${cp.toString(16).padStart(4, "0")}`;
}

/**
 * Escape control characters and bidirectional overrides in `text` for printing to a terminal, as
 * `\x1b` or `\u202e` (see the module comment); line feeds are escaped too unless `keepNewlines`.
 * Cost: O(length).
 * Sources: ECMA-48 (5th ed., 1991) §5 (C0 and C1 control sets); Unicode Standard Annex #9 §2
 * (explicit directional formatting characters).
 *
 * @param text any text
 * @param keepNewlines leave "\n" as a line break (multi-line messages); default false
 * @returns the text with every unsafe character visible
 * @example escapeTerminal("a\u001b]0;x\u0007b") // "a\\x1b]0;x\\x07b"
 * @example escapeTerminal("C:\\data\\x.csv")     // unchanged: no backslash reads as an escape
 */
export function escapeTerminal(text: string, keepNewlines = false): string {
  return text.replace(AMBIGUOUS_BACKSLASH, "\\\\").replace(keepNewlines ? UNSAFE_KEEP_LF : UNSAFE, escapeChar);
}

/**
 * Escape only the control characters and bidirectional overrides of `text` (as {@link escapeTerminal}),
 * leaving backslashes alone: for text in which every literal backslash is already escaped, such as
 * a name in double quotes with `\\` for a backslash. Cost: O(length).
 *
 * @example escapeControlCharacters('"a\\\\b\u001b"') // '"a\\\\b\\x1b"'
 */
export function escapeControlCharacters(text: string): string {
  return text.replace(UNSAFE, escapeChar);
}

/**
 * Escape a multi-line message for a terminal ({@link escapeTerminal} with line breaks kept) and
 * keep the caret lines of quoted source lines under the character they point at: a line made of
 * spaces and one or more `^` that follows a line whose escaping lengthened it before the caret is
 * shifted by the characters added there. Cost: O(length).
 *
 * @example escapeTerminalMessage('  "a\u001bb" x\n        ^') // '  "a\\x1bb" x\n           ^'
 */
export function escapeTerminalMessage(message: string): string {
  const lines = message.split("\n");
  const out = lines.map((l) => escapeTerminal(l, true));
  for (let i = 1; i < lines.length; i++) {
    const caret = /^( *)(\^+ *)$/.exec(lines[i]!);
    if (!caret) continue;
    const at = caret[1]!.length;
    const before = lines[i - 1]!.slice(0, at);
    const shift = escapeTerminal(before, true).length - before.length;
    if (shift > 0) out[i] = " ".repeat(at + shift) + caret[2]!;
  }
  return out.join("\n");
}

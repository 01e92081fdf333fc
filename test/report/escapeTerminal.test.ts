import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { escapeControlCharacters, escapeTerminal, escapeTerminalMessage } from "../../src/report/escapeTerminal.js";

/** Undo `escapeTerminal` (the decoding rule of its module comment): `\\` → `\`, `\xHH` and `\uHHHH` → the character, any other backslash literal. */
function unescape(s: string): string {
  return s.replace(/\\(\\|x[0-9a-f]{2}|u[0-9a-f]{4})/g, (_, e: string) => (e === "\\" ? "\\" : String.fromCharCode(parseInt(e.slice(1), 16))));
}

/** Whether text holds anything a terminal would act on: C0, DEL, C1 (ECMA-48 §5) or a bidi embedding/override/isolate (UAX #9 §2). */
const unsafe = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/;

describe("escapeTerminal", () => {
  it("escapeTerminal(text) shows ESC, OSC titles, BEL, DEL, C1 CSI and bidi overrides as \\xHH / \\uHHHH", () => {
    // code points: ECMA-48 5th ed. §5 (ESC 1B, BEL 07, DEL 7F, CSI 9B); Unicode UAX #9 §2 (RLO 202E, LRI 2066, PDI 2069)
    expect(escapeTerminal("a\u001b]0;pwned\u0007b")).toBe("a\\x1b]0;pwned\\x07b");
    expect(escapeTerminal("\u001b[31mred\u001b[0m")).toBe("\\x1b[31mred\\x1b[0m");
    expect(escapeTerminal("x\u007fy\u009bz")).toBe("x\\x7fy\\x9bz");
    expect(escapeTerminal("abc\u202edef\u2066g\u2069")).toBe("abc\\u202edef\\u2066g\\u2069");
    expect(escapeTerminal("tab\there\nline\r")).toBe("tab\\x09here\\x0aline\\x0d");
  });

  it("escapeTerminal(text) leaves ordinary text, Unicode names and Windows paths unchanged", () => {
    expect(escapeTerminal("")).toBe("");
    expect(escapeTerminal("âge ⫫ 体重 | ∅ — ok")).toBe("âge ⫫ 体重 | ∅ — ok");
    expect(escapeTerminal("C:\\data\\x.csv")).toBe("C:\\data\\x.csv"); // "\x." is not an escape
    expect(escapeTerminal("C:\\Users\\me")).toBe("C:\\Users\\me");
    expect(escapeTerminal("a\u200db")).toBe("a\u200db"); // zero-width joiner: not a control or override
  });

  it("escapeTerminal(text, true) keeps line feeds and nothing else", () => {
    expect(escapeTerminal("a\nb\u001bc\r", true)).toBe("a\nb\\x1bc\\x0d");
  });

  it("escapeTerminal is unambiguous: literal escape-like text is told apart from the character it looks like", () => {
    expect(escapeTerminal("\\x1b")).toBe("\\\\x1b"); // the four characters \ x 1 b
    expect(escapeTerminal("\u001b")).toBe("\\x1b"); // the one character ESC
    expect(escapeTerminal("\\\u001b")).toBe("\\\\\\x1b"); // a backslash, then ESC
    expect(escapeTerminal("\\\\")).toBe("\\\\\\"); // two backslashes: the first is doubled
  });

  it("escapeTerminal(text) never lets an unsafe character through and can be undone (property, 1,000 strings)", () => {
    const alphabet = fc.constantFrom("a", "Z", "é", "体", "\\", "x", "u", "1", "b", "2", "e", "\u001b", "\u0007", "\u007f", "\u009b", "\u202e", "\u2066", "\n", "\t", " ");
    fc.assert(
      fc.property(fc.array(alphabet, { maxLength: 24 }).map((a) => a.join("")), (s) => {
        const e = escapeTerminal(s);
        expect(unsafe.test(e)).toBe(false);
        expect(unescape(e)).toBe(s);
      }),
      { numRuns: 1000, seed: 7 },
    );
  });

  it("escapeControlCharacters(text) escapes the same characters but leaves backslashes to the caller", () => {
    expect(escapeControlCharacters('"a\\\\b\u001b"')).toBe('"a\\\\b\\x1b"');
    expect(unsafe.test(escapeControlCharacters("\u009b\u202e\u0000"))).toBe(false);
  });
});

describe("escapeTerminalMessage", () => {
  it("escapeTerminalMessage keeps a caret under the character it points at after escaping the quoted line", () => {
    // regression: an error quoting a line with ESC in it printed the line raw, so the file could recolour the terminal
    const msg = 'g.txt:1:18: expected a node name\n  a -> "b\u001b[31mX" ->\n                   ^';
    const out = escapeTerminalMessage(msg);
    expect(unsafe.test(out.replace(/\n/g, ""))).toBe(false);
    const [, line, caret] = out.split("\n");
    expect(line).toBe('  a -> "b\\x1b[31mX" ->');
    // the caret was one past the end of the line; it still is
    expect(caret!.indexOf("^")).toBe(line!.length);
  });

  it("escapeTerminalMessage leaves clean messages and caret lines alone", () => {
    const msg = "f.txt:2:3: bad\n  a -> -> b\n       ^";
    expect(escapeTerminalMessage(msg)).toBe(msg);
  });
});

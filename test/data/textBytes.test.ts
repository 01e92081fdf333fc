import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { DataError } from "../../src/errors.js";
import { findNonTextByte, nonTextError, transcodeUtf16, utf16ByteOrderMark } from "../../src/data/textBytes.js";

// Python's strict UTF-8 codec (UnicodeDecodeError.start) and the first NUL byte, written by test/fixtures/data/make_text_reference.py
const reference = JSON.parse(readFileSync(new URL("../fixtures/data/text-reference.json", import.meta.url), "utf8")) as {
  cases: { hex: string; at: number | null; kind: "nul" | "invalid" | null }[];
};
const hex = (h: string) => Uint8Array.from(h.match(/../g) ?? [], (b) => parseInt(b, 16));

async function collect(it: AsyncIterable<Uint8Array>): Promise<string> {
  const parts: Uint8Array[] = [];
  for await (const c of it) parts.push(c);
  return new TextDecoder().decode(Buffer.concat(parts));
}
async function* chunks(data: Uint8Array, size: number): AsyncIterable<Uint8Array> {
  for (let i = 0; i < data.length; i += size) yield data.slice(i, i + size);
}

describe("textBytes", () => {
  it("findNonTextByte finds the byte Python's strict UTF-8 decoder stops at (or the first NUL) in 406 seeded byte strings", () => {
    for (const c of reference.cases) {
      const found = findNonTextByte(hex(c.hex));
      expect(found === undefined ? null : found.at, c.hex).toBe(c.at);
      expect(found === undefined ? null : found.kind, c.hex).toBe(c.kind);
    }
  });

  it("findNonTextByte searches only the range given, and a sequence cut by its end is invalid", () => {
    const b = new TextEncoder().encode("a,é\n\u0000");
    expect(findNonTextByte(b, 0, 5)).toBeUndefined();
    expect(findNonTextByte(b, 0, 3)).toEqual({ at: 2, kind: "invalid" }); // é is C3 A9, cut after C3
    expect(findNonTextByte(b)).toEqual({ at: 5, kind: "nul" });
  });

  it("nonTextError names the file, the line, the column and the byte, with a hint for UTF-16 and spreadsheets", () => {
    const utf16 = new Uint8Array(Buffer.from("age,sbp\n", "utf16le"));
    const e = nonTextError("d.csv", 1, { at: 1, kind: "nul" }, utf16);
    expect(e).toBeInstanceOf(DataError);
    expect(e.message).toBe(
      "d.csv:1: the file is not UTF-8 text: line 1 has a NUL byte (0x00); every other byte is NUL, so this looks like UTF-16 text without a byte-order mark: save it as CSV UTF-8 (or as UTF-16 with a byte-order mark)",
    );
    expect(e.line).toBe(1);
    const latin1 = Uint8Array.of(0x61, 0x2c, 0xe9, 0x0a);
    expect(nonTextError("d.csv", 7, { at: 2, kind: "invalid" }, latin1, "town").message).toBe(
      'd.csv:7: the file is not UTF-8 text: line 7, column "town" has the byte 0xE9, which is not valid UTF-8; save the file as CSV UTF-8 (files from older spreadsheet programs are often Latin-1 or Windows-1252)',
    );
    // "PK\x03\x04" opens every ZIP archive (PKWARE APPNOTE.TXT, local file header signature), so every .xlsx file
    const zip = Uint8Array.of(0x50, 0x4b, 0x03, 0x04, 0x14, 0x00);
    expect(nonTextError("d.csv", 1, { at: 5, kind: "nul" }, zip).message).toContain("looks like a spreadsheet or ZIP archive");
  });

  it("utf16ByteOrderMark recognises FF FE and FE FF only (The Unicode Standard, §23.8)", () => {
    expect(utf16ByteOrderMark(Uint8Array.of(0xff, 0xfe, 0x61, 0x00))).toBe("utf-16le");
    expect(utf16ByteOrderMark(Uint8Array.of(0xfe, 0xff, 0x00, 0x61))).toBe("utf-16be");
    expect(utf16ByteOrderMark(Uint8Array.of(0xef, 0xbb, 0xbf))).toBeUndefined();
    expect(utf16ByteOrderMark(Uint8Array.of(0xff))).toBeUndefined();
  });

  it("transcodeUtf16 gives the text Node's own UTF-16 codec reads, in any chunking (a character split across chunks)", async () => {
    const text = "âge;血压\n61;130,5\n𝑥1;2\n";
    // Node Buffer "utf16le" and a byte swap for big-endian, byte-order mark first
    const le = new Uint8Array(Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, "utf16le")]));
    const be = new Uint8Array(Buffer.concat([Buffer.from([0xfe, 0xff]), Buffer.from(text, "utf16le").swap16()]));
    for (const size of [1, 3, 7, 1000]) {
      expect(await collect(transcodeUtf16(chunks(le, size), "utf-16le"))).toBe(text);
      expect(await collect(transcodeUtf16(chunks(be, size), "utf-16be"))).toBe(text);
    }
    // a lone surrogate (D800 not followed by a low surrogate) is not UTF-16
    const bad = Uint8Array.of(0xff, 0xfe, 0x61, 0x00, 0x00, 0xd8, 0x61, 0x00);
    await expect(collect(transcodeUtf16(chunks(bad, 8), "utf-16le", "u.csv"))).rejects.toThrow(/^u\.csv:1: the file starts with a UTF-16 byte-order mark but is not valid UTF-16/);
  });
});

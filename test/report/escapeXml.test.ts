import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { escapeXml } from "../../src/report/escapeXml.js";

describe("escapeXml", () => {
  it("escapeXml(text) replaces the five XML-significant characters", () => {
    // entity names: W3C XML 1.0 §2.4 (from memory)
    expect(escapeXml(`<a href="x">'&'</a>`)).toBe("&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;");
  });

  it("escapeXml(text) leaves ordinary and Unicode text unchanged, and handles empty input", () => {
    expect(escapeXml("")).toBe("");
    expect(escapeXml("âge ⫫ 体重 | ∅")).toBe("âge ⫫ 体重 | ∅");
    expect(escapeXml(12.5)).toBe("12.5");
  });

  it("escapeXml(text) replaces control characters XML 1.0 forbids but keeps tab and newline", () => {
    expect(escapeXml("a\u0000b\u001fc")).toBe("a\ufffdb\ufffdc");
    expect(escapeXml("a\tb\nc")).toBe("a\tb\nc");
  });

  it("escapeXml(text) output never contains a raw < > \" ' or a bare & (property)", () => {
    fc.assert(
      fc.property(fc.string({ unit: "grapheme" }), (s) => {
        const out = escapeXml(s);
        expect(out).not.toMatch(/[<>"']/);
        expect(out).not.toMatch(/&(?!(amp|lt|gt|quot|#39);)/);
        // decoding the entities gives back the input (control characters aside)
        const back = out.replace(/&lt;/g, "<").replace(/&gt;/g, ">").replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, "&");
        expect(back).toBe(s.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, "\ufffd"));
      }),
    );
  });
});

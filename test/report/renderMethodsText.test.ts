import { describe, expect, it } from "vitest";
import { buildReportText } from "../../src/report/buildReportText.js";
import { renderMethodsText } from "../../src/report/renderMethodsText.js";
import { hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { sampleContext } from "./helpers.js";

describe("renderMethodsText", () => {
  it("renderMethodsText(result, context) is the methods paragraphs, then 'References' and the numbered works they cite, as plain text", () => {
    const r = sampleResult();
    const t = buildReportText(r, sampleContext());
    const text = renderMethodsText(r, sampleContext());
    const blocks = text.trimEnd().split("\n\n");
    expect(blocks.slice(0, t.methods.length)).toEqual(t.methods);
    expect(blocks[t.methods.length]).toBe("References");
    const refs = blocks[t.methods.length + 1]!.split("\n");
    expect(refs).toHaveLength(t.references.length);
    refs.forEach((line, i) => expect(line).toBe(`${i + 1}. ${t.references[i]}`));
    expect(blocks).toHaveLength(t.methods.length + 2);
    expect(text.endsWith("\n")).toBe(true);
  });

  it("renderMethodsText has no markup of any kind, so it pastes as it reads", () => {
    for (const r of [sampleResult(), hostileResult()]) {
      const text = renderMethodsText(r, sampleContext());
      expect(text).not.toMatch(/&(lt|gt|amp|quot|#\d+);/);
      expect(text).not.toMatch(/\*\*|\\[|_*`]|<span|<\/?p>|^#/m);
      expect(text).toContain("Analyses were run with arrowaudit 0.1.0.");
      expect(text).toContain("p < 0.001");
    }
  });
});

import { describe, expect, it } from "vitest";
import { csvCell, renderCsv } from "../../src/report/csv.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";

describe("csvCell", () => {
  it("csvCell neutralises cells a spreadsheet would run as formulas (CWE-1236; OWASP CSV injection advice)", () => {
    expect(csvCell("=HYPERLINK(\"x\")")).toBe(`"'=HYPERLINK(""x"")"`);
    expect(csvCell("+1+1")).toBe("'+1+1");
    expect(csvCell("-cmd")).toBe("'-cmd");
    expect(csvCell("@SUM(A1)")).toBe("'@SUM(A1)");
    expect(csvCell("\tx")).toBe("'\tx");
  });
  it("csvCell keeps plain and negative numbers numeric and quotes delimiters, quotes and newlines (RFC 4180)", () => {
    expect(csvCell(-0.25)).toBe("-0.25");
    expect(csvCell(1e-300)).toBe("1e-300");
    expect(csvCell("a,b")).toBe('"a,b"');
    expect(csvCell('say "hi"')).toBe('"say ""hi"""');
    expect(csvCell("two\nlines")).toBe('"two\nlines"');
    expect(csvCell(undefined)).toBe("");
  });
});

describe("renderCsv", () => {
  it("renderCsv writes a header and one row per claim, then one per untestable pair", () => {
    const r = sampleResult();
    const lines = renderCsv(r).trimEnd().split("\r\n");
    expect(lines[0]).toBe("rank,x,y,given,n,test,statistic,df,p,log_p,p_adjusted,p_method,effect,ci_low,ci_high,verdict,arrows,reason");
    expect(lines).toHaveLength(1 + r.claims.length + r.untestable.length);
  });
});

import { describe, expect, it } from "vitest";
import { middleEllipsis, renderTestText } from "../../src/report/terminal.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";

describe("middleEllipsis", () => {
  it("middleEllipsis keeps short names and cuts long ones in the middle to the width", () => {
    expect(middleEllipsis("bmi", 10)).toBe("bmi");
    expect(middleEllipsis("systolic_blood_pressure", 12)).toBe("systol…ssure");
    expect([...middleEllipsis("systolic_blood_pressure", 12)].length).toBe(12);
    expect(middleEllipsis("systolic_blood_pressure", 12, true)).toBe("systo...sure");
    expect(middleEllipsis("血压血压血压血压血压", 5)).toBe("血压…血压");
  });
});

describe("renderTestText", () => {
  const long = (() => {
    const r = sampleResult();
    r.claims[0]!.x = "a_very_long_variable_name_from_a_cohort_file_with_many_words";
    return r;
  })();
  it("renderTestText fits 100 columns, long names shortened, and uses no colour unless asked", () => {
    const text = renderTestText(long);
    for (const line of text.split("\n")) expect([...line].length).toBeLessThanOrEqual(100);
    expect(text).not.toMatch(/\u001b\[/);
    expect(renderTestText(long, { color: true })).toMatch(/\u001b\[/);
  });
  it("renderTestText never prints a p-value of 0 and shows p < 0.001 as such", () => {
    const r = sampleResult();
    r.claims[0]!.p = 1e-300;
    r.claims[0]!.p_adjusted = 1e-298;
    const text = renderTestText(r);
    expect(text).toContain("< 0.001");
    expect(text).not.toMatch(/\s0\.000\s/);
  });
  it("renderTestText --ascii output is pure ASCII", () => {
    const text = renderTestText(sampleResult(), { ascii: true });
    expect(/^[\x00-\x7f]*$/.test(text.replace(/[^\x00-\x7f]/g, (c) => (c === "⫫" ? "X" : c)))).toBe(true);
    expect(text).toContain("_indep_");
    expect(text).not.toContain("⫫");
  });
});

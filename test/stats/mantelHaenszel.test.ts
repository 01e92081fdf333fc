import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { mantelHaenszel } from "../../src/stats/mantelHaenszel.js";

interface Dept { dept: string; men_admitted: number; men_rejected: number; women_admitted: number; women_rejected: number }
// Bickel, Hammel & O'Connell (1975), Science 187:398–404 (counts as in /work/shared/reference/ucb-admissions.md)
const ucb = JSON.parse(readFileSync(new URL("../fixtures/statsmodels/ucb-admissions.json", import.meta.url), "utf8")) as { departments: Dept[] };
// rows: men, women; columns: admitted, rejected (the orientation of R's UCBAdmissions)
const tables = ucb.departments.map((d) => [d.men_admitted, d.men_rejected, d.women_admitted, d.women_rejected]);

describe("mantelHaenszel", () => {
  it("mantelHaenszel(Berkeley by department) matches R mantelhaen.test documented output", () => {
    const r = mantelHaenszel(tables);
    // R stats::mantelhaen.test(UCBAdmissions), tests/Examples/stats-Ex.Rout.save (4–7 significant digits printed)
    expect(r.cmh).toBeCloseTo(1.5246, 4);
    expect(r.p).toBeCloseTo(0.2169, 4);
    expect(r.cmhCorrected).toBeCloseTo(1.4269, 4);
    expect(r.pCorrected).toBeCloseTo(0.2323, 4);
    expect(r.oddsRatio).toBeCloseTo(0.9046968, 7);
    expect(r.ci[0]).toBeCloseTo(0.7719074, 7);
    expect(r.ci[1]).toBeCloseTo(1.0603298, 7);
    expect(r.strataUsed).toBe(6);
  });

  it("mantelHaenszel of one stratum gives the table's odds ratio (R per-department odds ratios)", () => {
    // R: apply(UCBAdmissions, 3, function(x) (x[1,1]*x[2,2])/(x[1,2]*x[2,1])), documented in the reference file
    const expected = [0.349212, 0.8025007, 1.1330596, 0.9212838, 1.2216312, 0.8278727];
    tables.forEach((t, k) => expect(mantelHaenszel([t]).oddsRatio).toBeCloseTo(expected[k]!, 6));
  });

  it("mantelHaenszel is symmetric: swapping rows inverts the odds ratio and keeps the statistic", () => {
    const swapped = tables.map((t) => [t[2]!, t[3]!, t[0]!, t[1]!]);
    const a = mantelHaenszel(tables);
    const b = mantelHaenszel(swapped);
    expect(b.oddsRatio).toBeCloseTo(1 / a.oddsRatio, 12);
    expect(b.ci[0]).toBeCloseTo(1 / a.ci[1], 12);
    expect(b.cmh).toBeCloseTo(a.cmh, 10);
  });

  it("mantelHaenszel skips strata of fewer than two rows and counts them", () => {
    const r = mantelHaenszel([...tables, [1, 0, 0, 0], [0, 0, 0, 0]]);
    expect(r.strataSkipped).toBe(2);
    expect(r.strataUsed).toBe(6);
    expect(r.cmh).toBeCloseTo(mantelHaenszel(tables).cmh, 12);
  });

  it("mantelHaenszel gives NaN odds ratio, not a crash, when every off-diagonal is empty", () => {
    const r = mantelHaenszel([[5, 0, 0, 5]]);
    expect(Number.isNaN(r.oddsRatio)).toBe(true);
    expect(Number.isFinite(r.cmh)).toBe(true);
    expect(() => mantelHaenszel([[1, 2, 3]])).toThrow(RangeError);
    expect(() => mantelHaenszel([[1, 2, 3, -1]])).toThrow(/non-negative/);
  });

  it("mantelHaenszel example: (10·40)/(20·30)", () => {
    expect(mantelHaenszel([[10, 20, 30, 40]]).oddsRatio).toBeCloseTo(2 / 3, 14); // arithmetic
  });
});

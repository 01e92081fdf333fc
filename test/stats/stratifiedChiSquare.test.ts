import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { sparseTableReasons, stratifiedChiSquare } from "../../src/stats/stratifiedChiSquare.js";

interface Dept { dept: string; men_admitted: number; men_rejected: number; women_admitted: number; women_rejected: number }
interface ScipyRef { departments: { dept: string; x2: number; g2: number }[]; x2_sum: number; g2_sum: number }
const fixtures = new URL("../fixtures/statsmodels/", import.meta.url);
// Bickel, Hammel & O'Connell (1975), Science 187:398–404
const ucb = JSON.parse(readFileSync(new URL("ucb-admissions.json", fixtures), "utf8")) as { departments: Dept[] };
const strata = ucb.departments.map((d) => ({ rows: 2, cols: 2, counts: [d.men_admitted, d.men_rejected, d.women_admitted, d.women_rejected] }));

/** scipy.stats.chi2_contingency per department, live from python3 or the committed fixture. */
function scipyReference(): { ref: ScipyRef; from: string } {
  const script = new URL("../../scripts/statsmodels_reference.py", import.meta.url).pathname;
  const run = spawnSync("python3", [script, "--ucb"], { encoding: "utf8", timeout: 60_000 });
  if (run.status === 0) return { ref: JSON.parse(run.stdout) as ScipyRef, from: "python3 scipy (live)" };
  return { ref: JSON.parse(readFileSync(new URL("ucb-scipy.json", fixtures), "utf8")) as ScipyRef, from: "committed fixture ucb-scipy.json" };
}
const { ref, from } = scipyReference();

describe("stratifiedChiSquare", () => {
  it(`stratifiedChiSquare(Berkeley by department) sums match scipy chi2_contingency [${from}]`, () => {
    const r = stratifiedChiSquare(strata);
    // scipy.stats.chi2_contingency(correction=False) and lambda_="log-likelihood", summed over departments
    expect(r.x2).toBeCloseTo(ref.x2_sum, 10);
    expect(r.g2).toBeCloseTo(ref.g2_sum, 10);
    expect(r.df).toBe(6);
    expect(r.strataUsed).toBe(6);
    expect(r.n).toBe(4526); // Bickel et al. (1975): 4,526 applicants
    ref.departments.forEach((d, k) => {
      const one = stratifiedChiSquare([strata[k]!]);
      expect(one.x2).toBeCloseTo(d.x2, 10);
      expect(one.g2).toBeCloseTo(d.g2, 10);
    });
  });

  it("stratifiedChiSquare(department A) matches the STAT 504 SAS output", () => {
    const a = stratifiedChiSquare([strata[0]!]);
    // Penn State STAT 504 lesson 3 SAS output (4 decimals printed), via /work/shared/reference/ucb-admissions.md
    expect(a.x2).toBeCloseTo(17.248, 3);
    expect(a.g2).toBeCloseTo(19.054, 3);
    const b = stratifiedChiSquare([strata[1]!]);
    expect(b.x2).toBeCloseTo(0.2537, 4);
    expect(b.g2).toBeCloseTo(0.2586, 4);
  });

  it("stratifiedChiSquare counts degenerate strata (one row, one level) as unused and adds nothing for them", () => {
    const base = stratifiedChiSquare(strata);
    const r = stratifiedChiSquare([
      ...strata,
      { rows: 2, cols: 2, counts: [1, 0, 0, 0] }, // one row
      { rows: 2, cols: 2, counts: [4, 7, 0, 0] }, // single x level
      { rows: 3, cols: 2, counts: [0, 0, 0, 0, 0, 0] }, // empty
    ]);
    expect(r.strataTotal).toBe(9);
    expect(r.strataUsed).toBe(6);
    expect(r.df).toBe(base.df);
    expect(r.g2).toBe(base.g2);
    expect(r.n).toBe(4526 + 12);
  });

  it("stratifiedChiSquare drops empty rows and columns from a stratum's df", () => {
    // 3 × 3 declared, one empty row and one empty column: a 2 × 2 table, df 1
    const r = stratifiedChiSquare([{ rows: 3, cols: 3, counts: [10, 0, 20, 0, 0, 0, 30, 0, 40] }]);
    expect(r.df).toBe(1);
    expect(r.x2).toBeCloseTo(stratifiedChiSquare([{ rows: 2, cols: 2, counts: [10, 20, 30, 40] }]).x2, 12);
    expect(r.cells).toBe(4);
  });

  it("stratifiedChiSquare is 0 for tables with exactly proportional rows (independence), for any stratification", () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 2, maxLength: 4 }), fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 2, maxLength: 4 })), { minLength: 1, maxLength: 5 }), (spec) => {
        const tabs = spec.map(([a, b]) => ({ rows: a.length, cols: b.length, counts: a.flatMap((ai) => b.map((bj) => ai * bj)) }));
        const r = stratifiedChiSquare(tabs);
        expect(r.x2).toBeLessThan(1e-9);
        expect(r.g2).toBeLessThan(1e-9);
        expect(r.df).toBe(spec.reduce((s, [a, b]) => s + (a.length - 1) * (b.length - 1), 0));
      }),
    );
  });

  it("stratifiedChiSquare G² is invariant to transposing each stratum and X², G² ≥ 0", () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.integer({ min: 0, max: 30 }), { minLength: 6, maxLength: 6 }), { minLength: 1, maxLength: 4 }), (cs) => {
        const t = cs.map((c) => ({ rows: 2, cols: 3, counts: c }));
        const tt = cs.map((c) => ({ rows: 3, cols: 2, counts: [c[0]!, c[3]!, c[1]!, c[4]!, c[2]!, c[5]!] }));
        const a = stratifiedChiSquare(t);
        const b = stratifiedChiSquare(tt);
        expect(a.g2).toBeCloseTo(b.g2, 9);
        expect(a.x2).toBeCloseTo(b.x2, 9);
        expect(a.df).toBe(b.df);
        expect(a.g2).toBeGreaterThanOrEqual(0);
        expect(a.x2).toBeGreaterThanOrEqual(0);
      }),
    );
  });

  it("stratifiedChiSquare handles the empty list and rejects bad counts", () => {
    expect(stratifiedChiSquare([])).toMatchObject({ x2: 0, g2: 0, df: 0, strataUsed: 0, strataTotal: 0, n: 0 });
    expect(() => stratifiedChiSquare([{ rows: 2, cols: 2, counts: [1, 2, 3] }])).toThrow(/4|3 counts/);
    expect(() => stratifiedChiSquare([{ rows: 2, cols: 2, counts: [1, 2, 3, NaN] }])).toThrow(/finite non-negative/);
  });

  it("stratifiedChiSquare example: [[10, 20], [30, 40]] has X² = 0.7937", () => {
    // hand computation: expected 12, 18, 28, 42 (common practice)
    expect(stratifiedChiSquare([{ rows: 2, cols: 2, counts: [10, 20, 30, 40] }]).x2).toBeCloseTo(4 / 12 + 4 / 18 + 4 / 28 + 4 / 42, 12);
  });

  it("stratifiedChiSquare gives the Williams excess Σ_s df_s(q_s − 1)/df from Williams' formula", () => {
    // Williams (1976), Biometrika 63:33–37 (formula from memory): q = 1 + (n Σ 1/R_i − 1)(n Σ 1/C_j − 1)/(6 n (r − 1)(c − 1))
    // [[22, 22, 22, 22, 2] × 2]: n = 180, n Σ 1/R = 4, n Σ 1/C = 180·(4/44 + 1/4) = 61.36…, df = 4
    const one = stratifiedChiSquare([{ rows: 2, cols: 5, counts: [22, 22, 22, 22, 2, 22, 22, 22, 22, 2] }]);
    const b = 180 * (4 / 44 + 1 / 4);
    expect(one.williamsExcess).toBeCloseTo((3 * (b - 1)) / (6 * 180 * 4), 14);
    expect(one.williamsExcess).toBeCloseTo(0.041919, 6);
    // two strata: the df-weighted mean of q_s − 1; a degenerate stratum adds nothing
    const two = stratifiedChiSquare([
      { rows: 2, cols: 5, counts: [22, 22, 22, 22, 2, 22, 22, 22, 22, 2] },
      { rows: 2, cols: 2, counts: [30, 20, 10, 40] },
      { rows: 2, cols: 2, counts: [3, 4, 0, 0] },
    ]);
    const second = ((100 * (1 / 50 + 1 / 50) - 1) * (100 * (1 / 40 + 1 / 60) - 1)) / (6 * 100); // df_s (q_s − 1) of [[30, 20], [10, 40]]
    expect(two.williamsExcess).toBeCloseTo((4 * one.williamsExcess + second) / 5, 14);
  });

  it("stratifiedChiSquare counts the cells of Cochran's rule (expected below 5, below 1, the smallest) over used strata only", () => {
    // Expected counts E_ij = R_i·C_j/n_s, by hand (definition; scipy.stats.contingency.expected_freq gives the same):
    // stratum 1 [[1, 9], [29, 61]]: E = 3, 7, 27, 63 — one below 5, none below 1
    // stratum 2 [[0, 2, 1], [40, 30, 27]]: E = 1.2, 0.96, 0.84 | 38.8, 31.04, 27.16 — three below 5, two below 1
    // stratum 3 [[5, 0], [7, 0]]: one column empty, unused
    const r = stratifiedChiSquare([
      { rows: 2, cols: 2, counts: [1, 9, 29, 61] },
      { rows: 2, cols: 3, counts: [0, 2, 1, 40, 30, 27] },
      { rows: 2, cols: 2, counts: [5, 0, 7, 0] },
    ]);
    expect(r.cells).toBe(10);
    expect(r.sparseCells).toBe(4);
    expect(r.tinyCells).toBe(2);
    expect(r.minExpected).toBeCloseTo(0.84, 12);
    // Cochran (1954): no expected count below 1 and at most 20% below 5 — both parts broken here (40% below 5)
    expect(sparseTableReasons(r).slice(0, 2)).toEqual(["expected-below-1", "over-20%-below-5"]);
    expect(sparseTableReasons(stratifiedChiSquare([{ rows: 2, cols: 2, counts: [1, 9, 29, 61] }]))).toContain("over-20%-below-5"); // 1 of 4 = 25%
    expect(sparseTableReasons(stratifiedChiSquare([{ rows: 2, cols: 2, counts: [100, 200, 300, 400] }]))).toEqual([]);
    // exactly 20% below 5 passes that part ("more than 20%" fails): rows 90/90, columns 44, 44, 44, 44, 4 → E = 2 in 2 of 10 cells
    const edge = stratifiedChiSquare([{ rows: 2, cols: 5, counts: [22, 22, 22, 22, 2, 22, 22, 22, 22, 2] }]);
    expect(edge.sparseCells / edge.cells).toBe(0.2);
    expect(edge.minExpected).toBe(2);
    expect(sparseTableReasons(edge)).toEqual(["williams-excess"]); // the two cells of E = 2 still put the mean of G² 4.2% above its df (below)
    // the empty list breaks nothing, and its smallest expected count is Infinity
    expect(stratifiedChiSquare([]).minExpected).toBe(Infinity);
    expect(stratifiedChiSquare([]).williamsExcess).toBe(0);
    expect(sparseTableReasons(stratifiedChiSquare([]))).toEqual([]);
  });
});

/**
 * The sparse rules of the two table tests, on hand-built stratified tables: which rule sends a
 * claim to permutations, what the warning and details say, and which tables keep χ².
 * Expected counts E = row total × column total / stratum total, Williams' factor and the
 * Mantel–Fleiss gaps are computed by hand in the comments (definitions in src/stats/).
 */
import { describe, expect, it } from "vitest";
import { linearByLinear } from "../../../src/audit/methods/linearByLinear.js";
import { stratifiedChisq } from "../../../src/audit/methods/stratifiedChisq.js";
import type { TestContext } from "../../../src/audit/TestMethod.js";
import type { TestOutcome } from "../../../src/audit/types.js";
import type { Column, Table } from "../../../src/data/Table.js";

function col(name: string, codes: number[], levels: number, type: Column["type"]): Column {
  const c = Int32Array.from(codes);
  return { name, type, typeSource: "declared", codes: c, levels: Array.from({ length: levels }, (_, i) => String(i)), values: Float64Array.from(c), missing: 0 };
}
/** One row per counted case of the x × y tables of the strata of z (row-major counts). */
function expand(strata: number[][][], type: "nominal" | "ordinal"): Table {
  const x: number[] = [];
  const y: number[] = [];
  const z: number[] = [];
  strata.forEach((t, k) => t.forEach((row, i) => row.forEach((c, j) => {
    for (let r = 0; r < c; r++) { x.push(i); y.push(j); z.push(k); }
  })));
  const cols = [col("x", x, strata[0]!.length, type), col("y", y, strata[0]![0]!.length, type), col("z", z, strata.length, "nominal")];
  return { rows: x.length, columns: cols, warnings: [], column: (n) => cols.find((c) => c.name === n) };
}
const ctx = (t: Table): TestContext => ({ table: t, moments: undefined as never, seed: 3 });
function run(method: typeof stratifiedChisq, t: Table): TestOutcome {
  const r = method.run({ x: "x", y: "y", given: ["z"] }, ctx(t));
  if (!r.ok) throw new Error(r.reason);
  return r.outcome;
}

describe("stratified-chisq sparse rule", () => {
  it("a cell expected below 1 permutes even when at most 20% of the cells are below 5, and the warning names Cochran's rule", () => {
    // 2 strata of x (2 levels) × y (6 levels); in each, y level 5 is seen once: E = 1 × 100/200 = 0.5 in both of its cells,
    // so 4 of 24 cells (16.7%) are below 5 and all of them below 1
    const s = [[20, 20, 20, 20, 19, 1], [20, 20, 20, 20, 20, 0]];
    const t = expand([s, s], "nominal");
    const o = run(stratifiedChisq, t);
    expect(o.p_method).toBe("permutation");
    expect(o.details!.sparse_share).toBeCloseTo(4 / 24, 12);
    expect(o.details!.tiny_cells).toBe(4);
    expect(o.details!.min_expected).toBeCloseTo(0.5, 12);
    const rule = o.details!.sparse_rule as string[];
    expect(rule).toContain("expected-below-1");
    expect(rule).not.toContain("over-20%-below-5");
    expect(o.warnings!.join(" ")).toMatch(/4 of 24 expected counts are below 1 \(smallest 0\.50; Cochran's rule\)/);
    expect(o.warnings!.join(" ")).not.toMatch(/below 5/);
  });

  it("Williams' factor alone permutes a rare binary x whose expected counts of 2.4–11 pass Cochran's rule", () => {
    // per stratum: x = 1 row [11, 11, 3] (25 cases), x = 0 row [740, 740, 160]; column totals 751, 751, 163 of 1,665:
    // E of the x = 1 row = 11.28, 11.28, 2.45 → 3 of 18 cells (16.7%) below 5, none below 1.
    // Williams: (1665/25 + 1665/1640 − 1)(2·1665/751 + 1665/163 − 1)/(6·1665) = 0.0911 per stratum on 2 df → excess 0.0456
    const s = [[740, 740, 160], [11, 11, 3]];
    const o = run(stratifiedChisq, expand([s, s, s], "nominal"));
    expect(o.details!.sparse_share).toBeCloseTo(3 / 18, 12);
    expect(o.details!.min_expected as number).toBeCloseTo((25 * 163) / 1665, 10);
    expect(o.details!.williams_excess as number).toBeCloseTo(((1665 / 25 + 1665 / 1640 - 1) * ((2 * 1665) / 751 + 1665 / 163 - 1)) / (6 * 1665) / 2, 12);
    expect(o.details!.sparse_rule).toEqual(["williams-excess"]);
    expect(o.p_method).toBe("permutation");
    expect(o.warnings!.join(" ")).toMatch(/mean of G² 4\.6% above its df \(Williams' factor/);
  });

  it("the same tables with 100 cases of x per stratum keep the asymptotic G² (no rule broken)", () => {
    // x = 1 row [45, 45, 10]: E = 100 × col/n ≥ 9.8, Williams' excess about 0.01
    const s = [[740, 740, 160], [45, 45, 10]];
    const o = run(stratifiedChisq, expand([s, s, s], "nominal"));
    expect(o.details!.sparse_rule).toEqual([]);
    expect(o.details!.williams_excess as number).toBeLessThan(0.03);
    expect(o.p_method).toBe("asymptotic");
    expect(o.warnings ?? []).toEqual([]);
  });
});

describe("linear-by-linear sparse rule (2 × 2 × K)", () => {
  it("two rare levels: a Mantel–Fleiss gap below 1 permutes, with the gaps in the details", () => {
    // per stratum [[n00, n01], [n10, n11]] = [[1640, 12], [13, 1]]: first row (x = 0) 1,652, first column (y = 0) 1,653, n = 1,666;
    // E[n00] = 1652 · 1653 / 1666 = 1639.11, range [1639, 1652] → gaps 0.11 and 12.89 per stratum, three strata
    const s = [[1640, 12], [13, 1]];
    const o = run(linearByLinear, expand([s, s, s], "ordinal"));
    const e = (1652 * 1653) / 1666;
    expect(o.details!.mantel_fleiss).toMatchObject({ holds: false });
    const mf = o.details!.mantel_fleiss as { lower_gap: number; upper_gap: number };
    expect(mf.lower_gap).toBeCloseTo(3 * (e - 1639), 9);
    expect(mf.upper_gap).toBeCloseTo(3 * (1652 - e), 9);
    expect(o.details!.sparse_rule).toEqual(["mantel-fleiss"]);
    expect(o.p_method).toBe("permutation");
    expect(o.warnings!.join(" ")).toMatch(/Mantel–Fleiss gap below 1/);
  });

  it("a 2 × 2 × K table whose Σ n11 can move a few counts keeps χ²(1) (gap ≥ 1, though below Mantel and Fleiss's 5); more levels get no gaps", () => {
    // [[1600, 40], [20, 6]]: first row 1,640, first column 1,620 of 1,666: E = 1594.7, range [1594, 1620] → gaps 0.72 and 25.3 per stratum, 2.2 over three
    const s = [[1600, 40], [20, 6]];
    const o = run(linearByLinear, expand([s, s, s], "ordinal"));
    const mf = o.details!.mantel_fleiss as { lower_gap: number; holds: boolean };
    expect(mf.lower_gap).toBeCloseTo(3 * ((1640 * 1620) / 1666 - 1594), 9);
    expect(mf.holds).toBe(false);
    expect(o.details!.sparse_rule).toEqual([]);
    expect(o.p_method).toBe("asymptotic");
    const three = [[30, 10, 2], [12, 20, 9]];
    const r = run(linearByLinear, expand([three, three], "ordinal"));
    expect(r.details!.mantel_fleiss).toBeUndefined();
    expect(r.p_method).toBe("asymptotic");
  });
});

import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { findSentinelCodes, SENTINEL_VALUES } from "../../src/data/findSentinelCodes.js";
import { readTable } from "../../src/data/readTable.js";

// numpy.percentile (linear, Hyndman & Fan definition 7) on seeded columns, written by test/fixtures/data/make_sentinel_reference.py
const reference = JSON.parse(readFileSync(new URL("../fixtures/data/sentinel-reference.json", import.meta.url), "utf8")) as {
  columns: { label: string; values: (number | null)[]; found: { value: number; cells: number; min: number; max: number; iqr: number }[] }[];
};

describe("findSentinelCodes", () => {
  it("findSentinelCodes flags the same codes as numpy's quartiles on 28 seeded columns (ages, scales, binary, skewed, years)", () => {
    expect(reference.columns.some((c) => c.found.length > 0)).toBe(true);
    expect(reference.columns.some((c) => c.found.length === 0 && c.values.some((v) => v !== null && SENTINEL_VALUES.includes(v)))).toBe(true); // a code inside the range is left alone
    for (const col of reference.columns) {
      const values = Float64Array.from(col.values, (v) => (v === null ? NaN : v));
      const found = findSentinelCodes(values);
      expect(found.map((f) => [f.value, f.cells, f.min, f.max]), col.label).toEqual(col.found.map((f) => [f.value, f.cells, f.min, f.max]));
      found.forEach((f, i) => expect(f.iqr, col.label).toBeCloseTo(col.found[i]!.iqr, 10));
    }
  });

  it("findSentinelCodes needs five other values and a code beyond their range by more than the IQR (both sides of the edge)", () => {
    // others 10, 20, 30, 40, 50: Q1 = 20, Q3 = 40 (definition 7, from memory: the order statistics at (n − 1)p + 1 = 2 and 4), IQR 20
    const others = [10, 20, 30, 40, 50];
    expect(findSentinelCodes(Float64Array.of(...others, 99, 99))).toEqual([{ value: 99, cells: 2, min: 10, max: 50, iqr: 20 }]); // 99 > 50 + 20
    expect(findSentinelCodes(Float64Array.of(...others, -9))).toEqual([]); // -9 > 10 − 20 = −10: within reach of the others
    expect(findSentinelCodes(Float64Array.of(...others, -99)).map((f) => f.value)).toEqual([-99]);
    // exactly max + IQR is not beyond it: others 19, 39, 49, 59, 79 have Q1 39, Q3 59, so 79 + 20 = 99
    expect(findSentinelCodes(Float64Array.of(19, 39, 49, 59, 79, 99))).toEqual([]);
    expect(findSentinelCodes(Float64Array.of(19, 39, 49, 59, 78.5, 99)).map((f) => f.value)).toEqual([99]);
    // four other values are too few; missing values (NaN) are not values
    expect(findSentinelCodes(Float64Array.of(10, 20, 30, 40, 999, NaN))).toEqual([]);
    // a value that is not a sentinel is never flagged, however far
    expect(findSentinelCodes(Float64Array.of(...others, 1e6))).toEqual([]);
  });

  it("readTable warns about a far sentinel with the count, the range, the IQR and the per-column --missing that declares it", async () => {
    const rows = ["fage,bmi", ...Array.from({ length: 40 }, (_, i) => `${i % 8 === 0 ? 99 : 25 + (i % 20)},${(18 + (i % 15) * 0.7).toFixed(1)}`)];
    const t = await readTable(new TextEncoder().encode(rows.join("\n")), { file: "s.csv" });
    // the 35 other ages run 25 to 44; numpy.percentile(ages, [25, 75]) = [30, 39.5], so the IQR is 9.5
    expect(t.warnings).toContain(
      'column "fage" has 5 cells of 99, beyond its other values (25 to 44) by more than their interquartile range (9.5); 99 is a common code for "unknown": if it is one here, declare it with --missing "fage=99"',
    );
    expect(t.warnings.join(" ")).not.toContain('"bmi"');
    const declared = await readTable(new TextEncoder().encode(rows.join("\n")), { missingByColumn: { fage: ["99"] } });
    expect(declared.column("fage")!.missing).toBe(5);
    expect(declared.warnings.join(" ")).not.toContain("99");
  });
});

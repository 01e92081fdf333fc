import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { createTable } from "../../src/data/createTable.js";
import { midRanks, rankColumns } from "../../src/data/rankColumns.js";

describe("midRanks", () => {
  it("midRanks matches scipy.stats.rankdata(method='average') with ties, and keeps NaN out", () => {
    // scipy 1.17 rankdata([10, 20, 10, 30, 20, 20, -1], method="average")
    expect([...midRanks(new Float64Array([10, 20, 10, 30, 20, 20, -1]))]).toEqual([2.5, 5, 2.5, 7, 5, 5, 1]);
    // scipy 1.17 rankdata([3.5, 0.0, -0.0, 2.0]): -0 and 0 tie
    expect([...midRanks(new Float64Array([3.5, 0, -0, 2]))]).toEqual([4, 1.5, 1.5, 3]);
    const r = midRanks(new Float64Array([5, NaN, 1]));
    expect(r[0]).toBe(2);
    expect(Number.isNaN(r[1]!)).toBe(true);
    expect(r[2]).toBe(1);
    expect(midRanks(new Float64Array(0)).length).toBe(0);
  });

  it("midRanks with a row filter ranks only the kept rows", () => {
    const r = midRanks(new Float64Array([10, 20, 30, 40]), Uint8Array.from([1, 0, 1, 1]));
    expect([...r].map((v) => (Number.isNaN(v) ? null : v))).toEqual([1, null, 2, 3]);
  });

  it("midRanks sums to m(m+1)/2 and is invariant under increasing transforms (property)", () => {
    fc.assert(
      fc.property(fc.array(fc.oneof(fc.integer({ min: -5, max: 5 }), fc.constant(NaN)), { maxLength: 40 }), (xs) => {
        const v = Float64Array.from(xs);
        const r = midRanks(v);
        const m = xs.filter((x) => !Number.isNaN(x)).length;
        const sum = [...r].filter((x) => !Number.isNaN(x)).reduce((a, b) => a + b, 0);
        expect(sum).toBe((m * (m + 1)) / 2); // common practice: ranks 1..m sum to m(m+1)/2, ties preserve the sum
        const t = midRanks(v.map((x) => Math.exp(x / 3) * 7 - 2));
        expect([...t]).toEqual([...r]);
      }),
      { numRuns: 100, seed: 3 },
    );
  });

  it("rankColumns ranks named columns of a table", () => {
    const t = createTable({ a: [3, 1, 2, null], b: [1, 1, 2, 2] });
    const ranks = rankColumns(t, ["a", "b"]);
    expect([...ranks.get("b")!]).toEqual([1.5, 1.5, 3.5, 3.5]);
    expect(ranks.get("a")![0]).toBe(3);
    expect(() => rankColumns(t, ["zz"])).toThrow(/not in the table/);
  });
});

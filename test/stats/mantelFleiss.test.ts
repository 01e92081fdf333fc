import { spawnSync } from "node:child_process";
import { describe, expect, it } from "vitest";
import { binaryStrataMargins, mantelFleiss, MANTEL_FLEISS_MIN_GAP } from "../../src/stats/mantelFleiss.js";

/** Support ends and mean of n11 given the margins, from scipy.stats.hypergeom (live), or the values printed by it (scipy 1.17). */
function hypergeomReference(margins: [number, number, number][]): { lo: number; hi: number; mean: number }[] {
  const code = `import json,sys\nfrom scipy import stats\nout=[]\nfor a,b,n in json.loads(sys.argv[1]):\n    h=stats.hypergeom(n,b,a); lo,hi=h.support(); out.append({"lo":int(lo),"hi":int(hi),"mean":float(h.mean())})\nprint(json.dumps(out))`;
  const run = spawnSync("python3", ["-c", code, JSON.stringify(margins)], { encoding: "utf8", timeout: 60_000 });
  if (run.status === 0) return JSON.parse(run.stdout) as { lo: number; hi: number; mean: number }[];
  // scipy.stats.hypergeom(M=n, n=b, N=a).support() and .mean(), printed by hand with scipy 1.17
  const printed: Record<string, { lo: number; hi: number; mean: number }> = {
    "20,30,100": { lo: 0, hi: 20, mean: 6 },
    "3,97,100": { lo: 0, hi: 3, mean: 2.91 },
    "60,70,100": { lo: 30, hi: 60, mean: 42 },
    "5,5,10": { lo: 0, hi: 5, mean: 2.5 },
  };
  return margins.map((m) => printed[m.join(",")]!);
}

describe("mantelFleiss", () => {
  const margins: [number, number, number][] = [[20, 30, 100], [3, 97, 100], [60, 70, 100], [5, 5, 10]];
  const ref = hypergeomReference(margins);

  it("mantelFleiss gaps are the distances from the hypergeometric mean of n11 to the ends of its support (scipy.stats.hypergeom)", () => {
    margins.forEach(([a, b, n], k) => {
      const r = mantelFleiss([{ row1: a, col1: b, total: n }]);
      expect(r.lowerGap).toBeCloseTo(ref[k]!.mean - ref[k]!.lo, 12);
      expect(r.upperGap).toBeCloseTo(ref[k]!.hi - ref[k]!.mean, 12);
    });
    // summed over strata
    const all = mantelFleiss(margins.map(([a, b, n]) => ({ row1: a, col1: b, total: n })));
    expect(all.lowerGap).toBeCloseTo(ref.reduce((s, r) => s + r.mean - r.lo, 0), 12);
    expect(all.upperGap).toBeCloseTo(ref.reduce((s, r) => s + r.hi - r.mean, 0), 12);
  });

  it("mantelFleiss holds exactly when both gaps are at least 5 (Mantel & Fleiss 1980, from memory)", () => {
    expect(MANTEL_FLEISS_MIN_GAP).toBe(5);
    expect(mantelFleiss([{ row1: 20, col1: 30, total: 100 }])).toEqual({ lowerGap: 6, upperGap: 14, holds: true });
    // 3 of 100 rows in the first row and 97 in the first column: n11 can rise only 0.09 above its mean
    expect(mantelFleiss([{ row1: 3, col1: 97, total: 100 }]).holds).toBe(false);
    // two strata of [[2.5 expected]] add up to gaps of exactly 5 each: holds (at least 5)
    expect(mantelFleiss([{ row1: 5, col1: 5, total: 10 }, { row1: 5, col1: 5, total: 10 }])).toEqual({ lowerGap: 5, upperGap: 5, holds: true });
  });

  it("mantelFleiss: strata with one row or one column add nothing; the empty list does not hold; bad margins throw", () => {
    expect(mantelFleiss([{ row1: 40, col1: 12, total: 40 }, { row1: 0, col1: 7, total: 30 }, { row1: 0, col1: 0, total: 0 }])).toEqual({ lowerGap: 0, upperGap: 0, holds: false });
    expect(mantelFleiss([]).holds).toBe(false);
    expect(() => mantelFleiss([{ row1: 11, col1: 3, total: 10 }])).toThrow(/at most the total/);
    expect(() => mantelFleiss([{ row1: NaN, col1: 3, total: 10 }])).toThrow(/stratum 0/);
  });

  it("binaryStrataMargins aligns the first row and column on the lower level code in every stratum", () => {
    const m = binaryStrataMargins([
      { rows: 2, cols: 2, counts: [5, 15, 25, 55], xCodes: Int32Array.from([1, 0]), yCodes: Int32Array.from([0, 1]) },
      { rows: 1, cols: 2, counts: [4, 6], xCodes: Int32Array.from([1]), yCodes: Int32Array.from([1, 0]) },
    ]);
    // stratum 1: x code 0 is the second row (25 + 55 = 80); stratum 2 has x code 1 only (0 in the first row)
    expect(m).toEqual([{ row1: 80, col1: 30, total: 100 }, { row1: 0, col1: 6, total: 10 }]);
    // three levels of x over all strata: not a 2 × 2 × K table
    expect(binaryStrataMargins([
      { rows: 2, cols: 2, counts: [1, 2, 3, 4], xCodes: Int32Array.from([0, 1]), yCodes: Int32Array.from([0, 1]) },
      { rows: 2, cols: 2, counts: [1, 2, 3, 4], xCodes: Int32Array.from([1, 2]), yCodes: Int32Array.from([0, 1]) },
    ])).toBeUndefined();
  });
});

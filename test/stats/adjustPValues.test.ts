import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { adjustPValues } from "../../src/stats/adjustPValues.js";
import { loadReference, relErr } from "../fixtures/stats/loadReference.js";

interface AdjustRef { rows: { p: number[]; holm?: number[]; bh?: number[]; bh_scipy: number[] }[] }
const ref = loadReference<AdjustRef>("adjust");

describe(`adjustPValues against statsmodels and scipy (reference: ${ref.origin})`, () => {
  it("adjustPValues(p, \"holm\") matches statsmodels multipletests(method='holm') to 1e-12", () => {
    const rows = ref.data.rows.filter((r) => r.holm);
    expect(rows.length).toBe(ref.data.rows.length); // statsmodels was available when the fixture was written
    for (const r of rows) adjustPValues(r.p, "holm").forEach((v, i) => expect(relErr(v, r.holm![i]!)).toBeLessThanOrEqual(1e-12));
  });
  it("adjustPValues(p, \"bh\") matches statsmodels fdr_bh and scipy.stats.false_discovery_control to 1e-12", () => {
    for (const r of ref.data.rows) {
      const got = adjustPValues(r.p, "bh");
      got.forEach((v, i) => expect(relErr(v, r.bh_scipy[i]!)).toBeLessThanOrEqual(1e-12));
      if (r.bh) got.forEach((v, i) => expect(relErr(v, r.bh![i]!)).toBeLessThanOrEqual(1e-12));
    }
  });
});

describe("adjustPValues by hand and by definition", () => {
  it("adjustPValues([0.01, 0.04, 0.03]) = Holm [0.03, 0.06, 0.06], BH [0.03, 0.04, 0.04] (hand-checkable)", () => {
    // Holm: 3·0.01, max(2·0.03, 0.03), max(1·0.04, 0.06); BH: min over h ≥ i of 3p_(h)/h
    expect(adjustPValues([0.01, 0.04, 0.03], "holm").map((v) => +v.toFixed(12))).toEqual([0.03, 0.06, 0.06]);
    expect(adjustPValues([0.01, 0.04, 0.03], "bh").map((v) => +v.toFixed(12))).toEqual([0.03, 0.04, 0.04]);
    expect(adjustPValues([0.01, 0.04, 0.03], "none")).toEqual([0.01, 0.04, 0.03]);
  });

  it("empty input gives [], one p-value is unchanged, and the input is not mutated", () => {
    expect(adjustPValues([], "holm")).toEqual([]);
    expect(adjustPValues([0.2], "bh")).toEqual([0.2]);
    const frozen = Object.freeze([0.5, 0.01, 0.2]);
    adjustPValues(frozen, "holm");
    adjustPValues(frozen, "bh");
    expect(frozen).toEqual([0.5, 0.01, 0.2]);
  });

  it("rejects NaN, negative and >1 p-values, naming the position", () => {
    expect(() => adjustPValues([0.1, NaN], "holm")).toThrow(/position 1 is NaN/);
    expect(() => adjustPValues([-0.1], "bh")).toThrow(/between 0 and 1/);
    expect(() => adjustPValues([1.5], "none")).toThrow(RangeError);
    expect(() => adjustPValues([0.1], "bonferroni" as never)).toThrow(/unknown adjustment method "bonferroni"/);
  });

  const pv = fc.array(fc.oneof(fc.double({ min: 0, max: 1, noNaN: true }), fc.constantFrom(0.01, 0.05, 0.5, 1)), { minLength: 1, maxLength: 40 });

  it("adjusted p-values are ≥ raw, ≤ 1, monotone in the raw order, equal for ties, and permutation-equivariant (theorem)", () => {
    fc.assert(
      fc.property(pv, fc.constantFrom("holm" as const, "bh" as const), (p, method) => {
        const a = adjustPValues(p, method);
        p.forEach((v, i) => {
          expect(a[i]!).toBeGreaterThanOrEqual(v);
          expect(a[i]!).toBeLessThanOrEqual(1);
          p.forEach((w, j) => {
            if (v < w) expect(a[i]!).toBeLessThanOrEqual(a[j]!);
            if (v === w) expect(a[i]).toBe(a[j]);
          });
        });
        const rev = adjustPValues([...p].reverse(), method).reverse();
        expect(rev).toEqual(a);
      }),
      { numRuns: 200, seed: 8 },
    );
  });

  it("Holm adjusted p ≤ α reproduces the step-down procedure and BH the step-up procedure at every α (theorem)", () => {
    fc.assert(
      fc.property(pv, fc.double({ min: 0.001, max: 0.5, noNaN: true }), (p, alpha) => {
        const m = p.length;
        const sorted = [...p].sort((x, y) => x - y);
        // Holm 1979: reject p_(1..h−1) where h is the first index with p_(h) > α/(m − h + 1)
        let h = 0;
        while (h < m && sorted[h]! <= alpha / (m - h)) h++;
        const holmCut = h === 0 ? -Infinity : sorted[h - 1]!;
        // BH 1995: reject p_(1..h) with h the largest index with p_(h) ≤ hα/m
        let b = 0;
        for (let i = 0; i < m; i++) if (sorted[i]! <= ((i + 1) * alpha) / m) b = i + 1;
        const bhCut = b === 0 ? -Infinity : sorted[b - 1]!;
        const holm = adjustPValues(p, "holm");
        const bh = adjustPValues(p, "bh");
        p.forEach((v, i) => {
          // a tolerance of one ulp-ish covers (m − h)·p vs p ≤ α/(m − h) rounding
          if (Math.abs(holm[i]! - alpha) > 1e-12) expect(holm[i]! <= alpha).toBe(v <= holmCut);
          if (Math.abs(bh[i]! - alpha) > 1e-12) expect(bh[i]! <= alpha).toBe(v <= bhCut);
          expect(bh[i]!).toBeLessThanOrEqual(holm[i]! + 1e-15); // BH never more conservative than Holm
        });
      }),
      { numRuns: 300, seed: 9 },
    );
  });
});

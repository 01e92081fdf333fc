import { describe, expect, it } from "vitest";
import { groupRows } from "../../../src/audit/methods/groupRows.js";
import type { Column } from "../../../src/data/Table.js";

/** A nominal column with `nLevels` levels and the given codes (−1 missing). */
function nominal(name: string, codes: Int32Array, nLevels: number): Column {
  const levels = Array.from({ length: nLevels }, (_, i) => `l${i}`);
  return { name, type: "nominal", typeSource: "declared", codes, levels, values: Float64Array.from(codes, (c) => (c < 0 ? NaN : c)), missing: codes.filter((c) => c < 0).length };
}

/** Deterministic pseudo-random integers (a 32-bit linear congruential generator, common practice). */
function lcg(seed: number): (n: number) => number {
  let s = seed >>> 0;
  return (n) => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return Math.floor((s / 2 ** 32) * n);
  };
}

/** Reference grouping by string keys in order of first appearance (the definition, written out). */
function naive(cols: readonly Column[], rows: number, filter?: Uint8Array) {
  const ids = new Map<string, number>();
  const counts: number[] = [];
  const combos: number[][] = [];
  const rowGroup: number[] = [];
  for (let r = 0; r < rows; r++) {
    const codes = cols.map((c) => c.codes![r]!);
    if ((filter && !filter[r]) || codes.some((c) => c < 0)) {
      rowGroup.push(-1);
      continue;
    }
    const k = codes.join(",");
    let id = ids.get(k);
    if (id === undefined) {
      ids.set(k, (id = ids.size));
      counts.push(0);
      combos.push(codes);
    }
    counts[id]!++;
    rowGroup.push(id);
  }
  return { counts, combos, rowGroup };
}

describe("groupRows against the definition", () => {
  // few levels: one mixed-radix key per row; 3 × 300 levels (2.7e7 > 2^22 keys): the stepwise renumbering
  for (const [label, levels] of [["few levels", [2, 3, 5, 4]], ["many levels", [300, 300, 300]]] as const) {
    it(`groupRows with ${label} gives the groups, counts, codes and row groups of the definition, with and without a filter`, () => {
      const rows = 3000;
      const rnd = lcg(levels.length * 7919);
      const cols = levels.map((L, v) => nominal(`v${v}`, Int32Array.from({ length: rows }, () => (rnd(20) === 0 ? -1 : rnd(L))), L));
      const filter = Uint8Array.from({ length: rows }, () => (rnd(4) === 0 ? 0 : 1));
      for (const f of [undefined, filter]) {
        const g = groupRows(cols, rows, f);
        const ref = naive(cols, rows, f);
        expect(g.groups).toBe(ref.counts.length);
        expect(g.n).toBe(ref.rowGroup.filter((x) => x >= 0).length);
        expect([...g.counts]).toEqual(ref.counts);
        expect([...g.rowGroup]).toEqual(ref.rowGroup);
        cols.forEach((_, v) => expect([...g.codes[v]!]).toEqual(ref.combos.map((c) => c[v]!)));
        expect(g.levels).toEqual([...levels]);
      }
    });
  }

  it("groupRows with every row missing or filtered out has no groups; a single row is one group", () => {
    const a = nominal("a", Int32Array.from([0, -1, 1]), 2);
    const b = nominal("b", Int32Array.from([-1, 0, 1]), 2);
    const none = groupRows([a, b], 3, Uint8Array.from([1, 1, 0]));
    expect([none.n, none.groups, none.counts.length]).toEqual([0, 0, 0]);
    expect([...none.rowGroup]).toEqual([-1, -1, -1]);
    const one = groupRows([a, b], 3);
    expect([one.n, one.groups, ...one.counts]).toEqual([1, 1, 1]);
    expect([one.codes[0]![0], one.codes[1]![0]]).toEqual([1, 1]);
    expect([...one.rowGroup]).toEqual([-1, -1, 0]);
  });
});

/**
 * gramMatrix against exactly rounded sums: test/fixtures/gcm/gram.json (written by
 * `python3 scripts/gcm_reference.py`) holds seven generated columns of 700 rows (standard normal,
 * a 1e4 offset, a 1e-3 scale, 0/1, ones, cubes, negative uniforms), a sorted index of 333 rows, a
 * shuffled index of 517 rows, and their Gram matrices by math.fsum of the products.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { gramMatrix } from "../../src/stats/gramMatrix.js";

interface GramFixture {
  source: string;
  columns: number[][];
  index: number[];
  shuffled: number[];
  gram: number[][];
  gram_index: number[][];
  gram_shuffled: number[][];
  gram_first5: number[][];
  gram_one_row: number[][];
}
const ref = JSON.parse(readFileSync(new URL("../fixtures/gcm/gram.json", import.meta.url), "utf8")) as GramFixture;
const columns = ref.columns.map((c) => Float64Array.from(c));

/** Entry-wise agreement within tol of the Cauchy–Schwarz scale √(G_aa G_bb). */
function expectGram(got: Float64Array, want: number[][], tol: number, what: string): void {
  const p = want.length;
  expect(got.length, what).toBe(p * p);
  for (let a = 0; a < p; a++)
    for (let b = 0; b < p; b++) {
      const scale = Math.sqrt(want[a]![a]! * want[b]![b]!);
      expect(Math.abs(got[a * p + b]! - want[a]![b]!), `${what} (${a},${b})`).toBeLessThanOrEqual(tol * scale);
      expect(got[a * p + b], `${what} symmetric (${a},${b})`).toBe(got[b * p + a]);
    }
}

describe(`gramMatrix against math.fsum (${ref.source})`, () => {
  it("gramMatrix(columns) over all 700 rows (three tiles) matches the exactly rounded sums to 1e-13 of √(G_aa G_bb)", () => {
    expectGram(gramMatrix(columns), ref.gram, 1e-13, "all rows");
  });

  it("gramMatrix(columns, index) reads the indexed rows in place: a sorted index and a shuffled one", () => {
    expectGram(gramMatrix(columns, Int32Array.from(ref.index)), ref.gram_index, 1e-13, "sorted index");
    expectGram(gramMatrix(columns, Int32Array.from(ref.shuffled)), ref.gram_shuffled, 1e-13, "shuffled index");
  });

  it("five columns (padded to eight inside) give the leading 5 × 5 block", () => {
    expectGram(gramMatrix(columns.slice(0, 5)), ref.gram_first5, 1e-13, "five columns");
  });

  it("one row gives the products themselves, exactly", () => {
    const got = gramMatrix(columns, Int32Array.from([3]));
    const p = columns.length;
    for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) expect(got[a * p + b]).toBe(ref.gram_one_row[a]![b]); // a single product is exactly rounded
  });
});

describe("gramMatrix edges", () => {
  it("doc example: [[1, 2], [3, 4]] gives [5, 11, 11, 25]", () => {
    expect(Array.from(gramMatrix([Float64Array.from([1, 2]), Float64Array.from([3, 4])]))).toEqual([5, 11, 11, 25]);
  });

  it("no columns give an empty matrix; an empty index gives zeros", () => {
    expect(gramMatrix([]).length).toBe(0);
    expect(Array.from(gramMatrix(columns.slice(0, 2), new Int32Array(0)))).toEqual([0, 0, 0, 0]);
  });

  it("columns of different lengths throw RangeError naming both lengths", () => {
    expect(() => gramMatrix([new Float64Array(3), new Float64Array(4)])).toThrow(/lengths 3 and 4/);
    expect(() => gramMatrix([new Float64Array(3), new Float64Array(4)])).toThrow(RangeError);
  });

  it("does not modify its input columns (frozen copies compared)", () => {
    const before = columns.map((c) => Float64Array.from(c));
    gramMatrix(columns, Int32Array.from(ref.shuffled));
    columns.forEach((c, j) => expect(c).toEqual(before[j]));
  });
});

/**
 * Mid-ranks of columns, for rank-based (Spearman) methods.
 *
 * Terms: the *rank* of an observed value is its 1-based position in the sorted observed values;
 * *mid-ranks for ties* give every member of a group of equal values the mean of the positions
 * the group occupies (Kendall & Gibbons 1990, Rank Correlation Methods, 5th ed., §3.8). Missing
 * values (NaN), and rows outside the row filter, get NaN and take no rank. −0 and +0 tie.
 */
import type { Table } from "./Table.js";

/**
 * Mid-ranks of the observed values of `values` (1..m for m observed), NaN where missing or
 * where `rowFilter[i] === 0`. Cost: O(n log n) (a typed-array sort and a binary search per value).
 * @throws never
 * @example midRanks(new Float64Array([10, NaN, 30, 10])) // [1.5, NaN, 3, 1.5]
 */
export function midRanks(values: Float64Array, rowFilter?: Uint8Array): Float64Array {
  const n = values.length;
  let m = 0;
  for (let i = 0; i < n; i++) if (values[i] === values[i] && (!rowFilter || rowFilter[i] !== 0)) m++;
  const sorted = new Float64Array(m);
  let k = 0;
  for (let i = 0; i < n; i++) {
    const v = values[i]!;
    if (v === v && (!rowFilter || rowFilter[i] !== 0)) sorted[k++] = v;
  }
  sorted.sort();
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = values[i]!;
    if (v !== v || (rowFilter && rowFilter[i] === 0)) {
      out[i] = NaN;
      continue;
    }
    // first index with sorted[j] >= v, and first with sorted[j] > v
    let lo = 0;
    let hi = m;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (sorted[mid]! < v) lo = mid + 1;
      else hi = mid;
    }
    let lo2 = lo;
    let hi2 = m;
    while (lo2 < hi2) {
      const mid = (lo2 + hi2) >>> 1;
      if (sorted[mid]! <= v) lo2 = mid + 1;
      else hi2 = mid;
    }
    out[i] = (lo + 1 + lo2) / 2;
  }
  return out;
}

/**
 * Mid-ranks of the `values` of the named columns of a table (see {@link midRanks}), keyed by
 * name. Nominal columns are ranked by their level index, which has no order: callers rank
 * scored columns only. Cost: O(k · n log n) for k columns.
 * @throws Error when a name is not a column of the table (callers check names first)
 * @example rankColumns(table, ["age", "sbp"]).get("age")
 */
export function rankColumns(table: Table, names: readonly string[], rowFilter?: Uint8Array): Map<string, Float64Array> {
  const out = new Map<string, Float64Array>();
  for (const name of names) {
    const col = table.column(name);
    if (!col) throw new Error(`rankColumns: column "${name}" is not in the table; check the name`);
    out.set(name, midRanks(col.values, rowFilter));
  }
  return out;
}

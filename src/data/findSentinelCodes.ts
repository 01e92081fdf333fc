/**
 * Numeric codes for "unknown" left in a numeric column.
 *
 * Terms: the *sentinel values* are the codes that cohort files most often use for a missing
 * answer, -9, -99, -999, 99, 999, 9999 and 99999 (common practice). In a numeric column, let V
 * be the observed values that are not sentinel values, Q1 and Q3 the quartiles of V by linear
 * interpolation between order statistics (Hyndman & Fan 1996, definition 7, numpy's default) and
 * IQR = Q3 − Q1 their interquartile range. A sentinel value s that occurs in the column is *far*
 * from the other values when V has at least {@link MIN_OTHER_VALUES} values and
 * s > max V + IQR or s < min V − IQR (beyond the range of the other values by more than their
 * interquartile range). A far sentinel is very likely a code, not a measurement.
 */
import { quantileSortedType7 } from "../stats/flexibleBasis.js";
import { magnitudesOf } from "../stats/powerOfTwoScale.js";

export const SENTINEL_VALUES: readonly number[] = [-9, -99, -999, 99, 999, 9999, 99999];
/** Fewest other observed values for quartiles worth comparing with. */
export const MIN_OTHER_VALUES = 5;

/** A sentinel value far from a column's other values. */
export interface SentinelFinding {
  value: number;
  /** Cells holding it. */
  cells: number;
  /** Range and interquartile range of the other values (V in the module comment). */
  min: number;
  max: number;
  iqr: number;
}

/**
 * The sentinel values that lie far from the other values of `values[0, n)` (NaN is missing), by
 * the rule in the module comment, in the order of {@link SENTINEL_VALUES}; `range` is the finite
 * range of those values when the caller has it (see magnitudesOf). A far value is an
 * extreme of the column, so a column whose minimum and maximum are not sentinel values costs one
 * pass; otherwise O(n log n) for the quartiles.
 * Source: Hyndman, R. J. & Fan, Y. (1996), "Sample quantiles in statistical packages",
 * The American Statistician 50:361–365 (definition 7).
 * @example findSentinelCodes(Float64Array.of(20, 25, 31, 40, 44, 999)) // [{ value: 999, cells: 1, min: 20, max: 44, iqr: 15 }]
 */
export function findSentinelCodes(values: ArrayLike<number>, n = values.length, range: { lo: number; hi: number } = magnitudesOf(values, n)): SentinelFinding[] {
  const { lo, hi } = range;
  if (!SENTINEL_VALUES.includes(lo) && !SENTINEL_VALUES.includes(hi)) return [];
  const counts = new Map<number, number>();
  const others: number[] = [];
  for (let i = 0; i < n; i++) {
    const v = values[i]!;
    if (v !== v) continue;
    if (SENTINEL_VALUES.includes(v)) counts.set(v, (counts.get(v) ?? 0) + 1);
    else others.push(v);
  }
  if (others.length < MIN_OTHER_VALUES) return [];
  const sorted = Float64Array.from(others).sort();
  const min = sorted[0]!;
  const max = sorted[sorted.length - 1]!;
  const iqr = quantileSortedType7(sorted, 0.75) - quantileSortedType7(sorted, 0.25);
  const out: SentinelFinding[] = [];
  for (const value of SENTINEL_VALUES) {
    const cells = counts.get(value);
    if (cells !== undefined && (value > max + iqr || value < min - iqr)) out.push({ value, cells, min, max, iqr });
  }
  return out;
}

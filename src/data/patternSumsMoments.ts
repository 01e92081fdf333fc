/**
 * Pattern moments (`Moments.ts`) from per-pattern sums computed elsewhere, such as the rows of
 * the SQL query of `patternMomentsSql`: the shape the audit reads moments through, without rows.
 *
 * Terms: each variable has one design column, its *score* (a continuous variable's value, a
 * binary variable's numeric level); a *pattern* is the set of variables observed in a row. The
 * moments of any set of variables over the rows complete on them are the sums of the patterns
 * that observe all of them (`completeCaseMoments`): mean = shift + S/n and the Bessel-corrected
 * covariance (C − S Sᵀ/n)/(n − 1) on the shifted values (Chan, Golub & LeVeque 1983, the
 * shifted-data algorithm). Level indicators, ranks and basis terms are not held: only methods
 * that read the scores' moments can use these (`pearson-partial`).
 */
import { completeCaseMoments, type PatternSums } from "./patternMomentsSql.js";
import type { DesignColumn, IndexedDesignColumn, Moments, PatternMoments } from "./Moments.js";

/**
 * The pattern moments of the variables `names` (in the order of the sums' columns) from their
 * per-pattern sums, each column shifted by `shifts[j]` as the sums were.
 * Cost: O(1) to build; `momentsFor` of d variables O(P · d²) for P patterns.
 * @throws RangeError when the sums do not have one column per name
 * @example patternSumsMoments(["a", "b"], readPatternSums(rows, 2), [0, 0]).momentsFor(["a", "b"]).cov
 */
export function patternSumsMoments(names: readonly string[], patterns: readonly PatternSums[], shifts: readonly number[]): PatternMoments {
  const k = names.length;
  for (const p of patterns) if (p.sums.length !== k) throw new RangeError(`patternSumsMoments: a pattern has ${p.sums.length} columns for ${k} names`);
  const index = new Map(names.map((v, j) => [v, j]));
  const design: DesignColumn[] = names.map((v) => ({ name: v, source: v, kind: "score" }));
  const indexOf = (v: string): number => {
    const j = index.get(v);
    if (j === undefined) throw new RangeError(`the pattern moments have no variable "${v}"`);
    return j;
  };
  const momentsForColumns = (indices: readonly number[]): Moments => {
    const m = completeCaseMoments(patterns, indices, shifts);
    return { n: m.n, design: indices.map((j) => ({ ...design[j]! })), means: m.means, cov: m.cov };
  };
  const list = patterns.map((p) => ({ observed: names.filter((_, j) => p.observed[j]), rows: p.rows }));
  return {
    patterns: patterns.length,
    completeRows: patterns.filter((p) => p.observed.every(Boolean)).reduce((s, p) => s + p.rows, 0),
    patternList: () => list,
    momentsFor: (variables) => momentsForColumns(variables.map(indexOf)),
    columnsOf: (variable): readonly IndexedDesignColumn[] => {
      const j = index.get(variable);
      return j === undefined ? [] : [{ index: j, column: design[j]! }];
    },
    momentsForColumns,
  };
}

/**
 * The data of an audit from summary statistics: a covariance (or correlation) matrix of m
 * variables and the number of complete cases n it was computed on, in the two shapes the audit
 * reads data through.
 *
 * Terms. The *moments* are one complete-data missing-data pattern of n rows whose design columns
 * are the variables' scores and whose Bessel-corrected covariance is the matrix (a correlation
 * matrix is the covariance of the standardised variables, which leaves every partial correlation
 * unchanged). The means are unknown (NaN): no moment-based test of a claim reads them. The
 * *table description* lists the variables with their types (declared, or continuous), n rows and
 * no row values (empty columns): it serves methods that read types, never values. Only methods
 * that work from the moments of the scores can run on it (`pearson-partial`); the audit decides
 * which claims they can test (`summaryUntestableReason` in `audit/runAudit.ts`).
 */
import type { DesignColumn, IndexedDesignColumn, Moments, PatternMoments } from "./Moments.js";
import type { Column, Table, VariableType } from "./Table.js";

/** Where the summary statistics came from, as the audit result's `data.source` records it. */
export interface SummarySource {
  /** A correlation or covariance matrix, or site summaries pooled (`audit/poolSiteSummaries.ts`). */
  kind: "correlations" | "covariance" | "sites";
  /** Number of complete cases the matrix was computed on; for sites, the rows of all sites. */
  n: number;
  /** For sites: each site's name, summary file and rows. */
  sites?: { site: string; file?: string; n: number }[];
  /** The file of standard deviations that turned correlations into covariances, if any. */
  sd_file?: string;
}

export interface SummaryData {
  table: Table;
  moments: PatternMoments;
}

/**
 * Build the moments and the table description of a matrix (see the module comment).
 * `names` are the variables in matrix order, `cov` the m × m symmetric matrix, `n` the number of
 * complete cases, `types` the declared types (others continuous).
 * Cost: O(m²) to build; `momentsFor` of d variables costs O(d²).
 * @throws RangeError when the sizes disagree or n is not a whole number above 0
 * @example createSummaryData(["a", "b"], [1, 0.3, 0.3, 1], 100, {}, "r.csv").moments.momentsFor(["b", "a"]).cov // [1, 0.3, 0.3, 1]
 */
export function createSummaryData(names: readonly string[], cov: ArrayLike<number>, n: number, types: Readonly<Record<string, VariableType>>, file?: string): SummaryData {
  const m = names.length;
  if (cov.length !== m * m) throw new RangeError(`createSummaryData: ${m} names need ${m * m} matrix cells, got ${cov.length}`);
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`createSummaryData: n must be a whole number above 0, got ${n}`);
  const index = new Map(names.map((v, i) => [v, i]));
  const design: DesignColumn[] = names.map((v) => ({ name: v, source: v, kind: "score" }));
  const columns: Column[] = names.map((name) => ({
    name,
    type: types[name] ?? "continuous",
    typeSource: types[name] !== undefined ? "declared" : "inferred",
    values: new Float64Array(0),
    missing: 0,
  }));
  const byName = new Map(columns.map((c) => [c.name, c]));
  const table: Table = { ...(file !== undefined ? { file } : {}), rows: n, columns, warnings: [], column: (name) => byName.get(name) };
  const momentsForColumns = (indices: readonly number[]): Moments => {
    const d = indices.length;
    const out = new Float64Array(d * d);
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) out[a * d + b] = cov[indices[a]! * m + indices[b]!]!;
    return { n, design: indices.map((i) => ({ ...design[i]! })), means: new Float64Array(d).fill(NaN), cov: out };
  };
  const indexOf = (v: string): number => {
    const i = index.get(v);
    if (i === undefined) throw new RangeError(`the summary statistics have no variable "${v}"`);
    return i;
  };
  const moments: PatternMoments = {
    patterns: 1,
    completeRows: n,
    patternList: () => [{ observed: [...names], rows: n }],
    momentsFor: (variables) => momentsForColumns(variables.map(indexOf)),
    columnsOf: (variable): readonly IndexedDesignColumn[] => {
      const i = index.get(variable);
      return i === undefined ? [] : [{ index: i, column: design[i]! }];
    },
    momentsForColumns,
  };
  return { table, moments };
}

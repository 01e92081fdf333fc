/**
 * Fisher's combination of independent p-values, as used in Shipley's test of a causal graph.
 *
 * Terms. For k independent tests with p-values p_1 … p_k, all of whose null hypotheses hold,
 * C = −2 Σ ln p_i follows a chi-square distribution on 2k degrees of freedom (Fisher 1925,
 * Statistical Methods for Research Workers, §21.1). Shipley (2000, Structural Equation
 * Modeling 7(2):206–218) applies it to the independence claims of a basis set of a directed
 * acyclic graph: a small p says the data contradict the graph as a whole.
 */
import { logChiSquareUpper, regularizedGammaQ } from "./pvalues.js";

export interface FisherCResult {
  /** C = −2 Σ ln p_i. */
  statistic: number;
  /** 2k. */
  df: number;
  /** P(χ²(2k) ≥ C), never exactly 0 (Number.MIN_VALUE when it underflows; see log_p). */
  p: number;
  /** Natural log of p, exact where p underflows. */
  log_p: number;
}

/**
 * Fisher's C statistic (Shipley's test): C = −2 Σ ln p_i on 2k df and its upper-tail p-value.
 * Takes natural logs of the p-values so that claims whose p-value underflowed still count in
 * full. Cost: O(k).
 * Sources: Fisher (1925), Statistical Methods for Research Workers, §21.1; Shipley (2000),
 * Structural Equation Modeling 7(2):206–218.
 * @throws {RangeError} when the list is empty or a log p-value is NaN or positive
 * @example fisherC([Math.log(0.05), Math.log(0.5)]) // { statistic ≈ 7.3778, df: 4, p ≈ 0.11722 }
 */
export function fisherC(logPs: readonly number[]): FisherCResult {
  if (logPs.length === 0) throw new RangeError("no p-values to combine; Fisher's C needs at least one test");
  let sum = 0;
  logPs.forEach((lp, idx) => {
    if (!(lp <= 0)) throw new RangeError(`log p-value at position ${idx} is ${lp}; pass natural logs of p-values (≤ 0)`);
    sum += lp;
  });
  const statistic = -2 * sum;
  const df = 2 * logPs.length;
  const log_p = logChiSquareUpper(statistic, df);
  // regularizedGammaQ rather than chiSquareUpper: accurate for the large df of many claims
  const p0 = regularizedGammaQ(df / 2, statistic / 2);
  const p = p0 > 1e-280 ? p0 : Math.max(Math.exp(log_p), Number.MIN_VALUE);
  return { statistic: statistic === 0 ? 0 : statistic, df, p, log_p };
}

/**
 * The detectable effect of a tested claim: the smallest |effect|, on the common effect scale,
 * that the claim's own test would detect with the given power at the level the claim faced
 * after adjustment (see `stats/power.ts`).
 *
 * The level: α without adjustment; α/k, the smallest threshold either adjustment can set, for
 * Holm and for Benjamini–Hochberg (a conservative floor: the claim may in fact have faced a larger
 * step). The test's kind: a partial correlation (pearson-partial, and gcm / gcm-rank with one
 * residual product) uses Fisher's z on its t df; every other test (chi-square, G², likelihood
 * ratio, the linear-by-linear statistic, gcm with a nominal side) the noncentral chi-square on its
 * df with noncentrality −n·ln(1 − e²). A permutation p-value is judged by its asymptotic twin.
 */
import { detectableChiSquareEffect, detectableCorrelation } from "../stats/power.js";
import type { AuditSettings, TestOutcome } from "./types.js";

/** Power of the detectable effect when none is asked for. */
export const DEFAULT_POWER = 0.8;

/** The level a claim faced after adjustment, as the detectable effect uses it (α, or α/k). */
export function detectableAlpha(settings: Pick<AuditSettings, "alpha" | "adjust">, k: number): number {
  return settings.adjust === "none" ? settings.alpha : settings.alpha / Math.max(1, k);
}

/** Whether a test's effect is a partial correlation judged by Fisher's z on its t df. */
export function isCorrelationTest(o: Pick<TestOutcome, "test" | "details">): boolean {
  if (o.test === "pearson-partial") return true;
  return (o.test === "gcm" || o.test === "gcm-rank") && typeof o.details?.r === "number";
}

/**
 * The detectable effect of one tested claim (see the module comment); undefined when the test has
 * too few df or rows for the approximation. Cost: O(1) for correlations, about 60 noncentral
 * chi-square tails otherwise.
 * @example detectableEffect({ test: "pearson-partial", n: 1000, df: 998 }, 0.05, 0.8) // ≈ 0.0885
 */
export function detectableEffect(o: Pick<TestOutcome, "test" | "n" | "df" | "details">, alpha: number, power: number): number | undefined {
  if (isCorrelationTest(o)) return o.df >= 2 ? detectableCorrelation(o.df, alpha, power) : undefined;
  return o.df > 0 && o.n >= 1 ? detectableChiSquareEffect(o.df, o.n, alpha, power) : undefined;
}

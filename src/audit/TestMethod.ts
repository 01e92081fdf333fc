/**
 * A test method is one module that plugs into the audit: it says which claims it can test
 * and returns a `TestOutcome` (or an untestable reason) for one claim. Register it in
 * `src/audit/methods/index.ts`.
 */
import type { Table, VariableType } from "../data/Table.js";
import type { PatternMoments } from "../data/Moments.js";
import type { Claim, TestName, TestOutcome } from "./types.js";
import type { MonteCarloRequest, MonteCarloStream } from "../stats/monteCarloDecision.js";

export interface TestContext {
  table: Table;
  /**
   * Pattern moments of the scores (for moment-based methods), with the further columns the
   * audit's claims need: indicators of ordinal members of conditioning sets, flexible basis terms
   * of continuous members and mid-ranks (see `momentExpansions.ts`).
   */
  moments: PatternMoments;
  /** When set, only these rows may be used (listwise deletion); otherwise complete cases per claim. */
  rowFilter?: Uint8Array;
  /**
   * Units per row, when the data give one row per cell with a count (`--counts`): a row stands for
   * that many units, and a row of weight 0 for none. Only the table methods (`stratified-chisq`,
   * `linear-by-linear`) read it; `runAuditOnCounts` runs an audit with weights only when every
   * claim takes one of them, and the others see the table expanded to one row per unit instead.
   */
  weights?: Float64Array;
  /** Seed for Monte-Carlo p-values; a method derives its own stream from (seed, claim). */
  seed: number;
  /** Cap on the Monte-Carlo draws of a claim, and permutation p-values forced (--permutations), if given. */
  permutations?: number;
  /**
   * How Monte-Carlo p-values are drawn (`stats/monteCarloDecision.ts`): the resampling risk, the
   * claims sharing it, the band of thresholds the p can face, and, when the audit asks a claim for
   * more, the exact draws. Absent: risk 1e-3 for this claim alone, band [decisionFloor, 0.05].
   */
  monteCarlo?: MonteCarloRequest;
  /**
   * Monte-Carlo streams a method may keep between runs of the same claim on this thread, by the
   * claim's stream key, so that a re-run with more draws goes on where the last one stopped
   * (`runMonteCarloKept`). Absent on helper threads: methods then draw afresh, with the same result.
   */
  monteCarloStreams?: Map<string, MonteCarloStream>;
  /**
   * The smallest threshold a claim's unadjusted p-value can be compared with once adjusted for
   * the number of claims (alpha/k for Holm and Benjamini–Hochberg with k claims, alpha without
   * adjustment). Monte-Carlo methods draw enough samples that their p-value can fall below it.
   * Absent: 0.05.
   */
  decisionFloor?: number;
  /**
   * The significance level of the verdicts (--alpha). Every method reports its interval at
   * confidence 1 − alpha, so that the interval excludes 0 exactly when the unadjusted p < alpha.
   * Absent: 0.05.
   */
  alpha?: number;
}

export interface ClaimTypes {
  x: VariableType;
  y: VariableType;
  given: VariableType[];
}

export type MethodResult = { ok: true; outcome: TestOutcome } | { ok: false; reason: string };

export interface TestMethod {
  /** The `test` name written to the result. */
  readonly name: TestName;
  /** Whether the method can test a claim with these variable types. */
  accepts(types: ClaimTypes): boolean;
  run(claim: Claim, ctx: TestContext): MethodResult;
  /**
   * Rough work of a claim that reads the rows rather than the moments (rows × operations per
   * row; only its order of magnitude matters), or 0 (or no such function) when the method works
   * from the moments alone. Claims with work may be tested on a helper thread, whose context has
   * no moments, so a method must not touch `ctx.moments` for them.
   */
  rowWork?(claim: Claim, table: Table): number;
}

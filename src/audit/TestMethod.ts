/**
 * A test method is one module that plugs into the audit: it says which claims it can test
 * and returns a `TestOutcome` (or an untestable reason) for one claim. Register it in
 * `src/audit/methods/index.ts`.
 */
import type { Table, VariableType } from "../data/Table.js";
import type { PatternMoments } from "../data/Moments.js";
import type { Claim, TestName, TestOutcome } from "./types.js";

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
  /** Seed for Monte-Carlo p-values; a method derives its own stream from (seed, claim). */
  seed: number;
  /** Monte-Carlo permutations forced by the user (--permutations), if any. */
  permutations?: number;
  /**
   * The smallest threshold a claim's unadjusted p-value can be compared with once adjusted for
   * the number of claims (alpha/k for Holm and Benjamini–Hochberg with k claims, alpha without
   * adjustment). Monte-Carlo methods draw enough samples that their p-value can fall below it.
   * Absent: 0.05.
   */
  decisionFloor?: number;
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

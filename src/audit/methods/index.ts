/**
 * The registry of test methods and the rule that picks one per claim.
 *
 * `auto` (default):
 * - x, y and every member of the conditioning set categorical (binary, ordinal, nominal)
 *   → stratified chi-square (ordinal levels treated as categories);
 * - otherwise x and y both scored (continuous, binary, ordinal) → Pearson partial correlation
 *   (nominal members of the set enter as dummy columns);
 * - otherwise (a nominal x or y beside continuous variables) → regression likelihood-ratio test.
 * A forced method (`linear`, `rank`, `chisq`, `regression`) is used for every claim it accepts;
 * the others fall back to `auto`.
 */
import type { AuditSettings } from "../types.js";
import type { ClaimTypes, TestMethod } from "../TestMethod.js";
import { pearsonPartial } from "./pearsonPartial.js";
import { spearmanPartial } from "./spearmanPartial.js";
import { stratifiedChisq } from "./stratifiedChisq.js";
import { regressionLr } from "./regressionLr.js";

export const METHODS: readonly TestMethod[] = [pearsonPartial, spearmanPartial, stratifiedChisq, regressionLr];

const FORCED: Record<Exclude<AuditSettings["method"], "auto">, TestMethod> = {
  linear: pearsonPartial,
  rank: spearmanPartial,
  chisq: stratifiedChisq,
  regression: regressionLr,
};

/** The method that tests a claim with these variable types under the given setting. */
export function chooseMethod(setting: AuditSettings["method"], types: ClaimTypes): TestMethod {
  if (setting !== "auto") {
    const forced = FORCED[setting];
    if (forced.accepts(types)) return forced;
  }
  if (stratifiedChisq.accepts(types)) return stratifiedChisq;
  if (pearsonPartial.accepts(types)) return pearsonPartial;
  return regressionLr;
}

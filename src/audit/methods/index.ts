/**
 * The registry of test methods and the rule that picks one per claim.
 *
 * `auto` (default):
 * - x and y ordinal and every member of the conditioning set categorical → the stratified
 *   linear-by-linear test (generalised Cochran–Mantel–Haenszel correlation statistic: one df for
 *   a trend in the scores, valid in sparse strata);
 * - otherwise x, y and every member of the conditioning set categorical (binary, ordinal,
 *   nominal) → stratified chi-square (the exact stratification needs no model of S; levels are
 *   treated as categories);
 * - otherwise (a continuous variable anywhere in the claim) → the generalised covariance measure
 *   with flexible adjustment (`gcm`): categorical members of S as indicators of their levels,
 *   continuous ones by splines whose flexibility is chosen by cross-validation, each side by
 *   least squares on that adjustment, and a variance that does not assume equal variances.
 * A forced method (`linear` → Pearson partial correlation, `rank` → the generalised covariance
 * measure on mid-ranks, `chisq`, `regression`) is used for every claim it accepts; the others
 * fall back to `auto`.
 */
import type { AuditSettings } from "../types.js";
import type { ClaimTypes, TestMethod } from "../TestMethod.js";
import { pearsonPartial } from "./pearsonPartial.js";
import { stratifiedChisq } from "./stratifiedChisq.js";
import { regressionLr } from "./regressionLr.js";
import { gcm, gcmRank } from "./gcm.js";
import { linearByLinear } from "./linearByLinear.js";

export const METHODS: readonly TestMethod[] = [gcm, gcmRank, pearsonPartial, linearByLinear, stratifiedChisq, regressionLr];

const FORCED: Record<Exclude<AuditSettings["method"], "auto">, TestMethod> = {
  linear: pearsonPartial,
  rank: gcmRank,
  chisq: stratifiedChisq,
  regression: regressionLr,
};

/** The method that tests a claim with these variable types under the given setting. */
export function chooseMethod(setting: AuditSettings["method"], types: ClaimTypes): TestMethod {
  if (setting !== "auto") {
    const forced = FORCED[setting];
    if (forced.accepts(types)) return forced;
  }
  if (linearByLinear.accepts(types)) return linearByLinear;
  if (stratifiedChisq.accepts(types)) return stratifiedChisq;
  return gcm;
}

/**
 * Test method "spearman-partial": the partial-correlation t test on mid-ranks.
 *
 * Terms. Each variable is replaced by its mid-ranks (tied values share the mean of the ranks
 * they occupy) and the Pearson partial correlation of the ranks is computed and tested as in
 * "pearson-partial": a partial Spearman correlation, robust to monotone transformations and
 * outliers. The t reference distribution and Fisher's z interval are large-sample
 * approximations for ranks (Kendall & Gibbons 1990, Rank Correlation Methods, 5th ed., ch. 9;
 * Conover 1999, Practical Nonparametric Statistics, 3rd ed., §5.4).
 */
import type { Claim } from "../types.js";
import type { MethodResult, TestContext, TestMethod } from "../TestMethod.js";
import { acceptsScoredPair, runPartialCorrelation } from "./pearsonPartial.js";

/**
 * Spearman partial correlation test method ("spearman-partial"): accepts claims whose x and y
 * are continuous, binary or ordinal and runs the partial-correlation t test on the moments of
 * the mid-ranks (`ctx.rankMoments()`). Cost: as `runPartialCorrelation`, after the ranks are built.
 * Source: Kendall & Gibbons (1990), Rank Correlation Methods, 5th ed., ch. 9.
 * @example spearmanPartial.run({ x: "a", y: "b", given: [] }, ctx) // { ok: true, outcome: { test: "spearman-partial", ... } }
 */
export const spearmanPartial: TestMethod = {
  name: "spearman-partial",
  accepts: acceptsScoredPair,
  run(claim: Claim, ctx: TestContext): MethodResult {
    return runPartialCorrelation("spearman-partial", ctx.rankMoments(), claim);
  },
};

/**
 * The pooled run's sentence names only the rules its claims used, each with its count (so the
 * terminal line and the methods paragraph are true for the run).
 */
import { describe, expect, it } from "vitest";
import { pooledRulesText } from "../../src/report/pooledRules.js";

describe("pooledRulesText", () => {
  it("counts each rule the claims used, score-pooled regression claims apart from Gaussian-LR ones, and names no other rule", () => {
    // pins: the sentence used to name the score test and the Gaussian LR together whichever ran
    const text = pooledRulesText([
      { test: "regression-lr", details: { statistic_kind: "efficient score (Rao), site-specific nuisance parameters" } },
      { test: "regression-lr", details: { model: "linear" } },
      { test: "regression-lr", details: { model: "linear" } },
      { test: "stratified-chisq", details: {} },
    ]);
    expect(text).toBe(
      "1 claim by the pooled efficient score test of their logistic or multinomial model (nuisance parameters fitted at each site); " +
        "2 claims by the Gaussian likelihood ratio of the linear model given the set and site, from the summed cross-products; " +
        "1 claim by the stratified test on every site's strata",
    );
    expect(pooledRulesText([{ test: "gcm", details: {} }])).not.toContain("partial correlation");
    expect(pooledRulesText([])).toBe("");
  });
});

/**
 * How an audit pooled from site summaries tested its claims, in words, for the terminal text and
 * the methods paragraph: one phrase per test that the pooled claims used, so that the sentence
 * names only the rules the run applied (`audit/poolSiteSummaries.ts`).
 */
import type { TestedClaim } from "../audit/types.js";

const RULES: ReadonlyArray<[test: string, phrase: (count: string) => string]> = [
  ["gcm", (c) => `${c} by the flexible test (generalised covariance measure) of the stacked residual products, each site fitting the adjustment for the conditioning set to its own rows (the set interacted with site)`],
  ["gcm-rank", (c) => `${c} by the flexible test on each site's mid-ranks, each site fitting the adjustment to its own rows`],
  ["pearson-partial", (c) => `${c} by the partial correlation given the conditioning set and site, from the sum of the sites' within-site cross-products`],
  ["regression-lr score", (c) => `${c} by the pooled efficient score test of their logistic or multinomial model (nuisance parameters fitted at each site)`],
  ["regression-lr", (c) => `${c} by the Gaussian likelihood ratio of the linear model given the set and site, from the summed cross-products`],
  ["stratified-chisq", (c) => `${c} by the stratified test on every site's strata`],
];

/**
 * The pooling rules the claims used, e.g. "3 claims by the flexible test …; 2 claims by the
 * stratified test on every site's strata"; "" when no claim was tested. Cost: O(claims).
 * @example pooledRulesText([{ test: "gcm", … }]) // "1 claim by the flexible test (generalised covariance measure) …"
 */
export function pooledRulesText(claims: readonly Pick<TestedClaim, "test" | "details">[]): string {
  const counts = new Map<string, number>();
  for (const c of claims) {
    // regression claims pooled by their score (logistic, multinomial) are a rule of their own
    const rule = c.test === "regression-lr" && c.details?.statistic_kind !== undefined ? "regression-lr score" : c.test;
    counts.set(rule, (counts.get(rule) ?? 0) + 1);
  }
  return RULES.filter(([test]) => counts.has(test))
    .map(([test, phrase]) => {
      const k = counts.get(test)!;
      return phrase(`${k} claim${k === 1 ? "" : "s"}`);
    })
    .join("; ");
}

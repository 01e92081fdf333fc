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
  ["regression-lr", (c) => `${c} by a regression test: the pooled efficient score test of the logistic or multinomial model (nuisance parameters fitted at each site), or the Gaussian likelihood ratio given the set and site from the summed cross-products`],
  ["stratified-chisq", (c) => `${c} by the stratified test on every site's strata`],
];

/**
 * The pooling rules the claims used, e.g. "3 claims by the flexible test …; 2 claims by the
 * stratified test on every site's strata"; "" when no claim was tested. Cost: O(claims).
 * @example pooledRulesText([{ test: "gcm", … }]) // "1 claim by the flexible test (generalised covariance measure) …"
 */
export function pooledRulesText(claims: readonly Pick<TestedClaim, "test">[]): string {
  const counts = new Map<string, number>();
  for (const c of claims) counts.set(c.test, (counts.get(c.test) ?? 0) + 1);
  return RULES.filter(([test]) => counts.has(test))
    .map(([test, phrase]) => {
      const k = counts.get(test)!;
      return phrase(`${k} claim${k === 1 ? "" : "s"}`);
    })
    .join("; ");
}

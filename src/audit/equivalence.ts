/**
 * Equivalence: which omitted arrows the data support, not merely fail to contradict.
 *
 * Terms: the *margin* m (`--margin`, on the effect scale) is the largest |effect| the user would
 * call negligible. A claim is *supported* when two one-sided tests at level α both reject an
 * effect of at least m (Schuirmann 1987, J. Pharmacokin. Biopharm. 15:657–680): for a signed
 * effect, when its (1 − 2α) interval (90% at α = 0.05) lies inside (−m, m); for an effect that is
 * never negative (tests on several df), when the upper end of its one-sided (1 − α) interval (the
 * upper end of the same two-sided (1 − 2α) interval) is below m. Otherwise it is *inconclusive*.
 * The interval is the claim's own construction at that level (`audit/effectInterval.ts`).
 * The verdict keeps its meaning, so a claim can be contradicted and supported at once: a real but
 * negligible dependence. The four *groups* a report uses: contradicted; contradicted but within
 * the margin; supported (equivalent); inconclusive (neither shown).
 */
import { effectIntervalAt } from "./effectInterval.js";
import type { TestedClaim } from "./types.js";

/** Margin of equivalence when none is asked for. */
export const DEFAULT_MARGIN = 0.1;

export type Equivalence = "supported" | "inconclusive";
export type ClaimGroup = "contradicted" | "contradicted_within_margin" | "supported" | "inconclusive";

/** The words a report uses for each group. */
export const GROUP_WORDS: Readonly<Record<ClaimGroup, string>> = {
  contradicted: "contradicted",
  contradicted_within_margin: "contradicted but within the margin",
  supported: "supported (equivalent)",
  inconclusive: "inconclusive (neither shown)",
};

/**
 * A claim's equivalence test (see the module comment), with the (1 − 2α) interval it used;
 * inconclusive without an interval (numbers missing). Cost: one interval construction.
 * @example equivalenceOf(claim, 0.05, 0.1) // { equivalence: "supported", interval: [-0.04, 0.03] }
 */
export function equivalenceOf(claim: Parameters<typeof effectIntervalAt>[0], alpha: number, margin: number): { equivalence: Equivalence; interval?: [number, number] } {
  if (!(alpha > 0 && alpha < 0.5)) throw new RangeError(`alpha must be in (0, 0.5) for an equivalence test, got ${alpha}`);
  if (!(margin > 0 && margin <= 1)) throw new RangeError(`the margin must be in (0, 1], got ${margin}`);
  const interval = effectIntervalAt(claim, 1 - 2 * alpha);
  if (!interval) return { equivalence: "inconclusive" };
  const inside = interval[0] > -margin && interval[1] < margin;
  return { equivalence: inside ? "supported" : "inconclusive", interval };
}

/** The group of a tested claim: its verdict crossed with its equivalence. */
export function claimGroup(c: Pick<TestedClaim, "verdict" | "equivalence">): ClaimGroup {
  const supported = c.equivalence === "supported";
  if (c.verdict === "contradicted") return supported ? "contradicted_within_margin" : "contradicted";
  return supported ? "supported" : "inconclusive";
}

/** How many claims fall in each group. */
export function groupCounts(claims: readonly Pick<TestedClaim, "verdict" | "equivalence">[]): Record<ClaimGroup, number> {
  const out: Record<ClaimGroup, number> = { contradicted: 0, contradicted_within_margin: 0, supported: 0, inconclusive: 0 };
  for (const c of claims) out[claimGroup(c)]++;
  return out;
}

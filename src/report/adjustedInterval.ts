/**
 * The interval of a claim's effect at the level its multiple-testing adjustment used, to stand
 * beside the unadjusted interval in reports.
 *
 * Terms. A claim's *interval* (`ci`) is unadjusted, at confidence 1 − α (α = `--alpha`): every
 * test's interval inverts the test, so it excludes 0 exactly when the unadjusted p is below α.
 * Its *verdict* uses the adjusted p-value.
 * Holm's step-down method compares the j-th smallest of k p-values with α/(k − j + 1) (Holm 1979,
 * Scand. J. Statist. 6:65–70), and Benjamini–Hochberg's step-up method with jα/k (Benjamini &
 * Hochberg 1995, JRSS B 57:289–300); in both the adjusted p-value is the unadjusted one times the
 * inverse of that fraction of α, made monotone. So the *adjustment level* of a claim is
 * a = α·p/p_adjusted (exactly the threshold above when the monotone step changes nothing), and
 * the *adjusted interval* is the claim's interval at confidence 1 − a: it excludes 0 exactly
 * when p < a, that is when the adjusted p-value is below α (the same test inverted at another
 * level), which is when the verdict is "contradicted" unless `--min-effect` overrules it.
 *
 * Each test's interval is rebuilt from the claim's own numbers with the construction its method
 * used (see src/audit/methods/), at the new level; at level 1 − α it reproduces the stored `ci`.
 */
import type { TestedClaim } from "../audit/types.js";
import { effectIntervalAt } from "../audit/effectInterval.js";

export { effectIntervalAt };

/**
 * The adjustment level a = α·p/p_adjusted of a claim (see the module comment), capped at α;
 * undefined when either p-value is not a positive finite number. Cost: O(1).
 * @example adjustmentLevel({ p: 0.001, p_adjusted: 0.034 }, 0.05) // 0.05/34: Holm's first threshold among 34 claims
 */
export function adjustmentLevel(claim: Pick<TestedClaim, "p" | "p_adjusted" | "log_p">, alpha: number): number | undefined {
  const { p, p_adjusted: pa } = claim;
  if (!(p > 0) || !(pa > 0) || !Number.isFinite(pa)) return undefined;
  const ratio = Math.min(1, p / pa);
  return alpha * ratio;
}

/**
 * The adjusted interval of a claim: {@link effectIntervalAt} at confidence 1 − α·p/p_adjusted,
 * with that level. Under `--adjust none` the level is 1 − α. Undefined when the level or the
 * interval cannot be computed. Cost: as {@link effectIntervalAt}.
 *
 * @example adjustedInterval(claim, 0.05) // { level: 0.9985…, ci: [-0.21, -0.11] }
 */
export function adjustedInterval(claim: TestedClaim, alpha: number): { level: number; ci: [number, number] } | undefined {
  const a = adjustmentLevel(claim, alpha);
  if (a === undefined) return undefined;
  const level = 1 - a;
  const ci = effectIntervalAt(claim, level);
  return ci ? { level, ci } : undefined;
}

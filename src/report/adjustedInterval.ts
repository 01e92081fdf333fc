/**
 * The interval of a claim's effect at the level its multiple-testing adjustment used, to stand
 * beside the unadjusted 95% interval in reports.
 *
 * Terms. A claim's *95% interval* is unadjusted: it excludes 0 (for the tests whose interval
 * inverts the test) when the unadjusted p is below 0.05. Its *verdict* uses the adjusted p-value.
 * Holm's step-down method compares the j-th smallest of k p-values with α/(k − j + 1) (Holm 1979,
 * Scand. J. Statist. 6:65–70), and Benjamini–Hochberg's step-up method with jα/k (Benjamini &
 * Hochberg 1995, JRSS B 57:289–300); in both the adjusted p-value is the unadjusted one times the
 * inverse of that fraction of α, made monotone. So the *adjustment level* of a claim is
 * a = α·p/p_adjusted (exactly the threshold above when the monotone step changes nothing), and
 * the *adjusted interval* is the claim's interval at confidence 1 − a: it excludes 0 when the
 * adjusted p-value is below α, as the 95% interval does when p is below 0.05 (the same test
 * inverted at another level).
 *
 * Each test's interval is rebuilt from the claim's own numbers with the construction its method
 * used (see src/audit/methods/), at the new level; at level 0.95 it reproduces the stored `ci`.
 */
import type { TestedClaim } from "../audit/types.js";
import { lrEffectCIAtAlpha, lrEffectInterval, permutationLrEffect, signedRootEffectCI } from "../stats/effectScale.js";
import { gcmCorrelationInterval } from "../stats/generalisedCovariance.js";
import { chiSquareUpperQuantileLog, normalQuantile } from "../stats/quantiles.js";

/** Levels this close to 1 give the whole effect range (no finite interval construction reaches them). */
const LEVEL_CEILING = 1 - 1e-12;

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

/** Sign of a claim's association as its method signed the interval: the effect's sign, or the interval's side when the effect is 0. */
function signOf(c: TestedClaim): -1 | 0 | 1 {
  if (c.effect > 0) return 1;
  if (c.effect < 0) return -1;
  return c.ci[1] <= 0 && c.ci[0] < 0 ? -1 : 1;
}

/** Mirror an unsigned interval for a negative association. */
function signed(ci: [number, number], sign: -1 | 0 | 1): [number, number] {
  return sign < 0 ? [-ci[1], -ci[0]] : ci;
}

/**
 * The claim's effect interval at confidence `level`, built as its test method builds its 95%
 * interval: Fisher's z interval with the standard error the test implies for the generalised
 * covariance measure on one residual product (`gcmCorrelationInterval`, p = n − 2 − df adjustment
 * columns), the one-sided noncentral chi-square inversion of its chi-square-scale statistic for
 * several products (`lrEffectCIAtAlpha`), Fisher's z interval on n − c − 3 = df − 1 for the
 * partial correlation, the signed-root interval for the linear-by-linear test, the noncentral
 * interval that agrees with the test for likelihood-ratio statistics (`lrEffectInterval`), and the two-moment
 * permutation calibration for permutation p-values of stratified tables. Undefined when the
 * numbers it needs are missing or not finite. Cost: about 100 tail evaluations.
 *
 * @param claim a tested claim
 * @param level confidence level in (0, 1); at or above 1 − 1e-12 the whole range is returned
 * @example effectIntervalAt(claim, 0.95) // claim.ci (to rounding)
 */
export function effectIntervalAt(claim: TestedClaim, level: number): [number, number] | undefined {
  const c = claim;
  if (!(level > 0 && level < 1)) return undefined;
  if (![c.n, c.statistic, c.df, c.effect].every(Number.isFinite) || !(c.n > 0)) return undefined;
  const sign = signOf(c);
  const lr = c.statistic;
  const unsignedRange: [number, number] = sign < 0 ? [-1, 0] : [0, 1];
  const top = level >= LEVEL_CEILING;
  const components = Number(c.details?.components ?? 1);
  try {
    switch (c.test) {
      case "gcm":
      case "gcm-rank": {
        if (components > 1) {
          if (top) return [0, 1];
          const w = chiSquareUpperQuantileLog(Math.min(0, c.log_p), c.df);
          return lrEffectCIAtAlpha(w, c.df, c.n, level);
        }
        if (top) return [-1, 1];
        return gcmCorrelationInterval(c.effect, c.statistic, c.df, c.n, c.n - 2 - c.df, level);
      }
      case "pearson-partial": {
        const ciDf = c.df - 1; // n − c − 3 with c = n − 2 − df conditioning columns
        if (ciDf <= 0 || top) return [-1, 1];
        const R = 1 - 2 ** -53;
        const z = Math.atanh(Math.max(-R, Math.min(R, c.effect)));
        const half = normalQuantile((1 + level) / 2) / Math.sqrt(ciDf);
        return [Math.tanh(z - half), Math.tanh(z + half)];
      }
      case "linear-by-linear": {
        if (top) return [-1, 1];
        const s: -1 | 0 | 1 = c.effect > 0 ? 1 : c.effect < 0 ? -1 : 0;
        return signedRootEffectCI(Math.max(0, lr), c.n, s, level, c.p_method === "permutation" ? c.p : undefined);
      }
      case "stratified-chisq": {
        if (lr < 0) return undefined;
        if (top) return c.df === 1 && c.p_method === "permutation" ? unsignedRange : c.df === 1 ? [-1, 1] : [0, 1];
        if (c.p_method === "permutation") {
          const mean = Number(c.details?.g2_null_mean);
          const variance = Number(c.details?.g2_null_variance);
          return permutationLrEffect(lr, c.df, c.n, { mean, variance }, c.p, sign, level).ci;
        }
        return lrEffectInterval(lr, c.df, c.n, sign, level);
      }
      case "regression-lr": {
        if (lr < 0) return undefined;
        if (top) return c.df === 1 ? [-1, 1] : [0, 1];
        return lrEffectInterval(lr, c.df, c.n, sign, level);
      }
    }
  } catch {
    return undefined;
  }
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

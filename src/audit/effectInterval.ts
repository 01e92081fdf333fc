/**
 * A tested claim's effect interval at any confidence level, rebuilt with the construction its
 * test method used (see src/audit/methods/): the adjusted intervals of the reports
 * (`report/adjustedInterval.ts`) and the equivalence tests (`audit/equivalence.ts`) use it.
 */
import type { TestedClaim } from "./types.js";
import { lrEffectCIAtAlpha, lrEffectInterval, permutationLrEffect, signedRootEffectCI } from "../stats/effectScale.js";
import { gcmCorrelationInterval } from "../stats/generalisedCovariance.js";
import { residualCorrelationInterval, type ResidualCorrelationVariance } from "../stats/residualCorrelationInterval.js";
import { chiSquareUpperQuantileLog } from "../stats/quantiles.js";

/** Levels this close to 1 give the whole effect range (no finite interval construction reaches them). */
const LEVEL_CEILING = 1 - 1e-12;

/** Sign of a claim's association as its method signed the interval: the effect's sign, or the interval's side when the effect is 0. */
function signOf(c: Pick<TestedClaim, "effect" | "ci">): -1 | 0 | 1 {
  if (c.effect > 0) return 1;
  if (c.effect < 0) return -1;
  return c.ci[1] <= 0 && c.ci[0] < 0 ? -1 : 1;
}

/**
 * The claim's effect interval at confidence `level`, built as its test method builds its
 * interval: for the generalised covariance measure on one residual product the inversion of the
 * studentised tests with the ADF variance (`residualCorrelationInterval`, from
 * `details.interval_variance`; p = n − 2 − df adjustment columns), or, for results without it,
 * Fisher's z interval with the standard error the test implies (`gcmCorrelationInterval`); the
 * one-sided noncentral chi-square inversion of its chi-square-scale statistic for several
 * products (`lrEffectCIAtAlpha`); Fisher's z interval with the standard error the t test implies
 * for the partial correlation (c = n − 2 − df columns); the signed-root interval for the
 * linear-by-linear test; the interval that agrees with the test for likelihood-ratio statistics
 * (`lrEffectInterval`); and the recalibrated two-moment permutation inversion for permutation
 * p-values of stratified tables. Each excludes 0 exactly when the claim's p < 1 − level. Undefined
 * when the numbers it needs are missing or not finite. Cost: about 100 tail evaluations.
 *
 * @param claim a tested claim
 * @param level confidence level in (0, 1); at or above 1 − 1e-12 the whole range is returned
 * @example effectIntervalAt(claim, 0.95) // claim.ci (to rounding) when --alpha is 0.05
 */
export function effectIntervalAt(claim: Pick<TestedClaim, "test" | "n" | "statistic" | "df" | "effect" | "ci" | "p" | "log_p" | "p_method" | "details">, level: number): [number, number] | undefined {
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
        const v = c.details?.interval_variance as ResidualCorrelationVariance | undefined;
        if (v && Number.isFinite(v.se0) && Array.isArray(v.adf) && v.adf.length === 3) {
          return residualCorrelationInterval(c.effect, c.p, c.df, c.n, c.n - 2 - c.df, v, level);
        }
        return gcmCorrelationInterval(c.effect, c.statistic, c.df, c.n, c.n - 2 - c.df, level);
      }
      case "pearson-partial": {
        if (top) return [-1, 1];
        return gcmCorrelationInterval(c.effect, c.statistic, c.df, c.n, c.n - 2 - c.df, level);
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

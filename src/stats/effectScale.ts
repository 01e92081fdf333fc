/**
 * A common effect scale for likelihood-ratio tests, and its confidence interval.
 *
 * Terms. For a likelihood-ratio statistic LR from n observations, the *effect*
 * e = √(1 − exp(−LR/n)) lies in [0, 1). For two Gaussian variables given c others, the LR test
 * of zero partial correlation r has LR = −n ln(1 − r²), so e = |r| exactly: the scale lets
 * likelihood-ratio tests (categorical, regression) be ranked beside partial correlations
 * (the "R² from the likelihood ratio" of Cox & Snell 1989, Analysis of Binary Data, 2nd ed.,
 * and Magee 1990, The American Statistician 44:250–253).
 * Under an alternative, LR is approximately noncentral chi-square, χ²(df, λ). The interval for
 * λ is the set of λ for which the observed LR is not in either 2.5% tail: λ_L solves
 * P(χ²(df, λ) ≥ LR) = 0.025 and λ_U solves P(χ²(df, λ) ≥ LR) = 0.975, each bounded below by 0,
 * as in the RMSEA interval of Steiger (1990, Multivariate Behavioral Research 25:173–180).
 * The bounds are mapped to the effect scale by the same map, e = √(1 − exp(−λ/n)) (λ in place
 * of LR), which is monotone, so the mapped interval keeps its coverage to the extent the
 * noncentral approximation holds.
 */
import { noncentralChiSquareUpper } from "./noncentralChiSquare.js";

/**
 * Likelihood-ratio effect: sign·√(1 − exp(−LR/n)), the effect scale shared by all tests; equal
 * to |r| for the Gaussian partial-correlation LR −n ln(1 − r²). LR ≤ 0 gives 0. Cost: O(1).
 * Sources: Cox & Snell (1989), Analysis of Binary Data, 2nd ed.; Magee (1990), The American
 * Statistician 44:250–253.
 * @throws {RangeError} when LR is NaN, n is not positive, or sign is not −1, 0 or 1
 * @example lrToEffect(-100 * Math.log(1 - 0.3 ** 2), 100) // ≈ 0.3
 */
export function lrToEffect(lr: number, n: number, sign: -1 | 0 | 1 = 1): number {
  if (Number.isNaN(lr)) throw new RangeError("likelihood-ratio statistic is NaN; pass a number ≥ 0");
  if (!(n > 0)) throw new RangeError(`sample size must be positive, got ${n}`);
  if (sign !== -1 && sign !== 0 && sign !== 1) throw new RangeError(`sign must be -1, 0 or 1, got ${String(sign)}`);
  if (!(lr > 0)) return 0;
  // 1 − exp(−u) as −expm1(−u) keeps its accuracy for small LR/n
  return sign * Math.sqrt(-Math.expm1(-lr / n));
}

/**
 * The effect reported for a likelihood-ratio test on `df` degrees of freedom: for df = 1,
 * sign·√(1 − exp(−LR/n)) ({@link lrToEffect}, equal to |r| for the Gaussian partial-correlation LR);
 * for df > 1, where LR has expectation df even when nothing is there, the chance part is removed
 * first, √(1 − exp(−max(0, LR − df)/n)), as the RMSEA does (Steiger 1990), so that the point lies
 * inside the interval of {@link lrEffectCI} (whose λ has the unbiased estimate max(0, LR − df)).
 * Cost: O(1).
 * Source: Steiger (1990), Multivariate Behavioral Research 25:173–180.
 * @throws {RangeError} as lrToEffect; when df is not positive
 * @example lrEffect(20, 1, 100) // ≈ 0.4257, as lrToEffect(20, 100)
 * @example lrEffect(3, 6, 500)  // 0: below its chance expectation
 */
export function lrEffect(lr: number, df: number, n: number, sign: -1 | 0 | 1 = 1): number {
  if (!(df > 0)) throw new RangeError(`df must be positive, got ${df}`);
  return df === 1 ? lrToEffect(lr, n, sign) : lrToEffect(Math.max(0, lr - df), n, 1);
}

/** Solve P(χ²(df, λ) ≥ lr) = target for λ ≥ 0 by bracketing and bisection on λ (tail increases with λ). */
function solveNoncentrality(lr: number, df: number, target: number): number {
  const sf = (lambda: number): number => noncentralChiSquareUpper(lr, df, lambda);
  if (sf(0) >= target) return 0;
  let lo = 0;
  let hi = Math.max(1, lr);
  while (sf(hi) < target) {
    lo = hi;
    hi *= 2;
    if (hi > 1e15) return Infinity;
  }
  for (let it = 0; it < 200 && hi - lo > 1e-12 * Math.max(1, hi); it++) {
    const mid = (lo + hi) / 2;
    if (sf(mid) < target) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Confidence interval of the likelihood-ratio effect: finds the noncentralities λ_L, λ_U ≥ 0 with
 * P(χ²(df, λ_L) ≥ LR) = (1 − level)/2 and P(χ²(df, λ_U) ≥ LR) = (1 + level)/2 (Steiger 1990)
 * and returns [√(1 − exp(−λ_L/n)), √(1 − exp(−λ_U/n))], on the scale of {@link lrToEffect}.
 * The lower end is 0 whenever the central tail P(χ²(df) ≥ LR) ≥ (1 − level)/2 (the test is
 * not significant at (1 − level)/2), and the upper end too when that tail is ≥ (1 + level)/2.
 * Cost: about 100 noncentral tail evaluations.
 * Source: Steiger (1990), Multivariate Behavioral Research 25:173–180.
 * @throws {RangeError} when LR is negative or not finite, df or n is not positive, or level is not in (0, 1)
 * @example lrEffectCI(20, 1, 100) // ≈ [0.2473, 0.5821], containing lrToEffect(20, 100) ≈ 0.4257
 */
export function lrEffectCI(lr: number, df: number, n: number, level = 0.95): [number, number] {
  if (!(lr >= 0 && Number.isFinite(lr))) throw new RangeError(`likelihood-ratio statistic must be a finite number ≥ 0, got ${lr}`);
  if (!(df > 0)) throw new RangeError(`df must be positive, got ${df}`);
  if (!(n > 0)) throw new RangeError(`sample size must be positive, got ${n}`);
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be between 0 and 1, got ${level}`);
  const lambdaL = solveNoncentrality(lr, df, (1 - level) / 2);
  const lambdaU = solveNoncentrality(lr, df, (1 + level) / 2);
  const map = (lambda: number): number => (lambda === Infinity ? 1 : Math.sqrt(-Math.expm1(-lambda / n)));
  return [map(lambdaL), map(lambdaU)];
}

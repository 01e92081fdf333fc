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
 *
 * Two variants serve tests whose null distribution is not the asymptotic χ²(df):
 * - *Signed root* (1-df score statistics such as the linear-by-linear Q): Z = sign·√Q is
 *   approximately N(δ, 1), δ = sign·√λ, near the null (Agresti 2013, Categorical Data Analysis,
 *   3rd ed., §3.4: M = r√(n − 1) is approximately standard normal under independence), so the
 *   test-inversion interval for δ is Z ± z_{(1+level)/2} (Casella & Berger 2002, Statistical
 *   Inference, 2nd ed., §9.2.1), mapped by δ ↦ sign(δ)·√(1 − exp(−δ²/n)). Its lower end
 *   excludes 0 exactly when Q > z², i.e. when the χ²(1) p-value is below 1 − level. When the
 *   p-value came from permutations, the standard error of Z is instead recovered from that
 *   p-value, SE = |Z| / z_p with z_p = Φ⁻¹(1 − p/2) (Altman & Bland 2011, BMJ 343:d2090), and
 *   the interval is Z ± z_{(1+level)/2}·SE: it excludes 0 exactly when p < 1 − level, and it is
 *   the asymptotic interval whenever the permutation p equals the χ²(1) p.
 * - *Permutation-calibrated* (G² with a permutation p-value): in sparse tables the permutation
 *   null distribution of G² is not χ²(df) (its mean m is often well above df and its variance
 *   v well below 2m), so it is matched in its first two moments by a scaled chi-square
 *   a·χ²(ν), a = v/(2m), ν = 2m²/v (Satterthwaite 1946, Biometrics Bulletin 2:110–114; Box 1954,
 *   Annals of Mathematical Statistics 25:290–302), with m and v the mean and variance of the
 *   permuted G². The noncentrality is estimated by the mean shift, λ̂ = max(0, G² − m), and the
 *   alternatives are the noncentral members a·χ²(ν, λ/a) of that family. The matched family's
 *   tail at the observed G², F(λ) = P(χ²(ν, λ/a) ≥ G²/a), does not reproduce the permutation
 *   p-value at λ = 0, so it is recalibrated on the normal-quantile scale: F*(λ) =
 *   Φ(Φ⁻¹(F(λ)) + δ) with δ = Φ⁻¹(p) − Φ⁻¹(F(0)), a shift that makes F*(0) = p exactly and keeps
 *   F* increasing in λ (a probit-scale location calibration, as in the double bootstrap's
 *   calibration of a nominal level: Beran 1987, Biometrika 74:457–468; Hall 1992, The Bootstrap
 *   and Edgeworth Expansion, §3.11). The interval inverts F* as {@link lrEffectCIAtAlpha} inverts
 *   the asymptotic tail: F*(λ_L) = α one-sided, F*(λ_U) = (1 + level)/2, so its lower end is above
 *   0 exactly when the permutation p-value is below α. On 1 df the signed-root interval with the
 *   standard error implied by the permutation p-value is used instead (see above), as for the
 *   asymptotic 1-df statistics. With m = df and v = 2df and p the χ²(df) p-value (dense tables)
 *   this is the asymptotic construction.
 */
import { noncentralChiSquareUpper } from "./noncentralChiSquare.js";
import { normalQuantile } from "./quantiles.js";
import { erfc } from "./special.js";

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
  // 1 − exp(−u) as −expm1(−u) keeps its accuracy for small LR/n; below 1e-16 it is u to double
  // precision, taken as √LR/√n so that a subnormal LR/n does not round the effect to 0
  const u = lr / n;
  return sign * (u < 1e-16 ? Math.sqrt(lr) / Math.sqrt(n) : Math.sqrt(-Math.expm1(-u)));
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

/**
 * Solve P(χ²(df, λ) ≥ lr) = target for λ ≥ 0 (the tail increases with λ): a bracket of a few
 * standard deviations around the normal approximation (widened by doubling steps until the tail
 * crosses the target), then Brent's method to 1e-12 of the root, relative (absolute below 1). Each
 * evaluation sums O(√λ) Poisson terms, so the few steps of Brent's method on a narrow bracket
 * (about 10, against 40 of bisection from [0, lr] to the same width) matter for large n.
 * Source: Brent (1973), Algorithms for Minimization without Derivatives, ch. 4 (zero finding,
 * inverse quadratic interpolation safeguarded by bisection).
 */
function solveNoncentrality(lr: number, df: number, target: number): number {
  const f = (lambda: number): number => noncentralChiSquareUpper(lr, df, lambda) - target;
  const f0 = f(0);
  if (f0 >= 0) return 0;
  // bracket around the normal approximation: lr is the (1 − target) quantile of χ²(df, λ), whose
  // mean is df + λ and standard deviation √(2df + 4λ) ≈ √(2df + 4·lr) near the root; steps double
  const sd = Math.sqrt(2 * df + 4 * lr);
  const z = normalQuantile(1 - target); // ±Infinity for a target at 0 or 1 in double precision: start at lr
  const guess = Number.isFinite(z) ? Math.max(0, lr - df - z * sd) : lr;
  let step = Math.max(1, sd);
  let lo = Math.max(0, guess - step);
  let flo = lo === 0 ? f0 : f(lo);
  let hi = guess + step;
  let fhi = f(hi);
  while (flo > 0) {
    hi = lo;
    fhi = flo;
    step *= 2;
    lo = Math.max(0, lo - step);
    flo = lo === 0 ? f0 : f(lo);
  }
  while (fhi < 0) {
    lo = hi;
    flo = fhi;
    step *= 2;
    hi += step;
    if (hi > 1e15) return Infinity;
    fhi = f(hi);
  }
  return brentRoot(f, lo, flo, hi, fhi, (x) => 1e-12 * Math.max(1, Math.abs(x)));
}

/**
 * A root of f in [a, b] with f(a)·f(b) ≤ 0, to within tol(x) of it, by Brent's method: inverse
 * quadratic or secant steps where they stay inside the bracket and shrink it fast enough, else
 * bisection, so it never takes more steps than bisection to the same width plus a few.
 * Source: Brent (1973), Algorithms for Minimization without Derivatives, ch. 4, procedure zero.
 */
function brentRoot(f: (x: number) => number, a: number, fa: number, b: number, fb: number, tol: (x: number) => number): number {
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let it = 0; it < 200; it++) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const t = 0.5 * tol(b);
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= t || fb === 0) return b;
    if (Math.abs(e) < t || Math.abs(fa) <= Math.abs(fb)) {
      d = e = m; // bisection
    } else {
      let p: number;
      let q: number;
      const s = fb / fa;
      if (a === c) {
        p = 2 * m * s; // secant
        q = 1 - s;
      } else {
        const qa = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1)); // inverse quadratic interpolation
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(t * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = e = m;
      }
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > t ? d : m > 0 ? t : -t;
    fb = f(b);
  }
  return b;
}

/**
 * Confidence interval of the likelihood-ratio effect: finds the noncentralities λ_L, λ_U ≥ 0 with
 * P(χ²(df, λ_L) ≥ LR) = (1 − level)/2 and P(χ²(df, λ_U) ≥ LR) = (1 + level)/2 (Steiger 1990)
 * and returns [√(1 − exp(−λ_L/n)), √(1 − exp(−λ_U/n))], on the scale of {@link lrToEffect}.
 * The lower end is 0 whenever the central tail P(χ²(df) ≥ LR) ≥ (1 − level)/2 (the test is
 * not significant at (1 − level)/2), and the upper end too when that tail is ≥ (1 + level)/2.
 * Cost: about 20 noncentral tail evaluations (Brent's method).
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

/**
 * Interval of a several-df effect that agrees with its test at level α = 1 − `level`: the lower
 * noncentrality solves P(χ²(df, λ_L) ≥ LR) = α (a one-sided inversion, so the lower end is above
 * 0 exactly when P(χ²(df) ≥ LR) < α, i.e. when the test rejects at α) and the upper one solves
 * P(χ²(df, λ_U) ≥ LR) = (1 + level)/2, both mapped as in {@link lrEffectCI}. The point
 * √(1 − exp(−max(0, LR − df)/n)) of {@link lrEffect} lies inside (LR exceeds the mean df + λ_L
 * of the distribution whose upper α-quantile it is, and falls below the mean df + λ_U of the
 * one whose lower quantile it is). Cost: about 20 noncentral tail evaluations (Brent's method).
 * Source: Steiger (1990), Multivariate Behavioral Research 25:173–180 (the inversion);
 * Casella & Berger (2002), Statistical Inference, 2nd ed., §9.2.1 (intervals from inverting tests).
 * @throws {RangeError} as lrEffectCI
 * @example lrEffectCIAtAlpha(12.6, 4, 500) // lower end above 0: P(χ²(4) ≥ 12.6) ≈ 0.013 < 0.05
 */
export function lrEffectCIAtAlpha(lr: number, df: number, n: number, level = 0.95): [number, number] {
  if (!(lr >= 0 && Number.isFinite(lr))) throw new RangeError(`likelihood-ratio statistic must be a finite number ≥ 0, got ${lr}`);
  if (!(df > 0)) throw new RangeError(`df must be positive, got ${df}`);
  if (!(n > 0)) throw new RangeError(`sample size must be positive, got ${n}`);
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be between 0 and 1, got ${level}`);
  const lambdaL = solveNoncentrality(lr, df, 1 - level);
  const lambdaU = solveNoncentrality(lr, df, (1 + level) / 2);
  const map = (lambda: number): number => (lambda === Infinity ? 1 : Math.sqrt(-Math.expm1(-lambda / n)));
  return [map(lambdaL), map(lambdaU)];
}

/**
 * The interval of {@link lrEffect} that agrees with the likelihood-ratio test at α = 1 − `level`:
 * for df = 1 the signed-root interval ({@link signedRootEffectCI}), which contains the signed
 * point sign·√(1 − exp(−LR/n)) for every LR and excludes 0 exactly when P(χ²(1) ≥ LR) < α; for
 * df > 1 {@link lrEffectCIAtAlpha}, which contains √(1 − exp(−max(0, LR − df)/n)) and has its
 * lower end above 0 exactly when P(χ²(df) ≥ LR) < α. (Both ends of a two-sided noncentral
 * inversion on 1 df collapse to 0 when LR is below the 2.5% quantile, an interval [0, 0] beside a
 * positive point.) Cost: O(1) for df = 1, about 20 noncentral tail evaluations otherwise.
 * Sources: as signedRootEffectCI and lrEffectCIAtAlpha.
 * @throws {RangeError} as those functions
 * @example lrEffectInterval(1e-4, 1, 1000, 1) // ≈ [-0.0617, 0.0623], around lrEffect(1e-4, 1, 1000) ≈ 0.000316
 */
export function lrEffectInterval(lr: number, df: number, n: number, sign: -1 | 0 | 1, level = 0.95): [number, number] {
  if (df === 1) return signedRootEffectCI(lr, n, sign, level);
  return lrEffectCIAtAlpha(lr, df, n, level);
}

/**
 * Signed-root interval of a 1-df statistic on the effect scale: with Z = sign·√Q and
 * half-width h = z_{(1+level)/2}·SE, returns [m(Z − h), m(Z + h)] where
 * m(δ) = sign(δ)·√(1 − exp(−δ²/n)) maps the normal deviate to the effect scale (so that
 * m(Z) = {@link lrToEffect}(Q, n, sign), the point effect). SE = 1 for an asymptotic p-value
 * (`p` omitted); for a p-value from elsewhere (permutations) SE = √Q / Φ⁻¹(1 − p/2), the standard
 * error implied by that p-value (Altman & Bland 2011), so the interval excludes 0 exactly when
 * p < 1 − level. When p = 1 or Q = 0 no standard error can be implied and h = max(z, √Q), an
 * interval that contains 0.
 * Cost: O(1).
 * Sources: Agresti (2013), Categorical Data Analysis, 3rd ed., §3.4 (the signed root M of the
 * 1-df trend statistic); Casella & Berger (2002), Statistical Inference, 2nd ed., §9.2.1 (test
 * inversion); Altman & Bland (2011), BMJ 343:d2090 (standard error from a p-value).
 * @throws {RangeError} when Q is negative or not finite, n is not positive, sign is not −1, 0
 * or 1, level is not in (0, 1), or p is given and not in (0, 1]
 * @example signedRootEffectCI(3.841458820694124 * 1.2, 100, 1) // lower end > 0: p ≈ 0.032 < 0.05
 * @example signedRootEffectCI(4, 100, -1, 0.95, 0.08)        // contains 0: the permutation p is 0.08
 */
export function signedRootEffectCI(q: number, n: number, sign: -1 | 0 | 1, level = 0.95, p?: number): [number, number] {
  if (!(q >= 0 && Number.isFinite(q))) throw new RangeError(`1-df statistic must be a finite number ≥ 0, got ${q}`);
  if (!(n > 0)) throw new RangeError(`sample size must be positive, got ${n}`);
  if (sign !== -1 && sign !== 0 && sign !== 1) throw new RangeError(`sign must be -1, 0 or 1, got ${String(sign)}`);
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be between 0 and 1, got ${level}`);
  if (p !== undefined && !(p > 0 && p <= 1)) throw new RangeError(`p-value must be in (0, 1], got ${p}`);
  const root = Math.sqrt(q);
  const z = sign < 0 ? -root : root;
  const zc = normalQuantile((1 + level) / 2);
  let half: number;
  if (p === undefined) half = zc;
  else {
    const zp = -normalQuantile(p / 2); // Φ⁻¹(1 − p/2), accurate for small p
    half = zp > 0 && root > 0 ? (zc * root) / zp : Math.max(zc, root);
  }
  const rootN = Math.sqrt(n);
  // √(1 − exp(−δ²/n)) = |δ|/√n·(1 + O(δ²/n)): the first form where δ² would underflow
  const map = (delta: number): number => {
    if (delta === 0) return 0;
    const s = delta / rootN;
    return Math.abs(s) < 1e-8 ? s : Math.sign(delta) * Math.sqrt(-Math.expm1(-s * s));
  };
  return [map(z - half), map(z + half)];
}

/** Mean and variance of a statistic's permutation distribution (from Monte-Carlo draws). */
export interface NullMoments {
  mean: number;
  variance: number;
}

/** Effect, interval and calibration of {@link permutationLrEffect}. */
export interface PermutationLrEffect {
  effect: number;
  ci: [number, number];
  /** The scale a and degrees of freedom ν of the scaled chi-square a·χ²(ν) matched to the null (1 and df when the moments are unusable). */
  scale: number;
  dfMatched: number;
}

/**
 * Likelihood-ratio effect for a statistic tested against its permutation distribution (see the
 * module comment): the null is matched by a·χ²(ν) with a = v/(2m), ν = 2m²/v from its mean m and
 * variance v; the point is λ̂ = max(0, LR − m) mapped by √(1 − exp(−λ̂/n)). For df > 1 the
 * interval maps a·λ′ for the noncentralities λ′ that solve the recalibrated tail
 * Φ(Φ⁻¹(P(χ²(ν, λ′) ≥ LR/a)) + δ) = α (lower end, one-sided) and = (1 + level)/2 (upper end),
 * δ = Φ⁻¹(p) − Φ⁻¹(P(χ²(ν) ≥ LR/a)), so that the lower end is above 0 exactly when p < α =
 * 1 − level. For df = 1 the point is sign·√(1 − exp(−LR/n)) and the interval the signed-root
 * one with the standard error the permutation p-value implies ({@link signedRootEffectCI} with p),
 * which excludes 0 exactly when p < α. When m or v is not a positive finite number, a = 1, ν = df
 * and m = df. A point outside the interval (a statistic below its null mean with p < α, possible
 * only for a very skewed null, or bisection rounding) is moved to the nearer end.
 * Cost: that of {@link lrEffectCI}.
 * Sources: Satterthwaite (1946), Biometrics Bulletin 2:110–114 and Box (1954), Annals of
 * Mathematical Statistics 25:290–302 (two-moment scaled chi-square); Steiger (1990),
 * Multivariate Behavioral Research 25:173–180 (the inversion); Beran (1987), Biometrika
 * 74:457–468 (calibrating a nominal tail to an achieved one).
 * @throws {RangeError} when LR is negative or not finite, df or n is not positive, sign is not
 * −1, 0 or 1, p is not in (0, 1], or level is not in (0, 1)
 * @example permutationLrEffect(69, 44, 100, { mean: 70, variance: 42 }, 0.55) // { effect: 0, ci: [0, …], … }: G² is at its null mean
 */
export function permutationLrEffect(lr: number, df: number, n: number, nullMoments: NullMoments, p: number, sign: -1 | 0 | 1 = 1, level = 0.95): PermutationLrEffect {
  if (!(lr >= 0 && Number.isFinite(lr))) throw new RangeError(`likelihood-ratio statistic must be a finite number ≥ 0, got ${lr}`);
  if (!(df > 0)) throw new RangeError(`df must be positive, got ${df}`);
  if (!(n > 0)) throw new RangeError(`sample size must be positive, got ${n}`);
  if (sign !== -1 && sign !== 0 && sign !== 1) throw new RangeError(`sign must be -1, 0 or 1, got ${String(sign)}`);
  if (!(p > 0 && p <= 1)) throw new RangeError(`p-value must be in (0, 1], got ${p}`);
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be between 0 and 1, got ${level}`);
  const { mean, variance } = nullMoments;
  const usable = mean > 0 && variance > 0 && Number.isFinite(mean) && Number.isFinite(variance);
  const m = usable ? mean : df;
  const a = usable ? variance / (2 * mean) : 1;
  const nu = usable ? (2 * mean * mean) / variance : df;
  const map = (lambda: number): number => (lambda === Infinity ? 1 : Math.sqrt(-Math.expm1(-lambda / n)));
  if (df === 1) {
    const ci = signedRootEffectCI(lr, n, sign, level, p);
    const effect = lrToEffect(lr, n, sign);
    return { effect: effect === 0 ? 0 : effect, ci, scale: a, dfMatched: nu };
  }
  const alpha = 1 - level;
  const point = Math.max(0, lr - m);
  // probit-scale shift that makes the matched family's tail at λ = 0 equal to p
  const tail0 = noncentralChiSquareUpper(lr / a, nu, 0);
  const delta = normalQuantile(p) - normalQuantile(Math.min(Math.max(tail0, Number.MIN_VALUE), 1 - Number.EPSILON / 2));
  const target = (t: number): number => normalCdf(normalQuantile(t) - delta);
  let lo = p < alpha ? a * solveNoncentrality(lr / a, nu, target(alpha)) : 0;
  let hi = a * solveNoncentrality(lr / a, nu, target((1 + level) / 2));
  if (p < alpha && !(lo > 0)) lo = a * Number.EPSILON; // the solver stops at 0 when rounding leaves the tail at its target
  if (hi < lo) hi = lo;
  // the mean-shift point lies inside but for a statistic below its null mean with p < α (a very
  // skewed null) or bisection rounding: it is then moved to the nearer end
  const inside = Math.min(Math.max(point, lo), hi);
  const effect = sign === 0 ? 0 : map(inside);
  const ci: [number, number] = [map(lo), map(hi)];
  return { effect: effect === 0 ? 0 : effect, ci, scale: a, dfMatched: nu };
}

/** Standard normal distribution function Φ(z), by the complementary error function. */
function normalCdf(z: number): number {
  return 0.5 * erfc(-z / Math.SQRT2);
}

/**
 * Power and detectable effects of the audit's tests, on the common effect scale.
 *
 * Terms: the *detectable effect* of a test at level α and power 1 − β is the smallest |effect|
 * that it rejects with probability 1 − β; *n needed* is the smallest n at which a given effect is
 * detectable.
 * - A partial correlation r tested on ν = n − 2 − p df (p adjustment columns): by Fisher's z,
 *   atanh(r̂) is about normal with SD 1/√(ν − 1) = 1/√(n − p − 3), so the detectable r is
 *   tanh((z_{1−α/2} + z_{1−β})/√(ν − 1)) (Cohen 1988, Statistical Power Analysis, 2nd ed., ch. 3;
 *   common practice).
 * - A likelihood-ratio or chi-square statistic on d df is about χ²(d, λ) with λ = −n ln(1 − e²) for
 *   an effect e = √(1 − exp(−λ/n)) (the effect scale's own definition, df-corrected for d > 1);
 *   the detectable λ solves P(χ²(d, λ) > χ²_{d,1−α}) = 1 − β (the noncentral chi-square power of
 *   a likelihood-ratio test; Agresti 2013, Categorical Data Analysis, §6.6 — from memory).
 */
import { noncentralChiSquareCdf, noncentralChiSquareUpper } from "./noncentralChiSquare.js";
import { chiSquareUpperQuantileLog, normalQuantile } from "./quantiles.js";

function checkLevel(alpha: number, power: number): void {
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`alpha must be in (0, 1), got ${alpha}`);
  if (!(power > 0 && power < 1)) throw new RangeError(`power must be in (0, 1), got ${power}`);
}

/**
 * The x with P(χ²(df, λ) ≤ x) = p, by bisection on the CDF (monotone in x) to 1e-13 relative.
 * Cost: about 50 CDF evaluations.
 * @throws RangeError for p outside [0, 1], df ≤ 0 or λ < 0
 * @example noncentralChiSquareQuantile(0.5, 3, 2) // scipy.stats.ncx2.ppf(0.5, 3, 2) ≈ 4.2188
 */
export function noncentralChiSquareQuantile(p: number, df: number, lambda: number): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError(`probability must be in [0, 1], got ${p}`);
  if (!(df > 0 && Number.isFinite(df))) throw new RangeError(`df must be positive, got ${df}`);
  if (!(lambda >= 0 && Number.isFinite(lambda))) throw new RangeError(`noncentrality must be ≥ 0, got ${lambda}`);
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  return solveIncreasing((x) => noncentralChiSquareCdf(x, df, lambda), p, Math.max(1, df + lambda), 1e-13);
}

/**
 * The noncentrality λ at which a chi-square test on df degrees of freedom at level alpha has the
 * given power: P(χ²(df, λ) > χ²_{df,1−α}) = power, by bisection (the tail grows with λ) to 1e-12
 * relative. Cost: about 60 tail evaluations.
 * @throws RangeError for alpha or power outside (0, 1) or df ≤ 0
 * @example noncentralityForPower(1, 0.05, 0.8) // (1.959964 + 0.841621)² ≈ 7.8489
 */
export function noncentralityForPower(df: number, alpha: number, power: number): number {
  checkLevel(alpha, power);
  if (!(df > 0 && Number.isFinite(df))) throw new RangeError(`df must be positive, got ${df}`);
  if (power <= alpha) return 0;
  // a pure function of (df, alpha, power), asked once per claim with few distinct arguments in an
  // audit (detectable effects: every claim of one df shares it), so solved once per argument
  const key = `${df} ${alpha} ${power}`;
  const known = noncentralityMemo.get(key);
  if (known !== undefined) return known;
  const crit = chiSquareUpperQuantileLog(Math.log(alpha), df);
  const lambda = solveIncreasing((l) => noncentralChiSquareUpper(crit, df, l), power, 1, 1e-12);
  if (noncentralityMemo.size >= NONCENTRALITY_MEMO_SIZE) noncentralityMemo.clear();
  noncentralityMemo.set(key, lambda);
  return lambda;
}

/** Solved noncentralities by (df, alpha, power); cleared when it reaches NONCENTRALITY_MEMO_SIZE entries. */
const noncentralityMemo = new Map<string, number>();
const NONCENTRALITY_MEMO_SIZE = 10_000;

/**
 * The v ≥ 0 with f(v) = target for f non-decreasing: the bracket [0, start] doubled until f
 * reaches the target, then bisection to `relTol` relative (at most 200 halvings). Cost: about
 * 60 evaluations of f.
 */
function solveIncreasing(f: (v: number) => number, target: number, start: number, relTol: number): number {
  let lo = 0;
  let hi = start;
  while (f(hi) < target) hi *= 2;
  for (let k = 0; k < 200 && hi - lo > relTol * hi; k++) {
    const mid = (lo + hi) / 2;
    if (f(mid) < target) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * The detectable partial correlation of a two-sided test on `df` = n − 2 − p degrees of freedom:
 * tanh((z_{1−α/2} + z_{power})/√(df − 1)). Cost: O(1).
 * @throws RangeError for alpha or power outside (0, 1), or df < 2
 * @example detectableCorrelation(998, 0.05, 0.8) // tanh(2.801585/√997) ≈ 0.0885
 */
export function detectableCorrelation(df: number, alpha: number, power: number): number {
  checkLevel(alpha, power);
  if (!(df >= 2)) throw new RangeError(`a correlation test needs at least 2 df, got ${df}`);
  return Math.tanh((normalQuantile(1 - alpha / 2) + normalQuantile(power)) / Math.sqrt(df - 1));
}

/**
 * The detectable effect e = √(1 − exp(−λ/n)) of a chi-square test on df at level alpha and power,
 * with λ from {@link noncentralityForPower}. Cost: that of noncentralityForPower.
 * @example detectableChiSquareEffect(1, 1000, 0.05, 0.8) // √(1 − exp(−7.8489/1000)) ≈ 0.0884
 */
export function detectableChiSquareEffect(df: number, n: number, alpha: number, power: number): number {
  if (!(n >= 1)) throw new RangeError(`n must be at least 1, got ${n}`);
  return Math.sqrt(-Math.expm1(-noncentralityForPower(df, alpha, power) / n));
}

/**
 * The smallest n at which a correlation test with p adjustment columns detects |r| = e:
 * ⌈((z_{1−α/2} + z_{power})/atanh e)² + p + 3⌉. Cost: O(1).
 * @throws RangeError for e outside (0, 1)
 * @example correlationSampleSize(0.1, 0, 0.05, 0.8) // 783
 */
export function correlationSampleSize(e: number, p: number, alpha: number, power: number): number {
  checkLevel(alpha, power);
  if (!(e > 0 && e < 1)) throw new RangeError(`the target effect must be in (0, 1), got ${e}`);
  return Math.ceil(((normalQuantile(1 - alpha / 2) + normalQuantile(power)) / Math.atanh(e)) ** 2 + p + 3);
}

/**
 * The smallest n at which a chi-square test on df detects the effect e: ⌈λ / (−ln(1 − e²))⌉.
 * Cost: that of noncentralityForPower.
 * @example chiSquareSampleSize(0.1, 1, 0.05, 0.8) // ⌈7.8489/0.01005⌉ = 782
 */
export function chiSquareSampleSize(e: number, df: number, alpha: number, power: number): number {
  if (!(e > 0 && e < 1)) throw new RangeError(`the target effect must be in (0, 1), got ${e}`);
  return Math.ceil(noncentralityForPower(df, alpha, power) / -Math.log1p(-e * e));
}

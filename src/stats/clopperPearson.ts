/**
 * Exact binomial confidence limits.
 *
 * Terms: for h successes in n independent Bernoulli(π) trials, the *Clopper–Pearson interval*
 * at level 1 − δ is [L, U] with P(Bin(n, L) ≥ h) = δ/2 and P(Bin(n, U) ≤ h) = δ/2 (L = 0 when
 * h = 0, U = 1 when h = n). By the beta–binomial identity these are beta quantiles:
 * L = B⁻¹(δ/2; h, n − h + 1) and U = B⁻¹(1 − δ/2; h + 1, n − h), where B⁻¹(q; a, b) is the
 * q-quantile of the Beta(a, b) distribution, i.e. the x with I_x(a, b) = q (I the regularized
 * incomplete beta function). The interval covers π with probability at least 1 − δ for every π
 * (Clopper & Pearson 1934, Biometrika 26:404–413).
 */
import { betainc } from "./special.js";
import { logGamma } from "./pvalues.js";

/**
 * Quantile of the Beta(a, b) distribution from the lower tail q = P(X ≤ x) (`upper` false) or
 * the upper tail q = P(X > x) (`upper` true, accurate when that tail is tiny). Solved by Newton's
 * method on the regularized incomplete beta I_x(a, b) (@stdlib's `betainc`), kept inside a
 * bracket that halves (geometrically near 0 and 1) whenever a step leaves it, to a relative
 * precision of about 1e-14. Cost: O(60) evaluations of I_x at most, usually under 10.
 * Source: the inversion of a monotone distribution function by safeguarded Newton iteration
 * (Press, Teukolsky, Vetterling & Flannery 2007, Numerical Recipes 3rd ed., §6.14 and §9.4).
 * @throws RangeError when a or b is not positive or q is not in [0, 1]
 * @example betaQuantile(0.5, 1, 1) // 0.5
 */
export function betaQuantile(q: number, a: number, b: number, upper = false): number {
  if (!(a > 0 && b > 0 && Number.isFinite(a) && Number.isFinite(b))) throw new RangeError(`beta parameters must be positive and finite, got ${a} and ${b}`);
  if (!(q >= 0 && q <= 1)) throw new RangeError(`beta quantile level must be in [0, 1], got ${q}`);
  if (q === 0) return upper ? 1 : 0;
  if (q === 1) return upper ? 0 : 1;
  const logBeta = logGamma(a) + logGamma(b) - logGamma(a + b);
  // g(x) increases in x: the lower tail minus q, or q minus the upper tail
  const g = (x: number): number => (upper ? q - betainc(x, a, b, true, true) : betainc(x, a, b, true, false) - q);
  const density = (x: number): number => Math.exp((a - 1) * Math.log(x) + (b - 1) * Math.log1p(-x) - logBeta);
  let lo = 0;
  let hi = 1;
  let x = Math.min(0.999999, Math.max(1e-300, a / (a + b)));
  for (let it = 0; it < 400; it++) {
    const gx = g(x);
    if (gx === 0) return x;
    if (gx < 0) lo = x;
    else hi = x;
    let next = x - gx / density(x);
    if (!(next > lo && next < hi)) {
      // bisect: geometric near the ends, where quantiles of extreme levels live
      if (lo === 0) next = hi > 1e-300 ? hi / 16 : hi / 2;
      else if (hi === 1) next = 1 - (1 - lo) / 16;
      else next = hi / lo > 4 ? Math.sqrt(lo * hi) : (lo + hi) / 2;
      if (next <= lo || next >= hi) next = (lo + hi) / 2;
    }
    if (Math.abs(next - x) <= 1e-15 * Math.max(x, 1e-300) || hi - lo <= 1e-15 * Math.max(lo, 1e-300)) return next;
    x = next;
  }
  return x;
}

/**
 * Clopper–Pearson interval for a binomial proportion: `hits` successes in `draws` trials, two-sided
 * at `level` (δ/2 = (1 − level)/2 in each tail; see the module comment).
 * Cost: O(1) (two beta quantiles).
 * Source: Clopper & Pearson (1934), Biometrika 26:404–413.
 * @throws RangeError when draws is not a positive integer, hits not an integer in 0..draws, or
 * level not in (0, 1)
 * @example clopperPearson(0, 10, 0.95) // [0, 0.3084971…] (scipy.stats.beta.ppf(0.975, 1, 10))
 */
export function clopperPearson(hits: number, draws: number, level: number): [number, number] {
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be in (0, 1), got ${level}`);
  return clopperPearsonMissing(hits, draws, 1 - level);
}

/**
 * {@link clopperPearson} given the probability δ that the interval misses (level 1 − δ), which
 * keeps its digits when δ is tiny (1e-9 and below). Cost: O(1).
 * Source: Clopper & Pearson (1934), Biometrika 26:404–413.
 * @throws RangeError when draws is not a positive integer, hits not an integer in 0..draws, or
 * δ not in (0, 1)
 * @example clopperPearsonMissing(0, 10, 0.05) // as clopperPearson(0, 10, 0.95)
 */
export function clopperPearsonMissing(hits: number, draws: number, delta: number): [number, number] {
  if (!(Number.isInteger(draws) && draws >= 1)) throw new RangeError(`draws must be a positive integer, got ${draws}`);
  if (!(Number.isInteger(hits) && hits >= 0 && hits <= draws)) throw new RangeError(`hits must be an integer from 0 to ${draws}, got ${hits}`);
  if (!(delta > 0 && delta < 1)) throw new RangeError(`miss probability must be in (0, 1), got ${delta}`);
  const tail = delta / 2;
  const lower = hits === 0 ? 0 : betaQuantile(tail, hits, draws - hits + 1);
  const upper = hits === draws ? 1 : betaQuantile(tail, hits + 1, draws - hits, true);
  return [lower, upper];
}

/**
 * Monte-Carlo p-values decided at the threshold that makes the verdict.
 *
 * Terms.
 * - A Monte-Carlo claim draws statistics T*₁, T*₂, … from its permutation distribution; a *hit* is
 *   a draw at least as extreme as the observed T. The hits are Bernoulli(π), where π, the
 *   *permutation p-value*, is what an infinite number of draws would give. After n draws with h
 *   hits the reported p-value is p̂ = (1 + h)/(1 + n) (Davison & Hinkley 1997, eq. 4.11).
 * - *Looks*: draws are judged only at the fixed schedule n = 200, 400, 800, … (doubling) and at the
 *   cap B (`--permutations`), J looks in all ({@link lookSchedule}).
 * - *Confidence sequence*: at every look the Clopper–Pearson interval (Clopper & Pearson 1934) for π
 *   at miss probability δ = ε/(m·J), where ε is the *resampling risk* (`--resampling-risk`, default
 *   1e-3) and m the number of Monte-Carlo claims that share it. By Bonferroni's inequality all
 *   m·J intervals cover their π at once with probability ≥ 1 − ε, whenever the drawing stops
 *   (the intervals are fixed in advance for every look, so any rule choosing when to stop keeps
 *   that guarantee). The interval used is widened, if need be, to contain p̂ (never needed at the
 *   levels used here, but it makes the agreement below exact).
 * - *Critical value* of a claim: the threshold t such that the claim is rejected by the adjustment
 *   (Holm step-down, Benjamini–Hochberg step-up, or none) exactly when its p < t, the other claims'
 *   p-values held fixed ({@link criticalValues}): α for none, α/(k − s) for Holm (s the claims
 *   rejected before it), α(M + 1)/k for Benjamini–Hochberg (M the others' step-up count).
 * - *Decided*: Holm and Benjamini–Hochberg are monotone (lowering any p-value never removes a
 *   rejection). So with every Monte-Carlo p at its interval's upper end the rejections are a subset
 *   of those with every p at its true value, and with every p at its lower end a superset. A claim
 *   whose verdict is the same at both ends is *decided*: when the intervals cover, its verdict is the
 *   one the exact permutation p-values would give, so the chance that any decided verdict differs
 *   from that one is at most ε (Gandy & Hahn 2016, Scand. J. Statist. 43:1046–1063, "A framework
 *   for Monte Carlo based multiple testing"; Gandy 2009, JASA 104:1504–1511, for one threshold —
 *   cited from memory). Because p̂ lies in every interval, the verdicts computed from the reported
 *   p̂ agree with every decided verdict. An *undecided* claim gets more draws (the next look) until
 *   it is decided or reaches the cap; then it is flagged, with the draws that would decide it.
 * - With `--adjust none` each claim's verdict depends on its own p only, so each claim gets the
 *   whole risk (m = 1): the chance that a given claim's verdict is wrong is at most ε. With Holm
 *   and Benjamini–Hochberg a verdict depends on every p, so m is the number of Monte-Carlo claims.
 *
 * The looks and intervals live in `confidenceSequence.ts`, the critical values and the verdicts at
 * both ends of the intervals in `criticalValues.ts`; this module draws a stream, sets the cap and
 * proposes draws.
 */
import { clopperPearson, clopperPearsonMissing } from "./clopperPearson.js";
import { FIRST_LOOK, lookRisk, lookSchedule } from "./confidenceSequence.js";
import { normalQuantile } from "./quantiles.js";

/** Default resampling risk ε: the chance that any Monte-Carlo verdict differs from the exact permutation verdict. */
export const DEFAULT_RESAMPLING_RISK = 1e-3;
/** Fewest draws of the default cap (more when the smallest threshold asks for more; see {@link defaultPermutationCap}). */
export const MIN_DEFAULT_CAP = 10_000;
/** Most draws of any cap (and of a proposal: a decision needing more is reported as out of reach). */
export const MAX_CAP = 10_000_000;
/** Confidence level of the interval reported for each Monte-Carlo p-value. */
export const REPORTED_LEVEL = 0.99;

/** What a Monte-Carlo test needs to know to draw: the cap, the risk, and when to stop on its own. */
export interface MonteCarloPlan {
  /** Most draws (`--permutations`). */
  cap: number;
  /** Resampling risk ε. */
  risk: number;
  /** Claims sharing the risk when the test judges on its own (an upper bound on the Monte-Carlo claims is safe). */
  family: number;
  /**
   * The range [smallest, largest] of the thresholds the claim's p can face once adjusted (α/k and α
   * for Holm and Benjamini–Hochberg with k claims; α and α without adjustment).
   */
  band: [number, number];
  /** When set, draw exactly this many (a look of the schedule, at most the cap) and do not stop earlier. */
  draws?: number;
}

/** Hits and draws of a Monte-Carlo test, with the mean and variance of its draws ({@link runMonteCarloTest}). */
export interface MonteCarloRun {
  /** Draws at least as extreme as the observed statistic. */
  hits: number;
  /** Draws made for the p-value. */
  draws: number;
  /** p̂ = (1 + hits)/(1 + draws). */
  p: number;
  /** Mean of all draws made (at least `nullDraws`). */
  mean: number;
  /** Their sample variance (denominator count − 1; 0 with one draw). */
  variance: number;
  /** Draws behind the mean and variance. */
  nullDraws: number;
  /**
   * Where the stream stopped, when more draws could still change the verdict (it stopped inside
   * the band, or at the draws asked for, below the cap, with no draw past the test's own): pass it
   * back with a larger `plan.draws` to go on without drawing again. Absent otherwise.
   */
  stream?: MonteCarloStream;
}

/** A Monte-Carlo stream stopped part-way ({@link MonteCarloRun.stream}): its draw function and running counts. */
export interface MonteCarloStream {
  draw: () => number;
  observed: number;
  count: number;
  hits: number;
  mean: number;
  m2: number;
}

/**
 * Draws a Monte-Carlo test stream by the confidence sequence of the module comment. With
 * `plan.draws` it draws exactly that many; otherwise it stops at the first look where its interval
 * lies below the band (rejected at any threshold), at or above it (rejected at none), or inside it
 * (its verdict then depends on the other claims, which the audit judges), or at the cap. A draw
 * counts as a hit when T* ≥ T − 1e-9·max(1, |T|) (ties up to rounding, common practice). Draws
 * continue past the test to at least `nullDraws` for the mean and variance (Welford 1962,
 * Technometrics 4:419–420), which do not change the hits. With `resume` (a stream an earlier call
 * returned, of the same observed statistic and fewer draws than `plan.draws`) it continues that
 * stream instead of calling `draw`: the result equals a fresh run on the same random stream.
 * Cost: O(draws made) calls of `draw`, at most max(cap, nullDraws), fewer by the draws resumed;
 * O(J) interval computations.
 * @throws RangeError when the observed statistic is not finite, the plan is invalid, nullDraws
 * is not a non-negative integer, or `resume` does not fit
 * @example runMonteCarloTest(0, () => 1, { cap: 20000, risk: 1e-3, family: 1, band: [0.05, 0.05] }) // { hits: 200, draws: 200, p: 1, … }
 */
export function runMonteCarloTest(observed: number, draw: () => number, plan: MonteCarloPlan, nullDraws = 0, resume?: MonteCarloStream): MonteCarloRun {
  if (!Number.isFinite(observed)) throw new RangeError(`observed statistic must be finite, got ${observed}`);
  if (!(Number.isInteger(nullDraws) && nullDraws >= 0)) throw new RangeError(`draws for the null moments must be a non-negative integer, got ${nullDraws}`);
  const { cap, risk, family, band } = plan;
  const delta = lookRisk(risk, family, cap);
  if (plan.draws !== undefined && !(Number.isInteger(plan.draws) && plan.draws >= 1 && plan.draws <= cap)) {
    throw new RangeError(`draws must be an integer from 1 to the cap ${cap}, got ${plan.draws}`);
  }
  if (resume !== undefined && !(plan.draws !== undefined && resume.observed === observed && resume.count <= plan.draws)) {
    throw new RangeError(`a stream can be resumed only for the same observed statistic and more draws (it has ${resume.count}, asked ${plan.draws})`);
  }
  const [floor, top] = band;
  const bar = observed - 1e-9 * Math.max(1, Math.abs(observed));
  const next = resume?.draw ?? draw;
  let mean = resume?.mean ?? 0;
  let m2 = resume?.m2 ?? 0;
  let count = resume?.count ?? 0;
  let hits = resume?.hits ?? 0;
  const looks = plan.draws !== undefined ? [plan.draws] : lookSchedule(cap);
  let draws = 0;
  let open = false;
  for (const look of looks) {
    while (count < look) {
      const v = next();
      count++;
      const d = v - mean;
      mean += d / count;
      m2 += d * (v - mean);
      if (v >= bar) hits++;
    }
    draws = look;
    if (look === cap) break;
    if (plan.draws !== undefined) {
      open = true;
      break;
    }
    const p = (1 + hits) / (1 + draws);
    const [lo, hi] = clopperPearsonMissing(hits, draws, delta);
    const lower = Math.min(lo, p);
    const upper = Math.max(hi, p);
    if (upper < floor || lower >= top) break;
    if (lower >= floor && upper < top) {
      open = true;
      break;
    }
  }
  const stream = open && count >= nullDraws ? { draw: next, observed, count, hits, mean, m2 } : undefined;
  while (count < nullDraws) {
    const v = next();
    count++;
    const d = v - mean;
    mean += d / count;
    m2 += d * (v - mean);
  }
  return { hits, draws, p: (1 + hits) / (1 + draws), mean, variance: count > 1 ? m2 / (count - 1) : 0, nullDraws: count, ...(stream ? { stream } : {}) };
}

/**
 * {@link runMonteCarloTest} for one claim of an audit: continues the stream kept in `streams`
 * under `key` when it fits (the same observed statistic, no more draws than asked), else starts
 * a fresh one from `makeDraw()`, and keeps the stream it returns (or forgets the key) so that a
 * later call with more draws goes on from there. The result is the same with or without `streams`.
 * Cost: as runMonteCarloTest, less the draws resumed.
 * @example runMonteCarloKept(t, () => sampler(), plan, 200, new Map(), "x\u0000y") // as runMonteCarloTest
 */
export function runMonteCarloKept(
  observed: number,
  makeDraw: () => () => number,
  plan: MonteCarloPlan,
  nullDraws: number,
  streams: Map<string, MonteCarloStream> | undefined,
  key: string,
): MonteCarloRun {
  const kept = streams?.get(key);
  const resume = kept !== undefined && plan.draws !== undefined && kept.observed === observed && kept.count <= plan.draws ? kept : undefined;
  const run = runMonteCarloTest(observed, resume ? resume.draw : makeDraw(), plan, nullDraws, resume);
  if (streams) {
    if (run.stream) streams.set(key, run.stream);
    else streams.delete(key);
  }
  return run;
}

/**
 * Draws that let a claim with no hit at all be decided against `floor` (its interval's upper end
 * below it), doubled for room, at least {@link MIN_DEFAULT_CAP} and at most {@link MAX_CAP}: with
 * no hit the upper Clopper–Pearson end is 1 − (δ/2)^(1/n), below the floor from
 * n > ln(2/δ)/(−ln(1 − floor)) ≈ ln(2mJ/ε)/floor draws. J depends on the cap, so the cap is found
 * by iteration (it converges in a few steps). A missing or invalid floor counts as 0.05.
 * Cost: O(log cap) per step, a few steps.
 * @example defaultPermutationCap(0.05, 1e-3, 1)        // 10000
 * @example defaultPermutationCap(0.05 / 120, 1e-3, 120) // 70,000 or so
 */
export function defaultPermutationCap(floor: number | undefined, risk: number, family: number): number {
  const f = floor !== undefined && floor > 0 && floor <= 1 ? floor : 0.05;
  let cap = MIN_DEFAULT_CAP;
  for (let it = 0; it < 20; it++) {
    const delta = lookRisk(risk, family, cap);
    const n = Math.ceil(Math.log(2 / delta) / -Math.log1p(-f));
    const next = Math.min(MAX_CAP, Math.max(MIN_DEFAULT_CAP, 2 * n));
    if (next <= cap) break;
    cap = next;
  }
  return cap;
}

/**
 * Draws that would likely decide a claim whose estimate p̂ sits near its threshold t: the n at
 * which the half-width z·√(p̂(1 − p̂)/n) of the sequence's interval (z = Φ⁻¹(1 − δ/2), δ at that
 * n's cap) falls below |p̂ − t| (normal approximation to the binomial), rounded up to two
 * significant digits; `undefined` when that is more than {@link MAX_CAP} (or p̂ = t).
 * Cost: O(log n) per step, a few steps.
 * @example proposedDraws(0.061, 0.05, 1e-3, 1) // about 8,000
 */
export function proposedDraws(pHat: number, threshold: number, risk: number, family: number): number | undefined {
  const gap = Math.abs(pHat - threshold);
  if (!(gap > 0)) return undefined;
  const v = Math.max(pHat * (1 - pHat), 1e-12);
  let n = FIRST_LOOK;
  for (let it = 0; it < 30; it++) {
    const z = normalQuantile(1 - lookRisk(risk, family, Math.min(MAX_CAP, Math.max(1, Math.ceil(n)))) / 2);
    const need = (z * z * v) / (gap * gap);
    if (need <= n) break;
    n = need;
    if (n > MAX_CAP) return undefined;
  }
  const digits = 10 ** Math.max(0, Math.floor(Math.log10(n)) - 1);
  return Math.min(MAX_CAP, Math.ceil(n / digits) * digits);
}

/** What each Monte-Carlo claim reports about its p-value ({@link monteCarloSummary}). */
export interface MonteCarloSummary {
  /** Draws made (also the claim's `B`). */
  draws: number;
  /** Draws at least as extreme as the observed statistic. */
  hits: number;
  /** The cap on draws. */
  cap: number;
  /** Monte-Carlo standard error of p: √(p̂(1 − p̂)/draws). */
  se: number;
  /** 99% Clopper–Pearson interval for the permutation p-value at the draws made (not the sequence's wider one). */
  ci99: [number, number];
}

/**
 * The Monte-Carlo standard error √(p̂(1 − p̂)/n) and the 99% Clopper–Pearson interval of a
 * p-value from `hits` in `draws` draws capped at `cap`. Cost: O(1).
 * Source: Clopper & Pearson (1934), Biometrika 26:404–413.
 * @throws RangeError as clopperPearson
 * @example monteCarloSummary(5, 200, 10000) // { draws: 200, hits: 5, cap: 10000, se: ≈ 0.0113, ci99: [≈ 0.0054, ≈ 0.069] }
 */
export function monteCarloSummary(hits: number, draws: number, cap: number): MonteCarloSummary {
  const p = (1 + hits) / (1 + draws);
  return { draws, hits, cap, se: Math.sqrt((p * (1 - p)) / draws), ci99: clopperPearson(hits, draws, REPORTED_LEVEL) };
}

/** The part of a {@link MonteCarloPlan} the audit hands to a test method (the cap comes from `--permutations` or {@link defaultPermutationCap}). */
export type MonteCarloRequest = Omit<MonteCarloPlan, "cap">;

/**
 * The plan of one claim's Monte-Carlo test from its context: cap `permutations`, else
 * {@link defaultPermutationCap} of the decision floor; risk, sharing and band from `monteCarlo`,
 * else ε = 1e-3 for this claim alone and the band [floor, max(floor, 0.05)]. Cost: O(log cap).
 * @example planOf({ decisionFloor: 0.05 }) // { cap: 10000, risk: 0.001, family: 1, band: [0.05, 0.05] }
 */
export function planOf(ctx: { permutations?: number; decisionFloor?: number; monteCarlo?: MonteCarloRequest }): MonteCarloPlan {
  const floor = ctx.decisionFloor !== undefined && ctx.decisionFloor > 0 && ctx.decisionFloor <= 1 ? ctx.decisionFloor : 0.05;
  const req: MonteCarloRequest = ctx.monteCarlo ?? { risk: DEFAULT_RESAMPLING_RISK, family: 1, band: [floor, Math.max(floor, 0.05)] };
  const cap = ctx.permutations ?? defaultPermutationCap(req.band[0], req.risk, req.family);
  return { ...req, cap };
}

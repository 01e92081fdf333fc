/**
 * A confidence sequence for the permutation p-value of a Monte-Carlo test.
 *
 * Terms. The draws of a Monte-Carlo test are Bernoulli(π) hits, π the permutation p-value. The
 * stream is judged only at fixed *looks*: n = 200, 400, 800, … (doubling) below the cap B, then B;
 * J looks in all. At each look the Clopper–Pearson interval for π (Clopper & Pearson 1934,
 * Biometrika 26:404–413) is computed at the miss probability δ = ε/(m·J), ε the resampling risk
 * shared by m claims. By Bonferroni's inequality all m·J intervals cover their π at once with
 * probability ≥ 1 − ε, however the looks at which drawing stops are chosen: a *confidence
 * sequence* over the looks. See `monteCarloDecision.ts` for how the audit uses it.
 */
import { clopperPearsonMissing } from "./clopperPearson.js";

/** The first look: draws before the first judgement (also the draws behind the null moments of the effect calibration). */
export const FIRST_LOOK = 200;

/**
 * The looks of a stream capped at `cap` draws: 200, 400, 800, … below the cap, then the cap.
 * Cost: O(log cap).
 * @throws RangeError when cap is not a positive integer
 * @example lookSchedule(1000) // [200, 400, 800, 1000]
 * @example lookSchedule(99)   // [99]
 */
export function lookSchedule(cap: number): number[] {
  if (!(Number.isInteger(cap) && cap >= 1)) throw new RangeError(`the cap on draws must be a positive integer, got ${cap}`);
  const out: number[] = [];
  for (let n = FIRST_LOOK; n < cap; n *= 2) out.push(n);
  out.push(cap);
  return out;
}

/**
 * The first look after `draws` (the cap when none is left before it). Cost: O(log cap).
 * @example nextLook(400, 1000) // 800
 * @example nextLook(800, 1000) // 1000
 */
export function nextLook(draws: number, cap: number): number {
  for (const n of lookSchedule(cap)) if (n > draws) return n;
  return cap;
}

/**
 * Miss probability δ = ε/(m·J) of each interval of the confidence sequence: ε split over the m
 * claims sharing it and the J looks of a stream capped at `cap` (Bonferroni). Cost: O(log cap).
 * @throws RangeError when risk is not in (0, 1) or family is not a positive integer
 * @example lookRisk(1e-3, 1, 1000) // 2.5e-4 (4 looks)
 */
export function lookRisk(risk: number, family: number, cap: number): number {
  if (!(risk > 0 && risk < 1)) throw new RangeError(`resampling risk must be in (0, 1), got ${risk}; pass e.g. 0.001`);
  if (!(Number.isInteger(family) && family >= 1)) throw new RangeError(`number of claims sharing the risk must be a positive integer, got ${family}`);
  return risk / (family * lookSchedule(cap).length);
}

/**
 * The interval of the confidence sequence for π after `draws` draws with `hits` hits (a look of the
 * schedule of `cap`): Clopper–Pearson at miss probability {@link lookRisk}, widened to contain
 * p̂ = (1 + hits)/(1 + draws). Cost: O(log cap) plus two beta quantiles.
 * Sources: Clopper & Pearson (1934), Biometrika 26:404–413; Bonferroni's inequality over looks and claims.
 * @throws RangeError as clopperPearsonMissing and lookRisk
 * @example sequenceInterval(0, 20000, 20000, 1e-3, 1) // [0, ≈ 0.00054]
 */
export function sequenceInterval(hits: number, draws: number, cap: number, risk: number, family: number): [number, number] {
  const [lo, hi] = clopperPearsonMissing(hits, draws, lookRisk(risk, family, cap));
  const p = (1 + hits) / (1 + draws);
  return [Math.min(lo, p), Math.max(hi, p)];
}

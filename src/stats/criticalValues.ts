/**
 * The thresholds that make adjusted verdicts, and verdicts of p-values known only to an interval.
 *
 * Terms. A claim is *rejected* when its adjusted p-value (Holm step-down, Benjamini–Hochberg
 * step-up, or none; `adjustPValues`) is below α. Its *critical value* is the threshold t with
 * "rejected exactly when p < t", the other claims' p-values held fixed. Both adjustments are
 * *monotone*: lowering any p-value never removes a rejection. So when each p-value is only known
 * to lie in an interval, the rejections with every p at its upper end are a subset of those at the
 * true values, and those with every p at its lower end a superset: a claim rejected (or not) both
 * ways is *decided* (the framework of Gandy & Hahn 2016, Scand. J. Statist. 43:1046–1063, for
 * Monte-Carlo multiple testing — cited from memory).
 */
import type { AdjustMethod } from "./adjustPValues.js";
import { adjustPValues } from "./adjustPValues.js";

/**
 * Critical values of the claims' verdicts: t[i] such that claim i is rejected by the adjustment at
 * level α exactly when p[i] < t[i], the other p-values held fixed (see the module comment).
 * Holm: with the others sorted q₁ ≤ … ≤ q_{k−1}, s the length of their longest prefix with
 * q_j < α/(k − j + 1), t = α/(k − s). Benjamini–Hochberg: M the largest m with q_m < α(m + 1)/k
 * (0 if none), t = α(M + 1)/k. None: t = α. Derived from the step-down and step-up rules of Holm
 * (1979) and Benjamini & Hochberg (1995).
 * Cost: O(k log k).
 * @throws RangeError when a p-value is not in [0, 1]
 * @example criticalValues([0.01, 0.04, 0.03], "holm", 0.05) // [0.05/3, 0.05/2, 0.05/2]
 */
export function criticalValues(p: readonly number[], adjust: AdjustMethod, alpha: number): number[] {
  p.forEach((v, i) => {
    if (!(v >= 0 && v <= 1)) throw new RangeError(`p-value at position ${i} is ${v}; every p-value must be a number between 0 and 1`);
  });
  const k = p.length;
  if (adjust === "none" || k <= 1) return p.map(() => alpha);
  const order = Array.from({ length: k }, (_, i) => i).sort((a, b) => p[a]! - p[b]! || a - b);
  const sorted = order.map((i) => p[i]!);
  const pos = new Int32Array(k);
  order.forEach((i, r) => (pos[i] = r));
  const out = new Array<number>(k);
  if (adjust === "holm") {
    // others at rank j (1-based): sorted[j − 1] when j ≤ pos, sorted[j] when j > pos (0-based pos)
    // A: first failing rank among the unshifted prefix; B[j]: first failing rank ≥ j among the shifted.
    let firstA = Infinity;
    for (let j = 1; j <= k; j++) {
      if (!(Math.min(1, (k - j + 1) * sorted[j - 1]!) < alpha)) {
        firstA = j;
        break;
      }
    }
    const firstB = new Float64Array(k + 1).fill(Infinity); // firstB[j], j = 1..k−1
    for (let j = k - 1; j >= 1; j--) firstB[j] = !(Math.min(1, (k - j + 1) * sorted[j]!) < alpha) ? j : firstB[j + 1]!;
    for (let i = 0; i < k; i++) {
      const r = pos[i]!; // the claim's 0-based position; others' ranks 1..r are unshifted
      const fail = firstA <= r ? firstA : r + 1 <= k - 1 ? firstB[r + 1]! : Infinity;
      const s = Number.isFinite(fail) ? fail - 1 : k - 1;
      out[i] = alpha / (k - s);
    }
    return out;
  }
  if (adjust === "bh") {
    // others at rank m: sorted[m − 1] for m ≤ pos, sorted[m] for m > pos; the conditions are written
    // as adjustPValues computes them (k·q/(m + 1) < α, not q < α(m + 1)/k), so that rounding agrees
    const lastA = new Float64Array(k + 1); // lastA[r]: largest m ≤ r with sorted[m − 1] < α(m + 1)/k
    for (let m = 1; m <= k; m++) lastA[m] = Math.min(1, (k * sorted[m - 1]!) / (m + 1)) < alpha ? m : lastA[m - 1]!;
    const lastB = new Float64Array(k + 1); // lastB[r]: largest m > r (m ≤ k − 1) with sorted[m] < α(m + 1)/k
    for (let r = k - 2; r >= 0; r--) {
      const m = r + 1; // the smallest candidate; larger ones are lastB[r + 1]'s
      lastB[r] = lastB[r + 1]! > 0 ? lastB[r + 1]! : Math.min(1, (k * sorted[m]!) / (m + 1)) < alpha ? m : 0;
    }
    for (let i = 0; i < k; i++) {
      const r = pos[i]!;
      const M = lastB[r]! > 0 ? lastB[r]! : lastA[r]!;
      out[i] = (alpha * (M + 1)) / k;
    }
    return out;
  }
  throw new RangeError(`unknown adjustment method "${String(adjust)}"; use "holm", "bh" or "none"`);
}

/** One claim for {@link bracketVerdicts}: its p-value's interval (a point for a p-value without Monte-Carlo error) and whether its effect is large enough to be contradicted at all. */
export interface BracketClaim {
  lower: number;
  upper: number;
  /** |effect| ≥ the relevance floor: the p-value decides. Otherwise never contradicted. */
  relevant: boolean;
}

/**
 * Verdicts with every p-value at its interval's upper end and at its lower end (see the module
 * comment): rejected[i] at the upper ends implies rejected at the true values implies rejected at
 * the lower ends (monotone adjustments). `decided[i]` when the two agree.
 * Cost: O(k log k). Sources: Gandy & Hahn (2016), Scand. J. Statist. 43:1046–1063 (from memory).
 * @example bracketVerdicts([{ lower: 0.01, upper: 0.02, relevant: true }], "holm", 0.05) // { decided: [true], rejectedHigh: [true], … }
 */
export function bracketVerdicts(claims: readonly BracketClaim[], adjust: AdjustMethod, alpha: number): { decided: boolean[]; rejectedHigh: boolean[]; rejectedLow: boolean[] } {
  const high = adjustPValues(claims.map((c) => c.upper), adjust);
  const low = adjustPValues(claims.map((c) => c.lower), adjust);
  const rejectedHigh = claims.map((c, i) => c.relevant && high[i]! < alpha);
  const rejectedLow = claims.map((c, i) => c.relevant && low[i]! < alpha);
  return { decided: rejectedHigh.map((r, i) => r === rejectedLow[i]), rejectedHigh, rejectedLow };
}

/**
 * Multiple-testing adjustment of p-values.
 *
 * Terms. For m p-values sorted ascending, p_(1) ≤ … ≤ p_(m):
 * - Holm step-down (Holm 1979, Scandinavian Journal of Statistics 6:65–70) controls the
 *   family-wise error rate: adjusted p_(i) = max_{h ≤ i} min(1, (m − h + 1)·p_(h)).
 * - Benjamini–Hochberg step-up (Benjamini & Hochberg 1995, Journal of the Royal Statistical
 *   Society B 57:289–300) controls the false discovery rate under independence or positive
 *   dependence: adjusted p_(i) = min_{h ≥ i} min(1, m·p_(h)/h).
 * An adjusted p-value is the smallest level at which the procedure rejects that hypothesis,
 * so "reject when adjusted p ≤ α" reproduces the procedure at level α.
 */

export type AdjustMethod = "holm" | "bh" | "none";

/**
 * Adjusted p-values by Holm step-down, Benjamini–Hochberg step-up, or none (a copy), in the
 * input order. The results are monotone in the raw p-values, never below them, capped at 1,
 * and equal raw p-values get equal adjusted values whatever their order. Cost: O(m log m).
 * Sources: Holm (1979), Scand. J. Statist. 6:65–70; Benjamini & Hochberg (1995), JRSS B 57:289–300.
 * @throws {RangeError} when a p-value is not a number in [0, 1] (the message names its position)
 * @example adjustPValues([0.01, 0.04, 0.03], "holm") // [0.03, 0.06, 0.06]
 * @example adjustPValues([0.01, 0.04, 0.03], "bh") // [0.03, 0.04, 0.04]
 */
export function adjustPValues(p: readonly number[], method: AdjustMethod): number[] {
  p.forEach((v, idx) => {
    if (!(typeof v === "number" && v >= 0 && v <= 1)) {
      throw new RangeError(`p-value at position ${idx} is ${v}; every p-value must be a number between 0 and 1`);
    }
  });
  const m = p.length;
  if (method === "none") return p.slice();
  // stable ascending order (Array.prototype.sort is stable since ES2019)
  const order = Array.from({ length: m }, (_, idx) => idx).sort((a, b) => p[a]! - p[b]!);
  const out = new Array<number>(m);
  if (method === "holm") {
    let running = 0;
    for (let h = 0; h < m; h++) {
      const idx = order[h]!;
      running = Math.max(running, Math.min(1, (m - h) * p[idx]!));
      out[idx] = running;
    }
    return out;
  }
  if (method === "bh") {
    let running = 1;
    for (let h = m - 1; h >= 0; h--) {
      const idx = order[h]!;
      running = Math.min(running, Math.min(1, (m * p[idx]!) / (h + 1)));
      out[idx] = running;
    }
    return out;
  }
  throw new RangeError(`unknown adjustment method "${String(method)}"; use "holm", "bh" or "none"`);
}

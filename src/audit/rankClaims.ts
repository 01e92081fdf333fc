import type { Verdict } from "./types.js";

export interface Rankable {
  verdict: Verdict;
  p_adjusted: number;
  log_p: number;
  effect: number;
  x: string;
  y: string;
}

/**
 * Ranking order of tested claims: contradicted first; then by adjusted p ascending
 * (ties, including adjusted p-values capped at 1 or underflowed, by the unadjusted log p),
 * then by |effect| descending; `by: "effect"` sorts by |effect| descending after the verdict.
 * Final ties by names, so the order is total and deterministic. Cost: O(k log k).
 */
export function compareClaims(by: "p" | "effect") {
  return (a: Rankable, b: Rankable): number => {
    if (a.verdict !== b.verdict) return a.verdict === "contradicted" ? -1 : 1;
    const ea = Math.abs(a.effect);
    const eb = Math.abs(b.effect);
    if (by === "effect") {
      if (ea !== eb) return eb - ea;
    }
    if (a.p_adjusted !== b.p_adjusted) return a.p_adjusted - b.p_adjusted;
    if (a.log_p !== b.log_p) return a.log_p - b.log_p;
    if (ea !== eb) return eb - ea;
    if (a.x !== b.x) return a.x < b.x ? -1 : 1;
    if (a.y !== b.y) return a.y < b.y ? -1 : 1;
    return 0;
  };
}

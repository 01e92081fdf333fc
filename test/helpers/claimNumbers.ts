/**
 * Comparing two tested claims number by number (the pooled claim against the stacked rows', a
 * matrix's claim against the rows', a site alone against its own test): the relative difference
 * of each number, with a message naming the claim, the number and both values.
 */
import { expect } from "vitest";
import type { TestedClaim } from "../../src/audit/types.js";

/** |a − b| / max(|a|, |b|), 0 when equal (so two zeros agree). */
export const relDiff = (a: number, b: number): number => (a === b ? 0 : Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b), 1e-300));

export type ClaimNumber = "statistic" | "p" | "log_p" | "effect" | "ci low" | "ci high" | "linear check p" | "detectable";

const READ: Record<ClaimNumber, (c: TestedClaim) => number> = {
  statistic: (c) => c.statistic,
  p: (c) => c.p,
  log_p: (c) => c.log_p,
  effect: (c) => c.effect,
  "ci low": (c) => c.ci[0],
  "ci high": (c) => c.ci[1],
  "linear check p": (c) => (c.details?.linear_adjustment as { p: number }).p,
  detectable: (c) => c.detectable ?? NaN,
};

/** The test's numbers: statistic, p, log p, effect and interval. */
export const TEST_NUMBERS: readonly ClaimNumber[] = ["statistic", "p", "log_p", "effect", "ci low", "ci high"];

/**
 * Expect each of `numbers` of `actual` within `tol` (relative, {@link relDiff}) of `expected`'s;
 * with `bothNaN` a number that is NaN in both (e.g. no detectable effect) is skipped.
 */
export function expectClaimNumbersClose(actual: TestedClaim, expected: TestedClaim, tol: number, label: string, numbers: readonly ClaimNumber[] = TEST_NUMBERS, bothNaN = false): void {
  for (const what of numbers) {
    const a = READ[what](actual);
    const b = READ[what](expected);
    if (bothNaN && Number.isNaN(a) && Number.isNaN(b)) continue;
    expect(relDiff(a, b), `${label} ${what}: ${a} vs ${b}`).toBeLessThan(tol);
  }
}

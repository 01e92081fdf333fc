/**
 * Calibration of the default tests at n = 500 (and the sparse-strata case at n = 300): under
 * true claims in cohort-shaped data (binary, skewed, non-linear, integer-coded, heavy-tailed,
 * missing values), the rejection count at α = 0.05 over seeded replications lies in the exact
 * central 99% band of Binomial(R, 0.05) (common practice; computed from the pmf by
 * `binomialInterval`, e.g. [13, 38] for R = 500: scipy.stats.binom.ppf(0.005, 500, 0.05) = 13).
 */
import { describe, expect, it } from "vitest";
import { calibrate } from "../../helpers/calibrationRun.js";
import { calibrationCases } from "./cases.js";

describe("default tests keep their level at n = 500 (exact 99% binomial band)", () => {
  for (const c of calibrationCases(500)) {
    it(`${c.scenario.id}, n = ${c.n}, --method ${c.method}: ${c.scenario.label}`, () => {
      const row = calibrate(c.scenario, c.n, c.replications, c.method);
      expect(row.rejected, JSON.stringify(row)).toBeGreaterThanOrEqual(row.band[0]);
      expect(row.rejected, JSON.stringify(row)).toBeLessThanOrEqual(row.band[1]);
    }, 60_000);
  }
});

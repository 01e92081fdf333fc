/**
 * Calibration of the default tests at n = 5,000, first half of the cases (the other half is in
 * n5000b.test.ts, so that the two run in parallel): rejection counts at α = 0.05 over 400 seeded
 * replications inside the exact central 99% band of Binomial(400, 0.05) (common practice;
 * `binomialInterval`).
 */
import { describe, expect, it } from "vitest";
import { calibrate } from "../../helpers/calibrationRun.js";
import { calibrationCases } from "./cases.js";

const cases = calibrationCases(5000);
describe("default tests keep their level at n = 5,000 (exact 99% binomial band), part 1", () => {
  for (const c of cases.slice(0, Math.ceil(cases.length / 2))) {
    it(`${c.scenario.id}, n = ${c.n}, --method ${c.method}: ${c.scenario.label}`, () => {
      const row = calibrate(c.scenario, c.n, c.replications, c.method);
      expect(row.rejected, JSON.stringify(row)).toBeGreaterThanOrEqual(row.band[0]);
      expect(row.rejected, JSON.stringify(row)).toBeLessThanOrEqual(row.band[1]);
    }, 120_000);
  }
});

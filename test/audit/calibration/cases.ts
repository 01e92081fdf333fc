/**
 * The calibration table of the default tests: which scenario, at which n, with which --method.
 * The README's calibration table is this list run by `npm run calibration` (scripts/calibrationTable.ts);
 * the test files run it and require every count inside its exact 99% binomial band.
 */
import type { AuditSettings } from "../../../src/audit/types.js";
import { scenarios, type Scenario } from "../../helpers/cohortScenarios.js";

export interface CalibrationCase {
  scenario: Scenario;
  n: number;
  replications: number;
  method: AuditSettings["method"];
}

const byId = new Map(scenarios().map((s) => [s.id, s]));
const of = (id: string): Scenario => byId.get(id)!;

/** Replications: 500 at n = 500 (and the sparse case), 400 at n = 5,000 (at least 400, as asked). */
export function calibrationCases(n: 500 | 5000): CalibrationCase[] {
  const R = n === 500 ? 500 : 400;
  const auto = ["binary-logistic", "binary-logistic-strong", "quadratic", "threshold", "nominal-integer-codes", "lognormal", "heavy-tails", "missing-by-s", "mixed-set", "nominal-side", "ordinal-pair"];
  const cases: CalibrationCase[] = auto.map((id) => ({ scenario: of(id), n, replications: R, method: "auto" }));
  for (const id of ["lognormal", "heavy-tails"]) cases.push({ scenario: of(id), n, replications: R, method: "rank" });
  if (n === 500) cases.push({ scenario: of("sparse-strata"), n: 300, replications: 500, method: "auto" });
  return cases;
}

/**
 * Replicated calibration runs of the audit's default tests on the scenarios of
 * `cohortScenarios.ts`: each replication builds the table as from a file (`createTable`: types
 * inferred), a graph with an arrow from every member of S to x and to y (and among the members of
 * S, so that x ⫫ y | S is the only claim), runs `runAudit`, and counts a rejection when the claim's
 * p-value is below alpha. Replication r draws from the stream of (r, "calibration:<id>:<n>").
 * Invented data.
 */
import { runAudit } from "../../src/audit/runAudit.js";
import type { AuditSettings } from "../../src/audit/types.js";
import { createTable } from "../../src/data/createTable.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { createRng } from "../../src/stats/rng.js";
import type { Scenario } from "./cohortScenarios.js";
import { binomialInterval } from "./simulate.js";

export interface CalibrationRow {
  id: string;
  label: string;
  n: number;
  method: AuditSettings["method"];
  replications: number;
  rejected: number;
  /** Exact central 99% binomial band of the count under a calibrated test. */
  band: [number, number];
  /** Tests the audit chose, with counts. */
  tests: Record<string, number>;
}

export function calibrate(scenario: Scenario, n: number, replications: number, method: AuditSettings["method"] = "auto", alpha = 0.05): CalibrationRow {
  let rejected = 0;
  const tests: Record<string, number> = {};
  for (let r = 0; r < replications; r++) {
    const data = scenario.make(createRng(r, `calibration:${scenario.id}:${n}`), n);
    const table = createTable(data.columns);
    const given = data.given;
    const arrows: [string, string][] = given.flatMap((g) => [[g, "x"], [g, "y"]] as [string, string][]);
    given.forEach((a, i) => given.slice(i + 1).forEach((b) => arrows.push([a, b])));
    const graph = createGraph({ nodes: [...given, "x", "y"], arrows });
    const result = runAudit(graph, table, { settings: { method, seed: r } });
    const claim = result.claims.find((c) => (c.x === "x" && c.y === "y") || (c.x === "y" && c.y === "x"));
    if (!claim) {
      const why = result.untestable.find((u) => (u.x === "x" && u.y === "y") || (u.x === "y" && u.y === "x"));
      throw new Error(`${scenario.id}, n = ${n}, replication ${r}: the claim was not tested (${why?.reason ?? "no claim"})`);
    }
    tests[claim.test] = (tests[claim.test] ?? 0) + 1;
    if (claim.p < alpha) rejected++;
  }
  return { id: scenario.id, label: scenario.label, n, method, replications, rejected, band: binomialInterval(replications, alpha), tests };
}

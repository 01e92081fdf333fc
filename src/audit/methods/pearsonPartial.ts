/**
 * Test method "pearson-partial": the exact t test of zero Pearson partial correlation.
 *
 * Terms. For a claim x ⫫ y | given, the design columns of x and y (their scores) are
 * correlated after removing their linear dependence on the design columns of the given set
 * (continuous and binary members as they are; ordinal and nominal members as one 0/1 indicator
 * per level but the first, never as a score). The partial correlation r
 * comes from the covariance over the complete cases (`PatternMoments.momentsFor`), by Cholesky;
 * t = r·√((n − 2 − c)/(1 − r²)) on n − 2 − c df with c the number of given design columns
 * (Fisher 1924, Metron 3:329–332). The interval at confidence 1 − alpha is Fisher's z interval
 * tanh(atanh r ± t_{ν,1−α/2}·|atanh r / t|) with the standard error the t test implies
 * (`gcmCorrelationInterval`), so it excludes 0 exactly when the t test's p < alpha (the textbook
 * 1/√(n − c − 3) standard error does not quite: at n = 20, c = 0 it excludes 0 up to p = 0.0507).
 */
import type { Claim, TestName } from "../types.js";
import type { ClaimTypes, MethodResult, TestMethod, TestContext } from "../TestMethod.js";
import type { PatternMoments } from "../../data/Moments.js";
import { claimMoments, missingIndicatorsReason } from "./claimMoments.js";
import { linearAdjustment } from "./adjustmentDetails.js";
import type { Table } from "../../data/Table.js";
import { partialCorrelationWithReason } from "../../stats/partialCorrelation.js";
import { partialCorrelationTest } from "../../stats/partialCorrelationTest.js";
import { gcmCorrelationInterval } from "../../stats/generalisedCovariance.js";

/** Whether x and y are scored (continuous, binary or ordinal); the given set may hold any types. */
export function acceptsScoredPair(types: ClaimTypes): boolean {
  return types.x !== "nominal" && types.y !== "nominal";
}

/**
 * Partial-correlation test of one claim on the pattern moments `pm`. Returns an untestable
 * reason in plain words when there are too few complete cases, a column is constant, or a set
 * is collinear.
 * The interval is at confidence 1 − alpha. Cost: O(P·d² + g³) for P missing-data patterns, d
 * design columns and g given design columns, plus about 60 incomplete-beta evaluations.
 * Source: Fisher (1924), Metron 3:329–332.
 * @example runPartialCorrelation("pearson-partial", moments, { x: "a", y: "b", given: ["c"] }, table)
 */
export function runPartialCorrelation(name: TestName, pm: PatternMoments, claim: Claim, table: Table, alpha = 0.05): MethodResult {
  const m = claimMoments(pm, table, [claim.x, claim.y], claim.given);
  if (!m) return { ok: false, reason: missingIndicatorsReason(claim.given) };
  const n = m.n;
  const k = m.design.length;
  const xi = m.design.findIndex((d) => d.source === claim.x);
  const yi = m.design.findIndex((d) => d.source === claim.y);
  const scoredOnce = (idx: number, v: string): boolean => idx >= 0 && m.design.filter((d) => d.source === v).length === 1;
  if (!scoredOnce(xi, claim.x) || !scoredOnce(yi, claim.y)) {
    return { ok: false, reason: `"${!scoredOnce(xi, claim.x) ? claim.x : claim.y}" is nominal; a partial correlation needs a scored (continuous, binary or ordinal) variable` };
  }
  const given: number[] = [];
  for (let idx = 0; idx < k; idx++) if (idx !== xi && idx !== yi) given.push(idx);
  const c = given.length;
  const cases = `${n} complete case${n === 1 ? "" : "s"}`;
  if (n === 0) {
    return { ok: false, reason: `no row has ${[claim.x, claim.y, ...claim.given].map((v) => `"${v}"`).join(", ")} all observed` };
  }
  if (n - 2 - c < 1) {
    return { ok: false, reason: `only ${cases} for ${c} conditioning column${c === 1 ? "" : "s"}; the test needs at least ${c + 3}` };
  }
  const pc = partialCorrelationWithReason(m.cov, k, xi, yi, given);
  if (!("r" in pc)) {
    const col = `"${m.design[pc.column]!.name}"`;
    switch (pc.reason) {
      case "constant":
        return { ok: false, reason: `${col} is constant among the ${cases}` };
      case "collinear-given":
        return { ok: false, reason: `the conditioning set is collinear: ${col} is a linear function of the others among the ${cases}` };
      case "collinear-with-given":
        return { ok: false, reason: `${col} is a linear function of the conditioning set among the ${cases}` };
    }
  }
  const r = pc.r;
  const test = partialCorrelationTest(r, n, c);
  if ("reason" in test) return { ok: false, reason: test.reason };
  return {
    ok: true,
    outcome: {
      test: name,
      n,
      statistic: test.t,
      df: test.df,
      p: test.p,
      log_p: test.log_p,
      effect: r,
      ci: gcmCorrelationInterval(r, test.t, test.df, n, c, 1 - alpha),
      p_method: "asymptotic",
      details: { r, c, adjustment: linearAdjustment(table, claim.given), sides: [claim.x, claim.y].map((variable) => ({ variable, model: "least squares of the scores on the adjustment" })) },
    },
  };
}

/**
 * Pearson partial correlation test method ("pearson-partial"): accepts claims whose x and y
 * are continuous, binary or ordinal (any given set) and runs the exact t test of zero partial
 * correlation on the moments of the scores. Cost: as {@link runPartialCorrelation}.
 * Source: Fisher (1924), Metron 3:329–332.
 * @example pearsonPartial.run({ x: "a", y: "b", given: ["c"] }, ctx) // { ok: true, outcome: { test: "pearson-partial", ... } }
 */
export const pearsonPartial: TestMethod = {
  name: "pearson-partial",
  accepts: acceptsScoredPair,
  run(claim: Claim, ctx: TestContext): MethodResult {
    return runPartialCorrelation("pearson-partial", ctx.moments, claim, ctx.table, ctx.alpha ?? 0.05);
  },
};

/**
 * Coverage of the default test's interval (gcm, one residual product) for a true non-zero effect,
 * in the calibration table's scenarios that can carry one (test/helpers/cohortScenarios.ts with a
 * dependence d of y on x): heavy-tailed errors (t, 3 df), binary x and y (two strengths of
 * dependence on S), lognormal x and y; n = 500 and 5,000 (the row path), 400 seeded replications
 * each. The true residual correlation E[Cov(x, y | S)] / √(E[Var(x | S)] E[Var(y | S)]) comes from
 * outside the estimator (scripts/interval_reference.py: closed forms for the t and lognormal
 * scenarios, scipy.integrate.quad for the binary ones), and the count of intervals that hold it
 * must lie inside the exact central 99% binomial band around 95% (scipy.stats.binom: 368–390 of
 * 400). Regression: Fisher's z interval with the test's null standard error covered binary sides
 * in only 88–90% of replications.
 */
import { describe, expect, it } from "vitest";
import { runAudit } from "../../src/audit/runAudit.js";
import { createTable } from "../../src/data/createTable.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { createRng } from "../../src/stats/rng.js";
import { scenarios } from "../helpers/cohortScenarios.js";
import { intervalReference } from "../fixtures/intervals/loadIntervalReference.js";

const { ref, from } = intervalReference();
const REPLICATIONS = 400;

/** Replications whose interval holds the truth, of scenario `id` with dependence d at n rows. */
function covered(id: string, d: number, n: number, truth: number): number {
  const scenario = scenarios(d).find((s) => s.id === id)!;
  let hits = 0;
  for (let r = 0; r < REPLICATIONS; r++) {
    const data = scenario.make(createRng(r, `coverage:${id}:${n}`), n);
    const table = createTable(data.columns);
    const graph = createGraph({ nodes: [...data.given, "x", "y"], arrows: data.given.flatMap((g) => [[g, "x"], [g, "y"]] as [string, string][]) });
    const claim = runAudit(graph, table, { settings: { seed: r } }).claims[0]!;
    expect(claim.test).toBe("gcm");
    expect(claim.details?.interval_variance, "the ADF construction was used").toBeDefined();
    if (claim.ci[0] <= truth && truth <= claim.ci[1]) hits++;
  }
  return hits;
}

describe(`coverage of the default test's interval [reference: ${from}]`, () => {
  const [lo, hi] = ref.coverage.band_400; // scipy.stats.binom.ppf(0.005, 400, 0.95), binom.isf(0.005, 400, 0.95)
  it("the band is the exact central 99% binomial band of 400 trials around 95%", () => {
    expect([lo, hi]).toEqual([368, 390]); // scipy.stats.binom (1.17)
  });
  for (const id of ["heavy-tails", "binary-logistic", "binary-logistic-strong", "lognormal"]) {
    const { d, truth } = ref.coverage[id]!;
    for (const n of [500, 5000]) {
      it(`${id}, d = ${d} (true residual correlation ${truth.toFixed(4)}), n = ${n}: the 95% interval holds it in ${lo}–${hi} of ${REPLICATIONS} replications`, () => {
        const hits = covered(id, d, n, truth);
        expect(hits).toBeGreaterThanOrEqual(lo);
        expect(hits).toBeLessThanOrEqual(hi);
      }, 120_000);
    }
  }
});

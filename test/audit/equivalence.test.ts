/**
 * Equivalence tests (two one-sided tests, Schuirmann 1987) of omitted arrows.
 * Worked example: the correlation TOST of Goertzen & Cribbie (2010, Br. J. Math. Stat. Psychol.
 * 63:527–537, the Fisher-z formula of p. 531) as documented with the example n = 100, r = 0.02,
 * bounds ±0.3, α = 0.05 in the TOSTER R package's reference manual (TOSTr). With that formula,
 * scipy gives the 90% interval [−0.14596, 0.18486] and one-sided p-values 0.000586 and 0.00218,
 * both below 0.05: equivalent (numpy.arctanh, scipy.stats.norm.ppf/sf/cdf, run for this test).
 */
import { describe, expect, it } from "vitest";
import { claimGroup, equivalenceOf, groupCounts } from "../../src/audit/equivalence.js";
import { runAudit } from "../../src/audit/runAudit.js";
import { createTable } from "../../src/data/createTable.js";
import { simulateFromGraph } from "../../src/data/simulateFromGraph.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { studentTTwoSided } from "../../src/stats/pvalues.js";

/** A partial-correlation outcome with no adjustment, as the linear test reports it. */
function pearson(r: number, n: number) {
  const df = n - 2;
  const t = r * Math.sqrt(df / (1 - r * r));
  const p = studentTTwoSided(t, df);
  return { test: "pearson-partial" as const, n, statistic: t, df, effect: r, ci: [-1, 1] as [number, number], p, log_p: Math.log(p), p_method: "asymptotic" as const, details: {} };
}

describe("equivalenceOf", () => {
  it("the published worked example (n = 100, r = 0.02, bounds ±0.3): supported, with the 90% interval of the Fisher-z TOST to 0.01", () => {
    const e = equivalenceOf(pearson(0.02, 100), 0.05, 0.3);
    expect(e.equivalence).toBe("supported");
    // our interval uses the standard error the t test implies (so it agrees with the test); the
    // textbook 1/√(n − 3) differs slightly at n = 100
    expect(Math.abs(e.interval![0] - -0.14595699946459845)).toBeLessThan(0.01);
    expect(Math.abs(e.interval![1] - 0.1848621603506709)).toBeLessThan(0.01);
  });

  it("a margin the 90% interval crosses is inconclusive; α sets the interval (1 − 2α)", () => {
    expect(equivalenceOf(pearson(0.02, 100), 0.05, 0.15).equivalence).toBe("inconclusive");
    const wide = equivalenceOf(pearson(0.02, 100), 0.01, 0.3).interval!;
    const narrow = equivalenceOf(pearson(0.02, 100), 0.05, 0.3).interval!;
    expect(wide[1] - wide[0]).toBeGreaterThan(narrow[1] - narrow[0]);
  });

  it("an effect on several df is supported when the upper end of its one-sided 95% interval is below the margin", () => {
    // G² = 3 on 4 df at n = 5,000: the one-sided 95% upper limit of √(1 − exp(−λ/n)) is small
    const base = { test: "stratified-chisq" as const, n: 5000, statistic: 3, df: 4, effect: 0, ci: [0, 1] as [number, number], p: 0.56, log_p: Math.log(0.56), p_method: "asymptotic" as const, details: {} };
    const e = equivalenceOf(base, 0.05, 0.1);
    expect(e.interval![0]).toBe(0);
    expect(e.interval![1]).toBeLessThan(0.1);
    expect(e.equivalence).toBe("supported");
    expect(equivalenceOf({ ...base, n: 100 }, 0.05, 0.1).equivalence).toBe("inconclusive");
  });

  it("groups: verdict crossed with equivalence", () => {
    expect(claimGroup({ verdict: "contradicted", equivalence: "supported" })).toBe("contradicted_within_margin");
    expect(claimGroup({ verdict: "contradicted", equivalence: "inconclusive" })).toBe("contradicted");
    expect(claimGroup({ verdict: "consistent", equivalence: "supported" })).toBe("supported");
    expect(groupCounts([{ verdict: "consistent", equivalence: "inconclusive" }, { verdict: "consistent" }])).toEqual({ contradicted: 0, contradicted_within_margin: 0, supported: 0, inconclusive: 2 });
  });
});

describe("equivalence in the audit (simulated data, invented)", () => {
  const table = (n: number, beta: number, seed: number) => {
    const data = simulateFromGraph(parseGraph("x -> y\n").graph, { n, seed, coefficients: { "x -> y": beta } });
    return createTable(Object.fromEntries(data.columns.map((c) => [c.name, c.values])));
  };
  const drawn = parseGraph("x\ny\n").graph;

  it("at n = 20,000 a partial r of 0.03 is contradicted but within the margin 0.1", () => {
    const r = runAudit(drawn, table(20_000, 0.03, 1), { settings: { adjust: "none" } });
    const c = r.claims[0]!;
    expect(c.verdict).toBe("contradicted");
    expect(c.equivalence).toBe("supported");
    expect(r.global.groups).toEqual({ contradicted: 0, contradicted_within_margin: 1, supported: 0, inconclusive: 0 });
    expect(r.settings.margin).toBe(0.1);
  });

  it("independence at n = 2,000 is supported; at n = 150 it is inconclusive", () => {
    expect(runAudit(drawn, table(2000, 0, 2), { settings: { adjust: "none" } }).claims[0]!.equivalence).toBe("supported");
    const small = runAudit(drawn, table(150, 0, 3), { settings: { adjust: "none" } });
    expect(small.claims[0]!.equivalence).toBe("inconclusive");
    expect(small.global.groups?.inconclusive).toBe(1);
  });

  it("--margin widens what counts as negligible", () => {
    const r = runAudit(drawn, table(150, 0, 3), { settings: { adjust: "none", margin: 0.3 } });
    expect(r.claims[0]!.equivalence).toBe("supported");
  });
});

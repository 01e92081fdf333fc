import { describe, expect, it } from "vitest";
import { buildReportText, globalSentence } from "../../src/report/buildReportText.js";
import type { AuditResult } from "../../src/audit/types.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";
import { sampleContext } from "./helpers.js";

const methods = (r: AuditResult) => buildReportText(r, sampleContext()).methods.join(" ");
const refs = (r: AuditResult) => buildReportText(r, sampleContext()).references.join(" ");

describe("buildReportText", () => {
  it("buildReportText fills the methods with the result's numbers", () => {
    const r = sampleResult();
    const m = methods(r);
    expect(m).toContain("9 nodes: 8 measured, 1 unmeasured; 12 arrows; 1 bidirected edge");
    expect(m).toContain("14 claims were tested; 3 missing arrows could not be tested");
    expect(m).toContain("n = 1,123 to 1,200 of 1,200 rows");
    expect(m).toContain("Holm's step-down method");
    expect(m).toContain("below α = 0.05 and its absolute effect was at least 0.1");
    expect(m).toContain(`C = ${r.global.statistic.toFixed(2)} on 28 degrees of freedom, p < 0.001`);
    expect(m).toContain("3 of the 14 claims were contradicted");
    expect(m).toContain("0.7 expected by chance");
  });

  it("buildReportText describes and cites only the tests actually used", () => {
    const r = sampleResult();
    expect(refs(r)).toMatch(/Fisher RA\. On the “probable error”/);
    expect(refs(r)).toContain("Shah RD, Peters J"); // the rank-based generalised covariance measure
    expect(refs(r)).toContain("Harrell FE");
    expect(refs(r)).toContain("Steiger JH");
    expect(refs(r)).not.toContain("Mantel N");
    const pearsonOnly = { ...r, claims: r.claims.filter((c) => c.test === "pearson-partial") };
    expect(methods(pearsonOnly)).toContain("partial Pearson correlation r");
    expect(methods(pearsonOnly)).not.toContain("Spearman");
    expect(methods(pearsonOnly)).not.toContain("likelihood-ratio");
    expect(refs(pearsonOnly)).not.toContain("Steiger");
    expect(refs(pearsonOnly)).not.toContain("Shah RD");
    const mh = { ...r, claims: [{ ...r.claims[0]!, test: "stratified-chisq" as const, details: { mh_odds_ratio: 1.4 } }] };
    expect(refs(mh)).toContain("Mantel N, Haenszel W");
    expect(refs(mh)).toContain("Robins J, Breslow N, Greenland S");
  });

  it("buildReportText follows the settings: basis set vs minimal sets, listwise, BH, no adjustment", () => {
    const r = sampleResult();
    expect(methods(r)).toContain("minimal set of measured variables");
    expect(refs(r)).toContain("Tian J");
    const basis = { ...r, settings: { ...r.settings, sets: "union-parents" as const } };
    expect(methods(basis)).toContain("Shipley's basis set");
    expect(refs(basis)).not.toContain("Tian J");
    const lw = { ...r, settings: { ...r.settings, listwise: true } };
    expect(methods(lw)).toContain("listwise deletion): 1,123 of 1,200 rows");
    const bh = { ...r, settings: { ...r.settings, adjust: "bh" as const } };
    expect(methods(bh)).toContain("Benjamini–Hochberg");
    expect(refs(bh)).toContain("Benjamini Y");
    expect(refs(bh)).not.toContain("Holm S");
    const none = { ...r, settings: { ...r.settings, adjust: "none" as const, min_effect: 0 } };
    expect(methods(none)).toContain("not adjusted for multiple testing");
    expect(methods(none)).toContain("when its p-value was below α = 0.05.");
  });

  it("buildReportText mentions permutation p-values with B and the seed", () => {
    const r = sampleResult();
    r.claims[0] = { ...r.claims[0]!, p_method: "permutation", B: 999 };
    expect(methods(r)).toContain("Monte Carlo permutation (B = 999 permutations, random seed 20240611)");
  });

  it("globalSentence(result) says contradicted, not contradicted, or no verdict", () => {
    const r = sampleResult();
    expect(globalSentence(r)).toContain("the data contradict at least one independence");
    expect(globalSentence({ ...r, global: { ...r.global, p: 0.4 } })).toContain("no evidence against the graph (p = 0.400); this does not show that the graph is right");
    expect(globalSentence({ ...r, global: { ...r.global, k: 0 } })).toContain("No claim could be tested");
    expect(globalSentence({ ...r, global: { ...r.global, p: Number.NaN } })).toContain("could not be computed");
  });

  it("buildReportText lists variables with type source, missing counts with percentages, and levels", () => {
    const t = buildReportText(sampleResult(), sampleContext());
    const sleep = t.variables.find((v) => v.name === "sleep_h")!;
    expect(sleep.missing).toBe("37 (3.1%)"); // 37 / 1200 = 3.08%
    expect(t.variables.find((v) => v.name === "fatigue")!.decided).toBe("declared by the user");
    expect(t.variables.find((v) => v.name === "active")!.levels).toBe("no, yes");
    expect(t.claimRows.map((c) => c.arrows).filter((a) => a !== "")).toHaveLength(3);
  });

  it("buildReportText adds a caution and a methods sentence for claims whose verdict changes with linear adjustment", () => {
    const r = sampleResult();
    const claim = { ...r.claims[0]!, test: "gcm" as const, details: { linear_adjustment: { p: 1e-9, effect: 0.3, verdict: "contradicted", verdict_differs: true } } };
    const changed = { ...r, claims: [claim, ...r.claims.slice(1).filter((c) => c.test !== "gcm")] };
    const text = buildReportText(changed, sampleContext());
    expect(text.cautions.some((c) => c.startsWith("The verdict of 1 claim (") && c.includes("functional form"))).toBe(true);
    expect(text.methods.join(" ")).toContain("the verdict changed for 1 claim");
    const unchanged = { ...changed, claims: [{ ...claim, details: { linear_adjustment: { p: 0.3, effect: 0.01, verdict: "consistent", verdict_differs: false } } }] };
    expect(buildReportText(unchanged, sampleContext()).cautions.some((c) => c.startsWith("The verdict of"))).toBe(false);
    expect(buildReportText(unchanged, sampleContext()).methods.join(" ")).toContain("no verdict changed");
  });
});

import { describe, expect, it } from "vitest";
import { buildReportText, globalSentence } from "../../src/report/buildReportText.js";
import type { AuditResult } from "../../src/audit/types.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";
import { sampleContext } from "./helpers.js";

/**
 * The sample result as a basis-set run: settings "union-parents" and every claim conditioned on
 * the union of its pair's parents (claims touching a child of the unmeasured node left out, as
 * the audit would have tested those on another set).
 */
function basisSetResult(): AuditResult {
  const r = sampleResult();
  const parents = (v: string) => r.graph.arrows.filter(([, b]) => b === v).map(([a]) => a);
  const claims = r.claims
    .filter((c) => ![c.x, c.y].some((v) => parents(v).some((p) => r.graph.unmeasured.includes(p))))
    .map((c) => ({ ...c, given: [...new Set([...parents(c.x), ...parents(c.y)])].filter((v) => v !== c.x && v !== c.y) }));
  return { ...r, settings: { ...r.settings, sets: "union-parents" }, claims };
}

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
    // the unadjusted count beside its chance expectation, the adjusted count beside Holm's guarantee
    expect(m).toContain("Of the 14 claims, 3 had an unadjusted p-value below α = 0.05, where 0.7 would be expected by chance alone");
    expect(m).toContain("After Holm's adjustment, which keeps the probability of calling any true claim contradicted at or below 0.05 (the family-wise error rate), 3 were contradicted");
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
    // the odds ratio is cited only where the report shows it: details.mantel_haenszel, as the stratified test writes it
    const mh = { ...r, claims: [{ ...r.claims[0]!, test: "stratified-chisq" as const, details: { mantel_haenszel: { odds_ratio: 1.4, ci: [1.1, 1.8] } } }] };
    expect(refs(mh)).toContain("Mantel N, Haenszel W");
    expect(refs(mh)).toContain("Robins J, Breslow N, Greenland S");
  });

  it("buildReportText follows the settings: basis set vs minimal sets, listwise, BH, no adjustment", () => {
    const r = sampleResult();
    expect(methods(r)).toContain("minimal set of measured variables");
    expect(refs(r)).toContain("Tian J");
    const basis = basisSetResult();
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

  it("buildReportText says how many claims used the parents' union and how many a smallest separating set", () => {
    // regression: the methods said every claim used the parents' union, then that some did not
    const basis = basisSetResult();
    const k = basis.claims.length;
    expect(methods(basis)).toContain(`the union of the two variables' parents (Shipley's basis set; Shipley 2000): all ${k} claims`);
    const mixed = { ...basis, claims: [...basis.claims, { ...sampleResult().claims.find((c) => c.x === "commute_min" && c.y === "sbp")! }] };
    const m = methods(mixed);
    expect(m).toContain(`(Shipley's basis set; Shipley 2000) for ${k} claims, and on a minimal set of measured variables that d-separates the pair, one of the smallest (Tian, Paz & Pearl 1998), used where a parent is unmeasured or shares an unmeasured common cause, for the other 1 claim`);
    expect(refs(mixed)).toContain("Tian J");
  });

  it("buildReportText mentions permutation p-values with the confidence-sequence rule, the cap, the risk, the draws made and the seed", () => {
    const r = sampleResult();
    r.claims[0] = { ...r.claims[0]!, p_method: "permutation", B: 999, monte_carlo: { draws: 999, hits: 0, cap: 999, se: 0.001, ci99: [0, 0.0053] } };
    const m = methods(r);
    expect(m).toContain("Permutations were drawn in rounds of doubling size (200, 400, 800, …, at most 999)");
    expect(m).toContain("Clopper–Pearson limits of every permuted p-value (Clopper & Pearson 1934), at a risk of 0.001");
    expect(m).toContain("(Gandy & Hahn 2016)");
    expect(m).toContain("999 permutations were drawn per claim (random seed 20240611)");
    expect(m).not.toContain("provisional");
    expect(refs(r)).toContain("Clopper CJ, Pearson ES.");
    expect(refs(r)).toContain("Gandy A, Hahn G. A framework for Monte Carlo based multiple testing");
    // a verdict the cap left undecided says so, with the draws that would decide it
    r.claims[0] = { ...r.claims[0]!, p_undecided: true, p_proposed_B: 8500 };
    expect(methods(r)).toMatch(/was not resolved within that limit and is provisional \(about 8,500 permutations would resolve it\)/);
  });

  it("globalSentence(result) says contradicted, not contradicted, or no verdict", () => {
    const r = sampleResult();
    expect(globalSentence(r)).toContain("the data contradict at least one independence");
    const noneContradicted = { ...r, claims: r.claims.map((c) => ({ ...c, verdict: "consistent" as const })) };
    expect(globalSentence({ ...noneContradicted, global: { ...r.global, p: 0.4 } })).toContain("no evidence against the graph (p = 0.400); this does not show that the graph is right");
    expect(globalSentence({ ...r, global: { ...r.global, k: 0 } })).toContain("No claim could be tested");
    expect(globalSentence({ ...r, global: { ...r.global, p: Number.NaN } })).toContain("could not be computed");
  });

  it("buildReportText lists variables with type source, missing counts with percentages, and levels", () => {
    const t = buildReportText(sampleResult(), sampleContext());
    const sleep = t.variables.find((v) => v.name === "sleep_h")!;
    expect(sleep.missing).toBe("37 (3.1%)"); // 37 / 1200 = 3.08%
    expect(t.variables.find((v) => v.name === "fatigue")!.decided).toBe("declared by the user");
    expect(t.variables.find((v) => v.name === "active")!.levels).toBe("no = 0, yes = 1");
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

describe("buildReportText: the methods say what was done in this run", () => {
  it("buildReportText gives the df rule used: n − 2 − p adjustment columns for the GCM (with their range), n − 2 − c design columns for the partial correlation", () => {
    // regression: the methods said "n − 2 − |S|", wrong when nominal members enter as indicators
    const r = sampleResult();
    const gcm = { ...r.claims[0]!, test: "gcm" as const, n: 500, df: 480, details: { flexibility: { parameters: 18 } } };
    const gcm2 = { ...r.claims[1]!, test: "gcm" as const, n: 400, df: 397, details: { flexibility: { parameters: 1 } } };
    const m = methods({ ...r, claims: [gcm, gcm2] });
    expect(m).toContain("referred to Student's t on n − 2 − p degrees of freedom, p being the number of adjustment columns kept (here 1 to 18)");
    const pearson = r.claims.filter((c) => c.test === "pearson-partial");
    const cs = pearson.map((c) => c.n - 2 - c.df);
    const pm = methods({ ...r, claims: pearson });
    expect(pm).toContain("n − 2 − c degrees of freedom, c being the number of columns of the conditioning set (one for each continuous or binary member, one indicator for each level but the first of an ordinal or nominal member");
    expect(pm).toContain(`here ${Math.min(...cs)} to ${Math.max(...cs)}`);
    expect(pm).not.toContain("|Z|");
  });

  it("buildReportText shows the Mantel–Haenszel odds ratio it says it gives, for 2×2×K claims only", () => {
    // regression: the methods said the odds ratio "is also given", and the report never showed it
    const r = sampleResult();
    const mh = { ...r.claims[0]!, test: "stratified-chisq" as const, details: { mantel_haenszel: { odds_ratio: 1.2345, ci: [0.98, 1.5551] } } };
    const t = buildReportText({ ...r, claims: [mh, ...r.claims.slice(1)] }, sampleContext());
    expect(t.claimRows[0]!.oddsRatio).toBe("OR_MH = 1.23 [0.98, 1.56]");
    expect(t.claimRows.slice(1).every((row) => row.oddsRatio === "")).toBe(true);
    expect(t.methods.join(" ")).toContain("the table also gives the Mantel–Haenszel common odds ratio of the levels coded 1");
    expect(t.effectNote).toContain("OR_MH: Mantel–Haenszel common odds ratio");
    const none = buildReportText(r, sampleContext());
    expect(none.methods.join(" ")).not.toContain("Mantel–Haenszel");
  });

  it("buildReportText names the software and version, the scoring of binary and ordinal sides, and the complete-case assumption", () => {
    const r = sampleResult();
    const m = buildReportText(r, sampleContext({ toolVersion: "9.8.7" })).methods.join(" ");
    expect(m.startsWith("Analyses were run with arrowaudit 9.8.7.")).toBe(true);
    // the fixture's rank-based GCM claims have an ordinal side (fatigue)
    expect(m).toContain("a binary x or y was analysed as its 0/1 code (a linear-probability fit) and an ordinal one as the scores of its levels");
    expect(m).toContain("categorical members of the conditioning sets always entered as indicators of their levels");
    expect(m).toContain("valid when values are missing completely at random or when whether a row is complete depends only on the claim's conditioning variables; it is not when missingness depends on x or y themselves");
    // no score sentence when no claim tested on scores has a binary or ordinal side (the fixture's partial correlations are all continuous)
    expect(methods({ ...r, claims: r.claims.filter((c) => c.test === "pearson-partial") })).not.toContain("0/1 code");
    expect(methods({ ...r, claims: r.claims.filter((c) => c.test === "regression-lr") })).not.toContain("0/1 code");
  });

  it("buildReportText says which level is coded 1 for binary variables and the order of ordinal ones", () => {
    const t = buildReportText(sampleResult(), sampleContext());
    expect(t.variables.find((v) => v.name === "fatigue")!.levels).toBe("low < moderate < high");
    expect(t.variables.find((v) => v.name === "district")!.levels).toBe("north, south, riverside (no order)");
    expect(t.variables.find((v) => v.name === "age")!.levels).toBe("");
    expect(t.codingNote).toContain("a positive effect r means that higher codes of one variable go with higher codes of the other");
    expect(t.methods.join(" ")).toContain("Binary variables were coded 0/1 with 1 for active = yes and ordinal variables were scored in the order low < moderate < high (fatigue)");
  });

  it("buildReportText reports the unadjusted count beside its expectation and the BH count beside the false discovery rate", () => {
    // regression: "2 contradicted (1.7 expected by chance before adjustment)" compared adjusted rejections with an unadjusted expectation
    const r = sampleResult();
    const bh = { ...r, settings: { ...r.settings, adjust: "bh" as const } };
    const m = methods(bh);
    const unadjusted = r.claims.filter((c) => c.p < 0.05).length;
    expect(m).toContain(`Of the 14 claims, ${unadjusted} had an unadjusted p-value below α = 0.05, where 0.7 would be expected by chance alone if every claim held.`);
    expect(m).toContain("After the Benjamini–Hochberg adjustment, which keeps the expected share of true claims among those called contradicted at or below 0.05 (the false discovery rate), 3 were contradicted");
    const none = methods({ ...r, settings: { ...r.settings, adjust: "none" as const } });
    expect(none).toContain("Without adjustment, 3 were called contradicted");
  });

  it("globalSentence respects the relevance floor: a rejected global test with no contradicted claim says why", () => {
    // regression: "Contradicted: 0" and "the data contradict at least one independence" in the same report under --min-effect
    const r = sampleResult();
    const small = { ...r, settings: { ...r.settings, min_effect: 0.5 }, claims: r.claims.map((c) => ({ ...c, verdict: "consistent" as const })) };
    const s = globalSentence(small);
    expect(s).toContain("but no claim whose adjusted p-value is below α = 0.05 has an effect of at least the relevance floor 0.5, so none is called contradicted");
    expect(s).not.toContain("the data contradict at least one independence");
    const pooled = { ...small, settings: { ...small.settings, min_effect: 0 }, claims: small.claims.map((c) => ({ ...c, p_adjusted: Math.max(c.p_adjusted, 0.2) })) };
    expect(globalSentence(pooled)).toContain("although no single claim is contradicted after adjustment");
  });

  it("buildReportText adds the demo's equivalent test command to the reproducibility facts and the demo notice", () => {
    const command = "arrowaudit test data/demo/graph.txt data/demo/cohort.csv --missing -9,999 --levels 'education=primary|secondary|tertiary'";
    const t = buildReportText(sampleResult(), sampleContext({ demo: true, equivalentCommand: command }));
    expect(t.reproducibility).toContainEqual({ label: "Equivalent test command", value: command, code: true });
    expect(t.demoNotice).toContain(command);
    expect(buildReportText(sampleResult(), sampleContext()).reproducibility.map((f) => f.label)).not.toContain("Equivalent test command");
  });

  it("buildReportText gives every claim an adjusted interval with its level, and a note saying which interval is which", () => {
    const r = sampleResult();
    const t = buildReportText(r, sampleContext());
    for (const row of t.claimRows) expect(row.adjustedInterval).toMatch(/^\[-?\d\.\d+, -?\d\.\d+\] at \d+(\.\d+)?%$/);
    // the first claim by p has Holm's level 1 − 0.05/14 = 99.64% (Holm 1979)
    const first = [...r.claims].sort((a, b) => a.p - b.p)[0]!;
    expect(t.claimRows.find((row) => row.rank === String(first.rank))!.adjustedInterval).toMatch(/ at 99\.64%$/);
    expect(t.intervalNote).toContain("The 95% interval is unadjusted and can exclude 0 for a claim judged consistent.");
    expect(t.intervalNote).toContain("1 − α/(k − j + 1) for the j-th smallest of k p-values");
  });
});

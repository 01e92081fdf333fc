/**
 * The words and numbers of a report, shared by the HTML and Markdown renderers: summary facts,
 * the ranked claim table, the untestable list, the data summary, a methods paragraph with the
 * numbers filled in, the references actually relied on, cautions, and reproducibility facts.
 * Everything here is plain Unicode text, not escaped: each renderer escapes for its format.
 *
 * Only methods that the result actually used are described and cited: a report of partial
 * correlations does not cite categorical methods, and vice versa.
 */
import type { AuditResult, TestName, TestedClaim, VariableSummary } from "../audit/types.js";
import { FIRST_LOOK } from "../stats/confidenceSequence.js";
import { DEFAULT_RESAMPLING_RISK } from "../stats/monteCarloDecision.js";
import { normalQuantile } from "../stats/quantiles.js";
import { claimGroup, DEFAULT_MARGIN, GROUP_WORDS, groupCounts } from "../audit/equivalence.js";
import { adjustedInterval } from "./adjustedInterval.js";
import type { ReportContext } from "./ReportContext.js";
import { pooledRulesText } from "./pooledRules.js";
import {
  claimLabel,
  claimEffectSymbol,
  formatCI,
  formatCount,
  formatEffect,
  formatEffectWithCI,
  formatLevel,
  formatP,
  formatPInline,
  formatStatistic,
} from "./format.js";

/** A reference list entry, keyed for inclusion. */
type RefKey =
  | "pearl2009"
  | "shipley2000"
  | "tian1998"
  | "fisher1925"
  | "holm1979"
  | "bh1995"
  | "fisher1921"
  | "fisher1924"
  | "kendall1990"
  | "wilks1938"
  | "agresti2013"
  | "mh1959"
  | "rbg1986"
  | "coxsnell1989"
  | "magee1990"
  | "steiger1990"
  | "verma1990"
  | "shah2020"
  | "harrell2015"
  | "craven1979"
  | "mantel1963"
  | "landis1978"
  | "satterthwaite1946"
  | "besag1991"
  | "clopper1934"
  | "gandy2016"
  | "schuirmann1987"
  | "cohen1988";

/** Full references, in the journal style of an epidemiology methods section. */
const REFERENCES: Record<RefKey, string> = {
  pearl2009: "Pearl J. Causality: Models, Reasoning, and Inference. 2nd ed. Cambridge: Cambridge University Press; 2009.",
  schuirmann1987: "Schuirmann DJ. A comparison of the two one-sided tests procedure and the power approach for assessing the equivalence of average bioavailability. Journal of Pharmacokinetics and Biopharmaceutics. 1987;15(6):657–680.",
  cohen1988: "Cohen J. Statistical Power Analysis for the Behavioral Sciences. 2nd ed. Hillsdale, NJ: Lawrence Erlbaum; 1988.",
  shipley2000: "Shipley B. A new inferential test for path models based on directed acyclic graphs. Structural Equation Modeling. 2000;7(2):206–218.",
  tian1998: "Tian J, Paz A, Pearl J. Finding minimal d-separators. Technical Report R-254. Los Angeles: University of California, Cognitive Systems Laboratory; 1998.",
  fisher1925: "Fisher RA. Statistical Methods for Research Workers. Edinburgh: Oliver and Boyd; 1925.",
  holm1979: "Holm S. A simple sequentially rejective multiple test procedure. Scandinavian Journal of Statistics. 1979;6(2):65–70.",
  bh1995: "Benjamini Y, Hochberg Y. Controlling the false discovery rate: a practical and powerful approach to multiple testing. Journal of the Royal Statistical Society, Series B. 1995;57(1):289–300.",
  fisher1921: "Fisher RA. On the “probable error” of a coefficient of correlation deduced from a small sample. Metron. 1921;1:3–32.",
  fisher1924: "Fisher RA. The distribution of the partial correlation coefficient. Metron. 1924;3:329–332.",
  kendall1990: "Kendall MG, Gibbons JD. Rank Correlation Methods. 5th ed. London: Edward Arnold; 1990.",
  wilks1938: "Wilks SS. The large-sample distribution of the likelihood ratio for testing composite hypotheses. Annals of Mathematical Statistics. 1938;9(1):60–62.",
  agresti2013: "Agresti A. Categorical Data Analysis. 3rd ed. Hoboken (NJ): Wiley; 2013.",
  mh1959: "Mantel N, Haenszel W. Statistical aspects of the analysis of data from retrospective studies of disease. Journal of the National Cancer Institute. 1959;22(4):719–748.",
  rbg1986: "Robins J, Breslow N, Greenland S. Estimators of the Mantel–Haenszel variance consistent in both sparse data and large-strata limiting models. Biometrics. 1986;42(2):311–323.",
  coxsnell1989: "Cox DR, Snell EJ. Analysis of Binary Data. 2nd ed. London: Chapman and Hall; 1989.",
  magee1990: "Magee L. R² measures based on Wald and likelihood ratio joint significance tests. The American Statistician. 1990;44(3):250–253.",
  steiger1990: "Steiger JH. Structural model evaluation and modification: an interval estimation approach. Multivariate Behavioral Research. 1990;25(2):173–180.",
  verma1990: "Verma T, Pearl J. Equivalence and synthesis of causal models. In: Proceedings of the Sixth Conference on Uncertainty in Artificial Intelligence. 1990:220–227.",
  shah2020: "Shah RD, Peters J. The hardness of conditional independence testing and the generalised covariance measure. Annals of Statistics. 2020;48(3):1514–1538.",
  harrell2015: "Harrell FE. Regression Modeling Strategies. 2nd ed. Cham: Springer; 2015.",
  craven1979: "Craven P, Wahba G. Smoothing noisy data with spline functions. Numerische Mathematik. 1979;31(4):377–403.",
  mantel1963: "Mantel N. Chi-square tests with one degree of freedom: extensions of the Mantel–Haenszel procedure. Journal of the American Statistical Association. 1963;58(303):690–700.",
  landis1978: "Landis JR, Heyman ER, Koch GG. Average partial association in three-way contingency tables: a review and discussion of alternative tests. International Statistical Review. 1978;46(3):237–254.",
  satterthwaite1946: "Satterthwaite FE. An approximate distribution of estimates of variance components. Biometrics Bulletin. 1946;2(6):110–114.",
  besag1991: "Besag J, Clifford P. Sequential Monte Carlo p-values. Biometrika. 1991;78(2):301–304.",
  clopper1934: "Clopper CJ, Pearson ES. The use of confidence or fiducial limits illustrated in the case of the binomial. Biometrika. 1934;26(4):404–413.",
  gandy2016: "Gandy A, Hahn G. A framework for Monte Carlo based multiple testing. Scandinavian Journal of Statistics. 2016;43(4):1046–1063.",
};

/** "a to b" over the finite values of a list ("a" when all equal); "" when there are none. */
function range(values: readonly number[]): string {
  const v = values.filter(Number.isFinite);
  if (v.length === 0) return "";
  const lo = Math.min(...v);
  const hi = Math.max(...v);
  return lo === hi ? formatCount(lo) : `${formatCount(lo)} to ${formatCount(hi)}`;
}

/** Adjustment columns kept by a generalised covariance measure: `details.flexibility.parameters`, else n − 2 − df. */
function gcmParameters(c: TestedClaim): number {
  const p = Number((c.details?.flexibility as { parameters?: unknown } | undefined)?.parameters);
  return Number.isFinite(p) ? p : c.n - 2 - c.df;
}

/** How each test is described in the methods (given the claims it tested), and what it cites. */
const TEST_TEXT: Record<TestName, { name: string; text: (cs: readonly TestedClaim[], alpha: number) => string; refs: RefKey[] }> = {
  gcm: {
    name: "generalised covariance measure",
    text: (cs) => {
      const p = range(cs.filter((c) => Number(c.details?.components ?? 1) === 1).map(gcmParameters));
      return `the generalised covariance measure (Shah & Peters 2020): each variable was regressed by least squares on the conditioning set, categorical members entering as indicators of their levels and continuous members through natural cubic splines (knots at the minimum, quartiles and maximum; Harrell 2015) refined by piecewise-linear terms at finer quantiles, the amount of flexibility chosen by generalised cross-validation (Craven & Wahba 1979) and raised by one level; the normalised sum of the products of the two variables' residuals was referred to Student's t on n − 2 − p degrees of freedom, p being the number of adjustment columns kept${p ? ` (here ${p})` : ""}, or to an F distribution for a nominal variable, with a variance that does not assume equal variances; the effect is the correlation of the residuals`;
    },
    refs: ["shah2020", "harrell2015", "craven1979"],
  },
  "gcm-rank": {
    name: "generalised covariance measure on ranks",
    text: (cs) => {
      const p = range(cs.filter((c) => Number(c.details?.components ?? 1) === 1).map(gcmParameters));
      return `the generalised covariance measure (Shah & Peters 2020) applied to the mid-ranks of the two variables (each variable's values ranked over all its observed values), with the conditioning set adjusted for as in the default test (indicators for categorical members; splines chosen by generalised cross-validation for continuous ones; Harrell 2015; Craven & Wahba 1979) and Student's t on n − 2 − p degrees of freedom, p being the number of adjustment columns kept${p ? ` (here ${p})` : ""}`;
    },
    refs: ["shah2020", "harrell2015", "craven1979"],
  },
  "linear-by-linear": {
    name: "stratified linear-by-linear",
    text: () =>
      "the generalised Cochran–Mantel–Haenszel correlation statistic for two ordinal variables, a one-degree-of-freedom test of a linear trend in their level scores shared by the strata of the conditioning set (Mantel 1963; Landis, Heyman & Koch 1978; Agresti 2013)",
    refs: ["mantel1963", "landis1978", "agresti2013"],
  },
  "pearson-partial": {
    name: "Pearson partial r",
    text: (cs, alpha) => {
      const c = range(cs.map((k) => k.n - 2 - k.df));
      return `the partial Pearson correlation r, tested with the t statistic on n − 2 − c degrees of freedom, c being the number of columns of the conditioning set (one for each continuous or binary member, one indicator for each level but the first of an ordinal or nominal member${c ? `; here ${c}` : ""}), with a ${formatLevel(1 - alpha)} confidence interval from Fisher's z transformation with the standard error the t test implies, so that it excludes 0 exactly when p < ${alpha} (Fisher 1921; Fisher 1924)`;
    },
    refs: ["fisher1921", "fisher1924"],
  },
  "stratified-chisq": {
    name: "stratified G²",
    text: () =>
      "the likelihood-ratio G² test of independence within each stratum of the conditioning set, summed over strata and referred to the chi-square distribution on Σ (r_s − 1)(c_s − 1) degrees of freedom, r_s and c_s counting the levels of each variable present in stratum s (Wilks 1938; Agresti 2013)",
    refs: ["wilks1938", "agresti2013"],
  },
  "regression-lr": {
    name: "regression LR",
    text: () =>
      "a likelihood-ratio test comparing regression models of one variable (linear for a continuous or ordinal response, the ordinal one as scores; logistic for a binary and multinomial logistic for a nominal response) with and without the other, both adjusted for the conditioning set, on as many degrees of freedom as the added variable has columns (Wilks 1938; Agresti 2013)",
    refs: ["wilks1938", "agresti2013"],
  },
};

/**
 * The Monte-Carlo precision of a claim's p-value in a few words: "±se, draws, 99% CI lo–hi"
 * (Clopper–Pearson at the draws made); "" for a p-value without Monte-Carlo error. Cost: O(1).
 * @example monteCarloPrecision(claim) // "±0.0021, 12,800 draws, 99% CI 0.055–0.067"
 */
export function monteCarloPrecision(c: Pick<TestedClaim, "monte_carlo">): string {
  const mc = c.monte_carlo;
  if (!mc) return "";
  return `±${mc.se.toPrecision(2)}, ${formatCount(mc.draws)} draws, 99% CI ${formatP(mc.ci99[0])}–${formatP(mc.ci99[1])}`;
}

const TEST_ORDER: TestName[] = ["gcm", "gcm-rank", "pearson-partial", "stratified-chisq", "linear-by-linear", "regression-lr"];

export interface ClaimRow {
  rank: string;
  claim: string;
  n: string;
  test: string;
  /** Effect with its unadjusted interval at 1 − α (95% by default), e.g. "r = -0.16 [-0.20, -0.13]". */
  effect: string;
  /** The smallest |effect| the claim's test detects with the settings' power at its level, e.g. "0.088"; "n/a" when not computed. */
  detectable: string;
  /** The claim's group: verdict crossed with its equivalence test ("supported (equivalent)", "inconclusive (neither shown)", …). */
  group: string;
  /** The interval at the level the adjustment used for this claim, with that level: "[-0.21, -0.12] at 99.85%". */
  adjustedInterval: string;
  /** The Mantel–Haenszel common odds ratio with its 95% interval, for claims on 2×2×K tables; "" otherwise. */
  oddsRatio: string;
  p: string;
  /** For a Monte-Carlo p-value: its standard error, draws and 99% interval, e.g. "±0.0021, 12,800 draws, 99% CI 0.055–0.067"; "" otherwise. */
  pPrecision: string;
  pAdjusted: string;
  verdict: "contradicted" | "consistent";
  /** For a verdict the cap on Monte-Carlo draws did not resolve: "undecided" with the draws that would resolve it; "" otherwise. */
  undecided: string;
  arrows: string;
}

export interface VariableRow {
  name: string;
  type: string;
  decided: string;
  missing: string;
  /** The levels with their coding: "female = 0, male = 1", "low < mid < high", "a, b, c (no order)". */
  levels: string;
}

export interface ReportText {
  title: string;
  /** Present for demo runs: a plain statement that the data are invented. */
  demoNotice?: string;
  /** Key facts for the summary, label → value. */
  summary: { label: string; value: string }[];
  /** One plain sentence on what the global test means. */
  globalSentence: string;
  claimRows: ClaimRow[];
  untestable: { claim: string; reason: string }[];
  variables: VariableRow[];
  /** How to read the coding column of the data summary (signs of effects). */
  codingNote: string;
  /** Paragraphs of the methods text, ready to paste. */
  methods: string[];
  references: string[];
  cautions: string[];
  warnings: string[];
  reproducibility: { label: string; value: string; code?: boolean }[];
  /** Footnote explaining effect symbols used in the table. */
  effectNote: string;
  /** Which interval is which: the unadjusted 95% interval and the adjusted one beside the verdict. */
  intervalNote: string;
}

/** "a", "a and b", "a, b and c". */
function listJoin(items: string[]): string {
  if (items.length <= 1) return items.join("");
  return `${items.slice(0, -1).join(", ")} and ${items[items.length - 1]}`;
}

function plural(n: number, one: string, many: string): string {
  return `${formatCount(n)} ${n === 1 ? one : many}`;
}

function percent(part: number, whole: number): string {
  if (!(whole > 0)) return "";
  const v = (100 * part) / whole;
  return v > 0 && v < 0.1 ? "< 0.1%" : `${v.toFixed(1)}%`;
}

/** Sentence case: first letter upper. */
function cap(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}

/** What each adjustment guarantees, for a sentence "…, which …". */
const GUARANTEE: Record<"holm" | "bh", (alpha: number) => string> = {
  holm: (a) => `keeps the probability of calling any true claim contradicted at or below ${a} (the family-wise error rate)`,
  bh: (a) => `keeps the expected share of true claims among those called contradicted at or below ${a} (the false discovery rate)`,
};

/**
 * One plain sentence on what the global (Fisher's C) test means for this result, consistent with
 * the claim verdicts: when the combined test rejects but no claim is contradicted (effects below
 * the relevance floor, or departures each too small to stand out after adjustment), or the
 * reverse, the sentence says so and why. Cost: O(k).
 *
 * @example globalSentence(result) // "Taken together, the ... tests depart from ..."
 */
export function globalSentence(result: AuditResult): string {
  const g = result.global;
  const s = result.settings;
  if (g.k === 0) return "No claim could be tested, so the data give no verdict on the graph as a whole.";
  if (!Number.isFinite(g.p)) return "The global test could not be computed, so the data give no overall verdict on the graph.";
  const contradicted = result.claims.filter((c) => c.verdict === "contradicted").length;
  const tests = plural(g.k, "test", "tests");
  if (g.p < s.alpha) {
    const head = `Taken together, the ${tests} depart from what the graph implies more than chance would explain (${formatPInline(g.p)})`;
    if (contradicted > 0) return `${head}: the data contradict at least one independence the graph implies.`;
    const belowFloor = s.min_effect > 0 && result.claims.some((c) => c.p_adjusted < s.alpha);
    if (belowFloor) {
      return `${head}, but no claim whose ${s.adjust === "none" ? "" : "adjusted "}p-value is below α = ${s.alpha} has an effect of at least the relevance floor ${s.min_effect}, so none is called contradicted: the departures are detectable but smaller than what was declared relevant.`;
    }
    return `${head}, although no single claim is contradicted${s.adjust === "none" ? "" : " after adjustment"}: the combined test pools departures that are each too small to stand out.`;
  }
  if (contradicted > 0) {
    return `Taken together, the ${tests} do not depart from what the graph implies more than chance would explain (${formatPInline(g.p)}), yet ${plural(contradicted, "claim is", "claims are")} contradicted on ${contradicted === 1 ? "its" : "their"} own: the combined test dilutes a few strong departures among many claims that hold.`;
  }
  return `Taken together, the ${tests} show no evidence against the graph (${formatPInline(g.p)}); this does not show that the graph is right.`;
}

function typeOf(result: AuditResult): Map<string, VariableSummary> {
  return new Map(result.variables.map((v) => [v.name, v]));
}

/** Whether two lists hold the same names (as sets). */
function sameSet(a: readonly string[], b: readonly string[]): boolean {
  const sa = new Set(a);
  const sb = new Set(b);
  return sa.size === sb.size && [...sa].every((v) => sb.has(v));
}

/** How many claims were conditioned on the parents' union and how many on another (smallest) separating set. */
export function countSetKinds(result: AuditResult): { parents: number; other: number } {
  const parents = new Map<string, string[]>();
  for (const [a, b] of result.graph.arrows) parents.set(b, [...(parents.get(b) ?? []), a]);
  let basis = 0;
  for (const c of result.claims) {
    const union = [...(parents.get(c.x) ?? []), ...(parents.get(c.y) ?? [])].filter((v) => v !== c.x && v !== c.y);
    if (sameSet(c.given, union)) basis++;
  }
  return { parents: basis, other: result.claims.length - basis };
}

/** The methods' first paragraph: the graph, and which separating set each claim was tested on. */
function claimsParagraph(result: AuditResult, context: ReportContext, refs: Set<RefKey>): string {
  const s = result.settings;
  const g = result.graph;
  const k = result.claims.length;
  refs.add("pearl2009");
  let derivation: string;
  const lead = "For each pair of measured variables not joined by an arrow, the implied independence was tested conditional on";
  if (s.sets === "union-parents") {
    refs.add("shipley2000");
    const kinds = countSetKinds(result);
    const basis = `the union of the two variables' parents (Shipley's basis set; Shipley 2000)`;
    if (kinds.other === 0) derivation = `${lead} ${basis}: all ${plural(k, "claim", "claims")}`;
    else {
      refs.add("tian1998");
      const smallest = `a minimal set of measured variables that d-separates the pair, one of the smallest (Tian, Paz & Pearl 1998), used where a parent is unmeasured or shares an unmeasured common cause`;
      derivation =
        kinds.parents === 0
          ? `${lead} ${smallest}: all ${plural(k, "claim", "claims")}`
          : `${lead} ${basis} for ${plural(kinds.parents, "claim", "claims")}, and on ${smallest}, for the other ${plural(kinds.other, "claim", "claims")}`;
    }
  } else {
    refs.add("tian1998");
    derivation =
      s.sets === "minimal"
        ? `${lead} a minimal set of measured variables that d-separates the pair, one of the smallest (Tian, Paz & Pearl 1998): all ${plural(k, "claim", "claims")}`
        : `${lead} every minimal set of measured variables that d-separates the pair (Tian, Paz & Pearl 1998), one claim per set: ${plural(k, "claim", "claims")} for ${plural(new Set(result.claims.map((c) => `${c.x}\u0000${c.y}`)).size, "pair", "pairs")}`;
  }
  return (
    `Analyses were run with arrowaudit ${context.toolVersion}. ` +
    `The causal graph (${plural(g.nodes.length, "node", "nodes")}: ${formatCount(g.measured.length)} measured, ${formatCount(g.unmeasured.length)} unmeasured; ${plural(g.arrows.length, "arrow", "arrows")}; ${plural(g.bidirected.length, "bidirected edge", "bidirected edges")} for unmeasured common causes) implies conditional independencies among the measured variables through d-separation (Pearl 2009). ` +
    `${derivation}. ${cap(plural(k, "claim was", "claims were"))} tested; ${plural(result.untestable.length, "missing arrow", "missing arrows")} could not be tested and ${result.untestable.length === 1 ? "is" : "are"} listed with the reason.`
  );
}

/** The coding of a categorical variable as a phrase: "female = 0, male = 1", "low < mid < high", "a, b (no order)". */
function codingOf(v: VariableSummary): string {
  const levels = v.levels ?? [];
  if (v.type === "binary" && levels.length === 2) return levels[0] === "0" && levels[1] === "1" ? "0, 1 (as in the file)" : `${levels[0]} = 0, ${levels[1]} = 1`;
  if (v.type === "binary" || v.type === "ordinal") return levels.join(" < ");
  if (v.type === "nominal") return `${levels.join(", ")} (no order)`;
  return "";
}

/** The sentence saying how binary and ordinal variables were coded, for the variables that were x or y of a claim; "" when there are none. */
function codingSentence(result: AuditResult): string {
  const sides = new Set(result.claims.flatMap((c) => [c.x, c.y]));
  const vars = result.variables.filter((v) => sides.has(v.name) && (v.type === "binary" || v.type === "ordinal") && (v.levels?.length ?? 0) >= 2);
  if (vars.length === 0) return "";
  const bin = vars.filter((v) => v.type === "binary").map((v) => `${v.name} = ${v.levels![1]}`);
  const ord = vars.filter((v) => v.type === "ordinal").map((v) => `${v.levels!.join(" < ")} (${v.name})`);
  const parts: string[] = [];
  if (bin.length) parts.push(`binary variables were coded 0/1 with 1 for ${listJoin(bin)}`);
  if (ord.length) parts.push(`ordinal variables were scored in the order ${listJoin(ord)}`);
  return ` ${cap(listJoin(parts))}, so a positive effect means that higher codes of one variable go with higher codes of the other.`;
}

/** The methods' second paragraph: the tests actually used, with their df rules, sequential permutations and the coding of scored variables. */
function testsParagraph(result: AuditResult, refs: Set<RefKey>): string | undefined {
  const s = result.settings;
  const claims = result.claims;
  const types = typeOf(result);
  const used = TEST_ORDER.filter((t) => claims.some((c) => c.test === t));
  if (used.length === 0) return undefined;
  const parts = used.map((t) => {
    const cs = claims.filter((c) => c.test === t);
    const vt = [...new Set(cs.flatMap((c) => [types.get(c.x)?.type, types.get(c.y)?.type]).filter((v): v is NonNullable<typeof v> => v !== undefined))].sort();
    TEST_TEXT[t].refs.forEach((r) => refs.add(r));
    const who = `${cap(plural(cs.length, "claim", "claims"))}${vt.length > 0 ? ` involving ${listJoin(vt)} variables` : ""}`;
    return `${who} ${cs.length === 1 ? "was" : "were"} tested with ${TEST_TEXT[t].text(cs, result.settings.alpha)}.`;
  });
  let text = `Each claim was tested with a method suited to its variables' types. ${parts.join(" ")}`;
  const scoreTests: TestName[] = ["gcm", "gcm-rank", "pearson-partial"];
  const scored = claims.filter((c) => scoreTests.includes(c.test) && [c.x, c.y].some((v) => types.get(v)?.type === "binary" || types.get(v)?.type === "ordinal"));
  if (scored.length > 0) {
    const kinds = [...new Set(scored.map((c) => (c.test === "pearson-partial" ? "the partial correlation" : "the generalised covariance measure")))].sort();
    const fit = kinds.length === 2 ? " (in the generalised covariance measure, a linear-probability fit)" : kinds[0] === "the partial correlation" ? "" : " (a linear-probability fit)";
    text += ` In ${plural(scored.length, "claim", "claims")} tested with ${kinds.join(" or ")}, a binary x or y was analysed as its 0/1 code${fit} and an ordinal one as the scores of its levels${scored.some((c) => c.test === "gcm-rank") ? " (their mid-ranks with --method rank)" : ""}, while categorical members of the conditioning sets always entered as indicators of their levels.`;
  }
  text += codingSentence(result);
  const lr = claims.some((c) => c.test === "stratified-chisq" || c.test === "regression-lr" || c.test === "linear-by-linear" || claimEffectSymbol(c) === "e");
  if (lr) {
    refs.add("coxsnell1989");
    refs.add("magee1990");
    refs.add("steiger1990");
    text +=
      ` Likelihood-ratio results are reported on the correlation scale as the effect e = √(1 − exp(−LR/n)) (Cox & Snell 1989; Magee 1990), or, for tests on more than one degree of freedom, e = √(1 − exp(−max(0, LR − df)/n)), which removes the part of LR expected by chance (as in the RMSEA), with a ${formatLevel(1 - s.alpha)} interval from the noncentral chi-square distribution (Steiger 1990) whose lower end is the one-sided bound at ${s.alpha}, so that it excludes 0 exactly when the test rejects at ${s.alpha}; one-degree-of-freedom results take the signed-root interval, sign·√LR ± z₁₋α/₂ (${normalQuantile(1 - s.alpha / 2).toFixed(2)}) mapped to the same scale.`;
  }
  const mh = claims.filter((c) => c.details?.mantel_haenszel !== undefined);
  if (mh.length > 0) {
    refs.add("mh1959");
    refs.add("rbg1986");
    text += ` For the ${plural(mh.length, "claim", "claims")} between two binary variables within the strata of categorical sets (2×2×K tables), the table also gives the Mantel–Haenszel common odds ratio of the levels coded 1 (Mantel & Haenszel 1959), with a 95% interval from the Robins–Breslow–Greenland variance of its logarithm (Robins, Breslow & Greenland 1986).`;
  }
  const flexible = claims.filter((c) => c.test === "gcm" || c.test === "gcm-rank");
  if (flexible.length > 0) {
    const differing = flexible.filter((c) => (c.details?.linear_adjustment as { verdict_differs?: boolean } | undefined)?.verdict_differs);
    text += ` As a check on the functional form, each claim tested with the generalised covariance measure was also tested with linear adjustment and equal variances (the partial correlation t test); ${
      differing.length === 0
        ? "no verdict changed"
        : `the verdict changed for ${plural(differing.length, "claim", "claims")} (${listJoin(differing.slice(0, 5).map((c) => claimLabel(c)))}${differing.length > 5 ? ", …" : ""}), whose conclusions therefore depend on the functional form assumed`
    }.`;
  }
  const perm = claims.filter((c) => c.p_method === "permutation");
  if (perm.length > 0) {
    refs.add("clopper1934");
    refs.add("gandy2016");
    const caps = [...new Set(perm.map((c) => c.monte_carlo?.cap ?? s.permutations).filter((b): b is number => b !== undefined))];
    const limit = caps.length > 0 ? Math.max(...caps) : undefined;
    const draws = range(perm.map((c) => c.B ?? Number.NaN));
    const risk = s.resampling_risk ?? DEFAULT_RESAMPLING_RISK;
    const shared = s.adjust === "none" ? "over the rounds of each claim" : "over the rounds and the Monte-Carlo claims";
    text += ` The p-values of ${plural(perm.length, "claim", "claims")} were estimated by Monte Carlo permutation within the strata of the conditioning set, as p = (1 + hits)/(1 + draws). Permutations were drawn in rounds of doubling size (${formatCount(FIRST_LOOK)}, ${formatCount(2 * FIRST_LOOK)}, ${formatCount(4 * FIRST_LOOK)}, …${limit !== undefined ? `, at most ${formatCount(limit)}` : ""}); after each round the Clopper–Pearson limits of every permuted p-value (Clopper & Pearson 1934), at a risk of ${risk} split ${shared}, were checked against ${s.adjust === "none" ? `alpha = ${s.alpha}` : "the threshold its verdict faces after the adjustment"}, and drawing continued only for claims whose verdict differed between the upper and the lower limits (Gandy & Hahn 2016), so that the chance that ${s.adjust === "none" ? "a claim's" : "any"} verdict differs from the one of the exact permutation p-value${s.adjust === "none" ? "" : "s"} is at most ${risk}; ${draws ? `${draws} permutations were drawn per claim` : "the number drawn is in each claim's details"} (random seed ${s.seed}).`;
    const undecided = claims.filter((c) => c.p_undecided);
    if (undecided.length > 0) {
      const proposals = undecided.map((c) => c.p_proposed_B).filter((b): b is number => b !== undefined);
      text += ` The verdict of ${plural(undecided.length, "claim", "claims")} (${listJoin(undecided.slice(0, 5).map((c) => claimLabel(c)))}${undecided.length > 5 ? ", …" : ""}) was not resolved within that limit and is provisional${proposals.length > 0 ? ` (about ${formatCount(Math.max(...proposals))} permutations would resolve it)` : ""}.`;
    }
    if (perm.some((c) => c.test === "stratified-chisq" && c.df > 1)) {
      refs.add("satterthwaite1946");
      text += " For those claims the effect subtracts the mean of the permuted statistics, and its interval matches the permutation distribution by its first two moments (Satterthwaite 1946), so that it agrees with the permutation p-value.";
    }
  }
  return text;
}

/** The methods' third paragraph: complete cases and what they assume, the adjustment, the decision rule. */
function decisionsParagraph(result: AuditResult, refs: Set<RefKey>): string {
  const s = result.settings;
  const claims = result.claims;
  const k = claims.length;
  const ns = claims.map((c) => c.n).filter(Number.isFinite);
  const rows = result.data.rows;
  let missing: string;
  const src = result.data.source;
  if (src?.kind === "sites") {
    missing = `The claims were tested from the summaries of ${src.sites?.length ?? 0} sites (${(src.sites ?? []).map((t) => `${t.site}, ${formatCount(t.n)} rows`).join("; ")}), pooled with site as a stratum${claims.length ? `: ${pooledRulesText(claims)}` : ""}; each site used the rows complete for the claim's variables.`;
  } else if (src) {
    missing = `The claims were tested from summary statistics: the ${src.kind === "correlations" ? "correlation" : "covariance"} matrix of ${formatCount(src.n)} complete cases${result.data.file !== undefined ? ` in ${result.data.file}` : ""}${src.sd_file !== undefined ? `, turned into covariances by the standard deviations in ${src.sd_file}` : ""}, each claim by the partial correlation of the variables' scores; claims that need the levels of a categorical variable could not be tested.`;
  } else if (s.listwise) {
    missing = `Rows with a missing value in any analysed variable were removed before testing (listwise deletion): ${formatCount(result.data.rows_used)} of ${formatCount(rows)} rows were used.`;
  } else if (ns.length > 0) {
    missing = `Each claim used the rows complete for its own variables (complete cases per claim): n = ${range(ns)} of ${formatCount(rows)} rows.`;
  } else {
    missing = `Each claim would use the rows complete for its own variables (complete cases per claim), out of ${formatCount(rows)} rows.`;
  }
  missing +=
    " This is valid when values are missing completely at random or when whether a row is complete depends only on the claim's conditioning variables; it is not when missingness depends on x or y themselves, which can make a true claim look contradicted.";
  let adjust: string;
  if (s.adjust === "holm") {
    refs.add("holm1979");
    adjust = `P-values were adjusted for the ${plural(k, "test", "tests")} with Holm's step-down method (Holm 1979), which controls the family-wise error rate.`;
  } else if (s.adjust === "bh") {
    refs.add("bh1995");
    adjust = `P-values were adjusted for the ${plural(k, "test", "tests")} with the Benjamini–Hochberg step-up method (Benjamini & Hochberg 1995), which controls the false discovery rate.`;
  } else {
    adjust = "P-values were not adjusted for multiple testing.";
  }
  const rule =
    s.min_effect > 0
      ? `A claim was called contradicted when its ${s.adjust === "none" ? "" : "adjusted "}p-value was below α = ${s.alpha} and its absolute effect was at least ${s.min_effect}.`
      : `A claim was called contradicted when its ${s.adjust === "none" ? "" : "adjusted "}p-value was below α = ${s.alpha}.`;
  return `${missing} ${adjust} ${rule}`;
}

/** The methods' fourth paragraph: unadjusted and adjusted counts with what each is compared with, the strongest contradictions, the global test. */
function resultsParagraph(result: AuditResult, refs: Set<RefKey>): string {
  const s = result.settings;
  const claims = result.claims;
  const k = claims.length;
  const gl = result.global;
  if (k === 0) return "No claim could be tested.";
  const contradicted = claims.filter((c) => c.verdict === "contradicted");
  const unadjusted = claims.filter((c) => c.p < s.alpha).length;
  const chance = Number.isFinite(gl.expected_by_chance) ? String(Number(gl.expected_by_chance.toFixed(2))) : "n/a";
  const floor = s.min_effect > 0 ? ` and an absolute effect of at least ${s.min_effect}` : "";
  let res = `Of the ${plural(k, "claim", "claims")}, ${formatCount(unadjusted)} had an unadjusted p-value below α = ${s.alpha}, where ${chance} would be expected by chance alone if every claim held. `;
  if (s.adjust === "none") res += `Without adjustment, ${formatCount(contradicted.length)} ${contradicted.length === 1 ? "was" : "were"} called contradicted${floor ? ` (p-value below α${floor})` : ""}.`;
  else {
    res += `After ${s.adjust === "holm" ? "Holm's adjustment" : "the Benjamini–Hochberg adjustment"}, which ${GUARANTEE[s.adjust](s.alpha)}, ${formatCount(contradicted.length)} ${contradicted.length === 1 ? "was" : "were"} contradicted by the data${floor ? ` (adjusted p-value below α${floor})` : ""}.`;
  }
  if (contradicted.length > 0) {
    const top = contradicted
      .slice(0, 3)
      .map((c) => `${claimLabel(c)} (${claimEffectSymbol(c)} = ${formatEffectWithCI(c.effect, c.ci)}, ${s.adjust === "none" ? "" : "adjusted "}${formatPInline(c.p_adjusted)})`);
    res += ` The strongest ${contradicted.length === 1 ? "contradiction was" : "contradictions were"} ${listJoin(top)}.`;
  }
  refs.add("fisher1925");
  refs.add("shipley2000");
  res += ` Combining the ${plural(k, "p-value", "p-values")} with Fisher's method (Fisher 1925), as proposed for graph tests by Shipley (2000), gave C = ${formatStatistic(gl.statistic)} on ${gl.df} degrees of freedom, ${formatPInline(gl.p)}.`;
  if (gl.note) res += ` ${cap(gl.note)}.`;
  res += ` ${equivalenceSentence(result, refs)}`;
  return res;
}

/**
 * What the audit could have detected and which omissions the data support: the range of the
 * detectable effects, and the four groups of the equivalence tests with the margin.
 */
function equivalenceSentence(result: AuditResult, refs: Set<RefKey>): string {
  const s = result.settings;
  const claims = result.claims;
  const margin = s.margin ?? DEFAULT_MARGIN;
  const g = groupCounts(claims);
  refs.add("schuirmann1987");
  refs.add("cohen1988");
  const det = claims.map((c) => c.detectable).filter((d): d is number => d !== undefined && Number.isFinite(d));
  const level = s.adjust === "none" ? `α = ${s.alpha}` : `α/k = ${Number((s.alpha / Math.max(1, claims.length)).toPrecision(3))}, the smallest threshold of the adjustment`;
  const detect = det.length
    ? `With ${Math.round(100 * (s.power ?? 0.8))}% power at ${level}, the tests could detect absolute effects from ${formatEffect(Math.min(...det), 3)} to ${formatEffect(Math.max(...det), 3)} (Fisher's z for partial correlations, Cohen 1988; the noncentral chi-square otherwise); smaller violations would usually go unseen, so a claim that was not contradicted is not thereby shown to hold. `
    : "";
  return `${detect}Equivalence was tested with two one-sided tests at ${s.alpha} against a margin of ±${margin} on the effect scale (Schuirmann 1987), a claim being supported when its ${formatLevel(1 - 2 * s.alpha)} interval lay inside the margin: ${formatCount(g.contradicted)} ${g.contradicted === 1 ? "claim was" : "claims were"} contradicted, ${formatCount(g.contradicted_within_margin)} contradicted but within the margin (a real but negligible dependence), ${formatCount(g.supported)} supported as equivalent to independence, and ${formatCount(g.inconclusive)} inconclusive (neither shown).`;
}

/** The four groups in one line: "2 contradicted, 0 contradicted but within the margin, 5 supported, 3 inconclusive". */
function groupSummary(result: AuditResult): string {
  const g = groupCounts(result.claims);
  return `${formatCount(g.contradicted)} contradicted, ${formatCount(g.contradicted_within_margin)} contradicted but within the margin, ${formatCount(g.supported)} supported (equivalent), ${formatCount(g.inconclusive)} inconclusive`;
}

function methodsText(result: AuditResult, context: ReportContext, refs: Set<RefKey>): string[] {
  const paras = [claimsParagraph(result, context, refs)];
  const tests = testsParagraph(result, refs);
  if (tests !== undefined) paras.push(tests);
  paras.push(decisionsParagraph(result, refs), resultsParagraph(result, refs));
  return paras;
}

/** The adjusted-interval cell of a claim: "[lo, hi] at 99.85%", or "n/a". */
function adjustedCell(c: TestedClaim, alpha: number): string {
  const adj = adjustedInterval(c, alpha);
  if (!adj) return "n/a";
  return `${formatCI(adj.ci, Math.max(2, ...[c.effect, ...c.ci].map((v) => (Number.isFinite(v) && Math.abs(v) < 0.1 ? 3 : 2))))} at ${formatLevel(adj.level)}`;
}

/** The Mantel–Haenszel odds-ratio cell of a 2×2×K claim: "OR_MH = 1.23 [0.98, 1.55]", or "". */
function oddsRatioCell(c: TestedClaim): string {
  const mh = c.details?.mantel_haenszel as { odds_ratio?: number; ci?: [number, number] } | undefined;
  if (!mh || !Number.isFinite(mh.odds_ratio)) return "";
  const ci = Array.isArray(mh.ci) && mh.ci.every(Number.isFinite) ? ` [${formatEffect(mh.ci[0], 2)}, ${formatEffect(mh.ci[1], 2)}]` : "";
  return `OR_MH = ${formatEffect(mh.odds_ratio!, 2)}${ci}`;
}

/**
 * Build the text content of a report from an audit result and its context: summary, table rows,
 * untestable list, data summary, methods paragraphs (numbers filled in, only the methods used),
 * the references cited, cautions and reproducibility facts. Plain text, not escaped.
 * Cost: O(k + u + v) for k claims, u untestable claims and v variables.
 *
 * @param result the audit result
 * @param context command, date, input hashes, tool version, demo flag
 * @example buildReportText(result, context).claimRows.length === result.claims.length
 */
export function buildReportText(result: AuditResult, context: ReportContext): ReportText {
  const s = result.settings;
  const claims = [...result.claims].sort((a, b) => a.rank - b.rank);
  const contradicted = claims.filter((c) => c.verdict === "contradicted").length;
  const refs = new Set<RefKey>();
  const methods = methodsText(result, context, refs);

  const dataName = result.data.file ?? context.inputs.find((i) => /\.(csv|tsv|txt|parquet)$/i.test(i.path))?.path;
  const summary = [
    {
      label: "Data read",
      value: result.data.source?.kind === "sites"
        ? `${plural(result.data.source.sites?.length ?? 0, "site summary", "site summaries")} pooled (${(result.data.source.sites ?? []).map((t) => `${t.site}: ${formatCount(t.n)} rows`).join(", ")}), ${plural(result.variables.length, "variable", "variables")}`
        : result.data.source
        ? `${dataName !== undefined ? `${dataName}: ` : ""}${result.data.source.kind === "correlations" ? "correlation" : "covariance"} matrix of ${plural(result.data.source.n, "complete case", "complete cases")}, ${plural(result.variables.length, "variable", "variables")}`
        : `${dataName !== undefined ? `${dataName}: ` : ""}${plural(result.data.rows, "row", "rows")}, ${plural(result.variables.length, "variable", "variables")}`,
    },
    { label: "Claims tested", value: formatCount(claims.length) },
    { label: "Contradicted", value: formatCount(contradicted) },
    { label: "Consistent", value: formatCount(claims.length - contradicted) },
    { label: "Untestable", value: formatCount(result.untestable.length) },
    ...(claims.length > 0 ? [{ label: `Equivalence (margin ±${s.margin ?? DEFAULT_MARGIN})`, value: groupSummary(result) }] : []),
    {
      label: "Global test",
      value: claims.length > 0 ? `Fisher's C = ${formatStatistic(result.global.statistic)}, df = ${result.global.df}, ${formatPInline(result.global.p)}` : "not computed (no claims tested)",
    },
  ];

  const claimRows: ClaimRow[] = claims.map((c: TestedClaim) => ({
    rank: String(c.rank),
    claim: claimLabel(c),
    n: formatCount(c.n),
    test: TEST_TEXT[c.test]?.name ?? c.test,
    effect: `${claimEffectSymbol(c)} = ${formatEffectWithCI(c.effect, c.ci)}`,
    detectable: c.detectable !== undefined ? formatEffect(c.detectable, c.detectable < 0.1 ? 3 : 2) : "n/a",
    group: GROUP_WORDS[claimGroup(c)],
    adjustedInterval: adjustedCell(c, s.alpha),
    oddsRatio: oddsRatioCell(c),
    p: formatP(c.p),
    pPrecision: monteCarloPrecision(c),
    pAdjusted: formatP(c.p_adjusted),
    verdict: c.verdict,
    undecided: c.p_undecided ? `undecided${c.p_proposed_B !== undefined ? ` (about ${formatCount(c.p_proposed_B)} permutations would decide it)` : ""}` : "",
    arrows: c.verdict === "contradicted" ? c.arrows.join("; ") : "",
  }));

  const rows = result.data.rows;
  const variables: VariableRow[] = result.variables.map((v) => ({
    name: v.name,
    type: v.type,
    decided: v.type_source === "declared" ? "declared by the user" : result.data.source?.kind === "sites" ? "inferred from the values at the sites" : result.data.source ? "assumed continuous (a matrix holds scores)" : "inferred from the values",
    missing: v.missing > 0 ? `${formatCount(v.missing)} (${percent(v.missing, rows)})` : "0",
    levels: v.levels && v.type !== "continuous" ? codingOf(v) : "",
  }));
  const codingNote =
    "Binary variables are coded 0 and 1 as shown and ordinal variables are scored in the order shown, so a positive effect r means that higher codes of one variable go with higher codes of the other (for an odds ratio OR_MH above 1, the levels coded 1 go together); nominal variables have no order and their effects no sign.";

  refs.add("verma1990");
  const cautions = [
    "Consistency with the data does not show that the graph is right: other graphs imply the same independencies (Markov-equivalent graphs; Verma & Pearl 1990), and the data cannot tell them apart.",
    "A claim that is not contradicted may simply be untested for lack of power: read its confidence interval and its detectable effect, not only its p-value, and count it as support only when its equivalence test says so. Untestable claims were not tested at all; they are not shown to hold.",
    "Results depend on the assumed functional form, on measurement error, which can leave residual dependence after conditioning, and on how the rows were selected. The default test adjusts for each member of the conditioning set flexibly but additively (no interactions between members), so a strong interaction between members can leave residual dependence; its variance does not assume equal variances, but very small or very sparse samples still strain any large-sample reference distribution.",
    "Each claim uses the rows complete on its own variables. That is unbiased when missingness depends only on the conditioning variables, but not when it depends on the two variables themselves: in our simulations of true claims whose conditioning variable went missing more often for high values of x and y, the default test rejected in 12% of data sets at n = 500 and 82% at n = 5,000.",
    "Changing the graph because the data contradicted it needs subject-matter justification: an arrow suggested by the data (the arrows to consider here, or the revisions of arrowaudit suggest) is a hypothesis to be checked, ideally in other data, not a finding, and repeated data-driven changes invalidate the p-values.",
  ];

  const formDependent = claims.filter((c) => (c.details?.linear_adjustment as { verdict_differs?: boolean } | undefined)?.verdict_differs);
  if (formDependent.length > 0) {
    cautions.push(
      `The verdict of ${plural(formDependent.length, "claim", "claims")} (${listJoin(formDependent.slice(0, 5).map((c) => claimLabel(c)))}${formDependent.length > 5 ? ", …" : ""}) changes when the conditioning set enters linearly instead of flexibly: ${formDependent.length === 1 ? "its conclusion depends" : "their conclusions depend"} on the functional form assumed, so weigh ${formDependent.length === 1 ? "it" : "them"} with subject-matter knowledge of how the variables relate.`,
    );
  }

  const warnings = [
    ...result.warnings,
    ...claims.flatMap((c) => (c.warnings ?? []).map((w) => `#${c.rank} ${claimLabel(c)}: ${w}`)),
  ];

  const reproducibility: ReportText["reproducibility"] = [
    { label: "Tool", value: `arrowaudit ${context.toolVersion}` },
    { label: "Date", value: context.date },
    { label: "Command", value: context.command, code: true },
    ...(context.equivalentCommand !== undefined ? [{ label: "Equivalent test command", value: context.equivalentCommand, code: true }] : []),
    ...context.inputs.map((i) => ({ label: `SHA-256 of ${i.path}`, value: i.sha256, code: true })),
    { label: "Random seed", value: String(s.seed) },
    {
      label: "Settings",
      value: `alpha ${s.alpha}; adjustment ${s.adjust}; method ${s.method}; sets ${s.sets}; minimum effect ${s.min_effect}; listwise ${s.listwise ? "yes" : "no"}; ranked by ${s.rank_by}${s.permutations !== undefined ? `; permutations ${s.permutations}` : ""}${s.resampling_risk !== undefined ? `; resampling risk ${s.resampling_risk}` : ""}`,
    },
  ];

  const symbols = [...new Set(claims.map((c) => c.test))].sort((a, b) => TEST_ORDER.indexOf(a) - TEST_ORDER.indexOf(b));
  const SYMBOL_TEXT: Partial<Record<TestName, string>> = {
    gcm: "r: correlation of the two variables' residuals after flexible adjustment for the conditioning set",
    "gcm-rank": "ρ: correlation of the residuals of the two variables' mid-ranks after flexible adjustment",
    "pearson-partial": "r: partial Pearson correlation (linear adjustment)",
  };
  const lrScale = claims.some((c) => claimEffectSymbol(c) === "e");
  const effectNote = symbols
    .map((t): string => SYMBOL_TEXT[t] ?? "")
    .concat(lrScale ? ["e: likelihood-ratio effect √(1 − exp(−LR/n)) on the correlation scale (for several df, LR − df or, for permutation p-values, LR minus its permutation mean, in place of LR)"] : [])
    .concat(claimRows.some((r) => r.oddsRatio !== "") ? ["OR_MH: Mantel–Haenszel common odds ratio of the levels coded 1, with its 95% interval"] : [])
    .filter((x) => x !== "")
    .join("; ");

  return {
    title: "Graph–data consistency report",
    demoNotice: context.demo
      ? `Demonstration only: the data in this report are invented (simulated) and describe no real study or person.${context.equivalentCommand !== undefined ? ` The same audit as a test command: ${context.equivalentCommand}` : ""}`
      : undefined,
    summary,
    globalSentence: globalSentence(result),
    claimRows,
    untestable: result.untestable.map((u) => ({ claim: u.given ? claimLabel({ x: u.x, y: u.y, given: u.given }) : `${u.x} – ${u.y}`, reason: u.reason })),
    variables,
    codingNote,
    methods,
    references: [...refs].map((r) => REFERENCES[r]).sort(),
    cautions,
    warnings,
    reproducibility,
    effectNote,
    intervalNote: intervalNote(result),
  };
}

/** Which interval is which, in one or two sentences for the table and the forest plot. */
function intervalNote(result: AuditResult): string {
  const s = result.settings;
  const floor = s.min_effect > 0 ? ` and on the relevance floor ${s.min_effect}` : "";
  if (s.adjust === "none") {
    return `The ${formatLevel(1 - s.alpha)} interval is unadjusted, as are the p-values; the adjusted interval is the interval at the level α = ${s.alpha} used for every claim (confidence ${formatLevel(1 - s.alpha)}), and the verdict depends on the p-value${floor}.`;
  }
  const method = s.adjust === "holm" ? "Holm's method" : "the Benjamini–Hochberg method";
  const threshold = s.adjust === "holm" ? "α/(k − j + 1) for the j-th smallest of k p-values" : "jα/k for the j-th smallest of k p-values";
  return `The ${formatLevel(1 - s.alpha)} interval is unadjusted and can exclude 0 for a claim judged consistent. The verdict depends on the adjusted p-value${floor}; the adjusted interval is the interval at the level ${method} used for that claim (confidence 1 − α·p/p_adjusted, which is 1 − ${threshold} unless the monotone step raised the adjusted p-value), so it excludes 0 when the adjusted p-value is below α = ${s.alpha}.`;
}

/**
 * Test method `stratified-chisq`: x ⫫ y | given for categorical x, y and categorical members of
 * the conditioning set (binary, ordinal and nominal alike; ordinal levels are treated as
 * unordered categories).
 *
 * Terms (see `stats/stratifiedChiSquare.ts`): complete cases are grouped into weighted counts;
 * a *stratum* is one combination of the given variables' codes seen in the data (one stratum
 * when the set is empty). The statistic reported is the stratified likelihood-ratio G² on
 * Σ (r_s − 1)(c_s − 1) df; Pearson X² is in the details. Strata with a single row or a single
 * level of x or y contribute nothing and are counted (`strata_used` of `strata_total`).
 * When x and y both have two levels, the Mantel–Haenszel common odds ratio with its
 * Robins–Breslow–Greenland 95% interval and the Cochran–Mantel–Haenszel statistic, with and
 * without continuity correction, are added to the details.
 *
 * *Sparse rule*: when a table breaks Cochran's rule — some cell of the used strata has an
 * expected count below 1, or more than 20% of them have one below 5 (Cochran 1954, Biometrics
 * 10:417–451 — common practice) — or when Williams' factor says that the mean of G² exceeds its
 * df by more than 3% (Williams 1976, Biometrika 63:33–37; `sparseTableReasons`: G² on χ² was
 * liberal, 6–7.5% at 0.05, in tables that pass Cochran's rule with a larger excess, such as a
 * rare binary x at n = 5,000 with expected counts of 1–3), or when the user asks for
 * permutations, the p-value is a Monte-Carlo permutation p-value: x is permuted within each
 * stratum (the stratum's x and y margins stay fixed) and p = (1 + #{G²* ≥ G²})/(1 + draws). The
 * draws are judged at 200, 400, 800, … up to the cap B by a confidence sequence for the permutation
 * p-value that bounds the risk of a wrong verdict (`stats/monteCarloDecision.ts`): drawing stops
 * once the verdict no longer depends on more draws of this claim, the audit asks for more when the
 * claim's adjusted threshold needs them, `B` reports the draws made and `monte_carlo` their hits,
 * standard error and 99% interval. The random numbers come from the stream of (ctx.seed, claim)
 * (see `stats/rng.ts`). Each permuted stratum table is drawn cell by cell from conditional
 * hypergeometric distributions given the stratum's margins — the distribution of the table of
 * a within-stratum permutation — at O(r_s·c_s) per draw whatever the number of rows.
 *
 * *Permutation floor*: B draws cannot give a p-value below 1/(B + 1). Without `--permutations`,
 * the cap is `defaultPermutationCap` of ctx.decisionFloor (at least 10,000, and enough for a claim
 * with no hit to be decided below the smallest threshold an adjusted p-value faces); the
 * confidence sequence keeps ordinary claims at 200 draws. With the user's B, a claim whose floor 1/(B + 1) is not below
 * that threshold gets a warning naming the smallest reachable p-value and the B needed.
 *
 * Effect: with an asymptotic p-value, √(1 − exp(−G²/n)) for a 1-df test (one used 2 × 2
 * stratum), signed by the odds ratio; for more df √(1 − exp(−max(0, G² − df)/n)) (`lrEffect`);
 * 95% interval from the noncentral chi-square inversion of Steiger (1990). With a permutation
 * p-value, sparse strata move the null distribution of G² away from χ²(df) (mean above df,
 * variance below 2·mean), so the effect and interval are calibrated on that null instead
 * (`permutationLrEffect`): its mean m and variance v come from the permuted G² (all draws made,
 * at least 200), the effect is √(1 − exp(−max(0, G² − m)/n))
 * (G² in place of G² − m for 1 df, signed), the interval inverts the noncentral chi-square
 * matched to the null by its two moments, a·χ²(ν, λ′) with a = v/(2m), ν = 2m²/v (Satterthwaite
 * 1946; Box 1954), and its lower end is 0 whenever the permutation p is ≥ 0.025, so the effect
 * never looks clearly non-null for a claim its own test does not reject.
 */
import type { Column, Table } from "../../data/Table.js";
import { CATEGORICAL_TYPES } from "../../data/Table.js";
import { lrEffect, lrEffectInterval, permutationLrEffect, type NullMoments } from "../../stats/effectScale.js";
import { mantelHaenszel } from "../../stats/mantelHaenszel.js";
import {
  createTableStatisticSampler, permutationFloorWarning,
} from "../../stats/permutation.js";
import { monteCarloSummary, planOf, runMonteCarloKept, type MonteCarloPlan, type MonteCarloStream, type MonteCarloSummary } from "../../stats/monteCarloDecision.js";
import { chiSquareUpper, logChiSquareUpper } from "../../stats/pvalues.js";
import { createRng, streamKeyOfClaim } from "../../stats/rng.js";
import {
  COCHRAN_SPARSE_SHARE, MAX_WILLIAMS_EXCESS, sparseTableReasons, stratifiedChiSquare, type SparseTableReason, type StratifiedChiSquareResult,
} from "../../stats/stratifiedChiSquare.js";
import type { ClaimTypes, MethodResult, TestContext, TestMethod } from "../TestMethod.js";
import type { Claim, TestOutcome } from "../types.js";
import { strataAdjustment } from "./adjustmentDetails.js";
import { groupStrata, neverBothVary, unusedStrataWarning, type CompactStratum } from "./groupRows.js";

/** Share of sparse cells (expected count < 5) above which the permutation p-value is used (also used whenever an expected count is below 1). */
export const SPARSE_SHARE = COCHRAN_SPARSE_SHARE;

/** The warning of a claim whose p-value is permuted because its table is sparse, naming the rule(s) that said so. */
function sparseRuleWarning(res: StratifiedChiSquareResult, reasons: readonly SparseTableReason[], B: number): string {
  const parts = reasons.map((f) =>
    f === "expected-below-1"
      ? `${res.tinyCells} of ${res.cells} expected counts are below 1 (smallest ${res.minExpected.toPrecision(2)}; Cochran's rule)`
      : f === "over-20%-below-5"
        ? `${(100 * res.sparseCells / res.cells).toFixed(0)}% of expected counts are below 5 (Cochran's rule)`
        : `small expected counts put the mean of G² ${(100 * res.williamsExcess).toFixed(1)}% above its df (Williams' factor; more than ${100 * MAX_WILLIAMS_EXCESS}% makes χ² liberal)`);
  return `${parts.join("; ")}: p-value from ${B} permutations within strata`;
}
/** Fewest permuted G² behind the null mean and variance that calibrate the effect (draws continue past the test's own when it stops earlier). */
export const NULL_DRAWS = 200;

function quoted(names: readonly string[]): string {
  return names.map((s) => `"${s}"`).join(", ");
}

/**
 * Permutation p-value of the stratified G²: x permuted within each stratum, drawn by the plan (`runMonteCarloTest`: looks at 200, 400, … up to the cap), with
 * the mean and variance of the permuted G² (from at least {@link NULL_DRAWS} draws).
 * The statistic compared is Σ_s Σ_cells O ln O, which differs from G²/2 by a constant given the
 * margins, so a permuted G²* = G² + 2(S* − S) for the observed S (mean G² + 2(mean S* − S),
 * variance 4·var S*). A permuted stratum table is drawn directly from the multivariate
 * hypergeometric distribution given the stratum's margins (`createTableStatisticSampler`), never
 * by shuffling rows. O ln O comes from a table of x ln x for x ≤ the largest stratum.
 * Cost: O(Σ_s n_s) once, then O(max(draws, 200) · Σ_s (r_s·c_s + draws' spread)) — independent of the rows.
 */
function permutationP(
  tables: readonly CompactStratum[],
  g2: number,
  plan: MonteCarloPlan,
  seed: number,
  key: string,
  streams?: Map<string, MonteCarloStream>,
): { p: number; hits: number; draws: number; null: NullMoments } {
  const rowViews: Float64Array[] = [];
  const colViews: Float64Array[] = [];
  let maxN = 0;
  for (const t of tables) {
    if (t.rows < 2 || t.cols < 2) continue;
    const rowMargins = new Float64Array(t.rows);
    const colMargins = new Float64Array(t.cols);
    let tot = 0;
    for (let i = 0; i < t.rows; i++) {
      for (let j = 0; j < t.cols; j++) {
        const v = t.counts[i * t.cols + j]!;
        rowMargins[i] = rowMargins[i]! + v;
        colMargins[j] = colMargins[j]! + v;
        tot += v;
      }
    }
    rowViews.push(rowMargins);
    colViews.push(colMargins);
    maxN = Math.max(maxN, tot);
  }
  const xLogX = new Float64Array(maxN + 1);
  for (let v = 2; v <= maxN; v++) xLogX[v] = v * Math.log(v);
  let observed = 0;
  for (const t of tables) {
    if (t.rows < 2 || t.cols < 2) continue;
    for (let q = 0; q < t.counts.length; q++) observed += xLogX[t.counts[q]!]!;
  }
  const mc = runMonteCarloKept(observed, () => createTableStatisticSampler(rowViews, colViews, createRng(seed, key), xLogX), plan, NULL_DRAWS, streams, key);
  return { p: mc.p, hits: mc.hits, draws: mc.draws, null: { mean: g2 + 2 * (mc.mean - observed), variance: 4 * mc.variance } };
}

/**
 * Stratified chi-square test of one claim (see the module comment).
 * Cost: O(rows · (k + 2)) to group, O(Σ r_s c_s) for the statistics, plus the permutations.
 * Source: Agresti (2013), Categorical Data Analysis, 3rd ed., §3.2, §6.4; Mantel & Haenszel
 * (1959), J. Natl Cancer Inst. 22:719–748; Robins, Breslow & Greenland (1986), Biometrics 42:311–323.
 * @example
 * const r = runStratifiedChisq({ x: "sex", y: "admitted", given: ["dept"] }, ctx);
 * if (r.ok) r.outcome.statistic; // G²
 */
export function runStratifiedChisq(claim: Claim, ctx: TestContext): MethodResult {
  const names = [claim.x, claim.y, ...claim.given];
  const cols: Column[] = [];
  for (const name of names) {
    const col = ctx.table.column(name);
    if (!col) return { ok: false, reason: `variable "${name}" is not a column of the data` };
    if (!col.codes || !col.levels || !CATEGORICAL_TYPES.has(col.type)) {
      return { ok: false, reason: `variable "${name}" is ${col.type}; the stratified chi-square test needs categorical variables only` };
    }
    cols.push(col);
  }
  const [x, y, ...given] = cols as [Column, Column, ...Column[]];
  const { n, strata: tables, twoByTwo: mh } = groupStrata(x, y, given, ctx.table.rows, ctx.rowFilter, ctx.weights);
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted(names)} observed` };
  return testStrata(claim, n, tables, mh, ctx);
}

/**
 * The stratified chi-square test of a claim from its grouped strata (see the module comment):
 * `tables` one compact x × y table per stratum, `mh` each stratum's full 2 × 2 table when x and y
 * have two levels, n the complete cases. Used on rows by {@link runStratifiedChisq} and on the
 * strata of several sites by `poolSiteSummaries`. Cost: O(Σ r_s c_s) plus the permutations.
 * @example testStrata(claim, 40, [{ rows: 2, cols: 2, counts, xCodes, yCodes }], [counts], ctx)
 */
export function testStrata(claim: Claim, n: number, tables: readonly CompactStratum[], mh: readonly Float64Array[] | undefined, ctx: TestContext): MethodResult {
  const res = stratifiedChiSquare(tables);
  if (res.df === 0) return { ok: false, reason: neverBothVary(claim, res.strataTotal, n) };
  const warnings: string[] = [];
  const unused = unusedStrataWarning(claim, res.strataUsed, res.strataTotal);
  if (unused) warnings.push(unused);
  const sparseShare = res.cells > 0 ? res.sparseCells / res.cells : 0;
  const sparseRule = sparseTableReasons(res);
  const sparse = sparseRule.length > 0;
  const permute = sparse || ctx.permutations !== undefined;
  const pAsymptotic = chiSquareUpper(res.g2, res.df);
  const logPAsymptotic = logChiSquareUpper(res.g2, res.df);
  let p: number;
  let logP: number;
  let B: number | undefined;
  let nullMoments: NullMoments | undefined;
  let monteCarlo: MonteCarloSummary | undefined;
  if (permute) {
    const plan = planOf(ctx);
    const floorWarning = permutationFloorWarning(plan.cap, ctx.decisionFloor);
    const perm = permutationP(tables, res.g2, plan, ctx.seed, streamKeyOfClaim(claim), ctx.monteCarloStreams);
    p = perm.p;
    logP = Math.log(p);
    nullMoments = perm.null;
    B = perm.draws;
    monteCarlo = monteCarloSummary(perm.hits, perm.draws, plan.cap);
    if (sparse) warnings.push(sparseRuleWarning(res, sparseRule, B));
    if (floorWarning) warnings.push(floorWarning);
  } else {
    logP = logPAsymptotic;
    p = pAsymptotic > 0 ? pAsymptotic : Number.MIN_VALUE;
  }
  const details: Record<string, unknown> = {
    x2: res.x2,
    p_x2: chiSquareUpper(res.x2, res.df),
    g2: res.g2,
    p_asymptotic: pAsymptotic,
    strata_used: res.strataUsed,
    strata_total: res.strataTotal,
    cells: res.cells,
    sparse_cells: res.sparseCells,
    sparse_share: sparseShare,
    tiny_cells: res.tinyCells,
    ...(Number.isFinite(res.minExpected) ? { min_expected: res.minExpected } : {}),
    williams_excess: res.williamsExcess,
    sparse_rule: sparseRule,
    adjustment: strataAdjustment(claim.given),
    sides: [claim.x, claim.y].map((variable) => ({ variable, model: "categories within each stratum" })),
  };
  let sign: -1 | 0 | 1 = 1;
  if (mh) {
    const m = mantelHaenszel(mh);
    details.mantel_haenszel = {
      odds_ratio: m.oddsRatio,
      ci: m.ci,
      cmh: m.cmh,
      p: m.p,
      cmh_corrected: m.cmhCorrected,
      p_corrected: m.pCorrected,
      strata_used: m.strataUsed,
    };
    if (res.df === 1 && Number.isFinite(m.oddsRatio)) sign = m.oddsRatio > 1 ? 1 : m.oddsRatio < 1 ? -1 : 0;
  }
  let effect: number;
  let ci: [number, number];
  if (nullMoments !== undefined) {
    // Permutation p-value: effect and interval calibrated on the permutation null of G²
    const cal = permutationLrEffect(res.g2, res.df, n, nullMoments, p, sign, 1 - (ctx.alpha ?? 0.05));
    effect = cal.effect;
    ci = cal.ci;
    details.g2_null_mean = nullMoments.mean;
    details.g2_null_variance = nullMoments.variance;
  } else {
    effect = lrEffect(res.g2, res.df, n, sign);
    ci = lrEffectInterval(res.g2, res.df, n, sign, 1 - (ctx.alpha ?? 0.05));
  }
  const outcome: TestOutcome = {
    test: "stratified-chisq",
    n,
    statistic: res.g2,
    df: res.df,
    p,
    log_p: logP,
    effect,
    ci,
    p_method: permute ? "permutation" : "asymptotic",
    ...(B !== undefined ? { B } : {}),
    ...(monteCarlo !== undefined ? { monte_carlo: monteCarlo } : {}),
    details,
    ...(warnings.length ? { warnings } : {}),
  };
  return { ok: true, outcome };
}

/** The `stratified-chisq` test method: x, y and every member of the set categorical. */
export const stratifiedChisq: TestMethod = {
  name: "stratified-chisq",
  accepts(types: ClaimTypes): boolean {
    return CATEGORICAL_TYPES.has(types.x) && CATEGORICAL_TYPES.has(types.y) && types.given.every((t) => CATEGORICAL_TYPES.has(t));
  },
  run: runStratifiedChisq,
  // Grouping reads every row once; a permutation p-value, when the sparse rule calls for one, costs more.
  rowWork: (claim: Claim, table: Table) => table.rows * (2 + claim.given.length),
};

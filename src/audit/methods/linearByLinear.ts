/**
 * Test method `linear-by-linear`: x ⫫ y | given for ordinal x and y and categorical members of
 * the conditioning set (binary, ordinal or nominal), by the stratified linear-by-linear
 * association statistic (the generalised Cochran–Mantel–Haenszel correlation statistic).
 *
 * Terms (see `stats/linearByLinear.ts`): complete cases of the claim's variables (after the row
 * filter, if any) are grouped into one x × y table per *stratum*, a combination of the given
 * variables' levels seen in the data. Each level of x and of y carries one *score*, its value in
 * the column (`Column.values`: the numeric level when the levels are numbers, else the level's
 * rank 0, 1, 2, …), read through the level codes. Within a stratum the score product sum
 * T_s = Σ u_i v_j n_ij is compared with its null mean E_s and hypergeometric variance V_s given
 * the stratum's margins; Q = (Σ_s (T_s − E_s))² / Σ_s V_s on 1 df. Strata with a single row or a
 * single level of x or y have V_s = 0, contribute nothing and are counted (`strata_used` of
 * `strata_total`). Unlike the stratified chi-square test, which spends (r − 1)(c − 1) df per
 * stratum on any pattern, Q spends one df on a linear trend in the scores shared by the strata:
 * it detects such trends that G² misses, and its χ²(1) reference needs a large total count, not
 * large strata (Agresti 2013, §6.4), so sparse tables keep the asymptotic p-value (the
 * calibration tests check this at n = 90 in 60 cells). It does not see associations without a
 * linear component (e.g. a U shape); the stratified chi-square test does.
 *
 * *Sparse rule*: when x and y both have two levels (a 2 × 2 × K table, where Q is the
 * Cochran–Mantel–Haenszel statistic) and Σ n11 cannot move even one count from its null mean on
 * one side (a Mantel–Fleiss gap below {@link MIN_MANTEL_FLEISS_GAP}; `stats/mantelFleiss.ts`),
 * the p-value is permuted as below (`details.sparse_rule`). With two rare levels (1% each at
 * n = 5,000, gaps near 0.5) χ²(1) rejected 6.4–7.8% of true claims at 0.05 in our simulations.
 * Mantel and Fleiss ask for gaps of 5, but between 0.5 and 5 χ²(1) was already conservative
 * (3.5–4.8%) and the permutation test more so (2.2–4.3%, the discreteness of an exact
 * conditional test), so only the liberal region is permuted.
 *
 * *p-value*: the χ²(1) upper tail of Q (tail-accurate, with `log_p`). With `ctx.permutations`, or
 * under the sparse rule, a seeded Monte-Carlo permutation p-value instead: x is permuted within each stratum (tables drawn
 * from the multivariate hypergeometric distribution given the stratum's margins), the statistic
 * is |Σ_s (T_s − E_s)| (equivalent to Q, whose denominator is fixed by the margins), the draws are
 * judged at 200, 400, 800, … up to the cap B by a confidence sequence that bounds the risk of a
 * wrong verdict (`stats/monteCarloDecision.ts`; the audit asks for more draws when the claim's
 * adjusted threshold needs them), and the random numbers come from the stream of (ctx.seed, claim). When 1/(B + 1) is not below
 * `ctx.decisionFloor` a warning says so (see `stats/permutation.ts`).
 *
 * *Effect*: sign·√(1 − exp(−Q/n)), signed by Σ_s (T_s − E_s), on the scale shared by all tests.
 * Its 95% interval is the signed-root interval (`signedRootEffectCI`): sign·√Q ± 1.96 (the
 * signed root is approximately N(δ, 1)), mapped to the effect scale, so it excludes 0 exactly
 * when the χ²(1) p-value is below 0.05; with a permutation p-value the standard error of the
 * signed root is the one that p-value implies (Altman & Bland 2011), so the interval excludes 0
 * exactly when the permutation p-value is below 0.05.
 */
import type { Column, Table } from "../../data/Table.js";
import { CATEGORICAL_TYPES } from "../../data/Table.js";
import { lrToEffect, signedRootEffectCI } from "../../stats/effectScale.js";
import { centredScores, linearByLinear as linearByLinearStatistic, type ScoredStratum } from "../../stats/linearByLinear.js";
import { createScoredTableSampler, permutationFloorWarning, scoredTableSum, type ScoredMargins } from "../../stats/permutation.js";
import { monteCarloSummary, planOf, runMonteCarloKept, type MonteCarloPlan, type MonteCarloStream, type MonteCarloSummary } from "../../stats/monteCarloDecision.js";
import { binaryStrataMargins, mantelFleiss, type MantelFleissResult } from "../../stats/mantelFleiss.js";
import { createRng, streamKeyOfClaim } from "../../stats/rng.js";
import { scaleExponent, timesPowerOfTwo } from "../../stats/powerOfTwoScale.js";
import type { ClaimTypes, MethodResult, TestContext, TestMethod } from "../TestMethod.js";
import { strataAdjustment } from "./adjustmentDetails.js";
import type { Claim, TestOutcome } from "../types.js";
import { groupStrata, neverBothVary, unusedStrataWarning, type CompactStratum } from "./groupRows.js";

/** Smallest Mantel–Fleiss gap (counts from the null mean of Σ n11 to an end of its range) at which a 2 × 2 × K claim keeps χ²(1) (see the sparse rule). */
export const MIN_MANTEL_FLEISS_GAP = 1;

function quoted(names: readonly string[]): string {
  return names.map((s) => `"${s}"`).join(", ");
}

/**
 * The score of each level of an ordinal column: the column's value on the rows with that level
 * code (NaN for levels no row has), or the reason the values do not give one score per level.
 * Cost: O(rows).
 */
function levelScores(col: Column, rows: number): { scores: Float64Array } | { reason: string } {
  const levels = col.levels!;
  const codes = col.codes!;
  const scores = new Float64Array(levels.length).fill(NaN);
  for (let r = 0; r < rows; r++) {
    const c = codes[r]!;
    if (c < 0) continue;
    const v = col.values[r]!;
    if (!Number.isFinite(v)) return { reason: `level "${levels[c]}" of "${col.name}" has no numeric score (row ${r + 1} holds ${v}); declare its levels in order` };
    const seen = scores[c]!;
    if (Number.isNaN(seen)) scores[c] = v;
    else if (seen !== v) return { reason: `level "${levels[c]}" of "${col.name}" has two scores (${seen} and ${v}); each ordinal level needs one score` };
  }
  return { scores };
}

/** Row and column totals of a stratum's row-major table. */
function stratumMargins(t: ScoredStratum): { row: Float64Array; col: Float64Array } {
  const row = new Float64Array(t.rows);
  const col = new Float64Array(t.cols);
  for (let i = 0; i < t.rows; i++) {
    for (let j = 0; j < t.cols; j++) {
      const v = t.counts[i * t.cols + j]!;
      row[i] = row[i]! + v;
      col[j] = col[j]! + v;
    }
  }
  return { row, col };
}

/**
 * Permutation p-value of |Σ_s (T_s − E_s)|: x permuted within each stratum, drawn by the plan
 * (`runMonteCarloTest`: looks at 200, 400, … up to the cap). Scores are
 * centred within each stratum, so each stratum's permuted score sum is its T*_s − E_s. Each
 * stratum's scores are first multiplied by powers of two that bring its largest |score| of each
 * variable into [0.5, 1) (`stats/powerOfTwoScale.ts`), and its x scores then by the power of two
 * that puts every stratum's sum in common units (as `stats/linearByLinear.ts` adds them): the
 * statistics order as before, and extreme scores' products stay finite.
 * Cost: O(Σ_s n_s) once, then O(draws · Σ_s (r_s·c_s + draws' spread)).
 */
function permutationP(strata: readonly ScoredStratum[], plan: MonteCarloPlan, seed: number, key: string, streams?: Map<string, MonteCarloStream>): { p: number; hits: number; draws: number } {
  const kept: Array<{ row: Float64Array; col: Float64Array; u: Float64Array; v: Float64Array; a: number; b: number; counts: ArrayLike<number> }> = [];
  for (const s of strata) {
    const { row, col } = stratumMargins(s);
    let total = 0;
    for (let i = 0; i < row.length; i++) total += row[i]!;
    if (total < 2) continue;
    const a = scaleExponent(presentMax(s.rowScores, row));
    const b = scaleExponent(presentMax(s.colScores, col));
    const u = centredScores(Float64Array.from(s.rowScores, (x) => x * 2 ** a), row);
    const v = centredScores(Float64Array.from(s.colScores, (x) => x * 2 ** b), col);
    if (!(u.sumSquares > 0) || !(v.sumSquares > 0)) continue;
    kept.push({ row, col, u: u.centred, v: v.centred, a, b, counts: s.counts });
  }
  const E = kept.length > 0 ? Math.min(...kept.map((k) => k.a + k.b)) : 0;
  const used: ScoredMargins[] = [];
  let observed = 0;
  for (const k of kept) {
    const rowScores = k.u.map((x) => timesPowerOfTwo(x, E - k.a - k.b));
    used.push({ rowMargins: k.row, colMargins: k.col, rowScores, colScores: k.v });
    observed += scoredTableSum(k.counts, rowScores, k.v);
  }
  const fresh = () => {
    const sampler = createScoredTableSampler(used, createRng(seed, key));
    return () => Math.abs(sampler());
  };
  return runMonteCarloKept(Math.abs(observed), fresh, plan, 0, streams, key);
}

/** Largest |score| among those with a positive margin; 0 when none. Cost: O(length). */
function presentMax(scores: ArrayLike<number>, margins: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < scores.length; i++) if (margins[i]! > 0) m = Math.max(m, Math.abs(scores[i]!));
  return m;
}

/**
 * Stratified linear-by-linear association test of one claim (see the module comment).
 * Cost: O(rows · (k + 4)) to read the scores and group the rows, O(Σ r_s c_s) for the statistic,
 * plus the permutations when asked for.
 * Sources: Mantel (1963), Journal of the American Statistical Association 58:690–700; Landis,
 * Heyman & Koch (1978), International Statistical Review 46:237–254; Agresti (2013), Categorical
 * Data Analysis, 3rd ed., §6.4; Altman & Bland (2011), BMJ 343:d2090 (interval with a
 * permutation p-value).
 * @example
 * const r = runLinearByLinear({ x: "education", y: "activity", given: ["region"] }, ctx);
 * if (r.ok) r.outcome.statistic; // Q on 1 df
 */
export function runLinearByLinear(claim: Claim, ctx: TestContext): MethodResult {
  const names = [claim.x, claim.y, ...claim.given];
  const cols: Column[] = [];
  for (const [k, name] of names.entries()) {
    const col = ctx.table.column(name);
    if (!col) return { ok: false, reason: `variable "${name}" is not a column of the data` };
    if (k < 2 && (col.type !== "ordinal" || !col.codes || !col.levels)) {
      return { ok: false, reason: `variable "${name}" is ${col.type}; the linear-by-linear test needs ordinal x and y` };
    }
    if (!col.codes || !col.levels || !CATEGORICAL_TYPES.has(col.type)) {
      return { ok: false, reason: `variable "${name}" is ${col.type}; the linear-by-linear test needs a categorical conditioning set` };
    }
    cols.push(col);
  }
  const [x, y, ...given] = cols as [Column, Column, ...Column[]];
  const xs = levelScores(x, ctx.table.rows);
  if ("reason" in xs) return { ok: false, reason: xs.reason };
  const ys = levelScores(y, ctx.table.rows);
  if ("reason" in ys) return { ok: false, reason: ys.reason };
  const { n, strata: tables } = groupStrata(x, y, given, ctx.table.rows, ctx.rowFilter, ctx.weights);
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted(names)} observed` };
  const strata: ScoredStratum[] = tables.map((t) => ({
    rows: t.rows,
    cols: t.cols,
    counts: t.counts,
    rowScores: Float64Array.from(t.xCodes, (c) => xs.scores[c]!),
    colScores: Float64Array.from(t.yCodes, (c) => ys.scores[c]!),
  }));
  const res = linearByLinearStatistic(strata);
  if (res.strataUsed === 0) return { ok: false, reason: neverBothVary(claim, res.strataTotal, n) };
  const warnings: string[] = [];
  const unused = unusedStrataWarning(claim, res.strataUsed, res.strataTotal);
  if (unused) warnings.push(unused);
  const sign: -1 | 0 | 1 = res.deviation > 0 ? 1 : res.deviation < 0 ? -1 : 0;
  let p: number;
  let logP: number;
  let B: number | undefined;
  let monteCarlo: MonteCarloSummary | undefined;
  // sparse rule: the Mantel–Fleiss criterion of a 2 × 2 × K table
  const binary = binaryStrataMargins(tables);
  const mf: MantelFleissResult | undefined = binary ? mantelFleiss(binary) : undefined;
  const sparse = mf !== undefined && Math.min(mf.lowerGap, mf.upperGap) < MIN_MANTEL_FLEISS_GAP;
  if (sparse) warnings.push(`x and y are so rare together that their joint count, summed over strata, can move only ${Math.min(mf.lowerGap, mf.upperGap).toPrecision(2)} from its null mean (Mantel–Fleiss gap below ${MIN_MANTEL_FLEISS_GAP}): p-value from permutations within strata`);
  if (ctx.permutations !== undefined || sparse) {
    const plan = planOf(ctx);
    const floorWarning = permutationFloorWarning(plan.cap, ctx.decisionFloor);
    const perm = permutationP(strata, plan, ctx.seed, streamKeyOfClaim(claim), ctx.monteCarloStreams);
    p = perm.p;
    logP = Math.log(p);
    B = perm.draws;
    monteCarlo = monteCarloSummary(perm.hits, perm.draws, plan.cap);
    if (floorWarning) warnings.push(floorWarning);
  } else {
    logP = res.logP;
    p = res.p > 0 ? res.p : Number.MIN_VALUE;
  }
  // Scores of the levels seen among the complete cases, in level order.
  const seen = (t: readonly CompactStratum[], pick: (s: CompactStratum) => Int32Array, col: Column, scores: Float64Array) => {
    const present = new Uint8Array(col.levels!.length);
    for (const s of t) for (const c of pick(s)) present[c] = 1;
    const levels: string[] = [];
    const values: number[] = [];
    present.forEach((on, c) => {
      if (on) {
        levels.push(col.levels![c]!);
        values.push(scores[c]!);
      }
    });
    return { levels, scores: values };
  };
  const details: Record<string, unknown> = {
    // in the scores' units: left out where they leave the double range (scores of 1e155 or more, or near 1e-310)
    ...([res.t, res.e, res.v, res.deviation].every(Number.isFinite) && res.v >= 2 ** -1022 ? { t: res.t, e: res.e, v: res.v, t_minus_e: res.deviation } : {}),
    stratified_correlation: res.correlation,
    p_asymptotic: res.p,
    strata_used: res.strataUsed,
    strata_total: res.strataTotal,
    ...(mf !== undefined ? { mantel_fleiss: { lower_gap: mf.lowerGap, upper_gap: mf.upperGap, holds: mf.holds } } : {}),
    sparse_rule: sparse ? ["mantel-fleiss"] : [],
    x_scores: seen(tables, (s) => s.xCodes, x, xs.scores),
    y_scores: seen(tables, (s) => s.yCodes, y, ys.scores),
    adjustment: strataAdjustment(claim.given),
    sides: [claim.x, claim.y].map((variable) => ({ variable, model: "scores of its levels within each stratum" })),
  };
  const outcome: TestOutcome = {
    test: "linear-by-linear",
    n,
    statistic: res.q,
    df: 1,
    p,
    log_p: logP,
    effect: lrToEffect(res.q, n, sign),
    ci: signedRootEffectCI(res.q, n, sign, 1 - (ctx.alpha ?? 0.05), B !== undefined ? p : undefined),
    p_method: B !== undefined ? "permutation" : "asymptotic",
    ...(B !== undefined ? { B } : {}),
    ...(monteCarlo !== undefined ? { monte_carlo: monteCarlo } : {}),
    details,
    ...(warnings.length ? { warnings } : {}),
  };
  return { ok: true, outcome };
}

/** The `linear-by-linear` test method: ordinal x and y, every member of the set categorical. */
export const linearByLinear: TestMethod = {
  name: "linear-by-linear",
  accepts(types: ClaimTypes): boolean {
    return types.x === "ordinal" && types.y === "ordinal" && types.given.every((t) => CATEGORICAL_TYPES.has(t));
  },
  run: runLinearByLinear,
  // Reading the scores and grouping read every row once; permutations, when asked for, cost more.
  rowWork: (claim: Claim, table: Table) => table.rows * (4 + claim.given.length),
};

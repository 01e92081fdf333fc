/**
 * Logistic and multinomial claims pooled across sites without rows: each site writes the
 * efficient score and efficient information of the added side at its own null fit, and the pool
 * adds them up (a pooled efficient score, or Rao, test with site-specific nuisance parameters).
 *
 * Terms. A *score claim* is one that `regression-lr` tests by a logistic or multinomial model:
 * x and y both binary or nominal (an ordinal or continuous side gives a Gaussian linear model,
 * which pools through moments). The *response* and the *added side* are chosen as
 * `regression-lr` chooses them, but on the variable's level list (its levels in the summary,
 * which every site shares: `checkSitesAgree`) rather than on the levels a site observed: y when
 * it has two levels; else x when it has two levels or fewer than y; else y. So every site
 * models the same response.
 *
 * At each site, on the claim's complete cases:
 * 1. The *null model* is `regression-lr`'s: the response on an intercept and the set S, a
 *    continuous member as one centred and scaled column, a categorical one as 0/1 indicators of
 *    its levels observed at the site but the first observed, columns aliased with earlier ones
 *    dropped (`independentColumns`, pivots below 1e-9 in label order); logistic regression when
 *    the response has two levels observed at the site, else the multinomial logit over the
 *    observed levels. A level of the response absent at the site is the limit of a category
 *    whose probability goes to 0 in every row: its score and information are 0.
 * 2. The *added parameters* are the added side's indicators of every level on the level list
 *    but the first (the same coordinates at every site; a level absent at the site gives a
 *    column of zeros), one set per response level but the first (the baseline). The site writes
 *    the efficient score U_s = U_a − I_ab I_bb⁻ U_b and the efficient information
 *    I_s = I_aa − I_ab I_bb⁻ I_ba of them at the null fit (`stats/pooledScoreTest.ts`: Cholesky
 *    of the nuisance block, directions without information skipped), computed in the global
 *    parametrisation from the fitted probabilities (which do not depend on how the site's fit
 *    was parametrised). At the null maximum-likelihood estimate U_b = 0, so U_s is the plain
 *    score U_a; the correction only removes the fit's convergence error to first order. The
 *    efficient information depends on the estimate to first order, so the null fit is first
 *    taken to the maximum to working precision by up to two Fisher-scoring steps (`polish`).
 * 3. For the record the site also fits its own full model (`regression-lr`'s, on the levels
 *    observed at the site) and writes ℓ0, ℓ1, LR_s = 2(ℓ1 − ℓ0) and its df (`site_lr`).
 *
 * Pooled: U = Σ U_s, I = Σ I_s, statistic UᵀI⁺U on df = rank(I) (`pooledScoreStatistic`), p
 * from χ²(df). This is exactly the score test of the stacked rows' model in which the intercept
 * and every column of S are interacted with site (site-specific nuisance parameters) and the
 * added side's effect is shared: that model's nuisance information is block-diagonal over sites,
 * so its efficient information is Σ I_s. It is *not* the likelihood-ratio test of the additive
 * model y ~ x + S + site that `regression-lr` would run on the stacked rows with site in the set
 * (one S effect shared by all sites); `test/audit/siteRegressionScore.test.ts` measures the
 * difference on three heterogeneous sites with an association (scripts/pooled_score_reference.py):
 * pooled score against the additive LR, logistic (1 df) 2.497 against 2.468 at 300 rows per site
 * and 48.27 against 48.07 at 3,000 rows per site; multinomial (4 df) 4.383 against 4.106 and
 * 44.94 against 44.34. The two test the same hypothesis in different nuisance models; the
 * difference, as a share of the LR, was 1.2% and 6.7% at 300 rows per site, 0.4% and 1.3% at 3,000. The
 * effect and its interval are reported on the common likelihood-ratio scale with the score
 * statistic in place of LR (`lrOutcome` of `regression-lr`; both statistics estimate the same
 * noncentrality under local alternatives).
 *
 * Separation at a site (`FitStatus` "limit" in `stats/logisticRegression.ts`): the null fit
 * follows the likelihood to its supremum; rows whose observed category it fits with probability
 * above 1 − 1e-9 are fitted with certainty in the limit and contribute 0 score and 0
 * information (their weight π(1 − π) vanishes), so they are left out of the sums exactly, and a
 * note says how many. Complete separation (or a response with one observed level) leaves the
 * site with a zero score and zero information: it adds nothing to the pooled test, which is the
 * limit. A null fit that is singular for another reason than separation (aliasing the sweep did
 * not catch) or that does not converge makes the site's claim untestable, with the reason.
 *
 * Disclosure (rules of `siteSummary.ts`, threshold k = --min-cell): U_s and I_s are sums over the
 * claim's complete cases, like the moments of a linear claim, so the same rules apply: rule 2,
 * fewer than k complete cases → untestable with the reason, no number written; rule 4, a level of
 * a categorical variable among x, y and S, or a combination of levels of two of them, held by
 * 1 … k − 1 complete cases → untestable with the reason (U_s of an indicator is a sum over that
 * level's rows). Rule 1 (small missing-data patterns) is applied by the caller before, on the
 * table it passes in (`summarizeSite` passes its table of kept rows).
 */
import type { Column, Table } from "../data/Table.js";
import { CATEGORICAL_TYPES } from "../data/Table.js";
import { logisticRegression, type FitStatus } from "../stats/logisticRegression.js";
import { multinomialLogit } from "../stats/multinomialLogit.js";
import { categoryProbabilities, efficientScore, newtonStep, pooledScoreStatistic, scoreInformationAt } from "../stats/pooledScoreTest.js";
import { independentColumns, lrOutcome } from "./methods/regressionLr.js";
import { linearAdjustment } from "./methods/adjustmentDetails.js";
import type { MethodResult, TestContext } from "./TestMethod.js";
import type { Claim } from "./types.js";
import { completeRows, smallCategoricalCell } from "./siteDisclosure.js";

/** A row is fitted with certainty by a null fit at its limit when its observed category has probability above this (as in `logisticRegression.ts`). */
const CERTAIN = 1 - 1e-9;

/** The site statistics of a score claim (see the module comment). */
export interface ScoreClaimSummary {
  x: string;
  y: string;
  given: string[];
  kind: "score";
  /** Complete cases of the claim at the site. */
  n: number;
  /** The modelled side (x or y). */
  response: string;
  model: "logistic" | "multinomial";
  /** Labels of the added parameters, in the order of `score`: "x=level", and " (y=level)" per response category for a multinomial model. */
  added_columns: string[];
  /** Efficient score of the added parameters at the site's null fit. */
  score: number[];
  /** Efficient information (symmetric, one array per row). */
  information: number[][];
  /** The site's own likelihood-ratio test (regression-lr's models on the site's rows); absent when its full model could not be fitted. */
  site_lr?: { l0: number; l1: number; lr: number; df: number };
  /** What happened at the site that the pooled result should mention (separation, absent levels). */
  notes?: string[];
}

export interface UntestableScoreSummary {
  x: string;
  y: string;
  given: string[];
  kind: "untestable";
  reason: string;
}

export type RegressionScoreSummary = ScoreClaimSummary | UntestableScoreSummary;

const SCORE_SIDE = new Set(["binary", "nominal"]);

/**
 * Whether `regression-lr` tests this claim by a logistic or multinomial model (x and y both
 * binary or nominal), so that a site summary under `--method regression` writes its score
 * (`regressionScoreSummary`) rather than moments. Cost: O(1).
 * @example isScoreClaim(table, { x: "smoker", y: "region", given: ["age"] }) // true for binary smoker and nominal region
 */
export function isScoreClaim(table: Table, claim: Claim): boolean {
  const x = table.column(claim.x);
  const y = table.column(claim.y);
  return !!x && !!y && SCORE_SIDE.has(x.type) && SCORE_SIDE.has(y.type) && !!x.codes && !!y.codes && !!x.levels && !!y.levels;
}

/**
 * The response and the added side of a score claim, chosen on the level lists (module comment):
 * y when it has two levels, else x when it has two levels or fewer than y, else y. Cost: O(1).
 * @example responseOf(table, claim) // { response: yColumn, added: xColumn }
 */
export function responseOf(table: Table, claim: Claim): { response: Column; added: Column } {
  const x = table.column(claim.x)!;
  const y = table.column(claim.y)!;
  const ly = y.levels!.length;
  const lx = x.levels!.length;
  return ly !== 2 && (lx === 2 || lx < ly) ? { response: x, added: y } : { response: y, added: x };
}

const untestable = (claim: Claim, reason: string): UntestableScoreSummary => ({ x: claim.x, y: claim.y, given: [...claim.given], kind: "untestable", reason });

/** The null model's design at a site: row-major m × p0, with its column labels. */
interface NullDesign {
  X: Float64Array;
  p: number;
  labels: string[];
  notes: string[];
}

/**
 * `regression-lr`'s null design on the rows: intercept, each member of S (continuous: centred and
 * scaled by the Bessel-corrected sd, left out when constant; categorical: indicators of the levels
 * observed among the rows but the first), then the optional `extra` columns, aliased columns
 * dropped in label order. Returns the kept columns. Cost: O(m·c²) for c columns.
 */
function siteDesign(rows: Int32Array, given: readonly Column[], extra: { label: string; values: Float64Array }[] = []): NullDesign & { keptExtra: number[] } {
  const m = rows.length;
  const cols: { label: string; values: Float64Array }[] = [{ label: "(intercept)", values: new Float64Array(m).fill(1) }];
  const notes: string[] = [];
  for (const g of given) {
    if (g.codes && CATEGORICAL_TYPES.has(g.type)) {
      const seen = new Uint8Array(g.levels!.length);
      for (const r of rows) seen[g.codes[r]!] = 1;
      const obs = [...seen.keys()].filter((l) => seen[l]);
      for (const l of obs.slice(1)) cols.push({ label: `${g.name}=${g.levels![l]}`, values: Float64Array.from(rows, (r) => (g.codes![r] === l ? 1 : 0)) });
      if (obs.length < 2) notes.push(`"${g.name}" is constant among the complete rows and was left out of the models`);
    } else {
      const v = Float64Array.from(rows, (r) => g.values[r]!);
      let top = 0;
      for (const t of v) top = Math.max(top, Math.abs(t));
      if (top > 0) for (let i = 0; i < m; i++) v[i] = v[i]! / top; // scale first: no overflow in the squares
      let mean = 0;
      for (const t of v) mean += t;
      mean /= Math.max(1, m);
      let ss = 0;
      for (const t of v) ss += (t - mean) ** 2;
      const sd = Math.sqrt(ss / Math.max(1, m - 1));
      if (!(sd > 0) || !Number.isFinite(sd)) {
        notes.push(`"${g.name}" is constant among the complete rows and was left out of the models`);
        continue;
      }
      for (let i = 0; i < m; i++) v[i] = (v[i]! - mean) / sd;
      cols.push({ label: g.name, values: v });
    }
  }
  const base = cols.length;
  cols.push(...extra);
  const c = cols.length;
  const G = new Float64Array(c * c);
  for (let a = 0; a < c; a++) {
    for (let b = a; b < c; b++) {
      let s = 0;
      const va = cols[a]!.values;
      const vb = cols[b]!.values;
      for (let i = 0; i < m; i++) s += va[i]! * vb[i]!;
      G[a * c + b] = G[b * c + a] = s;
    }
  }
  const kept = independentColumns(G, c);
  const p = kept.length;
  const X = new Float64Array(m * p);
  kept.forEach((j, t) => {
    const v = cols[j]!.values;
    for (let i = 0; i < m; i++) X[i * p + t] = v[i]!;
  });
  const droppedBase = base - kept.filter((j) => j < base).length;
  if (droppedBase > 0) notes.push(`${droppedBase} column${droppedBase > 1 ? "s" : ""} of the given set aliased with others and dropped`);
  return { X, p, labels: kept.map((j) => cols[j]!.label), notes, keptExtra: kept.filter((j) => j >= base).map((j) => j - base) };
}

/** A fit of a site's model: coefficients and status, by logistic regression (K = 2) or the multinomial logit. */
function fitModel(X: Float64Array, m: number, p: number, y: Int32Array, K: number, start?: Float64Array): { coef: Float64Array; logLik: number; status: FitStatus; separation: string } {
  const f = K === 2 ? logisticRegression(X, m, p, y, { start }) : multinomialLogit(X, m, p, y, K, { start });
  return { coef: f.coef, logLik: f.logLik, status: f.status, separation: f.separation };
}

/**
 * Up to two Fisher-scoring steps from a converged fit (`newtonStep`), each kept when ℓ does not
 * fall: the fit's criterion leaves the coefficients within about 1e-7, and the efficient
 * information depends on them to first order, so the steps take them to the maximum to working
 * precision. Cost: O(m·q²·p²) per step.
 */
function polish<F extends { coef: Float64Array; logLik: number }>(X: Float64Array, m: number, p: number, y: Int32Array, K: number, fit: F): F {
  let best = fit;
  for (let step = 0; step < 2; step++) {
    const si = scoreInformationAt(X, m, p, y, K, categoryProbabilities(X, m, p, K, best.coef));
    const delta = newtonStep(si.score, si.information, (K - 1) * p);
    const coef = best.coef.map((b, j) => b + delta[j]!);
    const prob = categoryProbabilities(X, m, p, K, coef);
    let ll = 0;
    for (let i = 0; i < m; i++) ll += Math.log(prob[i * K + y[i]!]!);
    if (!(ll >= best.logLik - 1e-12 * Math.abs(best.logLik))) break;
    best = { ...best, coef, logLik: Math.max(ll, best.logLik) };
  }
  return best;
}

/**
 * The site statistics of a score claim (module comment): the efficient score and information of
 * the added side at the site's null fit, with its own likelihood-ratio test for the record, or
 * untestable with the reason (disclosure rules 2 and 4, a null fit that is singular or does not
 * converge). `table` holds the site's rows after rule 1 (small missing-data patterns removed).
 * Cost: O(m·c²) for the design, two Newton fits (O(m·q²·p²) per information), and
 * O(m·Q²·P²) for the score and information in the global coordinates (Q response levels − 1,
 * P columns).
 * Source: Rao (1948), Proc. Cambridge Phil. Soc. 44:50–57 (score test); Cox & Hinkley (1974),
 * Theoretical Statistics, §9.3 (efficient score); Geyer (2009), Electronic Journal of Statistics
 * 3:259–289 (the fit at the limit under separation).
 * @throws RangeError when a variable is not a column, k is not a whole number ≥ 1, or the claim is
 *   not a score claim ({@link isScoreClaim})
 * @example regressionScoreSummary(table, { x: "smoker", y: "asthma", given: ["age"] }, 5).kind // "score"
 */
export function regressionScoreSummary(table: Table, claim: Claim, k: number): RegressionScoreSummary {
  if (!(Number.isInteger(k) && k >= 1)) throw new RangeError(`k must be a whole number ≥ 1, got ${k}`);
  const names = [claim.x, claim.y, ...claim.given];
  for (const v of names) if (!table.column(v)) throw new RangeError(`regressionScoreSummary: the table has no column "${v}"`);
  if (!isScoreClaim(table, claim)) throw new RangeError(`regressionScoreSummary: "${claim.x}" and "${claim.y}" must both be binary or nominal (regression-lr fits a linear model otherwise, which pools through moments)`);
  // the same complete cases as the disclosure check below
  const rows = completeRows(table, claim);
  const n = rows.length;
  if (n < k) return untestable(claim, `${n} complete case${n === 1 ? "" : "s"} at this site, fewer than --min-cell ${k}: no statistic is written for it`);
  const small = smallCategoricalCell(table, claim, k);
  if (small) return untestable(claim, `${small} among its complete cases at this site, fewer than --min-cell ${k}: its score would tell those rows' values, so none is written`);

  const { response, added } = responseOf(table, claim);
  const Kg = response.levels!.length;
  if (Kg < 2) return untestable(claim, `"${response.name}" has a single level; the claim cannot be tested`);
  const La = added.levels!.length;
  const model: "logistic" | "multinomial" = Kg === 2 ? "logistic" : "multinomial";
  const addedLevels = Array.from({ length: La - 1 }, (_, i) => i + 1);
  const addedBase = addedLevels.map((l) => `${added.name}=${added.levels![l]}`);
  const added_columns = model === "logistic" ? addedBase : response.levels!.slice(1).flatMap((rl) => addedBase.map((c) => `${c} (${response.name}=${rl})`));
  const given = claim.given.map((g) => table.column(g)!);
  const notes: string[] = [];

  // the null model (regression-lr's) on the site's rows
  const D0 = siteDesign(rows, given);
  notes.push(...D0.notes);
  const m = n;
  const p0 = D0.p;
  const yGlobal = Int32Array.from(rows, (r) => response.codes![r]!);
  const respCount = new Float64Array(Kg);
  for (const c of yGlobal) respCount[c]++;
  const present = [...respCount.keys()].filter((l) => respCount[l]! > 0);
  const absentResp = response.levels!.filter((_, l) => respCount[l] === 0);
  if (absentResp.length > 0 && present.length > 1) notes.push(`level${absentResp.length > 1 ? "s" : ""} ${absentResp.map((l) => JSON.stringify(l)).join(", ")} of "${response.name}" absent at this site (probability 0 in the limit: no score or information)`);
  const recode = new Int32Array(Kg).fill(-1);
  present.forEach((l, i) => (recode[l] = i));
  const ySite = Int32Array.from(yGlobal, (c) => recode[c]!);
  const Ks = present.length;

  const weights = new Float64Array(m).fill(1);
  const prob = new Float64Array(m * Kg);
  let fit0: ReturnType<typeof fitModel> | undefined;
  if (Ks < 2) {
    // one observed level: every row is fitted with certainty by the intercept alone
    weights.fill(0);
    notes.push(`"${response.name}" has the single level ${JSON.stringify(response.levels![present[0]!])} at this site: every row is fitted with certainty, so the site adds no score and no information`);
  } else {
    fit0 = fitModel(D0.X, m, p0, ySite, Ks);
    if (fit0.status === "singular") return untestable(claim, `the information matrix of the null model of "${response.name}" at this site is singular; the claim cannot be tested at this site`);
    if (fit0.status === "not-converged") return untestable(claim, `the null model of "${response.name}" did not converge at this site; the claim cannot be tested at this site`);
    if (fit0.status === "converged" || fit0.status === "limit") fit0 = polish(D0.X, m, p0, ySite, Ks, fit0);
    const ps = categoryProbabilities(D0.X, m, p0, Ks, fit0.coef);
    for (let i = 0; i < m; i++) for (let t = 0; t < Ks; t++) prob[i * Kg + present[t]!] = ps[i * Ks + t]!;
    if (fit0.status === "limit") {
      let certain = 0;
      for (let i = 0; i < m; i++) {
        if (prob[i * Kg + yGlobal[i]!]! > CERTAIN) {
          weights[i] = 0;
          certain++;
        }
      }
      notes.push(certain === m
        ? `complete separation in the null model at this site: every row is fitted with certainty, so the site adds no score and no information`
        : `${fit0.separation} separation in the null model at this site: ${certain} of ${m} rows fitted with certainty add no score and no information (the limit)`);
    }
  }

  // score and information in the global coordinates: the null columns, then the added indicators
  const a0 = La - 1;
  const pz = p0 + a0;
  const Z = new Float64Array(m * pz);
  const addedCodes = Int32Array.from(rows, (r) => added.codes![r]!);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < p0; j++) Z[i * pz + j] = D0.X[i * p0 + j]!;
    const c = addedCodes[i]!;
    if (c > 0) Z[i * pz + p0 + c - 1] = 1;
  }
  const absentAdded = added.levels!.filter((_, l) => !addedCodes.includes(l));
  if (absentAdded.length > 0) notes.push(`level${absentAdded.length > 1 ? "s" : ""} ${absentAdded.map((l) => JSON.stringify(l)).join(", ")} of "${added.name}" absent at this site (zero score and information for ${absentAdded.length > 1 ? "them" : "it"})`);
  const si = scoreInformationAt(Z, m, pz, yGlobal, Kg, prob, weights);
  const q = Kg - 1;
  const nuisance: number[] = [];
  const addedIdx: number[] = [];
  for (let kk = 0; kk < q; kk++) for (let j = 0; j < pz; j++) (j < p0 ? nuisance : addedIdx).push(kk * pz + j);
  const eff = efficientScore(si.score, si.information, q * pz, addedIdx, nuisance);
  const A = addedIdx.length;
  const score = Array.from(eff.score);
  const information = Array.from({ length: A }, (_, r) => Array.from(eff.information.subarray(r * A, (r + 1) * A)));
  if (!score.every(Number.isFinite) || !information.every((r) => r.every(Number.isFinite))) {
    return untestable(claim, `the score of "${added.name}" at this site is not finite; the claim cannot be tested at this site`);
  }

  // the site's own full model (regression-lr's: the added side's levels observed here but the first)
  let site_lr: ScoreClaimSummary["site_lr"];
  if (fit0 && Ks >= 2) {
    const obs = [...new Set(addedCodes)].sort((u, v) => u - v);
    const extra = obs.slice(1).map((l) => ({ label: `${added.name}=${added.levels![l]}`, values: Float64Array.from(addedCodes, (c) => (c === l ? 1 : 0)) }));
    const D1 = siteDesign(rows, given, extra);
    const df = D1.keptExtra.length * (Ks - 1);
    if (df > 0 && D1.p - D1.keptExtra.length === p0) {
      // start at the null fit, the added coefficients 0 (the null columns come first in D1)
      const start = new Float64Array((Ks - 1) * D1.p);
      for (let kk = 0; kk < Ks - 1; kk++) for (let j = 0; j < p0; j++) start[kk * D1.p + j] = fit0.coef[kk * p0 + j]!;
      const fit1 = fitModel(D1.X, m, D1.p, ySite, Ks, start);
      if (fit1.status !== "singular" && Number.isFinite(fit1.logLik)) site_lr = { l0: fit0.logLik, l1: fit1.logLik, lr: 2 * (fit1.logLik - fit0.logLik), df };
    }
  }
  return {
    x: claim.x, y: claim.y, given: [...claim.given], kind: "score", n, response: response.name, model, added_columns, score, information,
    ...(site_lr ? { site_lr } : {}),
    ...(notes.length ? { notes } : {}),
  };
}

export { checkScoreClaimShape } from "./readSiteSummary.js";

/**
 * The pooled efficient score test of a score claim over the sites' summaries `parts` (module
 * comment), as a `regression-lr` outcome: statistic UᵀI⁺U on df = rank(I), p from χ²(df), the
 * effect and its interval at confidence 1 − alpha on the likelihood-ratio scale with the score
 * statistic in place of LR (`lrOutcome`), n the sum of the sites' complete cases.
 * `siteNames` (same order as `parts`) only label the notes. Untestable when the sites disagree
 * on the response or the added parameters, or when no added parameter has information.
 * Cost: O(S·a² + a³) for S sites and a added parameters, plus the interval's inversion.
 * Source: Rao (1948); Cox & Hinkley (1974), §9.3.
 * @example poolScoreClaims([siteA, siteB], claim, ctx).ok // true
 */
export function poolScoreClaims(parts: readonly ScoreClaimSummary[], claim: Claim, ctx: Pick<TestContext, "table" | "alpha">, siteNames?: readonly string[]): MethodResult {
  if (parts.length === 0) return { ok: false, reason: "no site has a score for this claim" };
  const first = parts[0]!;
  const key = JSON.stringify([first.response, first.model, first.added_columns]);
  if (parts.some((p) => JSON.stringify([p.response, p.model, p.added_columns]) !== key)) {
    return { ok: false, reason: "the sites' scores of this claim model different responses or parameters; summarize every site with the same options, --types and --levels" };
  }
  const a = first.added_columns.length;
  if (parts.some((p) => p.score.length !== a || p.information.length !== a || p.information.some((r) => r.length !== a))) {
    return { ok: false, reason: "the sites' scores of this claim have different sizes; summarize every site with the same options" };
  }
  const pooled = pooledScoreStatistic(parts);
  const n = parts.reduce((s, p) => s + p.n, 0);
  const added = first.response === claim.x ? claim.y : claim.x;
  if (pooled.df === 0) return { ok: false, reason: `"${added}" has no information left about "${first.response}" at any site given ${claim.given.length ? claim.given.map((g) => `"${g}"`).join(", ") + " and " : ""}the site (every added parameter is aliased, absent or acts only on rows fitted with certainty)` };
  if (!Number.isFinite(pooled.statistic)) return { ok: false, reason: `the pooled score statistic of "${added}" is not finite; the claim cannot be tested` };
  const warnings: string[] = [];
  parts.forEach((p, i) => {
    for (const note of p.notes ?? []) warnings.push(`site ${siteNames?.[i] !== undefined ? JSON.stringify(siteNames[i]) : i + 1}: ${note}`);
  });
  const dropped = pooled.dropped.map((j) => first.added_columns[j]!);
  if (dropped.length > 0) warnings.push(`${dropped.length} of the ${a} added parameters have no information once the sites are pooled (${dropped.join(", ")}): df ${pooled.df} instead of ${a}`);
  let sign: -1 | 0 | 1 = 1;
  if (pooled.df === 1) {
    const u = pooled.score[pooled.kept[0]!]!;
    sign = u > 0 ? 1 : u < 0 ? -1 : 0;
  }
  const details: Record<string, unknown> = {
    model: first.model,
    response: first.response,
    added,
    statistic_kind: "efficient score (Rao), site-specific nuisance parameters",
    fitted_from: "site summaries",
    sites: parts.length,
    site_n: parts.map((p) => p.n),
    site_lr: parts.map((p) => (p.site_lr ? { lr: p.site_lr.lr, df: p.site_lr.df } : null)),
    columns: first.added_columns,
    parameters_added: a,
    ...(dropped.length ? { df_nominal: a, not_identifiable: dropped } : {}),
    adjustment: [...linearAdjustment(ctx.table, claim.given), { variable: "site", entered: "interacted: intercept and every column of the set per site" }],
    sides: [
      { variable: first.response, model: `${first.model === "logistic" ? "logistic" : "multinomial logistic"} regression on the adjustment, fitted at each site (the sites' efficient scores pooled)` },
      { variable: added, model: "indicators of its levels, added to the model (one effect shared by the sites)" },
    ],
  };
  return { ok: true, outcome: lrOutcome(pooled.statistic, pooled.df, n, sign, details, warnings, ctx.alpha ?? 0.05) };
}

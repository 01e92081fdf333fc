/**
 * Test method `regression-lr`: x ⫫ y | given for any mix of variable types, by a
 * likelihood-ratio test of nested regression models.
 *
 * Terms: the *response* is one side of the claim, the *added side* the other. The *null model*
 * regresses the response on an intercept and the given variables; the *full model* adds the
 * added side. LR = 2(ℓ1 − ℓ0) is referred to χ² on the number of added (non-aliased) parameters
 * (Wilks 1938, Annals of Mathematical Statistics 9:60–62).
 * - Response choice: the continuous side when there is one (y first); else an ordinal side (y
 *   first), modelled through its scores; both give a Gaussian linear model, LR = n·ln(RSS0/RSS1),
 *   computed from the pattern-grouped moments (`ctx.moments`) at a cost independent of the number
 *   of rows. In these linear models binary and ordinal predictors enter as scores and nominal ones
 *   as dummies, as in the partial correlations. Otherwise a side with exactly two observed levels
 *   (y first) → logistic regression; else the side with fewer observed levels (y on ties) →
 *   multinomial (baseline-category) logit. *An ordinal response is treated as scores (no
 *   proportional-odds model)*: the test then asks whether the added side shifts its mean.
 * - Predictors of logistic and multinomial models: a continuous variable enters as one column
 *   (centred and scaled, which changes no likelihood); a categorical variable (binary, ordinal or
 *   nominal) as 0/1 dummies for its observed levels except the first observed one (levels with no
 *   complete row get no column).
 *   Columns aliased with earlier ones (pivots below 1e-9 of their scale in a Cholesky sweep of the
 *   Gram matrix) are dropped, given columns first, so the df counts only identifiable parameters.
 * - Grouping: when the response and every predictor are categorical, identical complete rows are
 *   grouped into weighted counts first and the models are fitted to the groups (a small weighted
 *   fit whatever the number of rows). Otherwise the fit is row by row.
 * - Outcomes: complete separation in either model (every row predicted with probability → 1),
 *   a singular information matrix, an exact linear fit, a single observed level or constant
 *   added side, or too few rows for the parameters give `{ ok: false, reason }`; quasi-complete
 *   separation and non-convergence within 50 Newton iterations give a `warnings` entry and the
 *   test goes on at the last iterate. The p-value is always asymptotic (permutations are not
 *   used by this method; see `stratified-chisq` for the permutation test).
 * - Effect: sign·√(1 − exp(−LR/n)) for 1-df tests, signed by the added coefficient; for more df,
 *   √(1 − exp(−max(0, LR − df)/n)) (`lrEffect`); 95% interval by noncentral chi-square inversion
 *   (Steiger 1990).
 */
import type { Column } from "../../data/Table.js";
import { CATEGORICAL_TYPES } from "../../data/Table.js";
import { lrEffect, lrEffectCI } from "../../stats/effectScale.js";
import { gaussianLRFromMoments } from "../../stats/gaussianLRFromMoments.js";
import { logisticRegression, type LogisticFit } from "../../stats/logisticRegression.js";
import { multinomialLogit, type MultinomialFit } from "../../stats/multinomialLogit.js";
import { chiSquareUpper, logChiSquareUpper } from "../../stats/pvalues.js";
import type { MethodResult, TestContext, TestMethod } from "../TestMethod.js";
import type { Claim, TestOutcome } from "../types.js";
import { groupRows } from "./groupRows.js";

type ModelKind = "logistic" | "multinomial";

function isCategorical(c: Column): boolean {
  return CATEGORICAL_TYPES.has(c.type) && c.codes !== undefined && c.levels !== undefined;
}

/** Observed levels (codes with at least one complete row, weighted) in code order. */
function observedLevels(codes: ArrayLike<number>, nLevels: number, weights: ArrayLike<number> | undefined, m: number): number[] {
  const seen = new Float64Array(nLevels);
  for (let i = 0; i < m; i++) seen[codes[i]!] = seen[codes[i]!]! + (weights ? weights[i]! : 1);
  const out: number[] = [];
  for (let l = 0; l < nLevels; l++) if (seen[l]! > 0) out.push(l);
  return out;
}

/** One predictor's design columns over the m fitting rows. */
interface Block {
  name: string;
  columns: Float64Array[];
  labels: string[];
}

function categoricalBlock(name: string, codes: ArrayLike<number>, levels: readonly string[], weights: ArrayLike<number> | undefined, m: number): Block {
  const obs = observedLevels(codes, levels.length, weights, m);
  const columns: Float64Array[] = [];
  const labels: string[] = [];
  for (const l of obs.slice(1)) {
    const col = new Float64Array(m);
    for (let i = 0; i < m; i++) col[i] = codes[i] === l ? 1 : 0;
    columns.push(col);
    labels.push(`${name}=${levels[l]}`);
  }
  return { name, columns, labels };
}

function continuousBlock(name: string, values: Float64Array): Block {
  const m = values.length;
  let mean = 0;
  for (let i = 0; i < m; i++) mean += (values[i]! - mean) / (i + 1);
  let ss = 0;
  for (let i = 0; i < m; i++) ss += (values[i]! - mean) ** 2;
  const sd = Math.sqrt(ss / Math.max(1, m - 1));
  if (!(sd > 0) || !Number.isFinite(sd)) return { name, columns: [], labels: [] };
  const col = new Float64Array(m);
  for (let i = 0; i < m; i++) col[i] = (values[i]! - mean) / sd;
  return { name, columns: [col], labels: [name] };
}

/**
 * Keep the columns of a weighted Gram matrix that are not aliased with earlier ones: a Cholesky
 * sweep in column order that skips a column whose pivot falls below `tol` times its diagonal.
 * Cost: O(m·p²) for the Gram matrix plus O(p³).
 */
function independentColumns(cols: readonly Float64Array[], weights: ArrayLike<number> | undefined, m: number, tol = 1e-9): number[] {
  const p = cols.length;
  const G = new Float64Array(p * p);
  for (let a = 0; a < p; a++) {
    const ca = cols[a]!;
    for (let b = a; b < p; b++) {
      const cb = cols[b]!;
      let s = 0;
      if (weights) for (let i = 0; i < m; i++) s += weights[i]! * ca[i]! * cb[i]!;
      else for (let i = 0; i < m; i++) s += ca[i]! * cb[i]!;
      G[a * p + b] = s;
      G[b * p + a] = s;
    }
  }
  // L rows for kept columns only (L[k] has entries for kept columns in order).
  const kept: number[] = [];
  const L: Float64Array[] = [];
  for (let j = 0; j < p; j++) {
    const row = new Float64Array(kept.length + 1);
    for (let t = 0; t < kept.length; t++) {
      let s = G[j * p + kept[t]!]!;
      for (let u = 0; u < t; u++) s -= row[u]! * L[t]![u]!;
      row[t] = s / L[t]![t]!;
    }
    let d = G[j * p + j]!;
    for (let t = 0; t < kept.length; t++) d -= row[t]! * row[t]!;
    if (!(d > tol * G[j * p + j]!) || !(G[j * p + j]! > 0)) continue;
    row[kept.length] = Math.sqrt(d);
    kept.push(j);
    L.push(row);
  }
  return kept;
}

function toRowMajor(cols: readonly Float64Array[], m: number): Float64Array {
  const p = cols.length;
  const X = new Float64Array(m * p);
  for (let j = 0; j < p; j++) {
    const c = cols[j]!;
    for (let i = 0, at = j; i < m; i++, at += p) X[at] = c[i]!;
  }
  return X;
}

function quoted(names: readonly string[]): string {
  return names.map((s) => `"${s}"`).join(", ");
}

/**
 * Regression likelihood-ratio test of one claim (see the module comment).
 * Cost: grouped categorical data O(rows·k + iterations·G·p²) for G groups; otherwise
 * O(rows·p²) per Newton iteration (about 5–8 iterations per model) or one Givens QR pass, O(rows·p²).
 * Source: Wilks (1938); McCullagh & Nelder (1989), Generalized Linear Models, 2nd ed.; Agresti
 * (2013), Categorical Data Analysis, 3rd ed., §8.1.
 * @example
 * const r = runRegressionLr({ x: "region", y: "sbp", given: ["age"] }, ctx);
 * if (r.ok) r.outcome.df; // number of region levels − 1
 */
export function runRegressionLr(claim: Claim, ctx: TestContext): MethodResult {
  const names = [claim.x, claim.y, ...claim.given];
  const cols: Column[] = [];
  for (const name of names) {
    const col = ctx.table.column(name);
    if (!col) return { ok: false, reason: `variable "${name}" is not a column of the data` };
    cols.push(col);
  }
  const [xCol, yCol, ...givenCols] = cols as [Column, Column, ...Column[]];
  const rows = ctx.table.rows;

  // Continuous or ordinal response: Gaussian linear models from the pattern moments.
  const scoredResponse = [yCol, xCol].find((c) => c.type === "continuous") ?? [yCol, xCol].find((c) => c.type === "ordinal");
  if (scoredResponse) return linearFromMoments(claim, scoredResponse, scoredResponse === yCol ? xCol : yCol, ctx);

  // Binary or nominal response (both sides are binary or nominal here): chosen below from the observed levels.
  const cat = (c: Column) => isCategorical(c);
  let [resp, added] = [yCol, xCol];

  const allCategorical = cols.every(cat);
  const warnings: string[] = [];

  // Fitting rows: groups of identical complete rows, or complete rows.
  let m: number;
  let n: number;
  let weights: Float64Array | undefined;
  let codesOf: (c: Column) => ArrayLike<number>;
  let valuesOf: (c: Column) => Float64Array;
  if (allCategorical) {
    const g = groupRows(cols, rows, ctx.rowFilter);
    m = g.groups;
    n = g.n;
    weights = g.counts;
    const index = new Map(cols.map((c, i) => [c, i] as const));
    codesOf = (c) => g.codes[index.get(c)!]!;
    valuesOf = () => new Float64Array(0);
  } else {
    const keep = new Uint8Array(rows);
    n = 0;
    for (let r = 0; r < rows; r++) {
      let ok = ctx.rowFilter ? ctx.rowFilter[r] !== 0 : true;
      for (let k = 0; ok && k < cols.length; k++) {
        const c = cols[k]!;
        ok = isCategorical(c) ? c.codes![r]! >= 0 : Number.isFinite(c.values[r]!);
      }
      keep[r] = ok ? 1 : 0;
      if (ok) n++;
    }
    m = n;
    const idx = new Int32Array(n);
    for (let r = 0, t = 0; r < rows; r++) if (keep[r]) idx[t++] = r;
    const cacheC = new Map<Column, Int32Array>();
    const cacheV = new Map<Column, Float64Array>();
    codesOf = (c) => {
      let a = cacheC.get(c);
      if (!a) {
        a = new Int32Array(n);
        for (let t = 0; t < n; t++) a[t] = c.codes![idx[t]!]!;
        cacheC.set(c, a);
      }
      return a;
    };
    valuesOf = (c) => {
      let a = cacheV.get(c);
      if (!a) {
        a = new Float64Array(n);
        for (let t = 0; t < n; t++) a[t] = c.values[idx[t]!]!;
        cacheV.set(c, a);
      }
      return a;
    };
  }
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted(names)} observed` };

  if (cat(xCol) && cat(yCol)) {
    const ly = observedLevels(codesOf(yCol), yCol.levels!.length, weights, m).length;
    const lx = observedLevels(codesOf(xCol), xCol.levels!.length, weights, m).length;
    if (ly !== 2 && (lx === 2 || lx < ly)) [resp, added] = [xCol, yCol];
  }
  const respLevels = observedLevels(codesOf(resp), resp.levels!.length, weights, m);
  if (respLevels.length < 2) {
    return { ok: false, reason: `"${resp.name}" has a single observed level among the ${n} complete rows; the claim cannot be tested` };
  }
  const kind: ModelKind = respLevels.length === 2 ? "logistic" : "multinomial";

  // Design blocks.
  const blockOf = (c: Column): Block => cat(c) ? categoricalBlock(c.name, codesOf(c), c.levels!, weights, m) : continuousBlock(c.name, valuesOf(c));
  const intercept = new Float64Array(m).fill(1);
  const baseCols: Float64Array[] = [intercept];
  const baseLabels = ["(intercept)"];
  for (const c of givenCols) {
    const b = blockOf(c);
    if (b.columns.length === 0) warnings.push(`"${c.name}" is constant among the complete rows and was left out of the models`);
    baseCols.push(...b.columns);
    baseLabels.push(...b.labels);
  }
  const addedBlock = blockOf(added);
  if (addedBlock.columns.length === 0) {
    return { ok: false, reason: `"${added.name}" is constant among the ${n} complete rows; the claim cannot be tested` };
  }
  const allCols = [...baseCols, ...addedBlock.columns];
  const labels = [...baseLabels, ...addedBlock.labels];
  const kept = independentColumns(allCols, weights, m);
  const p0 = kept.filter((j) => j < baseCols.length).length;
  const p = kept.length;
  const q = kind === "multinomial" ? respLevels.length - 1 : 1;
  // Added parameters: one per added column, for each non-baseline response category.
  const df = (p - p0) * q;
  const droppedBase = baseCols.length - p0;
  if (droppedBase > 0) warnings.push(`${droppedBase} column${droppedBase > 1 ? "s" : ""} of the given set aliased with others and dropped`);
  if (df === 0) {
    return { ok: false, reason: `"${added.name}" is determined by ${claim.given.length ? quoted(claim.given) : "the intercept"} among the complete rows (aliased); the claim cannot be tested` };
  }
  if (n <= p * q + 1) {
    return { ok: false, reason: `${n} complete rows are too few for the ${p * q} parameters of the full model; collect more data or use a smaller set` };
  }
  const X1 = toRowMajor(kept.map((j) => allCols[j]!), m);
  const nullDesign = () => toRowMajor(kept.slice(0, p0).map((j) => allCols[j]!), m);

  let lr: number;
  let addedCoef: number | undefined;
  const details: Record<string, unknown> = {
    model: kind,
    response: resp.name,
    added: added.name,
    parameters_null: p0 * q,
    parameters_full: p * q,
    columns: kept.map((j) => labels[j]),
    grouped: allCategorical,
    fitted_rows: m,
  };
  {
    const codes = codesOf(resp);
    const recode = new Int32Array(resp.levels!.length).fill(-1);
    respLevels.forEach((l, i) => (recode[l] = i));
    const y = new Int32Array(m);
    for (let i = 0; i < m; i++) y[i] = recode[codes[i]!]!;
    let f0: LogisticFit | MultinomialFit;
    let f1: LogisticFit | MultinomialFit;
    if (kind === "logistic") {
      f0 = logisticRegression(nullDesign(), m, p0, y, { weights });
      const start = new Float64Array(p);
      start.set(f0.coef);
      f1 = logisticRegression(X1, m, p, y, { weights, start });
      addedCoef = f1.coef[p - 1];
    } else {
      const K = respLevels.length;
      f0 = multinomialLogit(nullDesign(), m, p0, y, K, { weights });
      const start = new Float64Array(q * p);
      for (let k = 0; k < q; k++) for (let j = 0; j < p0; j++) start[k * p + j] = f0.coef[k * p0 + j]!;
      f1 = multinomialLogit(X1, m, p, y, K, { weights, start });
    }
    for (const [label, f] of [["null", f0], ["full", f1]] as const) {
      if (f.separation === "complete") {
        return { ok: false, reason: `complete separation in the ${label} model: "${resp.name}" is predicted perfectly by ${label === "full" ? quoted([added.name, ...claim.given]) : claim.given.length ? quoted(claim.given) : "the intercept"}; the likelihood-ratio test does not apply` };
      }
      if (f.separation === "quasi-complete") {
        warnings.push(`quasi-complete separation in the ${label} model: ${f.separatedRows} of ${f.rows} fitted rows predicted with probability → 1; LR taken at the limit of the likelihood`);
      } else if (f.status === "singular") {
        return { ok: false, reason: `the information matrix of the ${label} model of "${resp.name}" is singular; the claim cannot be tested with these data` };
      } else if (f.status === "not-converged") {
        warnings.push(`the ${label} model of "${resp.name}" did not converge in ${f.iterations} Newton iterations; LR taken at the last iterate`);
      }
    }
    lr = 2 * (f1.logLik - f0.logLik);
    Object.assign(details, { loglik_null: f0.logLik, loglik_full: f1.logLik, iterations: [f0.iterations, f1.iterations] });
  }
  if (!Number.isFinite(lr)) return { ok: false, reason: `the likelihood-ratio statistic of "${added.name}" is not finite; the claim cannot be tested with these data` };
  let sign: -1 | 0 | 1 = 1;
  if (df === 1 && addedCoef !== undefined && Number.isFinite(addedCoef)) sign = addedCoef > 0 ? 1 : addedCoef < 0 ? -1 : 0;
  if (addedCoef !== undefined && df === 1) details.added_coefficient = addedCoef;
  const outcome = lrOutcome(lr, df, n, sign, details, warnings);
  return { ok: true, outcome };
}

/** Gaussian LR of the linear models of a continuous or ordinal (scored) response, from `ctx.moments`. */
function linearFromMoments(claim: Claim, resp: Column, added: Column, ctx: TestContext): MethodResult {
  const m = ctx.moments.momentsFor([resp.name, added.name, ...claim.given]);
  const k = m.design.length;
  const n = m.n;
  const names = [claim.x, claim.y, ...claim.given];
  if (n === 0) return { ok: false, reason: `no row has all of ${quoted(names)} observed` };
  const idx = (source: string) => m.design.flatMap((d, i) => (d.source === source ? [i] : []));
  const respIdx = idx(resp.name)[0]!;
  const addedIdx = idx(added.name);
  const givenIdx = claim.given.flatMap(idx);
  if (!(m.cov[respIdx * k + respIdx]! > 0)) {
    return { ok: false, reason: `"${resp.name}" is constant among the ${n} complete rows; the claim cannot be tested` };
  }
  if (addedIdx.every((i) => !(m.cov[i * k + i]! > 0))) {
    return { ok: false, reason: `"${added.name}" is constant among the ${n} complete rows; the claim cannot be tested` };
  }
  const fit = gaussianLRFromMoments(m.cov, k, n, respIdx, givenIdx, addedIdx);
  if (!fit) return { ok: false, reason: `the linear model of "${resp.name}" fits exactly among the ${n} complete rows; the claim cannot be tested` };
  const warnings: string[] = [];
  const droppedBase = givenIdx.length - fit.givenKept;
  if (droppedBase > 0) warnings.push(`${droppedBase} column${droppedBase > 1 ? "s" : ""} of the given set aliased with others (or empty levels) and dropped`);
  if (fit.df === 0) {
    return { ok: false, reason: `"${added.name}" is determined by ${claim.given.length ? quoted(claim.given) : "the intercept"} among the complete rows (aliased); the claim cannot be tested` };
  }
  const p = 1 + fit.givenKept + fit.df;
  if (n <= p + 1) {
    return { ok: false, reason: `${n} complete rows are too few for the ${p} parameters of the full model; collect more data or use a smaller set` };
  }
  const details: Record<string, unknown> = {
    model: "linear",
    response: resp.name,
    ...(resp.type === "ordinal" ? { response_scored: true } : {}),
    added: added.name,
    parameters_null: 1 + fit.givenKept,
    parameters_full: p,
    fitted_from: "moments",
    residual_variance_null: fit.residualVarianceNull,
    residual_variance_full: fit.residualVarianceFull,
  };
  return { ok: true, outcome: lrOutcome(fit.lr, fit.df, n, fit.sign, details, warnings) };
}

/** The common tail of every regression LR: p-value, log p, effect and its interval. */
function lrOutcome(lrIn: number, df: number, n: number, sign: -1 | 0 | 1, details: Record<string, unknown>, warnings: string[]): TestOutcome {
  const lr = lrIn < 0 ? 0 : lrIn; // rounding: the full model's likelihood cannot be lower
  const pAsym = chiSquareUpper(lr, df);
  const logP = logChiSquareUpper(lr, df);
  const effect = lrEffect(lr, df, n, sign);
  const [lo, hi] = lrEffectCI(lr, df, n, 0.95);
  return {
    test: "regression-lr",
    n,
    statistic: lr,
    df,
    p: pAsym > 0 ? pAsym : Number.MIN_VALUE,
    log_p: logP,
    effect,
    ci: df === 1 && sign < 0 ? [-hi, -lo] : [lo, hi],
    p_method: "asymptotic",
    details,
    ...(warnings.length ? { warnings } : {}),
  };
}

/** The `regression-lr` test method: accepts every mix of variable types. */
export const regressionLr: TestMethod = {
  name: "regression-lr",
  accepts(): boolean {
    return true;
  },
  run: runRegressionLr,
};

/**
 * The site summary: what the audit of one graph needs from one site's rows, with no row-level
 * value, so that sites can pool an audit without sharing rows (`poolSiteSummaries`).
 *
 * Terms. A *site* is one data file of a consortium. A claim's kind follows the test the site's own
 * audit would choose under the method (`chooseMethod`). A *linear claim* (method linear, x and y
 * with scores: continuous, binary, ordinal) has as its site statistics the complete-case count, the
 * means and the *cross-product matrix* W = Σ (z − z̄)(z − z̄)ᵀ (centred sums of squares and
 * products, not divided by n − 1) of the design columns: x, y, and each member of S as its score
 * (continuous, binary) or as 0/1 indicators of its levels but the first (ordinal, nominal), as
 * `claimMoments.ts` enters them. A *categorical claim* (x, y and S all categorical) keeps one
 * x-by-y count table per *stratum* (a combination of S's levels seen at the site).
 * A *flexible claim* (every claim the site's own audit would test with `gcm`: under method auto
 * every claim with a continuous variable, under linear or chisq those the forced test does not
 * take) keeps the sums of the generalised covariance measure over its complete cases
 * (`gcmSiteSums`, from `gcm`'s own fits exported by `methods/gcm.ts`): the site fits the
 * flexible adjustment for S to its own complete cases exactly as its own `gcm` test does (its own
 * basis, knots and cross-validated level; the row path up to `ROW_PATH_MAX_ROWS` rows, above it
 * the moment path, whose variance sums come from the seeded sample of `VARIANCE_SAMPLE_ROWS` rows
 * and are scaled by n/m to stand for sums over all n complete cases, or the rows where `gcm`
 * itself falls back to them, and also when the sample holds fewer than k of the claim's rows),
 * so that one site pooled alone gives its own test's result at any size, at the cost of that
 * test, and writes, in the units of the data, n, the
 * adjustment columns p, the side columns, Σ e eᵀ of the side residuals e (its x-by-y block is
 * Σ R, the sum of the residual products), Σ V_x ⊗ V_y (the conditional covariance of the residual
 * products under the claim that `gcm`'s variance sums: e² for a scored side, π(1 − π) for a
 * two-valued one, the multinomial covariance for a nominal one), for one product the fourth-order
 * sums behind the interval's ADF variance (Σ e_x⁴, Σ e_x³e_y, …), the same Σ e eᵀ for the linear
 * (level-0) fit, and the level chosen. Under method rank every claim is a flexible claim of
 * `gcm-rank`: the same sums for the sides' mid-ranks among the site's own observed values (a
 * monotone transform within the site, so x ⫫ y | S at the site holds for the ranks too).
 *
 * Disclosure control with the threshold k (`--min-cell`, at least 3: the mean and the sum of
 * squares of two rows give both values):
 * 1. Rows whose missing-data pattern over the graph's measured variables has fewer than k rows at
 *    the site are left out of every statistic (counted in `suppressed`). Every claim's complete
 *    cases are then a union of whole patterns of at least k rows, and so is the difference of any
 *    two claims' complete cases: no published number, and no difference of two, comes from
 *    fewer than k rows through the missing values.
 * 2. A claim with fewer than k complete cases is untestable at the site, with the reason, and
 *    carries no number (after rule 1 that means none: its complete cases are whole patterns).
 * 3. A stratum of a categorical claim with a non-empty cell of fewer than k rows (which includes
 *    every stratum of fewer than k rows) is dropped and counted (`dropped`: strata and rows); a
 *    claim left with no stratum is untestable at the site. Empty cells (0) are written.
 * 4. A linear or flexible claim in which a level of a categorical variable, or a combination of
 *    levels of two of them, has 1 … k − 1 complete cases is untestable at the site (the moments of
 *    a level's indicator, and the residual sums of a fit with that indicator, are sums over its
 *    rows), with the reason.
 * Every number of a flexible claim is a sum over all its n ≥ k complete cases (rules 1, 2, 4;
 * above ROW_PATH_MAX_ROWS rows the variance sums are over its complete cases among the sampled
 * rows, at least k of them, scaled by n/m), or a count of columns; its basis knots, coefficients
 * and residuals are not written. A *score claim* (method regression, x and y binary or nominal)
 * keeps the efficient score and information of its logistic or multinomial model
 * (`siteRegressionScore.ts`), sums over its n ≥ k complete cases (rules 2 and 4).
 * What this does not prevent: a mean of a binary column of 0 or 1, or an empty cell, says that
 * every row of the claim shares a value (attribute disclosure of a group of at least k); and the
 * difference of two claims' numbers is a sum over whole patterns of at least k rows, but within
 * those rows one level of a categorical variable may have fewer than k (rules 3 and 4 hold claim
 * by claim, not for differences between claims).
 */
import type { Claim } from "./types.js";
import type { Column, Table, VariableType } from "../data/Table.js";
import type { PatternMoments } from "../data/Moments.js";
import { buildPatternMoments, type PatternMomentsOptions } from "../data/buildPatternMoments.js";
import { claimMoments } from "./methods/claimMoments.js";
import { chooseMethod } from "./methods/index.js";
import { claimColumns, fitMomentPath, fitRowPath, residualProductScatter, sampleRepresents, sideCovariance, usesRowPath, type AdfSums, type ClaimColumn, type RowFit } from "./methods/gcm.js";
import { momentExpansions } from "./momentExpansions.js";
import { completeCount, completeRows, smallCategoricalCell } from "./siteDisclosure.js";
import { isScoreClaim, regressionScoreSummary, type ScoreClaimSummary } from "./siteRegressionScore.js";
import { DEFAULT_SETTINGS } from "./runAudit.js";
import type { MethodResult } from "./TestMethod.js";
import type { AdjustmentEntry } from "./methods/adjustmentDetails.js";
import type { TestContext } from "./TestMethod.js";
import type { TestName } from "./types.js";
import { timesPowerOfTwo } from "../stats/powerOfTwoScale.js";

import { SITE_SUMMARY_FORMAT, SITE_SUMMARY_VERSION } from "./siteSummaryFormat.js";
export { SITE_SUMMARY_FORMAT, SITE_SUMMARY_VERSION };
/** Default and least `--min-cell`. */
export const DEFAULT_MIN_CELL = 5;
export const LEAST_MIN_CELL = 3;

/** The settings that change what a summary holds; summaries pool only when they are equal. */
export interface SiteSummarySettings {
  sets: "union-parents" | "minimal" | "all-minimal";
  /**
   * The claims' kinds follow the test the site's own audit would choose under this `--method`
   * (`chooseMethod`): `gcm` → residual sums, `pearson-partial` → moments, the stratified tests →
   * tables. auto: categorical claims as tables, the others as residual sums; linear: claims with
   * scored x and y as moments; chisq: categorical claims as tables; the rest as under auto; rank:
   * every claim as residual sums of `gcm-rank` (the sides' mid-ranks among the site's values);
   * regression: claims `regression-lr` fits by a logistic or multinomial model as their
   * efficient score and information (`siteRegressionScore.ts`), the others (a continuous or
   * ordinal side: a Gaussian linear model) as moments.
   */
  method: "auto" | "linear" | "chisq" | "rank" | "regression";
  listwise: boolean;
  min_cell: number;
  /** Nodes declared unmeasured on the command line, sorted. */
  unmeasured: string[];
}

export interface SiteVariable {
  name: string;
  type: VariableType;
  /** Level labels in code order (categorical variables). */
  levels?: string[];
}

export interface MomentsClaimSummary {
  x: string;
  y: string;
  given: string[];
  kind: "moments";
  n: number;
  /** Design column names: x, y, then each member of S (`name` or `name=level`). */
  columns: string[];
  means: number[];
  /** W, one array per row (symmetric). */
  cross_products: number[][];
}

export interface TablesClaimSummary {
  x: string;
  y: string;
  given: string[];
  kind: "tables";
  /** Rows in the written strata. */
  n: number;
  /** One x-by-y table per stratum: S's level labels and the counts (rows: x levels, columns: y levels, in level order). */
  strata: { given: string[]; counts: number[][] }[];
  dropped: { strata: number; rows: number };
}

/** The sums of the flexible test (`gcm`) over a claim's complete cases at the site (see the module comment). */
export interface ResidualsClaimSummary {
  x: string;
  y: string;
  given: string[];
  kind: "residuals";
  /** The site's test whose residuals these are (`gcm-rank`: of the sides' mid-ranks at the site). */
  test: "gcm" | "gcm-rank";
  /** Complete cases. */
  n: number;
  /** Adjustment columns of the fit at the chosen level (intercept excluded). */
  params: number;
  /** Side columns, x's then y's: the variable's name, or `name=level` for an indicator of a nominal side's level (the first level present is the reference). */
  sides: [string[], string[]];
  /** Σ e eᵀ of the q = qx + qy side residuals (q × q; rows and columns in the order of `sides`). */
  residual_cross_products: number[][];
  /** Σ_t V_x,t ⊗ V_y,t over the complete cases (qx·qy square, products in x-major order). */
  product_variance: number[][];
  /** One product (qx = qy = 1): Σ e_x², Σ e_y², Σ e_x e_y, Σ e_x²e_y², Σ e_x³e_y, Σ e_x e_y³, Σ e_x⁴, Σ e_y⁴. */
  fourth_order?: { uu: number; vv: number; uv: number; uuvv: number; uuuv: number; uvvv: number; uuuu: number; vvvv: number };
  /** The linear (level-0) fit: its adjustment columns and Σ e eᵀ of its residuals. */
  linear: { params: number; residual_cross_products: number[][] };
  /** The flexibility level used (the higher of the two sides' cross-validated levels plus one), for the record. */
  flexibility: { level: number; max_level: number; level_x: number; level_y: number; parameters: number };
  /** How each member of S entered at the chosen level. */
  adjustment: AdjustmentEntry[];
  /** Adjustment columns aliased with others (or constant) and left out. */
  aliased: number;
}

export interface UntestableClaimSummary {
  x: string;
  y: string;
  given: string[];
  kind: "untestable";
  reason: string;
}

export type ClaimSummary = MomentsClaimSummary | TablesClaimSummary | ResidualsClaimSummary | ScoreClaimSummary | UntestableClaimSummary;

export interface SiteSummary {
  format: typeof SITE_SUMMARY_FORMAT;
  version: number;
  /** SHA-256 (hex) of the graph file's bytes. */
  graph_sha256: string;
  settings: SiteSummarySettings;
  site: string;
  /** Rows of the site's data file. */
  n: number;
  /** Rows left out because their missing-data pattern has fewer than min_cell rows. */
  suppressed: { rows: number; patterns: number };
  variables: SiteVariable[];
  claims: ClaimSummary[];
}

export interface SummarizeOptions {
  graphSha256: string;
  site: string;
  settings: SiteSummarySettings;
  /** The measured variables of the graph (the patterns of rule 1 are over these). */
  measured: readonly string[];
  /** Claims of the graph, as `deriveClaims` gives them with `settings.sets`. */
  claims: readonly Claim[];
}

/**
 * Summarise one site's table for the audit of a graph (see the module comment).
 * Cost: O(rows · m) for the patterns, O(rows · D²) once for the pattern moments of the D design
 * columns of the linear claims, then per linear claim O(P · d²) (P patterns, d columns) and per
 * categorical claim O(rows · |S|).
 * @throws RangeError when min_cell is below {@link LEAST_MIN_CELL} or a measured variable is not a column
 * @example summarizeSite(table, { graphSha256, site: "A", settings, measured, claims }).claims[0].kind // "moments"
 */
export function summarizeSite(table: Table, options: SummarizeOptions): SiteSummary {
  const plan = planSite(table, options);
  return finishSite(table, options, plan, plan.flexibleMoments ? buildPatternMoments(plan.kept, plan.flexibleMoments) : undefined);
}

/**
 * {@link summarizeSite} with the pattern moments of the flexible claims (sites above
 * ROW_PATH_MAX_ROWS rows) built by `build`, e.g. over two threads as `test` builds them; the
 * same summary. Cost: as summarizeSite.
 * @throws as {@link summarizeSite}
 * @example await summarizeSiteWith(table, options, (t, o) => parallelPatternMoments(t, o))
 */
export async function summarizeSiteWith(table: Table, options: SummarizeOptions, build: (table: Table, options: PatternMomentsOptions) => Promise<PatternMoments>, helper?: SiteClaimHelper): Promise<SiteSummary> {
  const plan = planSite(table, options);
  const flexible = plan.kinds.filter((kind) => kind === "residuals").length;
  // enough flexible claims: shared with a helper thread, as `test` shares the claims that read
  // rows; on the moment path the helper builds the same pattern moments for itself (worth it when
  // the claims cost more than a second build of the moments), so both threads build them alone
  const share = helper !== undefined && flexible >= (plan.flexibleMoments ? HELPER_MIN_MOMENT_CLAIMS : HELPER_MIN_CLAIMS);
  const moments = plan.flexibleMoments ? (share ? buildPatternMoments(plan.kept, plan.flexibleMoments) : await build(plan.kept, plan.flexibleMoments)) : undefined;
  const done = share ? await shareFlexibleClaims(plan, options, helper!, moments) : undefined;
  return finishSite(table, options, plan, moments, done);
}

/**
 * Summarises a share of a site's flexible claims on another thread: it builds the pattern moments
 * of `moments` on `table` when given (a site on the moment path; else it fits on the rows), takes
 * claims one at a time by `Atomics.add(counter, 0, 1)` (an index into `claims`) and resolves with
 * the summaries it made ({@link flexibleClaimSummary}), by that index; a claim it took but did not
 * answer is made again by the caller.
 */
export type SiteClaimHelper = (job: { table: Table; claims: readonly Claim[]; k: number; test: "gcm" | "gcm-rank"; counter: Int32Array; moments?: PatternMomentsOptions }) => Promise<Map<number, ClaimSummary>>;

/** Fewest flexible claims worth a helper thread on the row path (its start costs about as much as a few claims). */
const HELPER_MIN_CLAIMS = 8;
/** Fewest flexible claims worth a helper thread on the moment path (the helper builds the moments again). */
const HELPER_MIN_MOMENT_CLAIMS = 64;

/**
 * The context in which a helper thread makes flexible claims' summaries: the site's kept rows and,
 * on the moment path, the pattern moments built over `moments` (the same options give the same
 * moments, so the same summaries). Cost: O(rows · D²) on the moment path, else O(1).
 * @example flexibleClaimContext(kept) // fits on the rows
 */
export function flexibleClaimContext(table: Table, moments?: PatternMomentsOptions): TestContext {
  return moments ? { table, moments: buildPatternMoments(table, moments), seed: DEFAULT_SETTINGS.seed, alpha: 0.05 } : rowsOnlyContext(table);
}

/**
 * The summary of one flexible claim on a site's kept rows, as `summarizeSite` makes it, in the
 * context of {@link flexibleClaimContext}: for a helper thread ({@link SiteClaimHelper}).
 * Cost: as the site's own test of the claim.
 * @example flexibleClaimSummary(flexibleClaimContext(kept), claim, 5, "gcm").kind // "residuals"
 */
export function flexibleClaimSummary(ctx: TestContext, claim: Claim, k: number, test: "gcm" | "gcm-rank"): ClaimSummary {
  return claimResidualsSummary(ctx, claim, k, test);
}

/** The flexible claims' summaries, by index in `options.claims`, made here and by the helper from one counter. */
async function shareFlexibleClaims(plan: SitePlan, options: SummarizeOptions, helper: SiteClaimHelper, moments: PatternMoments | undefined): Promise<Map<number, ClaimSummary>> {
  const at = plan.kinds.flatMap((kind, i) => (kind === "residuals" ? [i] : []));
  const claims = at.map((i) => options.claims[i]!);
  const k = options.settings.min_cell;
  const test = flexibleTest(options.settings.method);
  const counter = new Int32Array(new SharedArrayBuffer(8));
  const helped = helper({ table: plan.kept, claims, k, test, counter, ...(plan.flexibleMoments ? { moments: plan.flexibleMoments } : {}) });
  const out = new Map<number, ClaimSummary>();
  const ctx = moments ? { table: plan.kept, moments, seed: DEFAULT_SETTINGS.seed, alpha: 0.05 } : rowsOnlyContext(plan.kept);
  for (;;) {
    const j = Atomics.add(counter, 0, 1);
    if (j >= claims.length) break;
    out.set(at[j]!, claimResidualsSummary(ctx, claims[j]!, k, test));
  }
  for (const [j, summary] of await helped) if (j >= 0 && j < claims.length) out.set(at[j]!, summary);
  for (let j = 0; j < claims.length; j++) if (!out.has(at[j]!)) out.set(at[j]!, claimResidualsSummary(ctx, claims[j]!, k, test));
  return out;
}

interface SitePlan {
  kept: Table;
  suppressed: { rows: number; patterns: number };
  kinds: ("moments" | "tables" | "residuals" | "score")[];
  /** What the flexible claims' pattern moments are built over, when they take the moment path. */
  flexibleMoments?: PatternMomentsOptions;
}

function planSite(table: Table, options: SummarizeOptions): SitePlan {
  const { settings, measured } = options;
  const k = settings.min_cell;
  if (!(Number.isInteger(k) && k >= LEAST_MIN_CELL)) throw new RangeError(`min_cell must be a whole number of at least ${LEAST_MIN_CELL}, got ${k}`);
  for (const v of measured) if (!table.column(v)) throw new RangeError(`summarizeSite: the table has no column "${v}"`);
  const { kept, suppressed } = siteRows(table, measured, settings);
  const kinds = options.claims.map((c) => claimKind(table, c, settings.method));
  const flexible = kinds.includes("residuals");
  return { kept, suppressed, kinds, ...(flexible && !usesRowPath(kept) ? { flexibleMoments: flexibleMomentsOptions(kept, measured, options.claims, settings) } : {}) };
}

function finishSite(table: Table, options: SummarizeOptions, plan: SitePlan, flexibleMoments: PatternMoments | undefined, done?: ReadonlyMap<number, ClaimSummary>): SiteSummary {
  const { settings, measured } = options;
  const k = settings.min_cell;
  const { kept, suppressed, kinds } = plan;
  const linear = options.claims.filter((_, i) => kinds[i] === "moments");
  const ordinalMembers = [...new Set(linear.flatMap((c) => c.given.filter((g) => table.column(g)!.type === "ordinal")))];
  const pm = linear.length > 0 ? buildPatternMoments(kept, { variables: [...new Set(linear.flatMap((c) => [c.x, c.y, ...c.given]))], expansions: { indicators: ordinalMembers } }) : undefined;
  const ctx = flexibleMoments ? { table: kept, moments: flexibleMoments, seed: DEFAULT_SETTINGS.seed, alpha: 0.05 } : rowsOnlyContext(kept);
  const claims = options.claims.map((c, i) => {
    const kind = kinds[i]!;
    if (kind === "residuals") return done?.get(i) ?? claimResidualsSummary(ctx, c, k, flexibleTest(settings.method));
    if (kind === "score") return regressionScoreSummary(kept, c, k);
    return kind === "moments" ? claimMomentsSummary(kept, pm!, c, k) : summarizeTableClaim(kept, c, k);
  });
  return {
    format: SITE_SUMMARY_FORMAT,
    version: SITE_SUMMARY_VERSION,
    graph_sha256: options.graphSha256,
    settings: { ...settings, unmeasured: [...settings.unmeasured].sort() },
    site: options.site,
    n: table.rows,
    suppressed,
    variables: measured.map((name) => {
      const c = table.column(name)!;
      return { name, type: c.type, ...(c.levels && c.type !== "continuous" ? { levels: [...c.levels] } : {}) };
    }),
    claims,
  };
}

/**
 * The rows a site's statistics come from (`--listwise`, then rule 1) as a table of their own, so
 * that a left-out row cannot touch any number (not even a moment's shift or a knot), and what
 * rule 1 left out. Cost: O(rows · m).
 */
function siteRows(table: Table, measured: readonly string[], settings: SiteSummarySettings): { kept: Table; suppressed: { rows: number; patterns: number } } {
  const keep = new Uint8Array(table.rows).fill(1);
  if (settings.listwise) {
    for (const v of measured) {
      const vals = table.column(v)!.values;
      for (let r = 0; r < table.rows; r++) if (Number.isNaN(vals[r]!)) keep[r] = 0;
    }
  }
  const suppressed = suppressSmallPatterns(table, measured, keep, settings.min_cell);
  return { kept: keptRows(table, measured, keep), suppressed };
}

/** Rule 1: clear `keep` for the rows of missing-data patterns (over `measured`) with fewer than k kept rows. Cost: O(rows · m). */
function suppressSmallPatterns(table: Table, measured: readonly string[], keep: Uint8Array, k: number): { rows: number; patterns: number } {
  const cols = measured.map((v) => table.column(v)!.values);
  const keyOf = (r: number): string => cols.map((c) => (Number.isNaN(c[r]!) ? "0" : "1")).join("");
  const counts = new Map<string, number>();
  const keys: string[] = new Array(table.rows);
  for (let r = 0; r < table.rows; r++) {
    if (!keep[r]) continue;
    const key = keyOf(r);
    keys[r] = key;
    counts.set(key, (counts.get(key) ?? 0) + 1);
  }
  let rows = 0;
  let patterns = 0;
  for (const c of counts.values()) if (c < k) {
    patterns++;
    rows += c;
  }
  if (patterns > 0) for (let r = 0; r < table.rows; r++) if (keep[r] && counts.get(keys[r]!)! < k) keep[r] = 0;
  return { rows, patterns };
}

/**
 * A claim's sums of the flexible test over one site's complete rows, from which sites are pooled
 * (`poolSiteSummaries.ts`), in the units of the data: a side
 * column's residuals are those of its values as they are (indicators 0/1). The rows' own values
 * are not in it. q = qx + qy side columns, qq = qx·qy residual products.
 */
export interface GcmSiteSums {
  /** Complete cases. */
  n: number;
  /** Adjustment columns kept at the chosen level (intercept excluded). */
  params: number;
  /** The side columns whose residuals enter, x's then y's: the variable's name, or `name=level` for a level indicator. */
  sides: [string[], string[]];
  /** Σ_t e_t e_tᵀ of the q side residuals (q × q row-major; its x-by-y block is Σ R). */
  cross: Float64Array;
  /** Σ_t V_x,t ⊗ V_y,t, the conditional covariances of the residual products under the claim summed, not centred (qq × qq). */
  scatter: Float64Array;
  /** One product: Σ e_x², Σ e_y², Σ e_x e_y, Σ e_x²e_y², Σ e_x³e_y, Σ e_x e_y³, Σ e_x⁴, Σ e_y⁴ (the ADF variance's sums). */
  adf?: { uu: number; vv: number; uv: number; uuvv: number; uuuv: number; uvvv: number; uuuu: number; vvvv: number };
  /** The level-0 (linear) fit: its kept adjustment columns and Σ e eᵀ of its q residuals. */
  linear: { params: number; cross: Float64Array };
  flexibility: { level: number; max_level: number; level_x: number; level_y: number; parameters: number };
  adjustment: AdjustmentEntry[];
  /** Adjustment columns aliased with others (or constant) and left out at the chosen level. */
  aliased: number;
}

/**
 * A fit's uncentred Σ V_x ⊗ V_y over its variance rows (`raw`), the per-side Σ e² there
 * (`squares`) and, for one product, the ADF sums on unscaled residuals; or the fit's reason.
 * Cost: O(m · (p·q + qq²)) for m variance rows.
 */
function scatterOf(fitted: RowFit | MethodResult): { fitted: RowFit; raw: Float64Array; squares: Float64Array; adf?: AdfSums } | { ok: false; reason: string } {
  if (!("layout" in fitted)) return fitted.ok ? { ok: false, reason: "internal: a fit without its layout" } : fitted;
  const { f, values } = fitted;
  const { fit, n, qx, qy, level } = f;
  const q = qx + qy;
  const qq = qx * qy;
  const snap = fit.snapshots[level]!;
  const kept = snap.kept;
  const beta = Array.from({ length: q }, (_, r) => fit.coefficients(r, kept));
  const sumR = new Float64Array(qq);
  for (let a = 0; a < qx; a++) for (let b = 0; b < qy; b++) sumR[a * qy + b] = (n - 1) * snap.residual[a * q + qx + b]!;
  const adf: AdfSums | undefined = qq === 1 ? { scale: [1, 1] } : undefined;
  const squares = new Float64Array(q);
  const raw = residualProductScatter(values, beta, f.keptColumns.slice(0, kept), qx, qy, sumR.map((v) => v / n), squares, adf, false);
  return { fitted, raw, squares, ...(adf ? { adf } : {}) };
}

/** x·2^−e, or NaN when that leaves the normal range of doubles (a sum beyond range in the data's units). */
function toDataUnits(x: number, e: number): number {
  const v = timesPowerOfTwo(x, -e);
  return Number.isFinite(v) && (x === 0 || Math.abs(v) >= 2 ** -1020) ? v : NaN;
}

/** The label of a side column: its variable, or `variable=level` for an indicator. */
function sideLabel(c: ClaimColumn): string {
  return c.code !== undefined ? `${c.variable}=${c.column.levels![c.code]!}` : c.variable;
}

/**
 * The sums of {@link GcmSiteSums} for a claim on the table of one site, on the path the site's
 * own `gcm` takes (`fitRowPath` or `fitMomentPath`, then `residualProductScatter` of
 * `methods/gcm.ts`; the basis, knots and cross-validated level are the site's own). On the moment
 * path the variance sums over the m sampled rows are scaled by n/m; the claim goes to its rows
 * where `gcm` would send it there, and when fewer than `minRows` sampled rows hold it. So
 * {@link gcmTestFromSums} on one site's sums gives the site's own `gcm` result at any size.
 * Returns the reason when the claim cannot be tested, or when a sum leaves the range of doubles
 * in the data's units. Cost: as the site's own test of the claim.
 * @example gcmSiteSums("gcm", { x: "crp", y: "bmi", given: ["age"] }, ctx) // { ok: true, sums: { n, params, cross, scatter, … } }
 */
export function gcmSiteSums(name: TestName, claim: Claim, ctx: TestContext, minRows = LEAST_MIN_CELL): { ok: true; sums: GcmSiteSums } | { ok: false; reason: string } {
  const cols = claimColumns(claim, ctx.table);
  if (!Array.isArray(cols)) return cols;
  const onRows = (maxLevel?: number) => scatterOf(fitRowPath(name, claim, cols, ctx, maxLevel));
  let pass: ReturnType<typeof scatterOf>;
  if (usesRowPath(ctx.table, ctx.rowFilter)) pass = onRows();
  else {
    // gcm's moment path, as the site's own test takes it: the fit from the pattern moments and the
    // variance sums from the seeded sample of rows, scaled by n/m to sums over all n rows; the
    // rows when the moments lack a column, the sample does not represent the claim's rows, or
    // it holds fewer than minRows of them
    const viaMoments = fitMomentPath(name, claim, cols, ctx);
    if ("useRows" in viaMoments) pass = onRows();
    else {
      pass = scatterOf(viaMoments);
      if ("fitted" in pass && pass.fitted.values.sampled && (!sampleRepresents(pass.fitted.f, pass.squares, pass.fitted.values.rows) || pass.fitted.values.rows < minRows)) {
        pass = onRows(pass.fitted.layout.cap);
      }
    }
  }
  if (!("fitted" in pass)) return pass;
  const { fitted, adf } = pass;
  const { layout, f, values } = fitted;
  const { fit, n, qx, qy, level } = f;
  const q = qx + qy;
  const qq = qx * qy;
  const snap = fit.snapshots[level]!;
  const kept = snap.kept;
  // sampled variance rows: their sums stand for sums over all n rows
  const toAll = values.rows < n ? n / values.rows : 1;
  const raw = toAll === 1 ? pass.raw : pass.raw.map((v) => v * toAll);
  if (adf?.sums && toAll !== 1) for (const key of Object.keys(adf.sums) as (keyof NonNullable<AdfSums["sums"]>)[]) adf.sums[key] *= toAll;
  const E = Array.from({ length: q }, (_, r) => values.side(r).exponent ?? 0);
  const cross = new Float64Array(q * q);
  const lin = fit.snapshots[0]!;
  const linCross = new Float64Array(q * q);
  for (let a = 0; a < q; a++) {
    for (let b = 0; b < q; b++) {
      cross[a * q + b] = toDataUnits((n - 1) * snap.residual[a * q + b]!, E[a]! + E[b]!);
      linCross[a * q + b] = toDataUnits((n - 1) * lin.residual[a * q + b]!, E[a]! + E[b]!);
    }
  }
  const scatter = new Float64Array(qq * qq);
  for (let a = 0; a < qx; a++) for (let b = 0; b < qy; b++) for (let c = 0; c < qx; c++) for (let d = 0; d < qy; d++) {
    const at = (a * qy + b) * qq + c * qy + d;
    scatter[at] = toDataUnits(raw[at]!, E[a]! + E[qx + b]! + E[c]! + E[qx + d]!);
  }
  let adfSums: GcmSiteSums["adf"];
  if (adf?.sums) {
    const [ex, ey] = [E[0]!, E[1]!];
    const t = adf.sums;
    adfSums = {
      uu: toDataUnits(t.uu, 2 * ex), vv: toDataUnits(t.vv, 2 * ey), uv: toDataUnits(t.uv, ex + ey), uuvv: toDataUnits(t.uuvv, 2 * ex + 2 * ey),
      uuuv: toDataUnits(t.uuuv, 3 * ex + ey), uvvv: toDataUnits(t.uvvv, ex + 3 * ey), uuuu: toDataUnits(t.uuuu, 4 * ex), vvvv: toDataUnits(t.vvvv, 4 * ey),
    };
  }
  const all = [...cross, ...scatter, ...linCross, ...(adfSums ? Object.values(adfSums) : [])];
  if (!all.every(Number.isFinite)) return { ok: false, reason: "a sum of this claim's residuals (up to their fourth powers) is beyond the range of double-precision numbers in the data's units; rescale the variables (e.g. other units) and summarize again" };
  const xs = fitted.sides.slice(0, qx).map(sideLabel);
  const ys = fitted.sides.slice(qx).map(sideLabel);
  return {
    ok: true,
    sums: {
      n,
      params: kept,
      sides: [xs, ys],
      cross,
      scatter,
      ...(adfSums ? { adf: adfSums } : {}),
      linear: { params: lin.kept, cross: linCross },
      flexibility: { level, max_level: layout.cap, level_x: f.bestX, level_y: f.bestY, parameters: kept },
      adjustment: layout.entered.map((en) => ({
        variable: en.variable,
        entered: en.entered === "spline" && level === 0 ? "linear" : en.entered,
        columns: en.levelCounts.slice(0, level + 1).reduce((s, c) => s + c, 0),
      })),
      aliased: layout.adjustment.filter((c) => c.level <= level).length - kept,
    },
  };
}

/**
 * A claim's residuals on one site's complete rows, in the data's units as in {@link gcmSiteSums}:
 * per side column kept the residual e_r at each row (`residuals[r][t]`), and per row the
 * conditional covariance of the residual products under the claim, V_x,t ⊗ V_y,t (qq × qq,
 * `variance[t·qq² + …]`). For checking pooled results against a computation of their own
 * (the residual products are R_t = e_x,t ⊗ e_y,t). Cost: O(n · (p·q + qq²)).
 * @example gcmSiteResiduals("gcm", claim, ctx) // { ok: true, n, qx: 1, qy: 1, params, residuals: [ex, ey], variance }
 */
export function gcmSiteResiduals(name: TestName, claim: Claim, ctx: TestContext): { ok: true; n: number; qx: number; qy: number; params: number; residuals: Float64Array[]; variance: Float64Array } | { ok: false; reason: string } {
  const cols = claimColumns(claim, ctx.table);
  if (!Array.isArray(cols)) return cols;
  const fitted = fitRowPath(name, claim, cols, ctx);
  if (!("layout" in fitted)) return fitted as { ok: false; reason: string };
  const { f, values } = fitted;
  const { fit, n, qx, qy, level } = f;
  const q = qx + qy;
  const qq = qx * qy;
  const kept = fit.snapshots[level]!.kept;
  const beta = Array.from({ length: q }, (_, r) => fit.coefficients(r, kept));
  const columns = f.keptColumns.slice(0, kept).map((j) => values.adjustment(j));
  const sides = Array.from({ length: q }, (_, r) => values.side(r));
  const data = values.data();
  const offs = Int32Array.from(sides, (sd) => sd.offset);
  const residuals = Array.from({ length: q }, () => new Float64Array(n));
  const variance = new Float64Array(n * qq * qq);
  const e = new Float64Array(q);
  const Vx = new Float64Array(qx * qx);
  const Vy = new Float64Array(qy * qy);
  for (let t = 0; t < n; t++) {
    const i = values.index ? values.index[t]! : t;
    for (let r = 0; r < q; r++) {
      let v = data[offs[r]! + i]! - sides[r]!.mean;
      for (let k = 0; k < kept; k++) v -= beta[r]![k]! * (data[columns[k]!.offset + i]! - columns[k]!.mean);
      e[r] = v;
      residuals[r]![t] = timesPowerOfTwo(v, -(sides[r]!.exponent ?? 0));
    }
    sideCovariance(Vx, e, 0, qx, sides, data, offs, i);
    sideCovariance(Vy, e, qx, qy, sides, data, offs, i);
    for (let a = 0; a < qx; a++) for (let b = 0; b < qy; b++) for (let c = 0; c < qx; c++) for (let d = 0; d < qy; d++) {
      const scale = (sides[a]!.exponent ?? 0) + (sides[qx + b]!.exponent ?? 0) + (sides[c]!.exponent ?? 0) + (sides[qx + d]!.exponent ?? 0);
      variance[t * qq * qq + (a * qy + b) * qq + c * qy + d] = timesPowerOfTwo(Vx[a * qx + c]! * Vy[b * qy + d]!, -scale);
    }
  }
  return { ok: true, n, qx, qy, params: kept, residuals, variance };
}

/** Which kind of statistics a claim gets under the method, or why none. */
function claimKind(table: Table, claim: Claim, method: SiteSummarySettings["method"]): "moments" | "tables" | "residuals" | "score" {
  const types = [claim.x, claim.y, ...claim.given].map((v) => table.column(v)!.type);
  // the test the site's own audit would choose under the method (`chooseMethod`: a forced method
  // where it applies, else the automatic choice), and the statistics that pool it
  const chosen = chooseMethod(method, { x: types[0]!, y: types[1]!, given: types.slice(2) }).name;
  if (chosen === "gcm" || chosen === "gcm-rank") return "residuals";
  if (chosen === "pearson-partial") return "moments";
  // regression-lr: a logistic or multinomial model pools by its score, a Gaussian linear model (a continuous or ordinal side) from moments
  if (chosen === "regression-lr") return isScoreClaim(table, claim) ? "score" : "moments";
  return "tables"; // stratified-chisq, or linear-by-linear (pooled by the stratified chi-square)
}

/** The flexible test of the residual claims under a method: `gcm-rank` under rank (every claim), else `gcm`. */
function flexibleTest(method: SiteSummarySettings["method"]): "gcm" | "gcm-rank" {
  return method === "rank" ? "gcm-rank" : "gcm";
}

/**
 * What a site's flexible claims' pattern moments are built over (sites above ROW_PATH_MAX_ROWS
 * rows), as the site's own audit would build them: the measured variables with the expansions the
 * audit would add for the claims (`momentExpansions`: level indicators, basis columns within the
 * compute budget, mid-ranks), so that `gcm`'s moment path runs as in `test`, at the audit's
 * default seed. Cost: the sorting of each continuous member of a set once.
 * @example flexibleMomentsOptions(kept, measured, claims, settings).expansions.basis // the basis columns of the continuous members of the sets
 */
export function flexibleMomentsOptions(table: Table, measured: readonly string[], claims: readonly Claim[], settings: SiteSummarySettings): PatternMomentsOptions {
  const audit = { ...DEFAULT_SETTINGS, method: settings.method, sets: settings.sets, listwise: false };
  return { variables: measured, expansions: momentExpansions(claims, table, audit, measured) };
}

/** A context for fits on the rows (`gcm`'s row path), whose pattern moments nothing may read. */
function rowsOnlyContext(table: Table): TestContext {
  const moments = new Proxy({} as PatternMoments, {
    get() {
      throw new Error("internal: these flexible claims are fitted on their rows");
    },
  });
  return { table, moments, seed: DEFAULT_SETTINGS.seed, alpha: 0.05 };
}

/**
 * The sums of the flexible test of a claim at the site (rules 2 and 4, then `gcmSiteSums` on the
 * kept rows), or untestable with the reason. Cost: as the site's own `gcm` test of the claim.
 */
function claimResidualsSummary(ctx: TestContext, claim: Claim, k: number, test: "gcm" | "gcm-rank"): ClaimSummary {
  const table = ctx.table;
  const head = { x: claim.x, y: claim.y, given: [...claim.given] };
  const n = completeCount(table, claim);
  if (n < k) return tooFew(claim, n, k);
  const small = smallCategoricalCell(table, claim, k);
  if (small) return { ...head, kind: "untestable", reason: `${small} among its complete cases at this site, fewer than --min-cell ${k}: its residual sums would tell those rows' values, so none is written` };
  const r = gcmSiteSums(test, claim, ctx, k);
  if (!r.ok) return { ...head, kind: "untestable", reason: r.reason };
  const s = r.sums;
  const q = s.sides[0].length + s.sides[1].length;
  const qq = s.sides[0].length * s.sides[1].length;
  const square = (a: Float64Array, d: number) => Array.from({ length: d }, (_, i) => Array.from(a.subarray(i * d, (i + 1) * d)));
  return {
    ...head,
    kind: "residuals",
    test,
    n: s.n,
    params: s.params,
    sides: s.sides,
    residual_cross_products: square(s.cross, q),
    product_variance: square(s.scatter, qq),
    ...(s.adf ? { fourth_order: s.adf } : {}),
    linear: { params: s.linear.params, residual_cross_products: square(s.linear.cross, q) },
    flexibility: s.flexibility,
    adjustment: s.adjustment,
    aliased: s.aliased,
  };
}

/**
 * A flexible claim's residuals at one site, as its summary's sums are made from them (the kept
 * rows after rule 1; see `gcmSiteResiduals`): for checking a pooled test against a computation of
 * one's own. Not written to any summary: these are row-level values. Always the row path: for
 * sites of at most ROW_PATH_MAX_ROWS rows, where the summary's sums come from the same fit.
 * Cost: as `gcm`'s row path.
 * @throws RangeError as {@link summarizeSite}
 * @example siteClaimResiduals(table, claim, options) // { ok: true, n, qx, qy, params, residuals: [ex, ey], variance }
 */
export function siteClaimResiduals(table: Table, claim: Claim, options: Pick<SummarizeOptions, "measured" | "settings">): ReturnType<typeof gcmSiteResiduals> {
  const k = options.settings.min_cell;
  if (!(Number.isInteger(k) && k >= LEAST_MIN_CELL)) throw new RangeError(`min_cell must be a whole number of at least ${LEAST_MIN_CELL}, got ${k}`);
  for (const v of options.measured) if (!table.column(v)) throw new RangeError(`siteClaimResiduals: the table has no column "${v}"`);
  const kept = siteRows(table, options.measured, options.settings).kept;
  return gcmSiteResiduals(flexibleTest(options.settings.method), claim, rowsOnlyContext(kept));
}

/** The rows of `keep` as a table of their own (the columns of `names`). Cost: O(rows · m). */
function keptRows(table: Table, names: readonly string[], keep: Uint8Array): Table {
  let n = 0;
  for (let r = 0; r < table.rows; r++) n += keep[r]!;
  const index = new Int32Array(n);
  for (let r = 0, j = 0; r < table.rows; r++) if (keep[r]) index[j++] = r;
  const columns: Column[] = names.map((name) => {
    const c = table.column(name)!;
    // plain loops: Float64Array.from with a mapping function was a tenth of a 100,000-row summary;
    // shared memory, so that a helper thread reads these columns without a copy
    const values = new Float64Array(new SharedArrayBuffer(8 * n));
    const from = c.values;
    let missing = 0;
    for (let j = 0; j < n; j++) {
      const v = from[index[j]!]!;
      values[j] = v;
      if (v !== v) missing++;
    }
    let codes: Int32Array | undefined;
    if (c.codes) {
      codes = new Int32Array(new SharedArrayBuffer(4 * n));
      for (let j = 0; j < n; j++) codes[j] = c.codes[index[j]!]!;
    }
    return { ...c, values, missing, ...(codes ? { codes } : {}) };
  });
  const byName = new Map(columns.map((c) => [c.name, c]));
  return { ...(table.file !== undefined ? { file: table.file } : {}), rows: n, columns, warnings: [], column: (name) => byName.get(name) };
}

function tooFew(claim: Claim, n: number, k: number): UntestableClaimSummary {
  return { x: claim.x, y: claim.y, given: [...claim.given], kind: "untestable", reason: `${n} complete case${n === 1 ? "" : "s"} at this site, fewer than --min-cell ${k}: no statistic is written for it` };
}

/**
 * Complete-case means and centred cross-products of a claim's design columns, from the pattern
 * moments of the kept rows (`claimMoments`: W = (n − 1) × the Bessel-corrected covariance).
 * Cost: O(P · d²) for P missing-data patterns.
 */
function claimMomentsSummary(table: Table, pm: PatternMoments, claim: Claim, k: number): ClaimSummary {
  const m = claimMoments(pm, table, [claim.x, claim.y], claim.given);
  const n = m?.n ?? 0;
  if (!m || n < k) return tooFew(claim, n, k);
  const small = smallCategoricalCell(table, claim, k);
  if (small) return { x: claim.x, y: claim.y, given: [...claim.given], kind: "untestable", reason: `${small} among its complete cases at this site, fewer than --min-cell ${k}: its moments would tell those rows' values, so none is written` };
  const d = m.design.length;
  const w: number[][] = Array.from({ length: d }, (_, a) => Array.from({ length: d }, (_, b) => m.cov[a * d + b]! * (n - 1)));
  const means = Array.from(m.means);
  if (!w.every((row) => row.every(Number.isFinite)) || !means.every(Number.isFinite)) {
    return { x: claim.x, y: claim.y, given: [...claim.given], kind: "untestable", reason: "a sum of squares of this claim's values is beyond the range of double-precision numbers; rescale the variables (e.g. other units) and summarize again" };
  }
  return { x: claim.x, y: claim.y, given: [...claim.given], kind: "moments", n, columns: m.design.map((c) => c.name), means, cross_products: w };
}

/** The tables of a categorical claim, or untestable with fewer than k complete cases. */
function summarizeTableClaim(table: Table, claim: Claim, k: number): ClaimSummary {
  const rows = completeRows(table, claim);
  return rows.length < k ? tooFew(claim, rows.length, k) : claimTablesSummary(table, claim, rows, k);
}

/** Per-stratum x-by-y tables, strata with a cell of 1 … k − 1 rows dropped. Cost: O(n · |S|). */
function claimTablesSummary(table: Table, claim: Claim, rows: Int32Array, k: number): TablesClaimSummary | UntestableClaimSummary {
  const x = table.column(claim.x)!;
  const y = table.column(claim.y)!;
  const given = claim.given.map((g) => table.column(g)!);
  const lx = x.levels!.length;
  const ly = y.levels!.length;
  // strata keyed by the mixed-radix number of S's codes while it stays an exact integer (a text key beyond)
  const radix = given.reduce((m, g) => m * Math.max(1, g.levels!.length), 1);
  const numeric = radix <= Number.MAX_SAFE_INTEGER;
  const byKey = new Map<number | string, { codes: number[]; counts: number[][] }>();
  const gc = given.map((g) => g.codes!);
  const xc = x.codes!;
  const yc = y.codes!;
  for (const r of rows) {
    let key: number | string;
    if (numeric) {
      let v = 0;
      for (let i = 0; i < gc.length; i++) v = v * Math.max(1, given[i]!.levels!.length) + gc[i]![r]!;
      key = v;
    } else key = gc.map((c) => c[r]!).join(",");
    let s = byKey.get(key);
    if (!s) {
      s = { codes: gc.map((c) => c[r]!), counts: Array.from({ length: lx }, () => new Array<number>(ly).fill(0)) };
      byKey.set(key, s);
    }
    s.counts[xc[r]!]![yc[r]!]!++;
  }
  const all = [...byKey.values()].sort((a, b) => {
    for (let i = 0; i < a.codes.length; i++) if (a.codes[i] !== b.codes[i]) return a.codes[i]! - b.codes[i]!;
    return 0;
  });
  const strata: TablesClaimSummary["strata"] = [];
  let droppedStrata = 0;
  let droppedRows = 0;
  let n = 0;
  for (const s of all) {
    const cells = s.counts.flat();
    const total = cells.reduce((a, b) => a + b, 0);
    if (cells.some((c) => c > 0 && c < k)) {
      droppedStrata++;
      droppedRows += total;
      continue;
    }
    n += total;
    strata.push({ given: s.codes.map((c, i) => given[i]!.levels![c]!), counts: s.counts });
  }
  const head = { x: claim.x, y: claim.y, given: [...claim.given] };
  if (strata.length === 0) {
    return { ...head, kind: "untestable", reason: `every one of the ${droppedStrata} strata (${droppedRows} rows) has a cell of fewer than --min-cell ${k} rows, so no table is written` };
  }
  return { ...head, kind: "tables", n, strata, dropped: { strata: droppedStrata, rows: droppedRows } };
}

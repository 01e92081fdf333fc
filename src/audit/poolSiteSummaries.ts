/**
 * An audit pooled from site summaries (`siteSummary.ts`), with site as a stratum.
 *
 * Terms. For a flexible claim (residual sums, `gcm` at the sites) the statistic is the generalised
 * covariance measure of the *stacked residual products* of all sites: each site s fitted its own
 * flexible adjustment for S to its own complete cases (its basis, knots and cross-validated level,
 * with its own intercept: the adjustment of the stacked rows with S fully interacted with site,
 * p = Σ_s p_s + sites − 1 columns), and the sums add: Σ R (the x-by-y block of Σ e eᵀ), Σ V (the
 * conditional variances of the products under the claim, centred at the pooled mean of R, which
 * gives σ̂² = Σ V/N − mean(R)²: the empirical variance of the stacked R for two scored sides), the
 * residual correlation Σ e_x e_y / √(Σ e_x² Σ e_y²) and the fourth-order sums of its interval.
 * They go through `gcmTestFromSums`, the function `gcm` itself calls, so one site alone gives its
 * own `gcm` result (Shah & Peters 2020, Annals of Statistics 48:1514–1538). The linear check
 * (`details.linear_adjustment`) pools the linear fits' Σ e eᵀ the same way. The claim's details
 * (`site_adjustment`, `flexibility.sites`) and warnings say the adjustment was site-specific.
 * For a linear claim the pooled cross-product matrix is W = Σ_s W_s, the sum over sites of
 * the within-site centred cross-products, on n = Σ n_s complete cases. W is the cross-product
 * matrix of the stacked rows after removing each site's mean, i.e. the residuals of a regression
 * on site indicators, so the partial correlation of x and y given the columns of S computed from
 * W equals the one given S and the site indicators on the stacked rows (Frisch & Waugh 1933,
 * Econometrica 1:387–401); its t test loses one df per site beyond the first (c + sites − 1
 * conditioning columns); summaries made under `--method regression` get instead, from the same W,
 * the Gaussian likelihood-ratio test of the linear model of the continuous (else ordinal) side
 * (`poolGaussianLR`, as `regression-lr` on the stacked rows with site in the set). A score claim
 * (a logistic or multinomial model under `--method regression`) gets the pooled efficient score
 * test U'I⁺U of the sites' scores and informations (`poolScoreClaims` in `siteRegressionScore.ts`:
 * site-specific nuisance parameters; Rao 1948). For a categorical claim each site's strata are strata of their own
 * (site added to S), and the stratified chi-square test runs on all of them. A site where a claim
 * is untestable is left out of that claim, and the claim's warnings say so.
 */
import { InputError } from "../errors.js";
import type { Graph } from "../graph/Graph.js";
import type { Column, Table } from "../data/Table.js";
import { CATEGORICAL_TYPES } from "../data/Table.js";
import type { PatternMoments } from "../data/Moments.js";
import { partialCorrelationWithReason } from "../stats/partialCorrelation.js";
import { partialCorrelationTest } from "../stats/partialCorrelationTest.js";
import { gcmCorrelationInterval } from "../stats/generalisedCovariance.js";
import { testStrata } from "./methods/stratifiedChisq.js";
import { gcmTestFromSums, linearCheck, type GcmTestSums } from "./methods/gcm.js";
import type { CompactStratum } from "./methods/groupRows.js";
import { linearAdjustment } from "./methods/adjustmentDetails.js";
import type { MethodResult, TestContext } from "./TestMethod.js";
import type { AuditResult, Claim } from "./types.js";
import { runAuditWithTester, type AuditOptions } from "./runAudit.js";
import { lrOutcome } from "./methods/regressionLr.js";
import { gaussianLRFromMoments } from "../stats/gaussianLRFromMoments.js";
import { checkScoreClaimShape, poolScoreClaims, type ScoreClaimSummary } from "./siteRegressionScore.js";
import {
  SITE_SUMMARY_FORMAT, SITE_SUMMARY_VERSION, type ClaimSummary, type MomentsClaimSummary, type ResidualsClaimSummary, type SiteSummary, type TablesClaimSummary,
} from "./siteSummary.js";

/** A site summary with the file it was read from (for messages). */
export interface SiteSummaryFile {
  file: string;
  summary: SiteSummary;
}

function fail(file: string, what: string): never {
  throw new InputError(`${file}: ${what}`, { file });
}

// The shape checks run on every number of every summary (about 150,000 a 2 MB file), so they are plain loops.
function isNumberArray(v: unknown): v is number[] {
  if (!Array.isArray(v)) return false;
  for (let i = 0; i < v.length; i++) {
    const x: unknown = v[i];
    if (typeof x !== "number" || !Number.isFinite(x)) return false;
  }
  return true;
}
function isStringArray(v: unknown): v is string[] {
  if (!Array.isArray(v)) return false;
  for (let i = 0; i < v.length; i++) if (typeof v[i] !== "string") return false;
  return true;
}

/**
 * Read and check a site summary's JSON text: the format tag and version, and the shape of every
 * field (a wrong or truncated file is an input error naming the field and what to do).
 * Cost: O(size of the text).
 * @throws InputError naming the file and the field
 * @example parseSiteSummary(text, "site-a.json").site // "A"
 */
export function parseSiteSummary(text: string, file: string): SiteSummary {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    fail(file, `is not valid JSON (${(e as Error).message}); give the file that arrowaudit summarize wrote, unchanged`);
  }
  const o = doc as Record<string, unknown>;
  if (typeof o !== "object" || o === null || o.format !== SITE_SUMMARY_FORMAT) fail(file, `is not a site summary (no "format": "${SITE_SUMMARY_FORMAT}"); write one with arrowaudit summarize`);
  if (o.version !== SITE_SUMMARY_VERSION) {
    const why = o.version === 1 ? " (version 1 held the linear test's moments for claims with a continuous variable, which are now pooled by the flexible test from residual sums)" : "";
    fail(file, `is a site summary of version ${JSON.stringify(o.version)}, and this arrowaudit reads version ${SITE_SUMMARY_VERSION}${why}; summarize every site again with this version`);
  }
  const bad = (field: string, want: string): never => fail(file, `field "${field}" must be ${want}; summarize the site again rather than editing the file`);
  if (typeof o.graph_sha256 !== "string" || !/^[0-9a-f]{64}$/.test(o.graph_sha256)) bad("graph_sha256", "64 hexadecimal digits");
  if (typeof o.site !== "string" || o.site === "") bad("site", "a non-empty text");
  if (typeof o.n !== "number" || !Number.isInteger(o.n) || o.n < 0) bad("n", "a whole number");
  const st = o.settings as Record<string, unknown> | undefined;
  if (typeof st !== "object" || st === null) bad("settings", "an object");
  if (!["union-parents", "minimal", "all-minimal"].includes(st!.sets as string)) bad("settings.sets", "union-parents, minimal or all-minimal");
  if (!["auto", "linear", "chisq", "rank", "regression"].includes(st!.method as string)) bad("settings.method", "auto, linear, chisq, rank or regression");
  if (typeof st!.listwise !== "boolean") bad("settings.listwise", "true or false");
  if (typeof st!.min_cell !== "number" || !Number.isInteger(st!.min_cell)) bad("settings.min_cell", "a whole number");
  if (!isStringArray(st!.unmeasured)) bad("settings.unmeasured", "a list of names");
  if (!Array.isArray(o.variables) || !o.variables.every((v) => typeof v?.name === "string" && typeof v?.type === "string" && (v.levels === undefined || isStringArray(v.levels)))) bad("variables", "a list of { name, type, levels }");
  if (!Array.isArray(o.claims)) bad("claims", "a list");
  (o.claims as unknown[]).forEach((c, i) => checkClaim(c, i, bad));
  return o as unknown as SiteSummary;
}

function checkClaim(c: unknown, i: number, bad: (field: string, want: string) => never): void {
  const o = c as Record<string, unknown>;
  const f = `claims[${i}]`;
  if (typeof o !== "object" || o === null || typeof o.x !== "string" || typeof o.y !== "string" || !isStringArray(o.given)) bad(f, "a claim with x, y and given");
  if (o.kind === "untestable") {
    if (typeof o.reason !== "string") bad(`${f}.reason`, "a text");
  } else if (o.kind === "moments") {
    if (!isStringArray(o.columns) || o.columns.length < 2) bad(`${f}.columns`, "a list of at least two names");
    const d = (o.columns as string[]).length;
    if (typeof o.n !== "number" || !Number.isInteger(o.n) || o.n < 1) bad(`${f}.n`, "a whole number above 0");
    if (!isNumberArray(o.means) || o.means.length !== d) bad(`${f}.means`, `${d} finite numbers`);
    if (!Array.isArray(o.cross_products) || o.cross_products.length !== d || !o.cross_products.every((r) => isNumberArray(r) && r.length === d)) bad(`${f}.cross_products`, `a ${d} × ${d} matrix of finite numbers`);
  } else if (o.kind === "tables") {
    if (typeof o.n !== "number" || !Number.isInteger(o.n) || o.n < 0) bad(`${f}.n`, "a whole number");
    if (!Array.isArray(o.strata) || !o.strata.every((s) => isStringArray(s?.given) && Array.isArray(s?.counts) && s.counts.every((r: unknown) => isNumberArray(r) && r.every((v) => Number.isInteger(v) && v >= 0)))) bad(`${f}.strata`, "a list of { given, counts } with whole counts");
    const dr = o.dropped as Record<string, unknown> | undefined;
    if (typeof dr !== "object" || dr === null || typeof dr.strata !== "number" || typeof dr.rows !== "number") bad(`${f}.dropped`, "{ strata, rows }");
  } else if (o.kind === "residuals") {
    checkResidualsClaim(o, f, bad);
  } else if (o.kind === "score") {
    checkScoreClaimShape(o, f, bad);
  } else bad(`${f}.kind`, "moments, tables, residuals, score or untestable");
}

function isMatrix(v: unknown, d: number): boolean {
  if (!Array.isArray(v) || v.length !== d) return false;
  for (let i = 0; i < d; i++) {
    const r: unknown = v[i];
    if (!isNumberArray(r) || r.length !== d) return false;
  }
  return true;
}
const isCount = (v: unknown, least = 0): boolean => typeof v === "number" && Number.isInteger(v) && v >= least;

const FOURTH_ORDER_KEYS = ["uu", "vv", "uv", "uuvv", "uuuv", "uvvv", "uuuu", "vvvv"] as const;
const FLEXIBILITY_KEYS = ["level", "max_level", "level_x", "level_y", "parameters"] as const;

/** Whether two lists of names are equal, name by name. */
function sameNames(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Whether two summaries' claims are the same claim (x, y and the set, in order). */
const sameClaim = (a: ClaimSummary, b: ClaimSummary): boolean => a.x === b.x && a.y === b.y && sameNames(a.given, b.given);

/** The fields of a residuals claim (see `ResidualsClaimSummary`): shapes from its side columns. */
function checkResidualsClaim(o: Record<string, unknown>, f: string, bad: (field: string, want: string) => never): void {
  if (o.test !== "gcm" && o.test !== "gcm-rank") bad(`${f}.test`, '"gcm" or "gcm-rank"');
  if (!isCount(o.n, 1)) bad(`${f}.n`, "a whole number above 0");
  if (!isCount(o.params)) bad(`${f}.params`, "a whole number");
  const sides = o.sides as unknown[];
  if (!Array.isArray(sides) || sides.length !== 2 || !sides.every((s) => isStringArray(s) && s.length > 0)) bad(`${f}.sides`, "two non-empty lists of column names");
  const [qx, qy] = [(sides[0] as string[]).length, (sides[1] as string[]).length];
  if (!isMatrix(o.residual_cross_products, qx + qy)) bad(`${f}.residual_cross_products`, `a ${qx + qy} × ${qx + qy} matrix of finite numbers`);
  if (!isMatrix(o.product_variance, qx * qy)) bad(`${f}.product_variance`, `a ${qx * qy} × ${qx * qy} matrix of finite numbers`);
  const fo = o.fourth_order as Record<string, unknown> | undefined;
  if (fo !== undefined && (typeof fo !== "object" || fo === null || !FOURTH_ORDER_KEYS.every((k) => typeof fo[k] === "number" && Number.isFinite(fo[k])))) bad(`${f}.fourth_order`, `an object of the finite sums ${FOURTH_ORDER_KEYS.join(", ")}`);
  const lin = o.linear as Record<string, unknown> | undefined;
  if (typeof lin !== "object" || lin === null || !isCount(lin.params) || !isMatrix(lin.residual_cross_products, qx + qy)) bad(`${f}.linear`, `{ params, residual_cross_products: a ${qx + qy} × ${qx + qy} matrix }`);
  const fl = o.flexibility as Record<string, unknown> | undefined;
  if (typeof fl !== "object" || fl === null || !FLEXIBILITY_KEYS.every((k) => isCount(fl[k]))) bad(`${f}.flexibility`, "{ level, max_level, level_x, level_y, parameters } as whole numbers");
  if (!Array.isArray(o.adjustment) || !o.adjustment.every((a) => typeof a?.variable === "string" && typeof a?.entered === "string")) bad(`${f}.adjustment`, "a list of { variable, entered, columns }");
  if (!isCount(o.aliased)) bad(`${f}.aliased`, "a whole number");
}

/**
 * Check that the summaries can be pooled for this graph: each made from a graph file with the
 * given SHA-256, with equal settings, distinct site names, the same variables with the same types
 * and levels, and the same claims. Cost: O(sites · (m + claims)).
 * @throws InputError naming the file and the difference, and what to do
 */
export function checkSitesAgree(graphSha256: string, graphFile: string, sites: readonly SiteSummaryFile[]): void {
  const [first, ...rest] = sites;
  if (!first) throw new InputError("no site summary given; give one or more files written by arrowaudit summarize", {});
  const names = new Map<string, string>();
  for (const { file, summary } of sites) {
    if (summary.graph_sha256 !== graphSha256) {
      fail(file, `was made with a different graph (SHA-256 ${summary.graph_sha256.slice(0, 12)}…, while ${graphFile} has ${graphSha256.slice(0, 12)}…); summarize every site with the same graph file, byte for byte, as the one you test`);
    }
    const seen = names.get(summary.site);
    if (seen !== undefined) fail(file, `has the site name ${JSON.stringify(summary.site)}, as ${seen} has; give each site its own name with summarize --site, or do not give one site twice`);
    names.set(summary.site, file);
  }
  const settingsText = (s: SiteSummary) => JSON.stringify({ sets: s.settings.sets, method: s.settings.method, listwise: s.settings.listwise, min_cell: s.settings.min_cell, unmeasured: s.settings.unmeasured });
  const varsOf = (s: SiteSummary) => new Map(s.variables.map((v) => [v.name, v]));
  const firstVars = varsOf(first.summary);
  const firstClaims = first.summary.claims;
  for (const { file, summary } of rest) {
    if (settingsText(summary) !== settingsText(first.summary)) {
      const keys = ["sets", "method", "listwise", "min_cell", "unmeasured"] as const;
      const diff = keys.filter((k) => JSON.stringify(summary.settings[k]) !== JSON.stringify(first.summary.settings[k]));
      fail(file, `was made with different settings from ${first.file} (${diff.map((k) => `${k}: ${JSON.stringify(summary.settings[k])} against ${JSON.stringify(first.summary.settings[k])}`).join("; ")}); summarize every site with the same options`);
    }
    for (const v of summary.variables) {
      const w = firstVars.get(v.name);
      if (!w) fail(file, `has the variable ${JSON.stringify(v.name)}, which ${first.file} does not; summarize every site with the same graph and options`);
      if (w.type !== v.type) fail(file, `has "${v.name}" as ${v.type}, while ${first.file} has it as ${w.type}; declare its type at every site (summarize --types "${v.name}=${w.type}")`);
      if (JSON.stringify(w.levels ?? []) !== JSON.stringify(v.levels ?? [])) {
        fail(file, `has the levels ${JSON.stringify(v.levels ?? [])} of "${v.name}", while ${first.file} has ${JSON.stringify(w.levels ?? [])}; declare the same levels at every site (summarize --levels "${v.name}=${(w.levels ?? []).join("|")}"), so that a level means the same at every site`);
      }
    }
    if (summary.variables.length !== firstVars.size) fail(file, `has ${summary.variables.length} variables and ${first.file} has ${firstVars.size}; summarize every site with the same graph and options`);
    if (summary.claims.length !== firstClaims.length || !summary.claims.every((c, i) => sameClaim(c, firstClaims[i]!))) fail(file, `lists other claims than ${first.file}; summarize every site with the same graph and options`);
  }
}

/** The sites' summed cross-product matrix W (d × d) and complete cases of a moments claim, or why they cannot be added. Cost: O(sites · d²). */
function sumCrossProducts(parts: readonly MomentsClaimSummary[]): { d: number; w: Float64Array; n: number } | { reason: string } {
  const d = parts[0]!.columns.length;
  const names = parts[0]!.columns;
  if (parts.some((p) => !sameNames(p.columns, names))) return { reason: "the sites' summaries of this claim have different design columns; summarize every site with the same options, --types and --levels" };
  const w = new Float64Array(d * d);
  let n = 0;
  for (const p of parts) {
    n += p.n;
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) w[a * d + b] = w[a * d + b]! + p.cross_products[a]![b]!;
  }
  return { d, w, n };
}

/** The pooled partial-correlation test of a linear claim (see the module comment). Cost: O(sites · d² + d³). */
export function poolMoments(claim: Claim, parts: readonly MomentsClaimSummary[], table: Table, alpha: number): MethodResult {
  const summed = sumCrossProducts(parts);
  if ("reason" in summed) return { ok: false, reason: summed.reason };
  const { d, w, n } = summed;
  const m = parts.length;
  const given = Array.from({ length: d - 2 }, (_, i) => i + 2);
  const c = given.length + m - 1;
  const cases = `${n} complete cases at ${m} site${m === 1 ? "" : "s"}`;
  if (n - 2 - c < 1) return { ok: false, reason: `only ${cases} for ${given.length} conditioning columns and ${m - 1} site indicators; the test needs at least ${c + 3}` };
  const cov = w.map((v) => v / (n - m));
  const pc = partialCorrelationWithReason(cov, d, 0, 1, given);
  if (!("r" in pc)) {
    const col = `"${parts[0]!.columns[pc.column]}"`;
    if (pc.reason === "constant") return { ok: false, reason: `${col} is constant within every site among the ${cases}` };
    if (pc.reason === "collinear-given") return { ok: false, reason: `the conditioning set is collinear within sites: ${col} is a linear function of the others and the site among the ${cases}` };
    return { ok: false, reason: `${col} is a linear function of the conditioning set and the site among the ${cases}` };
  }
  const test = partialCorrelationTest(pc.r, n, c);
  if ("reason" in test) return { ok: false, reason: test.reason };
  return {
    ok: true,
    outcome: {
      test: "pearson-partial",
      n,
      statistic: test.t,
      df: test.df,
      p: test.p,
      log_p: test.log_p,
      effect: pc.r,
      ci: gcmCorrelationInterval(pc.r, test.t, test.df, n, c, 1 - alpha),
      p_method: "asymptotic",
      details: {
        r: pc.r,
        c,
        sites: m,
        adjustment: [...linearAdjustment(table, claim.given), { variable: "site", entered: "indicators", columns: m - 1 }],
        sides: [claim.x, claim.y].map((variable) => ({ variable, model: "least squares of the scores on the adjustment and the site, from the sites' cross-products" })),
      },
    },
  };
}

/**
 * The pooled generalised covariance measure of a flexible claim from the sites' residual sums
 * (see the module comment): the statistic of the stacked residual products of all sites, with its
 * p-value, effect and interval from `gcmTestFromSums`, as `gcm` computes them on one table.
 * Cost: O(sites · q⁴ + q⁶) for q side columns (q⁴ entries of the products' variance).
 */
export function poolResiduals(claim: Claim, parts: readonly ResidualsClaimSummary[], sites: readonly string[], table: Table, alpha: number): MethodResult {
  if (parts.some((p) => p.test !== parts[0]!.test)) return { ok: false, reason: "the sites' residuals of this claim come from different tests (gcm and gcm-rank); summarize every site with the same --method" };
  const [sx, sy] = parts[0]!.sides;
  const odd = parts.findIndex((p) => !sameNames(p.sides[0], sx) || !sameNames(p.sides[1], sy));
  if (odd >= 0) {
    return { ok: false, reason: `the sites' residuals of this claim are of different side columns (site ${JSON.stringify(sites[0])}: ${parts[0]!.sides.flat().join(", ")}; site ${JSON.stringify(sites[odd])}: ${parts[odd]!.sides.flat().join(", ")}): a level of a nominal side is absent, or the side is constant, among one site's complete cases, so their products are not the same; test the claim at the sites that share them, or leave the variable out` };
  }
  const [qx, qy] = [parts[0]!.sides[0].length, parts[0]!.sides[1].length];
  const q = qx + qy;
  const qq = qx * qy;
  const K = parts.length;
  let n = 0;
  let params = K - 1; // an intercept per site beyond the first
  let linParams = K - 1;
  const cross = new Float64Array(q * q);
  const linCross = new Float64Array(q * q);
  const scatter = new Float64Array(qq * qq);
  const keys = FOURTH_ORDER_KEYS;
  const fourth = parts.every((p) => p.fourth_order) ? Object.fromEntries(keys.map((k) => [k, 0])) as NonNullable<GcmTestSums["adf"]> : undefined;
  for (const p of parts) {
    n += p.n;
    params += p.params;
    linParams += p.linear.params;
    for (let a = 0; a < q; a++) {
      for (let b = 0; b < q; b++) {
        cross[a * q + b] = cross[a * q + b]! + p.residual_cross_products[a]![b]!;
        linCross[a * q + b] = linCross[a * q + b]! + p.linear.residual_cross_products[a]![b]!;
      }
    }
    for (let a = 0; a < qq; a++) for (let b = 0; b < qq; b++) scatter[a * qq + b] = scatter[a * qq + b]! + p.product_variance[a]![b]!;
    if (fourth) for (const k of keys) fourth[k] += p.fourth_order![k];
  }
  // Σ R is the x-by-y block of Σ e eᵀ; the products' covariance is centred at their pooled mean
  const sumR = new Float64Array(qq);
  for (let a = 0; a < qx; a++) for (let b = 0; b < qy; b++) sumR[a * qy + b] = cross[a * q + qx + b]!;
  const meanR = sumR.map((v) => v / n);
  const sigma = new Float64Array(qq * qq);
  for (let a = 0; a < qq; a++) for (let b = 0; b < qq; b++) sigma[a * qq + b] = (scatter[a * qq + b]! - n * meanR[a]! * meanR[b]!) / n;
  const res = gcmTestFromSums({ n, params, qx, qy, residual: cross.map((v) => v / (n - 1)), sumR, sigma, m: n, ...(fourth ? { adf: fourth } : {}) }, alpha);
  if ("reason" in res) return { ok: false, reason: res.reason };
  const { test, effect, ci, r, interval } = res;
  const linear = linearCheck(linCross.map((v) => v / (n - 1)), qx, qy, n, linParams);
  const perSite = parts.map((p, i) => ({ site: sites[i]!, ...p.flexibility }));
  const sideModel = (name: string) => {
    const c = table.column(name)!;
    const what = c.type === "nominal" ? "level indicators" : parts[0]!.test === "gcm-rank" ? "mid-ranks (among the site's values)" : c.type === "binary" ? "0/1 outcome (linear probability)" : "scores";
    return `least squares of the ${what} on the adjustment, fitted at each site on its own rows`;
  };
  const members = claim.given.map((g) => {
    const entries = parts.map((p) => p.adjustment.find((a) => a.variable === g));
    const kinds = new Set(entries.map((e) => e?.entered));
    const entered = kinds.has("spline") ? "spline" : kinds.has("linear") ? "linear" : CATEGORICAL_TYPES.has(table.column(g)!.type) ? "indicators" : "linear";
    return { variable: g, entered, columns: entries.reduce((a, e) => a + (e?.columns ?? 0), 0) };
  });
  const warnings = [`adjustment for the set fitted at each site on its own rows (its own basis, knots and flexibility level: the set interacted with site)`];
  const aliased = parts.map((p, i) => ({ site: sites[i]!, k: p.aliased })).filter((a) => a.k > 0);
  if (aliased.length > 0) warnings.push(`adjustment columns of ${claim.given.map((g) => `"${g}"`).join(", ")} aliased with others (or constant among the complete rows) and dropped at ${aliased.map((a) => `${a.site}: ${a.k}`).join(", ")}`);
  if (test.components < qq) warnings.push(`${qq - test.components} of ${qq} residual products are redundant with the others and were left out`);
  return {
    ok: true,
    outcome: {
      test: parts[0]!.test,
      n,
      statistic: test.statistic,
      df: test.df,
      p: test.p,
      log_p: test.log_p,
      effect,
      ci,
      p_method: "asymptotic",
      details: {
        ...(r !== undefined ? { r } : {}),
        ...(interval ? { interval_variance: interval } : {}),
        sites: K,
        site_adjustment: "site-specific: each site fitted the flexible adjustment for the set to its own complete cases (the set interacted with site)",
        adjustment: [...members, { variable: "site", entered: "strata" }],
        flexibility: { parameters: params, sites: perSite },
        sides: [claim.x, claim.y].map((variable) => ({ variable, model: sideModel(variable) })),
        ...(test.f !== undefined ? { f: test.f, df_f: [test.df, test.df2] } : {}),
        components: test.components,
        variance_rows: n,
        ...(linear ? { linear_adjustment: linear } : {}),
        path: "site sums",
      },
      warnings,
    },
  };
}

/**
 * The pooled test of a moments claim under `--method regression`: the Gaussian likelihood-ratio
 * test of the linear model of the scored side (the response: the continuous side, y first, else
 * an ordinal side, as `regression-lr` chooses it) on the set and the site, with and without the
 * other side (its score, or a nominal side's level indicators), LR = n·ln(RSS₀/RSS₁) from the
 * summed within-site cross-products (`gaussianLRFromMoments`), as `regression-lr` tests it on the
 * stacked rows with site in the set (Wilks 1938, Annals of Mathematical Statistics 9:60–62).
 * Cost: O(sites · d² + d³).
 */
export function poolGaussianLR(claim: Claim, parts: readonly MomentsClaimSummary[], table: Table, alpha: number): MethodResult {
  const summed = sumCrossProducts(parts);
  if ("reason" in summed) return { ok: false, reason: summed.reason };
  const { d, w, n } = summed;
  const m = parts.length;
  const xCol = table.column(claim.x)!;
  const yCol = table.column(claim.y)!;
  const width = (c: Column) => (c.type === "nominal" ? Math.max(0, (c.levels?.length ?? 1) - 1) : 1);
  const xIdx = Array.from({ length: width(xCol) }, (_, i) => i);
  const yIdx = Array.from({ length: width(yCol) }, (_, i) => xIdx.length + i);
  const givenIdx = Array.from({ length: d - xIdx.length - yIdx.length }, (_, i) => xIdx.length + yIdx.length + i);
  const resp = [yCol, xCol].find((c) => c.type === "continuous") ?? [yCol, xCol].find((c) => c.type === "ordinal");
  if (!resp) return { ok: false, reason: `neither "${claim.x}" nor "${claim.y}" is continuous or ordinal, so no linear model of either side pools from moments` };
  const added = resp === yCol ? xCol : yCol;
  const respIdx = (resp === yCol ? yIdx : xIdx)[0]!;
  const addedIdx = resp === yCol ? xIdx : yIdx;
  const cov = w.map((v) => v / Math.max(1, n - m));
  if (!(w[respIdx * d + respIdx]! > 0)) return { ok: false, reason: `"${resp.name}" is constant within every site among the ${n} complete rows; the claim cannot be tested` };
  if (addedIdx.every((i) => !(w[i * d + i]! > 0))) return { ok: false, reason: `"${added.name}" is constant within every site among the ${n} complete rows; the claim cannot be tested` };
  const fit = gaussianLRFromMoments(cov, d, n, respIdx, givenIdx, addedIdx);
  if (!fit) return { ok: false, reason: `the linear model of "${resp.name}" fits exactly among the ${n} complete rows; the claim cannot be tested` };
  if (fit.df === 0) return { ok: false, reason: `"${added.name}" is determined by ${claim.given.length ? claim.given.map((g) => `"${g}"`).join(", ") + " and " : ""}the site among the complete rows (aliased); the claim cannot be tested` };
  const warnings: string[] = [];
  const droppedBase = givenIdx.length - fit.givenKept;
  if (droppedBase > 0) warnings.push(`${droppedBase} column${droppedBase > 1 ? "s" : ""} of the given set aliased with others (or empty levels) and dropped`);
  const p = 1 + fit.givenKept + (m - 1) + fit.df;
  if (n <= p + 1) return { ok: false, reason: `${n} complete rows are too few for the ${p} parameters of the full model (with ${m - 1} site indicators)` };
  const details: Record<string, unknown> = {
    model: "linear",
    response: resp.name,
    ...(resp.type === "ordinal" ? { response_scored: true } : {}),
    added: added.name,
    parameters_null: 1 + fit.givenKept + (m - 1),
    parameters_full: p,
    fitted_from: "site summaries",
    sites: m,
    adjustment: [...linearAdjustment(table, claim.given), { variable: "site", entered: "indicators", columns: m - 1 }],
    sides: [
      { variable: resp.name, model: `linear regression of the ${resp.type === "ordinal" ? "scores" : "values"} on the other side, the adjustment and the site (least squares from the sites' cross-products)` },
      { variable: added.name, model: added.type === "nominal" ? "indicators of its levels, added to the model" : "its score, added to the model" },
    ],
  };
  return { ok: true, outcome: lrOutcome(fit.lr, fit.df, n, fit.sign, details, warnings, alpha) };
}

/** The stratified chi-square test of a categorical claim on every site's strata. Cost: O(Σ cells) plus permutations. */
export function poolTables(claim: Claim, parts: readonly TablesClaimSummary[], ctx: TestContext): MethodResult {
  const strata: CompactStratum[] = [];
  const full: Float64Array[] = [];
  let n = 0;
  const lx = parts[0]!.strata[0]?.counts.length ?? 0;
  const ly = parts[0]!.strata[0]?.counts[0]?.length ?? 0;
  const twoByTwo = lx === 2 && ly === 2;
  if (parts.some((p) => p.strata.some((s) => s.counts.length !== lx || s.counts.some((row) => row.length !== ly)))) {
    return { ok: false, reason: "the sites' tables of this claim have different sizes; summarize every site with the same options, --types and --levels" };
  }
  for (const p of parts) {
    for (const s of p.strata) {
      const xs = s.counts.map((row, i) => (row.some((v) => v > 0) ? i : -1)).filter((i) => i >= 0);
      const ys = s.counts[0]!.map((_, j) => (s.counts.some((row) => row[j]! > 0) ? j : -1)).filter((j) => j >= 0);
      const counts = new Float64Array(xs.length * ys.length);
      xs.forEach((i, a) => ys.forEach((j, b) => (counts[a * ys.length + b] = s.counts[i]![j]!)));
      for (const v of counts) n += v;
      strata.push({ rows: xs.length, cols: ys.length, counts, xCodes: Int32Array.from(xs), yCodes: Int32Array.from(ys) });
      if (twoByTwo) full.push(Float64Array.from(s.counts.flat()));
    }
  }
  if (n === 0) return { ok: false, reason: `no site has a stratum of "${claim.x}" and "${claim.y}" to pool` };
  const r = testStrata(claim, n, strata, twoByTwo ? full : undefined, ctx);
  if (r.ok) r.outcome.details = { ...r.outcome.details, sites: parts.length, adjustment: [...((r.outcome.details?.adjustment as unknown[]) ?? []), { variable: "site", entered: "strata" }] };
  return r;
}

/**
 * Pool the site summaries into one audit of `graph` (see the module comment). The summaries must
 * agree ({@link checkSitesAgree}); `settings.sets` and the method are taken from them.
 * Cost: per claim O(sites · d² + d³) or O(Σ cells), then the audit's O(k log k).
 * @throws as {@link checkSitesAgree}, with `graphSha256` the SHA-256 of the graph file's bytes
 * @example poolSiteSummaries(graph, sha, "g.txt", [{ file: "a.json", summary: a }, { file: "b.json", summary: b }]).data.source.sites
 */
export function poolSiteSummaries(graph: Graph, graphSha256: string, graphFile: string, sites: readonly SiteSummaryFile[], options: AuditOptions = {}): AuditResult {
  checkSitesAgree(graphSha256, graphFile, sites);
  const first = sites[0]!.summary;
  const total = sites.reduce((a, s) => a + s.summary.n, 0);
  const columns: Column[] = first.variables.map((v) => ({
    name: v.name,
    type: v.type,
    typeSource: "inferred",
    values: new Float64Array(0),
    missing: 0,
    ...(v.levels ? { levels: v.levels } : {}),
  }));
  const byName = new Map(columns.map((c) => [c.name, c]));
  const table: Table = { file: sites.map((s) => s.file).join(", "), rows: total, columns, warnings: [], column: (name) => byName.get(name) };
  const used = sites.reduce((a, s) => a + s.summary.n - s.summary.suppressed.rows, 0);
  const moments: PatternMoments = {
    patterns: 1,
    completeRows: used,
    patternList: () => [{ observed: first.variables.map((v) => v.name), rows: used }],
    momentsFor: () => {
      throw new Error("internal: pooled site summaries hold no pattern moments");
    },
    columnsOf: () => [],
    momentsForColumns: () => {
      throw new Error("internal: pooled site summaries hold no pattern moments");
    },
  };
  // every site lists the same claims in the same order (checkSitesAgree), so one index serves them all
  const claimIndex = new Map(first.claims.map((c, i) => [JSON.stringify([c.x, c.y, c.given]), i]));
  const test = (claim: Claim, ctx: TestContext): MethodResult => {
    const at = claimIndex.get(JSON.stringify([claim.x, claim.y, claim.given]));
    const parts = sites.map((s) => (at === undefined ? undefined : s.summary.claims[at]));
    if (parts.some((p) => p === undefined)) return { ok: false, reason: "the site summaries do not list this claim; summarize every site with the same graph and options" };
    const left = sites.map((s, i) => ({ site: s.summary.site, part: parts[i]! })).filter((p) => p.part.kind === "untestable");
    const keptSites = sites.filter((_, i) => parts[i]!.kind !== "untestable").map((s) => s.summary.site);
    const kept = parts.filter((p): p is MomentsClaimSummary | TablesClaimSummary | ResidualsClaimSummary | ScoreClaimSummary => p!.kind !== "untestable");
    const reasons = left.map((l) => (l.part as { reason: string }).reason);
    const leftText = left.map((l, i) => `site ${JSON.stringify(l.site)}: ${reasons[i]}`).join("; ");
    if (kept.length === 0) return { ok: false, reason: new Set(reasons).size === 1 ? `untestable at every site: ${reasons[0]}` : `untestable at every site (${leftText})` };
    if (kept.some((p) => p.kind !== kept[0]!.kind)) return { ok: false, reason: `the sites' summaries of this claim are of different kinds (${[...new Set(kept.map((p) => p.kind))].join(" and ")}); summarize every site with the same options, --types and --levels` };
    const kind = kept[0]!.kind;
    const alpha = ctx.alpha ?? 0.05;
    const r =
      kind === "moments"
        ? first.settings.method === "regression"
          ? poolGaussianLR(claim, kept as MomentsClaimSummary[], table, alpha)
          : poolMoments(claim, kept as MomentsClaimSummary[], table, alpha)
        : kind === "residuals"
        ? poolResiduals(claim, kept as ResidualsClaimSummary[], keptSites, table, alpha)
        : kind === "score"
        ? poolScoreClaims(kept as ScoreClaimSummary[], claim, { table, alpha }, keptSites)
        : poolTables(claim, kept as TablesClaimSummary[], ctx);
    if (!r.ok) return r;
    const warnings = [...(r.outcome.warnings ?? [])];
    if (left.length > 0) warnings.push(`${left.length} of ${sites.length} sites left out of this claim (${leftText})`);
    const dropped = kept.filter((p): p is TablesClaimSummary => p.kind === "tables").reduce((a, p) => ({ strata: a.strata + p.dropped.strata, rows: a.rows + p.dropped.rows }), { strata: 0, rows: 0 });
    if (dropped.strata > 0) warnings.push(`${dropped.strata} strata (${dropped.rows} rows) were dropped at the sites for a cell below --min-cell ${first.settings.min_cell}`);
    return { ok: true, outcome: { ...r.outcome, ...(warnings.length ? { warnings } : {}) } };
  };
  const settings = { ...options.settings, sets: first.settings.sets, method: first.settings.method, listwise: first.settings.listwise };
  const source = { kind: "sites" as const, n: total, sites: sites.map((s) => ({ site: s.summary.site, file: s.file, n: s.summary.n })) };
  const result = runAuditWithTester(graph, { table, moments, source, test }, { ...options, settings });
  const flexible = result.claims.filter((c) => c.test === "gcm" && c.details?.sites !== undefined).length;
  if (flexible > 0) {
    result.warnings.push(`${flexible} claim${flexible > 1 ? "s" : ""} with a continuous variable got the flexible test (gcm) pooled from the sites' residual sums, with the adjustment for the set fitted at each site on its own rows (the set interacted with site)`);
  }
  const ranked = result.claims.filter((c) => c.test === "gcm-rank" && c.details?.sites !== undefined).length;
  if (ranked > 0) {
    result.warnings.push(`${ranked} claim${ranked > 1 ? "s" : ""} got the rank test (gcm-rank) pooled from the sites' residual sums: mid-ranks among each site's own values, the adjustment for the set fitted at each site on its own rows (the set interacted with site)`);
  }
  const suppressed = sites.filter((s) => s.summary.suppressed.rows > 0);
  if (suppressed.length > 0) {
    result.warnings.push(`rows in missing-data patterns of fewer than --min-cell ${first.settings.min_cell} rows were left out at ${suppressed.length} site${suppressed.length > 1 ? "s" : ""} (${suppressed.map((s) => `${s.summary.site}: ${s.summary.suppressed.rows}`).join(", ")})`);
  }
  return result;
}

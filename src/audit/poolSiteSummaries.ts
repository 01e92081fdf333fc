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
import { runAuditWithTester, type AuditOptions, type ClaimTesterInput } from "./runAudit.js";
import { lrOutcome } from "./methods/regressionLr.js";
import { gaussianLRFromMoments } from "../stats/gaussianLRFromMoments.js";
import { poolScoreClaims, type ScoreClaimSummary } from "./siteRegressionScore.js";
import type { MomentsClaimSummary, ResidualsClaimSummary, TablesClaimSummary } from "./siteSummary.js";
import { FOURTH_ORDER_KEYS, type SiteSummaryFile } from "./readSiteSummary.js";
import { claimPoolOf, poolSites, siteInfo, type MomentsPool, type ResidualsPool, type SiteInfo, type SitePool } from "./sitePool.js";

export { parseSiteSummary, type SiteSummaryFile } from "./readSiteSummary.js";

function fail(file: string, what: string): never {
  throw new InputError(`${file}: ${what}`, { file });
}

/**
 * Check that the summaries can be pooled for this graph: each made from a graph file with the
 * given SHA-256, with equal settings, distinct site names, the same variables with the same types
 * and levels, and the same claims. Cost: O(sites · (m + claims)).
 * @throws InputError naming the file and the difference, and what to do
 */
export function checkSitesAgree(graphSha256: string, graphFile: string, sites: readonly SiteSummaryFile[]): void {
  const claims = sites[0]?.summary.claims ?? [];
  checkPoolAgrees(graphSha256, graphFile, sites.map((s) => siteInfo(s, claims)));
}

/**
 * {@link checkSitesAgree} on the sites' headings in a pool (`sitePool.ts`), whose `sameClaims`
 * says whether each lists the first site's claims. Cost: O(sites · m).
 * @throws as {@link checkSitesAgree}
 */
export function checkPoolAgrees(graphSha256: string, graphFile: string, sites: readonly SiteInfo[]): void {
  const [first, ...rest] = sites;
  if (!first) throw new InputError("no site summary given; give one or more files written by arrowaudit summarize", {});
  const names = new Map<string, string>();
  for (const summary of sites) {
    const file = summary.file;
    if (summary.graph_sha256 !== graphSha256) {
      fail(file, `was made with a different graph (SHA-256 ${summary.graph_sha256.slice(0, 12)}…, while ${graphFile} has ${graphSha256.slice(0, 12)}…); summarize every site with the same graph file, byte for byte, as the one you test`);
    }
    const seen = names.get(summary.site);
    if (seen !== undefined) fail(file, `has the site name ${JSON.stringify(summary.site)}, as ${seen} has; give each site its own name with summarize --site, or do not give one site twice`);
    names.set(summary.site, file);
  }
  const settingsText = (s: SiteInfo) => JSON.stringify({ sets: s.settings.sets, method: s.settings.method, listwise: s.settings.listwise, min_cell: s.settings.min_cell, unmeasured: s.settings.unmeasured });
  const varsOf = (s: SiteInfo) => new Map(s.variables.map((v) => [v.name, v]));
  const firstVars = varsOf(first);
  for (const summary of rest) {
    const file = summary.file;
    if (settingsText(summary) !== settingsText(first)) {
      const keys = ["sets", "method", "listwise", "min_cell", "unmeasured"] as const;
      const diff = keys.filter((k) => JSON.stringify(summary.settings[k]) !== JSON.stringify(first.settings[k]));
      fail(file, `was made with different settings from ${first.file} (${diff.map((k) => `${k}: ${JSON.stringify(summary.settings[k])} against ${JSON.stringify(first.settings[k])}`).join("; ")}); summarize every site with the same options`);
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
    if (!summary.sameClaims) fail(file, `lists other claims than ${first.file}; summarize every site with the same graph and options`);
  }
}

/** A moments claim's summed cross-product matrix W (d × d) and complete cases, or why the sites' parts cannot be added. */
function summedCrossProducts(pool: MomentsPool): { d: number; w: Float64Array; n: number } | { reason: string } {
  if (pool.differ) return { reason: "the sites' summaries of this claim have different design columns; summarize every site with the same options, --types and --levels" };
  return { d: pool.columns.length, w: pool.w, n: pool.n };
}

/** The pooled partial-correlation test of a linear claim (see the module comment). Cost: O(sites · d² + d³). */
export function poolMoments(claim: Claim, parts: readonly MomentsClaimSummary[], table: Table, alpha: number): MethodResult {
  return momentsOutcome(claim, claimPoolOf(parts).moments!, parts.length, table, alpha);
}

/** {@link poolMoments} from the summed cross-products of `m` sites. */
function momentsOutcome(claim: Claim, pool: MomentsPool, m: number, table: Table, alpha: number): MethodResult {
  const summed = summedCrossProducts(pool);
  if ("reason" in summed) return { ok: false, reason: summed.reason };
  const { d, w, n } = summed;
  const given = Array.from({ length: d - 2 }, (_, i) => i + 2);
  const c = given.length + m - 1;
  const cases = `${n} complete cases at ${m} site${m === 1 ? "" : "s"}`;
  if (n - 2 - c < 1) return { ok: false, reason: `only ${cases} for ${given.length} conditioning columns and ${m - 1} site indicators; the test needs at least ${c + 3}` };
  const cov = w.map((v) => v / (n - m));
  const pc = partialCorrelationWithReason(cov, d, 0, 1, given);
  if (!("r" in pc)) {
    const col = `"${pool.columns[pc.column]}"`;
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
  return residualsOutcome(claim, claimPoolOf(parts).residuals!, parts.length, sites, table, alpha);
}

/** {@link poolResiduals} from the summed residual sums of `K` sites; `sites` names the pool's sites by index. */
function residualsOutcome(claim: Claim, pool: ResidualsPool, K: number, sites: readonly string[], table: Table, alpha: number): MethodResult {
  if (pool.testDiffers) return { ok: false, reason: "the sites' residuals of this claim come from different tests (gcm and gcm-rank); summarize every site with the same --method" };
  if (pool.odd >= 0) {
    return { ok: false, reason: `the sites' residuals of this claim are of different side columns (site ${JSON.stringify(sites[pool.first])}: ${pool.sides.flat().join(", ")}; site ${JSON.stringify(sites[pool.odd])}: ${pool.oddSides!.flat().join(", ")}): a level of a nominal side is absent, or the side is constant, among one site's complete cases, so their products are not the same; test the claim at the sites that share them, or leave the variable out` };
  }
  const [qx, qy] = [pool.sides[0].length, pool.sides[1].length];
  const q = qx + qy;
  const qq = qx * qy;
  const { n, cross, linCross, scatter } = pool;
  const params = K - 1 + pool.params; // an intercept per site beyond the first
  const linParams = K - 1 + pool.linParams;
  const fourth = pool.fourth ? Object.fromEntries(FOURTH_ORDER_KEYS.map((k, i) => [k, pool.fourth![i]!])) as NonNullable<GcmTestSums["adf"]> : undefined;
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
  const perSite = pool.flexibility.map((f) => ({ site: sites[f.site]!, ...f.flexibility }));
  const sideModel = (name: string) => {
    const c = table.column(name)!;
    const what = c.type === "nominal" ? "level indicators" : pool.test === "gcm-rank" ? "mid-ranks (among the site's values)" : c.type === "binary" ? "0/1 outcome (linear probability)" : "scores";
    return `least squares of the ${what} on the adjustment, fitted at each site on its own rows`;
  };
  const members = pool.members.map((m) => {
    const entered = m.spline ? "spline" : m.linear ? "linear" : CATEGORICAL_TYPES.has(table.column(m.variable)!.type) ? "indicators" : "linear";
    return { variable: m.variable, entered, columns: m.columns };
  });
  const warnings = [`adjustment for the set fitted at each site on its own rows (its own basis, knots and flexibility level: the set interacted with site)`];
  const aliased = pool.aliased.map((a) => ({ site: sites[a.site]!, k: a.k }));
  if (aliased.length > 0) warnings.push(`adjustment columns of ${claim.given.map((g) => `"${g}"`).join(", ")} aliased with others (or constant among the complete rows) and dropped at ${aliased.map((a) => `${a.site}: ${a.k}`).join(", ")}`);
  if (test.components < qq) warnings.push(`${qq - test.components} of ${qq} residual products are redundant with the others and were left out`);
  return {
    ok: true,
    outcome: {
      test: pool.test,
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
  return gaussianLROutcome(claim, claimPoolOf(parts).moments!, parts.length, table, alpha);
}

/** {@link poolGaussianLR} from the summed cross-products of `m` sites. */
function gaussianLROutcome(claim: Claim, pool: MomentsPool, m: number, table: Table, alpha: number): MethodResult {
  const summed = summedCrossProducts(pool);
  if ("reason" in summed) return { ok: false, reason: summed.reason };
  const { d, w, n } = summed;
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
  // plain loops: a pooled run builds thousands of strata
  for (const p of parts) {
    for (const s of p.strata) {
      const c = s.counts;
      const xs: number[] = [];
      const ys: number[] = [];
      for (let i = 0; i < lx; i++) {
        const row = c[i]!;
        for (let j = 0; j < ly; j++) {
          if (row[j]! > 0) {
            xs.push(i);
            break;
          }
        }
      }
      for (let j = 0; j < ly; j++) {
        for (let i = 0; i < lx; i++) {
          if (c[i]![j]! > 0) {
            ys.push(j);
            break;
          }
        }
      }
      const counts = new Float64Array(xs.length * ys.length);
      for (let a = 0; a < xs.length; a++) {
        const row = c[xs[a]!]!;
        for (let b = 0; b < ys.length; b++) {
          const v = row[ys[b]!]!;
          counts[a * ys.length + b] = v;
          n += v;
        }
      }
      strata.push({ rows: xs.length, cols: ys.length, counts, xCodes: Int32Array.from(xs), yCodes: Int32Array.from(ys) });
      if (twoByTwo) full.push(Float64Array.of(c[0]![0]!, c[0]![1]!, c[1]![0]!, c[1]![1]!));
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
  return poolSitePool(graph, graphSha256, graphFile, poolSites(sites), options);
}

/**
 * {@link poolSiteSummaries} on summaries already reduced to a site pool (`sitePool.ts`, which the
 * command builds as it reads the files, letting each parsed file go before the next).
 * @throws as {@link checkSitesAgree}
 */
export function poolSitePool(graph: Graph, graphSha256: string, graphFile: string, pool: SitePool, options: AuditOptions = {}): AuditResult {
  checkPoolAgrees(graphSha256, graphFile, pool.sites);
  return withPooledWarnings(runAuditWithTester(graph, pooledTesterInput(pool), pooledOptions(pool, options)), pool);
}

/** The audit options of a pooled run: the sets, method and listwise choice are the summaries'. */
function pooledOptions(pool: SitePool, options: AuditOptions): AuditOptions {
  const first = pool.sites[0]!;
  return { ...options, settings: { ...options.settings, sets: first.settings.sets, method: first.settings.method, listwise: first.settings.listwise } };
}

/**
 * What the audit of a site pool tests claims with (`runAuditWithTester`): a table of the sites'
 * variables (no rows), moments for the record, the source, and the pooled test of each claim from
 * its claim pool. The pool's sites must agree ({@link checkPoolAgrees}). Cost: O(claims).
 */
function pooledTesterInput(pool: SitePool): ClaimTesterInput {
  const sites = pool.sites;
  const first = sites[0]!;
  const names = sites.map((s) => s.site);
  const total = sites.reduce((a, s) => a + s.n, 0);
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
  const used = sites.reduce((a, s) => a + s.n - s.suppressed.rows, 0);
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
  // every site lists the same claims in the same order (checkPoolAgrees), so one index serves them all
  const claimIndex = new Map(pool.claims.map((c, i) => [JSON.stringify([c.x, c.y, c.given]), i]));
  const test = (claim: Claim, ctx: TestContext): MethodResult => {
    const at = claimIndex.get(JSON.stringify([claim.x, claim.y, claim.given]));
    if (at === undefined) return { ok: false, reason: "the site summaries do not list this claim; summarize every site with the same graph and options" };
    const cp = pool.pools[at]!;
    const reasons = cp.untestable.map((u) => u.reason);
    const leftText = cp.untestable.map((u) => `site ${JSON.stringify(names[u.site])}: ${u.reason}`).join("; ");
    if (cp.kept.length === 0) return { ok: false, reason: new Set(reasons).size === 1 ? `untestable at every site: ${reasons[0]}` : `untestable at every site (${leftText})` };
    if (cp.kinds.length > 1) return { ok: false, reason: `the sites' summaries of this claim are of different kinds (${cp.kinds.join(" and ")}); summarize every site with the same options, --types and --levels` };
    const kind = cp.kinds[0]!;
    const K = cp.kept.length;
    const alpha = ctx.alpha ?? 0.05;
    const r =
      kind === "moments"
        ? first.settings.method === "regression"
          ? gaussianLROutcome(claim, cp.moments!, K, table, alpha)
          : momentsOutcome(claim, cp.moments!, K, table, alpha)
        : kind === "residuals"
        ? residualsOutcome(claim, cp.residuals!, K, names, table, alpha)
        : kind === "score"
        ? poolScoreClaims(cp.parts as ScoreClaimSummary[], claim, { table, alpha }, cp.kept.map((i) => names[i]!))
        : poolTables(claim, cp.parts as TablesClaimSummary[], ctx);
    if (!r.ok) return r;
    const warnings = [...(r.outcome.warnings ?? [])];
    if (cp.untestable.length > 0) warnings.push(`${cp.untestable.length} of ${sites.length} sites left out of this claim (${leftText})`);
    const dropped = kind === "tables" ? (cp.parts as TablesClaimSummary[]).reduce((a, p) => ({ strata: a.strata + p.dropped.strata, rows: a.rows + p.dropped.rows }), { strata: 0, rows: 0 }) : { strata: 0, rows: 0 };
    if (dropped.strata > 0) warnings.push(`${dropped.strata} strata (${dropped.rows} rows) were dropped at the sites for a cell below --min-cell ${first.settings.min_cell}`);
    return { ok: true, outcome: { ...r.outcome, ...(warnings.length ? { warnings } : {}) } };
  };
  const source = { kind: "sites" as const, n: total, sites: sites.map((s) => ({ site: s.site, file: s.file, n: s.n })) };
  return { table, moments, source, test };
}

/** The pooled run's warnings: the tests the claims got, and the rows left out at the sites. */
function withPooledWarnings(result: AuditResult, pool: SitePool): AuditResult {
  const sites = pool.sites;
  const first = sites[0]!;
  const flexible = result.claims.filter((c) => c.test === "gcm" && c.details?.sites !== undefined).length;
  if (flexible > 0) {
    result.warnings.push(`${flexible} claim${flexible > 1 ? "s" : ""} with a continuous variable got the flexible test (gcm) pooled from the sites' residual sums, with the adjustment for the set fitted at each site on its own rows (the set interacted with site)`);
  }
  const ranked = result.claims.filter((c) => c.test === "gcm-rank" && c.details?.sites !== undefined).length;
  if (ranked > 0) {
    result.warnings.push(`${ranked} claim${ranked > 1 ? "s" : ""} got the rank test (gcm-rank) pooled from the sites' residual sums: mid-ranks among each site's own values, the adjustment for the set fitted at each site on its own rows (the set interacted with site)`);
  }
  const suppressed = sites.filter((s) => s.suppressed.rows > 0);
  if (suppressed.length > 0) {
    result.warnings.push(`rows in missing-data patterns of fewer than --min-cell ${first.settings.min_cell} rows were left out at ${suppressed.length} site${suppressed.length > 1 ? "s" : ""} (${suppressed.map((s) => `${s.site}: ${s.suppressed.rows}`).join(", ")})`);
  }
  return result;
}

/**
 * Site summaries reduced claim by claim to what their pooled tests need (`poolSiteSummaries.ts`),
 * as each summary is read, so that the parsed file can be let go at once.
 *
 * Terms. A *site pool* holds, for sites in order: each site's heading (file, name, n, suppressed
 * rows, graph hash, settings, variables, and whether it lists the same claims as the first site),
 * and per claim a *claim pool*: the sites where the claim is untestable (with their reasons), the
 * sites that kept it, the kinds they wrote, and the kind's sums. The sums are those the pooled
 * tests add over sites: n and the within-site cross-products of a moments claim; n, the parameter
 * counts, Σ e eᵀ, the products' variance sums, the fourth-order sums and the linear fit's Σ e eᵀ
 * of a residuals claim, with each site's flexibility, aliased columns and how it entered each
 * member of the set; tables and score claims keep the sites' parts as they are (a few numbers
 * each). The sites are added in the order given, as the pooled tests added them when they read
 * every site's parts at once.
 */
import { FOURTH_ORDER_KEYS, type SiteSummaryFile } from "./readSiteSummary.js";
import type { ClaimSummary, MomentsClaimSummary, ResidualsClaimSummary, SiteSummarySettings, SiteVariable, TablesClaimSummary } from "./siteSummary.js";
import type { ScoreClaimSummary } from "./siteRegressionScore.js";

/** A site's heading in a pool: what the agreement checks and the report need, without its claims. */
export interface SiteInfo {
  file: string;
  site: string;
  n: number;
  suppressed: { rows: number; patterns: number };
  graph_sha256: string;
  settings: SiteSummarySettings;
  variables: SiteVariable[];
  /** Whether the site lists the same claims (x, y and the set, in order) as the first site of the pool. */
  sameClaims: boolean;
}

/** A kind of claim that is pooled (not "untestable"). */
export type PooledKind = "moments" | "tables" | "residuals" | "score";

/** The summed cross-products of a moments claim's sites. */
export interface MomentsPool {
  /** The design columns of the first site. */
  columns: string[];
  /** Whether a site had other design columns (its numbers were not added). */
  differ: boolean;
  n: number;
  /** Σ of the sites' d × d within-site cross-products, row-major. */
  w: Float64Array;
}

/** The summed residual sums of a residuals claim's sites (see `ResidualsClaimSummary`). */
export interface ResidualsPool {
  test: "gcm" | "gcm-rank";
  /** Whether a site's residuals come from the other test (nothing more was added once seen). */
  testDiffers: boolean;
  /** Site (index in the pool) of the first part, and its side columns. */
  first: number;
  sides: [string[], string[]];
  /** Site of the first part with other side columns (not added), or -1; and those columns. */
  odd: number;
  oddSides?: [string[], string[]];
  n: number;
  /** Σ of the sites' adjustment parameters, and of their linear fits'. */
  params: number;
  linParams: number;
  /** Σ e eᵀ (q × q), Σ of the linear fits' e eᵀ, Σ of the products' variances (qx·qy squared), row-major. */
  cross: Float64Array;
  linCross: Float64Array;
  scatter: Float64Array;
  /** The fourth-order sums in {@link FOURTH_ORDER_KEYS} order; absent when a site did not write them. */
  fourth?: Float64Array;
  flexibility: { site: number; flexibility: ResidualsClaimSummary["flexibility"] }[];
  /** Per member of the set (the claim's order): whether a site entered it as a spline, or linearly, and the sites' columns. */
  members: { variable: string; spline: boolean; linear: boolean; columns: number }[];
  aliased: { site: number; k: number }[];
}

/** One claim over the sites of a pool. */
export interface ClaimPool {
  untestable: { site: number; reason: string }[];
  /** Sites (indices in the pool) whose part is not untestable, in order. */
  kept: number[];
  /** The kinds of the kept parts, in order of first appearance; only the first kind's parts are summed. */
  kinds: PooledKind[];
  moments?: MomentsPool;
  residuals?: ResidualsPool;
  /** The parts of a tables or score claim, in site order. */
  parts?: (TablesClaimSummary | ScoreClaimSummary)[];
}

/** Sites in order, reduced claim by claim. */
export interface SitePool {
  sites: SiteInfo[];
  /** The claims of the first site, which every other site must list. */
  claims: { x: string; y: string; given: string[] }[];
  /** Per claim of `claims`; sites whose `sameClaims` is false were not added. */
  pools: ClaimPool[];
}

/** Whether two lists of names are equal, name by name. */
export function sameNames(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Whether two claims are the same claim (x, y and the set, in order). */
export const sameClaim = (a: { x: string; y: string; given: readonly string[] }, b: { x: string; y: string; given: readonly string[] }): boolean => a.x === b.x && a.y === b.y && sameNames(a.given, b.given);

function sameClaimList(a: readonly { x: string; y: string; given: readonly string[] }[], b: readonly { x: string; y: string; given: readonly string[] }[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!sameClaim(a[i]!, b[i]!)) return false;
  return true;
}

/** Add a row-major d × d matrix given as rows into `a`. */
function addRows(a: Float64Array, rows: readonly (readonly number[])[], d: number): void {
  for (let r = 0; r < d; r++) {
    const row = rows[r]!;
    for (let c = 0; c < d; c++) a[r * d + c] = a[r * d + c]! + row[c]!;
  }
}

function addMoments(pool: ClaimPool, part: MomentsClaimSummary): void {
  const d = part.columns.length;
  let m = pool.moments;
  if (!m) m = pool.moments = { columns: part.columns, differ: false, n: 0, w: new Float64Array(d * d) };
  if (m.differ) return;
  if (!sameNames(part.columns, m.columns)) {
    m.differ = true;
    return;
  }
  m.n += part.n;
  addRows(m.w, part.cross_products, d);
}

function addResiduals(pool: ClaimPool, part: ResidualsClaimSummary, site: number): void {
  const q = part.sides[0].length + part.sides[1].length;
  const qq = part.sides[0].length * part.sides[1].length;
  let r = pool.residuals;
  if (!r) {
    r = pool.residuals = {
      test: part.test, testDiffers: false, first: site, sides: part.sides, odd: -1, n: 0, params: 0, linParams: 0,
      cross: new Float64Array(q * q), linCross: new Float64Array(q * q), scatter: new Float64Array(qq * qq),
      ...(part.fourth_order ? { fourth: new Float64Array(FOURTH_ORDER_KEYS.length) } : {}),
      flexibility: [], members: part.given.map((variable) => ({ variable, spline: false, linear: false, columns: 0 })), aliased: [],
    };
  }
  if (r.testDiffers) return;
  if (part.test !== r.test) {
    r.testDiffers = true;
    return;
  }
  if (!sameNames(part.sides[0], r.sides[0]) || !sameNames(part.sides[1], r.sides[1])) {
    if (r.odd < 0) {
      r.odd = site;
      r.oddSides = part.sides;
    }
    return;
  }
  r.n += part.n;
  r.params += part.params;
  r.linParams += part.linear.params;
  addRows(r.cross, part.residual_cross_products, q);
  addRows(r.linCross, part.linear.residual_cross_products, q);
  addRows(r.scatter, part.product_variance, qq);
  if (r.fourth && part.fourth_order) {
    const fo = part.fourth_order;
    for (let k = 0; k < FOURTH_ORDER_KEYS.length; k++) r.fourth[k] = r.fourth[k]! + fo[FOURTH_ORDER_KEYS[k]!];
  } else delete r.fourth;
  r.flexibility.push({ site, flexibility: part.flexibility });
  for (const m of r.members) {
    const e = part.adjustment.find((a) => a.variable === m.variable);
    if (e?.entered === "spline") m.spline = true;
    else if (e?.entered === "linear") m.linear = true;
    m.columns += e?.columns ?? 0;
  }
  if (part.aliased > 0) r.aliased.push({ site, k: part.aliased });
}

/** A site's heading (see {@link SiteInfo}), given the claims every site must list (those of the first site). Cost: O(claims). */
export function siteInfo({ file, summary }: SiteSummaryFile, claims: readonly { x: string; y: string; given: readonly string[] }[]): SiteInfo {
  const { site, n, suppressed, graph_sha256, settings, variables } = summary;
  return { file, site, n, suppressed, graph_sha256, settings, variables, sameClaims: sameClaimList(summary.claims, claims) };
}

/** A pool read site by site: {@link SitePoolBuilder.add} each summary, then take {@link SitePoolBuilder.pool}. */
export class SitePoolBuilder {
  readonly pool: SitePool = { sites: [], claims: [], pools: [] };

  /** Add the next site's summary (its claims are not kept). Cost: O(the summary's numbers). */
  add({ file, summary }: SiteSummaryFile): void {
    const { sites, pools } = this.pool;
    const site = sites.length;
    if (site === 0) {
      this.pool.claims = summary.claims.map((c) => ({ x: c.x, y: c.y, given: c.given }));
      for (let i = 0; i < summary.claims.length; i++) pools.push({ untestable: [], kept: [], kinds: [] });
    }
    const info = siteInfo({ file, summary }, this.pool.claims);
    sites.push(info);
    if (!info.sameClaims) return; // refused by checkPoolAgrees
    for (let c = 0; c < summary.claims.length; c++) addPart(pools[c]!, summary.claims[c]!, site);
  }
}

/** The claim pool of one claim's parts at sites 0, 1, … in order (for the library's per-claim pooled tests). */
export function claimPoolOf(parts: readonly ClaimSummary[]): ClaimPool {
  const pool: ClaimPool = { untestable: [], kept: [], kinds: [] };
  parts.forEach((p, i) => addPart(pool, p, i));
  return pool;
}

function addPart(pool: ClaimPool, part: ClaimSummary, site: number): void {
  if (part.kind === "untestable") {
    pool.untestable.push({ site, reason: part.reason });
    return;
  }
  pool.kept.push(site);
  if (!pool.kinds.includes(part.kind)) pool.kinds.push(part.kind);
  if (part.kind !== pool.kinds[0]) return;
  if (part.kind === "moments") addMoments(pool, part);
  else if (part.kind === "residuals") addResiduals(pool, part, site);
  else (pool.parts ??= []).push(part);
}

/** The pool of `sites`, added in order. Cost: O(the summaries' numbers). */
export function poolSites(sites: readonly SiteSummaryFile[]): SitePool {
  const b = new SitePoolBuilder();
  for (const s of sites) b.add(s);
  return b.pool;
}

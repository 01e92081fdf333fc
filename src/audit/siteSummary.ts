/**
 * The site summary: what the audit of one graph needs from one site's rows, with no row-level
 * value, so that sites can pool an audit without sharing rows (`poolSiteSummaries`).
 *
 * Terms. A *site* is one data file of a consortium. A *linear claim* is one whose x and y have
 * scores (continuous, binary, ordinal); its site statistics are the complete-case count, the
 * means and the *cross-product matrix* W = Σ (z − z̄)(z − z̄)ᵀ (centred sums of squares and
 * products, not divided by n − 1) of the design columns: x, y, and each member of S as its score
 * (continuous, binary) or as 0/1 indicators of its levels but the first (ordinal, nominal), as
 * `claimMoments.ts` enters them. A *categorical claim* (x, y and S all categorical) keeps one
 * x-by-y count table per *stratum* (a combination of S's levels seen at the site).
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
 * What this does not prevent: a mean of a binary column of 0 or 1, or an empty cell, says that
 * every row of the claim shares a value (attribute disclosure of a group of at least k).
 */
import type { Claim } from "./types.js";
import type { Table, VariableType } from "../data/Table.js";
import { CATEGORICAL_TYPES } from "../data/Table.js";

/** The format tag of a site summary file. */
export const SITE_SUMMARY_FORMAT = "arrowaudit-site-summary";
/** The version of the format this code writes and reads. */
export const SITE_SUMMARY_VERSION = 1;
/** Default and least `--min-cell`. */
export const DEFAULT_MIN_CELL = 5;
export const LEAST_MIN_CELL = 3;

/** The settings that change what a summary holds; summaries pool only when they are equal. */
export interface SiteSummarySettings {
  sets: "union-parents" | "minimal" | "all-minimal";
  /** auto: categorical claims as tables, the others with scored x and y as moments; linear: moments only; chisq: tables only. */
  method: "auto" | "linear" | "chisq";
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

export interface UntestableClaimSummary {
  x: string;
  y: string;
  given: string[];
  kind: "untestable";
  reason: string;
}

export type ClaimSummary = MomentsClaimSummary | TablesClaimSummary | UntestableClaimSummary;

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
 * Cost: O(rows · m) for the patterns, then per linear claim O(rows · d²) for d design columns and
 * per categorical claim O(rows · |S|).
 * @throws RangeError when min_cell is below {@link LEAST_MIN_CELL} or a measured variable is not a column
 * @example summarizeSite(table, { graphSha256, site: "A", settings, measured, claims }).claims[0].kind // "moments"
 */
export function summarizeSite(table: Table, options: SummarizeOptions): SiteSummary {
  const { settings, measured } = options;
  const k = settings.min_cell;
  if (!(Number.isInteger(k) && k >= LEAST_MIN_CELL)) throw new RangeError(`min_cell must be a whole number of at least ${LEAST_MIN_CELL}, got ${k}`);
  for (const v of measured) if (!table.column(v)) throw new RangeError(`summarizeSite: the table has no column "${v}"`);
  const keep = new Uint8Array(table.rows).fill(1);
  if (settings.listwise) {
    for (const v of measured) {
      const vals = table.column(v)!.values;
      for (let r = 0; r < table.rows; r++) if (Number.isNaN(vals[r]!)) keep[r] = 0;
    }
  }
  const suppressed = suppressSmallPatterns(table, measured, keep, k);
  const claims = options.claims.map((c) => summarizeClaim(table, c, keep, settings));
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

/** Which kind of statistics a claim gets under the method, or why none. */
function claimKind(table: Table, claim: Claim, method: SiteSummarySettings["method"]): "moments" | "tables" | { reason: string } {
  const types = [claim.x, claim.y, ...claim.given].map((v) => table.column(v)!.type);
  const allCategorical = types.every((t) => CATEGORICAL_TYPES.has(t));
  const scoredPair = types[0] !== "nominal" && types[1] !== "nominal";
  if (method !== "linear" && allCategorical) return "tables";
  if (method !== "chisq" && scoredPair) return "moments";
  if (method === "chisq") return { reason: "--method chisq tables categorical claims only, and this claim has a continuous variable" };
  return { reason: `"${types[0] === "nominal" ? claim.x : claim.y}" is nominal and the claim has a continuous variable: its test reads rows, which a site summary does not hold` };
}

function summarizeClaim(table: Table, claim: Claim, keep: Uint8Array, settings: SiteSummarySettings): ClaimSummary {
  const head = { x: claim.x, y: claim.y, given: [...claim.given] };
  const kind = claimKind(table, claim, settings.method);
  if (typeof kind !== "string") return { ...head, kind: "untestable", reason: kind.reason };
  const vars = [claim.x, claim.y, ...claim.given].map((v) => table.column(v)!.values);
  const rows: number[] = [];
  for (let r = 0; r < table.rows; r++) if (keep[r] && vars.every((v) => !Number.isNaN(v[r]!))) rows.push(r);
  const k = settings.min_cell;
  if (rows.length < k) {
    return { ...head, kind: "untestable", reason: `${rows.length} complete case${rows.length === 1 ? "" : "s"} at this site, fewer than --min-cell ${k}: no statistic is written for it` };
  }
  return kind === "moments" ? claimMomentsSummary(table, claim, rows) : claimTablesSummary(table, claim, rows, k);
}

/** Design columns of a claim: name and value of each row. */
function designOf(table: Table, claim: Claim): { name: string; value: (r: number) => number }[] {
  const out: { name: string; value: (r: number) => number }[] = [];
  for (const [i, v] of [claim.x, claim.y, ...claim.given].entries()) {
    const c = table.column(v)!;
    if (i >= 2 && (c.type === "ordinal" || c.type === "nominal")) {
      const levels = c.levels ?? [];
      for (let l = 1; l < levels.length; l++) out.push({ name: `${v}=${levels[l]}`, value: (r) => (c.codes![r] === l ? 1 : 0) });
    } else out.push({ name: v, value: (r) => c.values[r]! });
  }
  return out;
}

/** Complete-case means and centred cross-products (two passes). Cost: O(n · d²). */
function claimMomentsSummary(table: Table, claim: Claim, rows: readonly number[]): MomentsClaimSummary {
  const design = designOf(table, claim);
  const d = design.length;
  const n = rows.length;
  const z = design.map((col) => Float64Array.from(rows, (r) => col.value(r)));
  const means = z.map((col) => {
    let s = 0;
    for (let i = 0; i < n; i++) s += col[i]!;
    const m = s / n;
    let c = 0;
    for (let i = 0; i < n; i++) c += col[i]! - m; // second pass corrects the mean (Higham 2002, §1.9)
    return m + c / n;
  });
  for (let a = 0; a < d; a++) for (let i = 0; i < n; i++) z[a]![i] = z[a]![i]! - means[a]!;
  const w: number[][] = Array.from({ length: d }, () => new Array<number>(d).fill(0));
  for (let a = 0; a < d; a++) {
    for (let b = a; b < d; b++) {
      let s = 0;
      const za = z[a]!;
      const zb = z[b]!;
      for (let i = 0; i < n; i++) s += za[i]! * zb[i]!;
      w[a]![b] = s;
      w[b]![a] = s;
    }
  }
  return { x: claim.x, y: claim.y, given: [...claim.given], kind: "moments", n, columns: design.map((c) => c.name), means, cross_products: w };
}

/** Per-stratum x-by-y tables, strata with a cell of 1 … k − 1 rows dropped. Cost: O(n · |S|). */
function claimTablesSummary(table: Table, claim: Claim, rows: readonly number[], k: number): TablesClaimSummary | UntestableClaimSummary {
  const x = table.column(claim.x)!;
  const y = table.column(claim.y)!;
  const given = claim.given.map((g) => table.column(g)!);
  const lx = x.levels!.length;
  const ly = y.levels!.length;
  const byKey = new Map<string, { codes: number[]; counts: number[][] }>();
  for (const r of rows) {
    const codes = given.map((g) => g.codes![r]!);
    const key = codes.join(",");
    let s = byKey.get(key);
    if (!s) {
      s = { codes, counts: Array.from({ length: lx }, () => new Array<number>(ly).fill(0)) };
      byKey.set(key, s);
    }
    s.counts[x.codes![r]!]![y.codes![r]!]!++;
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

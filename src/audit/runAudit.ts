/**
 * The audit pipeline: derive the claims a causal graph makes, test each against the data
 * with a method that fits its variable types, adjust for multiple testing, decide, rank,
 * propose repair arrows, and combine everything in Shipley's global test.
 *
 * Terms: a *claim* x ⫫ y | S is an implied conditional independence of two measured nodes
 * with no arrow between them, S a separating set of measured nodes. A claim is
 * *contradicted* when its adjusted p-value is below alpha and its |effect| reaches the
 * relevance floor (`min_effect`), else *consistent*; a claim the data cannot test is
 * *untestable* and carries its reason.
 */
import { GraphError, UnknownNodeError } from "../errors.js";
import type { Graph } from "../graph/Graph.js";
import { countMissingArrows, deriveClaims } from "../graph/deriveClaims.js";
import { findHighCardinalityColumns } from "../data/findHighCardinalityColumns.js";
import { graphSummary } from "../graph/graphSummary.js";
import { CATEGORICAL_TYPES, type Table, type VariableType } from "../data/Table.js";
import { buildPatternMoments, type PatternMomentsOptions } from "../data/buildPatternMoments.js";
import { momentExpansions } from "./momentExpansions.js";
import type { PatternMoments } from "../data/Moments.js";
import type { SummaryData, SummarySource } from "../data/summaryData.js";
import { adjustPValues } from "../stats/adjustPValues.js";
import { fisherC } from "../stats/fisherC.js";
import { nextLook, sequenceInterval } from "../stats/confidenceSequence.js";
import { bracketVerdicts, criticalValues } from "../stats/criticalValues.js";
import { DEFAULT_RESAMPLING_RISK, MAX_CAP, proposedDraws, type MonteCarloRequest } from "../stats/monteCarloDecision.js";
import { chooseMethod } from "./methods/index.js";
import { repairArrows, repairTimeNote } from "./repairArrows.js";
import { DEFAULT_POWER, detectableAlpha, detectableEffect } from "./detectable.js";
import { DEFAULT_MARGIN, equivalenceOf, groupCounts } from "./equivalence.js";
import { compareClaims } from "./rankClaims.js";
import type { MethodResult, TestContext, TestMethod } from "./TestMethod.js";
import type { AuditResult, AuditSettings, Claim, TestedClaim, TestOutcome, UntestableClaim } from "./types.js";

export const DEFAULT_SETTINGS: AuditSettings = {
  alpha: 0.05,
  adjust: "holm",
  method: "auto",
  min_effect: 0,
  listwise: false,
  sets: "union-parents",
  rank_by: "p",
  seed: 1,
  power: DEFAULT_POWER,
  margin: DEFAULT_MARGIN,
};

/** With --sets all-minimal, the most separating sets tested per pair. */
export const MAX_SETS_PER_PAIR = 100;
/**
 * Most missing arrows an audit tests (one claim each, more with minimal sets). Each tested claim's
 * result is kept for ranking and adjustment, about 20 kB of memory and 2.2 kB of JSON (measured:
 * 10,725 claims of 150 continuous columns × 1,000 rows, 346 MB peak RSS, 24 MB of JSON, 10 s), so
 * 100,000 claims need about 2 GB and a 225 MB JSON document, within Node's heap and string limits.
 */
export const MAX_AUDIT_CLAIMS = 100_000;

export interface AuditOptions {
  settings?: Partial<AuditSettings>;
  /** Tool version written into the result. */
  version?: string;
  /** Called after each claim is tested (done, total), e.g. for a progress bar. */
  onProgress?: (done: number, total: number) => void;
  /**
   * Results of claims already tested on the same table with the same settings, by
   * {@link claimCacheKey}; `runAudit` reads and fills it (asymptotic results only: a Monte-Carlo
   * result depends on the number of claims through its cap and threshold). For audits of many
   * graphs on one table, as `suggestRevisions` runs them.
   */
  claimCache?: Map<string, MethodResult>;
  /**
   * Pattern moments already built on the same table, by what they cover (variables, expansions,
   * row filter); `runAudit` reads and fills it, so audits of graphs that need the same columns
   * share one pass over the rows.
   */
  momentsCache?: Map<string, PatternMoments>;
}

/** The key of a claim's result in {@link AuditOptions.claimCache}: x, y and the set as written. */
export function claimCacheKey(claim: Claim): string {
  return JSON.stringify([claim.x, claim.y, claim.given]);
}

/** What a helper thread needs to test claims that read the rows (see {@link runAuditParallel}). */
export interface HelperJob {
  table: Table;
  /** The claims to share out, heaviest first. */
  claims: readonly Claim[];
  /**
   * Shared between the threads (an Int32Array over a SharedArrayBuffer): [0] the index of the
   * next claim to take (each thread takes one with `Atomics.add(counter, 0, 1)`), [1] the
   * claims the helper has finished.
   */
  counter: Int32Array;
  settings: AuditSettings;
  rowFilter?: Uint8Array;
  /** See `TestContext.decisionFloor`. */
  decisionFloor: number;
}

/**
 * Tests claims of a job on another thread: takes indices from the shared counter, runs
 * {@link testClaimMethod} with {@link helperContext}, calls `onResult` as results arrive and
 * resolves with them by index. An index it took but left out of the map (the helper failed) is
 * tested again by the caller.
 */
export type ClaimHelper = (job: HelperJob, onResult: () => void) => Promise<Map<number, MethodResult>>;

export interface ParallelAuditOptions extends AuditOptions {
  /** The helper thread; without one the audit runs on this thread alone. */
  helper?: ClaimHelper;
  /** Least total row work (see `TestMethod.rowWork`) for which the helper is started (default 5·10⁷). */
  helperMinWork?: number;
  /**
   * Builds the pattern moments (e.g. over two threads); default `buildPatternMoments` on this
   * thread. It must give the same moments up to the order of summation.
   */
  buildMoments?: (table: Table, options: PatternMomentsOptions) => Promise<PatternMoments>;
}

/** Default least row work worth a helper thread (about a second of row passes). */
export const HELPER_MIN_WORK = 5e7;

/** Everything the claims share: derived once per audit. */
interface AuditPlan {
  settings: AuditSettings;
  /** See `TestContext.decisionFloor`. */
  decisionFloor: number;
  measured: string[];
  claims: Claim[];
  graphUntestable: UntestableClaim[];
  warnings: string[];
  moments: PatternMoments;
  ctx: TestContext;
  /** Why a variable cannot be tested at all (constant, no observed value, identifier-like), by name. */
  constant: Map<string, string>;
  /** Identifier-like categorical columns (see findHighCardinalityColumns), left out of the moments. */
  identifiers: Set<string>;
  /** Set when the audit runs on summary statistics rather than rows (see {@link runAuditOnSummary}). */
  source?: SummarySource;
}

/**
 * Run the whole audit of `graph` against `table`.
 * Cost: O(rows · d²) once for the pattern moments, then per claim a cost independent of the
 * number of rows for linear tests (O(P·d² + d³), P missing-data patterns), and O(rows of the
 * claim) for categorical grouping.
 * @throws UnknownNodeError when a measured node of the graph is not a column of the table.
 * @example
 * const result = runAudit(graph, table, { settings: { alpha: 0.01 } });
 * result.claims[0].verdict; // "contradicted" | "consistent"
 */
export function runAudit(graph: Graph, table: Table, options: AuditOptions = {}): AuditResult {
  const plan = planAudit(graph, table, options);
  const cache = options.claimCache;
  const results = plan.claims.map((claim, i) => {
    const pre = precheck(claim, plan.constant);
    let r: MethodResult;
    if (pre) r = pre;
    else {
      const key = cache ? claimCacheKey(claim) : "";
      const hit = cache?.get(key);
      // a copy: the audit annotates its results' details (the linear check's verdict)
      r = hit ? structuredClone(hit) : testClaimMethod(claim, plan.ctx, plan.settings);
      if (cache && !hit && (!r.ok || (r.outcome.p_method === "asymptotic" && r.outcome.monte_carlo === undefined))) cache.set(key, structuredClone(r));
    }
    options.onProgress?.(i + 1, plan.claims.length);
    return r;
  });
  refineMonteCarlo(plan, results);
  return finishAudit(graph, table, plan, results, options);
}

/**
 * {@link runAudit} with the claims that read the rows (logistic and multinomial fits, grouped
 * tables: `TestMethod.rowWork` > 0) shared with a helper thread when their total work reaches
 * `helperMinWork`: both threads take the next of them, heaviest first, from a shared counter,
 * and this thread first tests the claims that work from the moments. Each claim's result does
 * not depend on the thread that computed it (methods draw their random numbers from the stream
 * of (seed, claim)), so the result equals `runAudit`'s.
 * Cost: as `runAudit`, with the row work divided between two threads.
 * @throws UnknownNodeError when a measured node of the graph is not a column of the table.
 */
export async function runAuditParallel(graph: Graph, table: Table, options: ParallelAuditOptions = {}): Promise<AuditResult> {
  const claimPlan = planClaims(graph, table, options); // the moments come below, once the helper has started
  const { claims, constant, settings, rowFilter, decisionFloor } = claimPlan;
  const total = claims.length;
  const results: (MethodResult | undefined)[] = new Array(total);
  const heavy: { i: number; work: number }[] = [];
  let workSum = 0;
  claims.forEach((claim, i) => {
    const pre = precheck(claim, constant);
    if (pre) {
      results[i] = pre;
      return;
    }
    const work = methodOf(claim, table, settings).rowWork?.(claim, table) ?? 0;
    if (work > 0) {
      heavy.push({ i, work });
      workSum += work;
    }
  });
  let done = 0;
  let helperDone = 0;
  const progress = () => options.onProgress?.(done + helperDone, total);
  const shared = options.helper !== undefined && workSum >= (options.helperMinWork ?? HELPER_MIN_WORK);
  if (!shared) heavy.length = 0;
  const isHeavy = new Uint8Array(total);
  for (const h of heavy) isHeavy[h.i] = 1;
  heavy.sort((a, b) => b.work - a.work || a.i - b.i);
  const queue = heavy.map((h) => h.i);
  const counter = new Int32Array(new SharedArrayBuffer(8));
  const job: HelperJob = { table, claims: queue.map((i) => claims[i]!), counter, settings, decisionFloor, ...(rowFilter ? { rowFilter } : {}) };
  const fromHelper = shared
    ? options.helper!(job, () => {
        helperDone = Atomics.load(counter, 1);
        progress();
      })
    : Promise.resolve(new Map<number, MethodResult>());
  const tick = () => {
    done++;
    helperDone = Atomics.load(counter, 1);
    progress();
  };
  const mine = new Set<number>();
  let plan: AuditPlan;
  try {
    // while the helper starts and takes its first claims
    const momentsOf = momentOptions(claimPlan, table);
    plan = withBuiltMoments(claimPlan, table, options.buildMoments ? await options.buildMoments(table, momentsOf) : buildPatternMoments(table, momentsOf));
    // This thread: the claims that work from the moments first, then its share of the others.
    for (let i = 0; i < total; i++) {
      if (results[i] !== undefined || isHeavy[i]) continue;
      results[i] = testClaimMethod(claims[i]!, plan.ctx, settings);
      tick();
    }
    for (;;) {
      const k = Atomics.add(counter, 0, 1);
      if (k >= queue.length) break;
      mine.add(k);
      results[queue[k]!] = testClaimMethod(claims[queue[k]!]!, plan.ctx, settings);
      tick();
    }
  } catch (e) {
    // leave the helper nothing more to take, let it finish its claim, then report the error
    Atomics.store(counter, 0, queue.length);
    await fromHelper.catch(() => undefined);
    throw e;
  }
  const theirs = await fromHelper.catch(() => new Map<number, MethodResult>());
  for (let k = 0; k < queue.length; k++) {
    if (mine.has(k)) continue;
    const got = theirs.get(k);
    results[queue[k]!] = got ?? testClaimMethod(claims[queue[k]!]!, plan.ctx, settings);
  }
  options.onProgress?.(total, total);
  refineMonteCarlo(plan, results as MethodResult[]);
  return finishAudit(graph, table, plan, results as MethodResult[], options);
}

/** Summary statistics to audit in place of rows (`data/summaryData.ts`), with where they came from. */
export interface SummaryAuditInput extends SummaryData {
  source: SummarySource;
  /** Variables no claim can use, with the reason (e.g. a variance of 0 in the matrix). */
  untestableVariables?: ReadonlyMap<string, string>;
}

/**
 * {@link runAudit} on summary statistics: a covariance or correlation matrix of complete cases
 * and its n, given as one complete-data pattern and a table description (`createSummaryData`).
 * Every claim gets the partial-correlation test (`pearson-partial`, as `--method linear` does on
 * rows), so `settings.method` is recorded as "linear"; a claim that needs the levels of a
 * categorical variable is untestable with the reason ({@link summaryUntestableReason}). The
 * adjustment, verdicts, detectable effects, equivalence and the global test are those of rows.
 * Cost: per claim O(d³) for d variables in it.
 * @throws UnknownNodeError when a measured node of the graph is not a variable of the matrix;
 *   GraphError when the graph has more missing arrows than an audit tests
 * @example runAuditOnSummary(graph, { ...createSummaryData(names, cov, 500, {}, "r.csv"), source: { kind: "correlations", n: 500 } }).claims
 */
export function runAuditOnSummary(graph: Graph, input: SummaryAuditInput, options: AuditOptions = {}): AuditResult {
  const { table, moments } = input;
  const forced: AuditOptions = { ...options, settings: { ...options.settings, method: "linear", listwise: false } };
  const claimPlan = planClaims(graph, table, forced, input.untestableVariables ?? new Map());
  const plan: AuditPlan = { ...withBuiltMoments(claimPlan, table, moments), source: input.source };
  const results = plan.claims.map((claim, i) => {
    const r = precheck(claim, plan.constant) ?? summaryUntestable(claim, table) ?? testClaimMethod(claim, plan.ctx, plan.settings);
    options.onProgress?.(i + 1, plan.claims.length);
    return r;
  });
  return finishAudit(graph, table, plan, results, forced);
}

/** Methods that test a claim from its tables of counts alone, which `runAuditOnCounts` can run on weighted rows. */
const TABLE_METHODS: ReadonlySet<string> = new Set(["stratified-chisq", "linear-by-linear"]);

/**
 * {@link runAudit} of data given as one row per cell with a count (`--counts`), without copying
 * each row once per unit, when every claim takes a test of tables of counts (`stratified-chisq`,
 * `linear-by-linear`): every measured variable categorical, and `--method auto` or `chisq`.
 * `table` holds the cells (the count column left out: `countsTable`), `weights` their counts. The
 * tests group the cells with their counts as weights (`groupStrata`), and what the audit counts
 * from rows is counted in units: n, the constant and identifier-like variables (rows of count 0
 * left out), the missing values, the missing-data patterns and the rows used. The result is that
 * of {@link runAudit} on the table expanded to one row per unit (`expandCounts`), field for field
 * (tested), at a cost in cells instead of units.
 * Cost: O(cells · variables) per claim, plus what `runAudit` adds.
 * @returns undefined when some claim needs another test: expand the table and run {@link runAudit}
 * @throws UnknownNodeError as {@link runAudit}
 * @example runAuditOnCounts(graph, cells.table, cells.weights)?.data.rows // the sum of the counts
 */
export function runAuditOnCounts(graph: Graph, table: Table, weights: Float64Array, options: AuditOptions = {}): AuditResult | undefined {
  if (weights.length !== table.rows) throw new RangeError(`weights has ${weights.length} entries but the table has ${table.rows} rows; pass one count per row`);
  // a measured variable that is not categorical, or another method, means other tests: decline before planning
  const method = options.settings?.method ?? DEFAULT_SETTINGS.method;
  if ((method !== "auto" && method !== "chisq") || graph.nodes.some((v) => graph.isMeasured(v) && table.column(v) !== undefined && !CATEGORICAL_TYPES.has(table.column(v)!.type))) return undefined;
  const claimPlan = planClaims(graph, table, options, undefined, weights);
  if (!claimPlan.claims.every((c) => precheck(c, claimPlan.constant) !== undefined || TABLE_METHODS.has(methodOf(c, table, claimPlan.settings).name))) return undefined;
  const units = new Uint8Array(table.rows);
  for (let r = 0; r < table.rows; r++) units[r] = weights[r]! > 0 && (!claimPlan.rowFilter || claimPlan.rowFilter[r]) ? 1 : 0;
  const variables = claimPlan.measured.filter((n) => !claimPlan.identifiers.has(n));
  const plan = withBuiltMoments(claimPlan, table, weightedPatterns(table, variables, units, weights));
  plan.ctx.weights = weights;
  const results = plan.claims.map((claim, i) => {
    const r = precheck(claim, plan.constant) ?? testClaimMethod(claim, plan.ctx, plan.settings);
    options.onProgress?.(i + 1, plan.claims.length);
    return r;
  });
  refineMonteCarlo(plan, results);
  // the table as its expansion would describe it: rows and missing values in units
  let total = 0;
  for (let r = 0; r < table.rows; r++) total += weights[r]!;
  const columns = table.columns.map((c) => {
    let missing = 0;
    for (let r = 0; r < table.rows; r++) if (Number.isNaN(c.values[r]!)) missing += weights[r]!;
    return { ...c, missing };
  });
  const byName = new Map(columns.map((c) => [c.name, c]));
  const described: Table = { ...table, rows: total, columns, column: (name) => byName.get(name) };
  return finishAudit(graph, described, plan, results, options);
}

/**
 * The missing-data patterns of `variables` over the rows `units` lets through, each counted in
 * units (`weights`), in order of first appearance, as {@link PatternMoments} that hold no moments
 * (the table tests read none). Cost: O(rows · variables).
 */
function weightedPatterns(table: Table, variables: readonly string[], units: Uint8Array, weights: Float64Array): PatternMoments {
  const columns = variables.map((v) => table.column(v)!.values);
  const index = new Map<string, number>();
  const observed: string[][] = [];
  const rows: number[] = [];
  for (let r = 0; r < table.rows; r++) {
    if (!units[r]) continue;
    let key = "";
    for (const v of columns) key += Number.isNaN(v[r]!) ? "0" : "1";
    let p = index.get(key);
    if (p === undefined) {
      p = rows.length;
      index.set(key, p);
      observed.push(variables.filter((_, j) => key[j] === "1"));
      rows.push(0);
    }
    rows[p] = rows[p]! + weights[r]!;
  }
  const complete = observed.reduce((n, o, p) => (o.length === variables.length ? n + rows[p]! : n), 0);
  const none = (): never => {
    throw new Error("internal: an audit of counted rows holds no pattern moments; only table tests run on it");
  };
  return {
    patterns: rows.length,
    completeRows: complete,
    patternList: () => observed.map((o, p) => ({ observed: o, rows: rows[p]! })),
    momentsFor: none,
    columnsOf: () => [],
    momentsForColumns: none,
  };
}

/** Pattern moments computed where the data live (`data/patternSumsMoments.ts`), with a table description and the checks made there. */
export interface MomentsAuditInput {
  /** The variables' types, rows and missing counts; no row values. */
  table: Table;
  /** The moments of every measured variable's score by missing-data pattern. */
  moments: PatternMoments;
  /** Variables no claim can use, with the reason (no observed value, constant), as the row checks word them ({@link constantReason}). */
  untestableVariables: ReadonlyMap<string, string>;
}

/**
 * {@link runAudit} with `--method linear` on pattern moments computed without the rows in memory
 * (the DuckDB engine's rows-free path): every measured variable continuous or binary, so every
 * claim is tested by the partial correlation of the scores (`pearson-partial`) from the moments,
 * exactly as on rows. `settings.method` is recorded as "linear"; `listwise` must be off (the
 * caller does not filter rows). Adjustment, verdicts and everything after are those of rows.
 * Cost: per claim O(P·d² + d³), P patterns and d variables.
 * @throws UnknownNodeError as {@link runAudit}; RangeError for a nominal or ordinal variable or `listwise`
 * @example runAuditOnMoments(graph, { table, moments, untestableVariables: new Map() }).claims
 */
export function runAuditOnMoments(graph: Graph, input: MomentsAuditInput, options: AuditOptions = {}): AuditResult {
  if (options.settings?.listwise) throw new RangeError("runAuditOnMoments: listwise deletion needs the rows; filter them where the moments are computed");
  const odd = input.table.columns.filter((c) => c.type !== "continuous" && c.type !== "binary");
  if (odd.length > 0) throw new RangeError(`runAuditOnMoments: ${odd.map((c) => `"${c.name}" (${c.type})`).join(", ")} would need level indicators; only continuous and binary variables are tested from score moments`);
  const forced: AuditOptions = { ...options, settings: { ...options.settings, method: "linear", listwise: false } };
  const claimPlan = planClaims(graph, input.table, forced, input.untestableVariables);
  const plan = withBuiltMoments(claimPlan, input.table, input.moments);
  const results = plan.claims.map((claim, i) => {
    const r = precheck(claim, plan.constant) ?? testClaimMethod(claim, plan.ctx, plan.settings);
    options.onProgress?.(i + 1, plan.claims.length);
    return r;
  });
  return finishAudit(graph, input.table, plan, results, forced);
}

/** Data without rows whose claims a caller tests itself (`poolSiteSummaries`): a table description, moments for the record, where they came from, and the test. */
export interface ClaimTesterInput {
  table: Table;
  moments: PatternMoments;
  source: SummarySource;
  /** Tests one claim in the audit's context (also asked again for more Monte-Carlo draws). */
  test: (claim: Claim, ctx: TestContext) => MethodResult;
}

/**
 * {@link runAudit} with the claims tested by `input.test` instead of a method chosen on rows (no
 * row checks: the caller says why a claim is untestable); the Monte-Carlo refinement, adjustment,
 * verdicts, detectable effects, equivalence, global test and reports are those of rows.
 * Cost: the tests', plus O(k log k).
 * @throws as {@link runAuditOnSummary}
 * @example runAuditWithTester(graph, { table, moments, source, test: (claim, ctx) => pooled(claim, ctx) }).claims
 */
export function runAuditWithTester(graph: Graph, input: ClaimTesterInput, options: AuditOptions = {}): AuditResult {
  const claimPlan = planClaims(graph, input.table, options, new Map());
  const plan: AuditPlan = { ...withBuiltMoments(claimPlan, input.table, input.moments), source: input.source };
  const test = (claim: Claim, ctx: TestContext): MethodResult => finiteOrReason(input.test(claim, ctx));
  const results = plan.claims.map((claim, i) => {
    const r = test(claim, plan.ctx);
    options.onProgress?.(i + 1, plan.claims.length);
    return r;
  });
  refineMonteCarlo(plan, results, test);
  return finishAudit(graph, input.table, plan, results, options);
}

/**
 * Why a claim cannot be tested from a covariance or correlation matrix, or undefined when the
 * partial correlation of the scores tests it as on rows: a nominal variable anywhere, or an
 * ordinal member of the conditioning set, would need the moments of its level indicators, and a
 * matrix holds one column per variable (binary variables and ordinal x or y enter as their scores,
 * as `--method linear` enters them on rows). Cost: O(|S|).
 * @example summaryUntestableReason({ x: "a", y: "b", given: ["region"] }, table) // "…needs the levels of \"region\"…"
 */
export function summaryUntestableReason(claim: Claim, table: Table): string | undefined {
  const bad = [claim.x, claim.y, ...claim.given].filter((v, k) => {
    const t = table.column(v)?.type;
    return t === "nominal" || (k >= 2 && t === "ordinal");
  });
  if (bad.length === 0) return undefined;
  return `untestable from summary statistics: the test needs the levels of ${bad.map((v) => `"${v}"`).join(", ")} (declared ${[...new Set(bad.map((v) => table.column(v)!.type))].join(" / ")}) as categories, and a correlation or covariance matrix holds one score per variable; test it on the rows, or declare the variable continuous if its codes are scores`;
}

function summaryUntestable(claim: Claim, table: Table): MethodResult | undefined {
  const reason = summaryUntestableReason(claim, table);
  return reason ? { ok: false, reason } : undefined;
}

/** The method the settings choose for a claim. */
function methodOf(claim: Claim, table: Table, settings: AuditSettings): TestMethod {
  const types = {
    x: table.column(claim.x)!.type,
    y: table.column(claim.y)!.type,
    given: claim.given.map((g) => table.column(g)!.type),
  };
  return chooseMethod(settings.method, types);
}

/**
 * Test one claim with the method the settings choose for its variable types (the same on every
 * thread). A non-finite statistic, df, p-value, effect or interval makes the claim untestable.
 * Cost: that of the method.
 */
export function testClaimMethod(claim: Claim, ctx: TestContext, settings: AuditSettings): MethodResult {
  return finiteOrReason(methodOf(claim, ctx.table, settings).run(claim, ctx));
}

/** A method's result, or the untestable reason when its outcome has a non-finite number. */
function finiteOrReason(res: MethodResult): MethodResult {
  if (!res.ok) return res;
  const bad = nonFinite(res.outcome);
  if (bad) return { ok: false, reason: `the ${res.outcome.test} test gave a non-finite ${bad}; the data may be degenerate for this claim` };
  return res;
}

/** Thrown by the moments of a helper's context: a claim with row work touched them. */
export class MomentsUnavailableError extends Error {
  constructor() {
    super("internal: moments are not available on a helper thread");
    this.name = "MomentsUnavailableError";
  }
}

/**
 * The test context of a helper thread: the table, row filter and settings of the audit, and
 * moments that throw {@link MomentsUnavailableError} (claims sent to a helper read the rows).
 */
export function helperContext(table: Table, settings: AuditSettings, rowFilter?: Uint8Array, decisionFloor?: number): TestContext {
  const unavailable = new Proxy({} as PatternMoments, {
    get() {
      throw new MomentsUnavailableError();
    },
  });
  return {
    table,
    moments: unavailable,
    ...(rowFilter ? { rowFilter } : {}),
    seed: settings.seed,
    ...(settings.permutations !== undefined ? { permutations: settings.permutations } : {}),
    decisionFloor: decisionFloor ?? settings.alpha,
    monteCarlo: monteCarloRequest(settings, decisionFloor ?? settings.alpha),
    alpha: settings.alpha,
  };
}

/** Claims, moments and context of an audit. */
function planAudit(graph: Graph, table: Table, options: AuditOptions): AuditPlan {
  const plan = planClaims(graph, table, options);
  const cache = options.momentsCache;
  if (!cache) return withMoments(plan, table);
  const opts = momentOptions(plan, table);
  const key = JSON.stringify([opts.variables, opts.expansions ?? {}, opts.rowFilter ? filterDigest(opts.rowFilter) : null]);
  let moments = cache.get(key);
  if (!moments) {
    moments = buildPatternMoments(table, opts);
    cache.set(key, moments);
  }
  return withBuiltMoments(plan, table, moments);
}

/** A digest of a row filter (its length, its count and an FNV-1a hash of its bytes), for {@link AuditOptions.momentsCache} keys. */
function filterDigest(filter: Uint8Array): string {
  let h = 0x811c9dc5;
  let ones = 0;
  for (let i = 0; i < filter.length; i++) {
    ones += filter[i]!;
    h = Math.imul(h ^ filter[i]!, 0x01000193);
  }
  return `${filter.length}:${ones}:${(h >>> 0).toString(16)}`;
}

/** An audit plan before its moments: the claims, settings, row filter and constant columns. */
type ClaimPlan = Omit<AuditPlan, "moments" | "ctx"> & { rowFilter?: Uint8Array };

/**
 * The claims, settings, row filter and constant columns of an audit (no pass over the rows but the
 * constant-column check). `untestableVariables`, when given, replaces the checks on the rows
 * (constant and identifier-like columns) with the caller's reasons (summary statistics have no rows).
 */
function planClaims(graph: Graph, table: Table, options: AuditOptions, untestableVariables?: ReadonlyMap<string, string>, weights?: Float64Array): ClaimPlan {
  const settings: AuditSettings = { ...DEFAULT_SETTINGS, ...options.settings };
  const measured = graph.nodes.filter((n) => graph.isMeasured(n));
  const missingCols = measured.filter((n) => !table.column(n));
  if (missingCols.length) {
    throw new UnknownNodeError(
      `${table.file ?? "the data"}: measured graph node${missingCols.length > 1 ? "s" : ""} ${missingCols.map((n) => `"${n}"`).join(", ")} not found among the columns; rename the column or the node, or declare it unmeasured`,
      missingCols,
      { file: table.file },
    );
  }
  const missingArrows = countMissingArrows(graph);
  if (missingArrows > MAX_AUDIT_CLAIMS) {
    throw new GraphError(
      `${missingArrows.toLocaleString("en-US")} missing arrows among ${measured.length.toLocaleString("en-US")} measured nodes, one claim each; an audit tests at most ${MAX_AUDIT_CLAIMS.toLocaleString("en-US")}; test the part of the graph you are asking about, or declare the nodes you will not test unmeasured`,
      {},
    );
  }
  const warnings: string[] = [...table.warnings];
  const { claims, untestable: graphUntestable, truncatedPairs } = deriveClaims(graph, { sets: settings.sets, cap: MAX_SETS_PER_PAIR });
  if (truncatedPairs > 0) warnings.push(`${truncatedPairs} pair${truncatedPairs > 1 ? "s have" : " has"} more than ${MAX_SETS_PER_PAIR} minimal separating sets; only ${MAX_SETS_PER_PAIR} of each were tested`);

  const rowFilter = settings.listwise ? listwiseFilter(table, measured) : undefined;
  const constant = untestableVariables ? new Map(untestableVariables) : constantColumns(table, measured, rowFilter, weights);
  // identifier-like categorical columns (about one row per level): no test can use them, and their
  // level indicators would make the moments as wide as the table is long
  const identifiers = untestableVariables ? new Map<string, string>() : findHighCardinalityColumns(table, measured, weights);
  for (const [name, reason] of identifiers) if (!constant.has(name)) constant.set(name, reason);
  const decisionFloor = settings.adjust === "none" ? settings.alpha : settings.alpha / Math.max(1, claims.length);
  return { settings, decisionFloor, measured, claims, graphUntestable: graphUntestable.map((u) => ({ ...u })), warnings, constant, identifiers: new Set(identifiers.keys()), ...(rowFilter ? { rowFilter } : {}) };
}

/** The plan with the pattern moments of the measured variables and the test context. Cost: O(rows · d²). */
function withMoments(plan: ClaimPlan, table: Table): AuditPlan {
  return withBuiltMoments(plan, table, buildPatternMoments(table, momentOptions(plan, table)));
}

/**
 * What the pattern moments of an audit are built over: the measured variables but identifier-like
 * ones, the row filter and the expansions of the claims that pass {@link precheck}.
 */
function momentOptions(plan: ClaimPlan, table: Table): PatternMomentsOptions {
  const { measured, rowFilter, settings } = plan;
  const variables = measured.filter((n) => !plan.identifiers.has(n));
  const claims = plan.claims.filter((c) => precheck(c, plan.constant) === undefined);
  return { variables, rowFilter, expansions: momentExpansions(claims, table, settings, variables, rowFilter) };
}

/** The plan with its pattern moments and the test context. */
function withBuiltMoments(plan: ClaimPlan, table: Table, moments: PatternMoments): AuditPlan {
  const { rowFilter, settings } = plan;
  const ctx: TestContext = {
    table,
    moments,
    rowFilter,
    seed: settings.seed,
    permutations: settings.permutations,
    decisionFloor: plan.decisionFloor,
    monteCarlo: monteCarloRequest(settings, plan.decisionFloor),
    monteCarloStreams: new Map(),
    alpha: settings.alpha,
  };
  return { ...plan, moments, ctx };
}

/** Adjust, decide, rank, repair and combine the claims' results (in claim order). */
function finishAudit(graph: Graph, table: Table, plan: AuditPlan, results: readonly MethodResult[], options: AuditOptions): AuditResult {
  const { settings, measured, moments, warnings } = plan;
  const untestable: UntestableClaim[] = plan.graphUntestable;
  const tested: Array<Claim & TestOutcome> = [];
  plan.claims.forEach((claim, i) => {
    const res = results[i]!;
    if (!res.ok) untestable.push({ ...claim, reason: res.reason });
    else tested.push({ ...claim, ...res.outcome });
  });

  const padj = adjustPValues(tested.map((t) => t.p), settings.adjust);
  const monteCarloVerdict = monteCarloAnnotator(tested, settings);
  const decide = (p: number, effect: number) => (p < settings.alpha && Math.abs(effect) >= settings.min_effect ? "contradicted" : "consistent");
  // The same claims decided with linear adjustment (the classic test each flexible test reports
  // in `details.linear_adjustment`; claims without one keep their own p-value and effect).
  const linear = tested.map((t) => linearAdjustmentOf(t));
  const padjLinear = adjustPValues(tested.map((t, i) => linear[i]?.p ?? t.p), settings.adjust);
  const result: TestedClaim[] = tested.map((t, i) => {
    const p_adjusted = padj[i]!;
    const verdict = decide(p_adjusted, t.effect);
    const lin = linear[i];
    if (lin) {
      const linearVerdict = decide(padjLinear[i]!, lin.effect);
      lin.p_adjusted = padjLinear[i]!;
      lin.verdict = linearVerdict;
      lin.verdict_differs = linearVerdict !== verdict;
    }
    const timeNote = verdict === "contradicted" ? repairTimeNote(graph, t.x, t.y) : undefined;
    const warned = timeNote ? { warnings: [...(t.warnings ?? []), timeNote] } : {};
    const detectable = detectableEffect(t, detectableAlpha(settings, tested.length), settings.power ?? DEFAULT_POWER);
    const eq = equivalenceOf(t, settings.alpha, settings.margin ?? DEFAULT_MARGIN);
    return {
      ...t, ...warned, p_adjusted, verdict, rank: 0, arrows: repairArrows(graph, t.x, t.y), ...monteCarloVerdict(t, i),
      ...(detectable !== undefined ? { detectable } : {}),
      equivalence: eq.equivalence,
      ...(eq.interval ? { equivalence_interval: eq.interval } : {}),
    };
  });
  const undecided = result.filter((c) => c.p_undecided);
  if (undecided.length > 0) {
    const proposals = undecided.map((c) => c.p_proposed_B).filter((b): b is number => b !== undefined);
    warnings.push(
      `${undecided.length} verdict${undecided.length > 1 ? "s were" : " was"} not resolved by the cap on Monte-Carlo draws (p_undecided: ${undecided
        .slice(0, 5)
        .map((c) => `${c.x} ⫫ ${c.y}`)
        .join("; ")}${undecided.length > 5 ? "; …" : ""}); read ${undecided.length > 1 ? "them" : "it"} as provisional${
        proposals.length > 0 ? ` and rerun with --permutations ${Math.max(...proposals)}` : ""
      }`,
    );
  }
  const differing = result.filter((c) => linearAdjustmentOf(c)?.verdict_differs);
  if (differing.length > 0) {
    warnings.push(
      `${differing.length} claim${differing.length > 1 ? "s change" : " changes"} verdict when the conditioning set enters linearly instead of flexibly (${differing
        .slice(0, 5)
        .map((c) => `${c.x} ⫫ ${c.y}`)
        .join("; ")}${differing.length > 5 ? "; …" : ""}): the verdict depends on the functional form assumed, so judge those claims with care`,
    );
  }
  result.sort(compareClaims(settings.rank_by));
  result.forEach((c, i) => (c.rank = i + 1));

  const notes: string[] = [];
  // With no tested claim there is nothing to combine: C = 0 on 0 df, p = 1, and the note says why.
  const fc = result.length ? fisherC(result.map((c) => c.log_p)) : { statistic: 0, df: 0, p: 1 };
  if (result.length === 0) notes.push("no claim could be tested, so the global test has nothing to combine");
  if (settings.sets !== "union-parents") notes.push(`Fisher's C assumes mutually independent tests, which Shipley's basis set (--sets union-parents) provides; with --sets ${settings.sets} the claims overlap, so read the global p-value as descriptive only`);
  if (settings.sets === "union-parents") {
    const fallback = result.filter((c) => !sameSet(c.given, [...graph.parents(c.x), ...graph.parents(c.y)].filter((v) => v !== c.x && v !== c.y))).length;
    if (fallback > 0) notes.push(`${fallback} claim${fallback > 1 ? "s use" : " uses"} a smallest measured separating set instead of the parents' union (a parent is unmeasured or shares an unmeasured cause), so the independence of the combined tests is approximate`);
  }
  if (result.some((c) => c.p_method === "permutation")) notes.push("some p-values are Monte-Carlo permutation estimates (bounded below by 1/(B+1)), which makes Fisher's C conservative");
  const contradicted = result.filter((c) => c.verdict === "contradicted").length;
  if (untestable.length > 0) warnings.push(`${untestable.length} missing arrow${untestable.length > 1 ? "s were" : " was"} not tested (see untestable): untested is not the same as consistent`);

  const rowsUsed = usedRows(moments, result.map((c) => [c.x, c.y, ...c.given]));
  return {
    tool: { name: "arrowaudit", version: options.version ?? "0.0.0" },
    data: { file: table.file, rows: table.rows, rows_used: rowsUsed, patterns: moments.patterns, ...(plan.source ? { source: plan.source } : {}) },
    variables: table.columns
      .filter((c) => measured.includes(c.name))
      .map((c) => ({ name: c.name, type: c.type, type_source: c.typeSource, missing: c.missing, ...(c.levels && c.type !== "continuous" ? { levels: [...c.levels] } : {}) })),
    graph: graphSummary(graph),
    settings,
    claims: result,
    untestable,
    global: {
      method: "fisher-c",
      statistic: fc.statistic,
      df: fc.df,
      p: fc.p,
      k: result.length,
      contradicted,
      expected_by_chance: result.length * settings.alpha,
      groups: groupCounts(result),
      ...(notes.length ? { note: notes.join("; ") } : {}),
    },
    warnings,
  };
}

/**
 * What Monte-Carlo methods are told to draw (see `stats/monteCarloDecision.ts`): the resampling
 * risk, the claims sharing it while a claim judges on its own (k, the number of claims, an upper
 * bound on the Monte-Carlo ones, recovered from the floor α/k so that a helper thread derives the
 * same; 1 without adjustment, where each verdict depends on its own p only) and the band of
 * thresholds [α/k, α]. Cost: O(1).
 */
function monteCarloRequest(settings: AuditSettings, decisionFloor: number): MonteCarloRequest {
  const family = settings.adjust === "none" ? 1 : Math.max(1, Math.round(settings.alpha / decisionFloor));
  return { risk: settings.resampling_risk ?? DEFAULT_RESAMPLING_RISK, family, band: [Math.min(decisionFloor, settings.alpha), settings.alpha] };
}

/**
 * The confidence-sequence interval of every Monte-Carlo outcome (ε shared by the m Monte-Carlo
 * claims, or by one without adjustment) and which verdicts are decided: the same with every
 * Monte-Carlo p at its interval's upper end and at its lower end (`bracketVerdicts`).
 * Cost: O(k log k) plus two beta quantiles per Monte-Carlo claim.
 */
function judgeMonteCarlo(outcomes: readonly TestOutcome[], settings: AuditSettings): { intervals: ([number, number] | undefined)[]; decided: boolean[]; risk: number; family: number } {
  const risk = settings.resampling_risk ?? DEFAULT_RESAMPLING_RISK;
  const m = outcomes.filter((o) => o.monte_carlo).length;
  const family = settings.adjust === "none" ? 1 : Math.max(1, m);
  const intervals = outcomes.map((o) => (o.monte_carlo ? sequenceInterval(o.monte_carlo.hits, o.monte_carlo.draws, o.monte_carlo.cap, risk, family) : undefined));
  const { decided } = bracketVerdicts(
    outcomes.map((o, i) => ({ lower: intervals[i]?.[0] ?? o.p, upper: intervals[i]?.[1] ?? o.p, relevant: Math.abs(o.effect) >= settings.min_effect })),
    settings.adjust,
    settings.alpha,
  );
  return { intervals, decided, risk, family };
}

/**
 * The audit's Monte-Carlo loop (Gandy & Hahn 2016, Scand. J. Statist. 43:1046–1063, from memory):
 * while some verdict is undecided (see {@link judgeMonteCarlo}), every undecided Monte-Carlo claim
 * below its cap is tested again with the draws of its next look (about double). Its random stream
 * is fixed by (seed, claim), so the new draws extend the same sequence. The claim is re-run on
 * this thread, going on where it stopped when this thread kept its stream (`ctx.monteCarloStreams`),
 * else from the start (a claim first tested on a helper thread: at most twice the draws of its last
 * run). When only claims
 * without Monte-Carlo error are undecided, the Monte-Carlo claims whose intervals still meet the
 * band of thresholds get the draws. Ends when every verdict is decided or no claim that could
 * decide it has draws left (each round adds draws to at least one claim, so it ends).
 * Cost: the re-runs, O(Σ final draws) in all, and O(k log k) per round.
 */
function refineMonteCarlo(plan: AuditPlan, results: MethodResult[], test?: (claim: Claim, ctx: TestContext) => MethodResult): void {
  try {
    refineMonteCarloRounds(plan, results, test ?? ((claim, ctx) => testClaimMethod(claim, ctx, plan.settings)));
  } finally {
    plan.ctx.monteCarloStreams?.clear(); // the streams kept for re-runs are not needed past the loop
  }
}

/** The rounds of {@link refineMonteCarlo}. */
function refineMonteCarloRounds(plan: AuditPlan, results: MethodResult[], test: (claim: Claim, ctx: TestContext) => MethodResult): void {
  const { settings, ctx } = plan;
  const stuck = new Set<number>(); // claims whose re-run drew no more (a method that ignores ctx.monteCarlo.draws): not asked again
  for (;;) {
    const index: number[] = [];
    const outcomes: TestOutcome[] = [];
    results.forEach((r, i) => {
      if (r.ok) {
        index.push(i);
        outcomes.push(r.outcome);
      }
    });
    if (!outcomes.some((o) => o.monte_carlo)) return;
    const judged = judgeMonteCarlo(outcomes, settings);
    const open = (k: number) => !stuck.has(index[k]!) && outcomes[k]!.monte_carlo !== undefined && outcomes[k]!.monte_carlo!.draws < outcomes[k]!.monte_carlo!.cap;
    let active = outcomes.map((_, k) => k).filter((k) => !judged.decided[k] && open(k));
    if (active.length === 0 && judged.decided.some((d) => !d)) {
      const [floor, top] = ctx.monteCarlo?.band ?? [plan.decisionFloor, settings.alpha];
      active = outcomes.map((_, k) => k).filter((k) => open(k) && !(judged.intervals[k]![1] < floor || judged.intervals[k]![0] >= top));
    }
    if (active.length === 0) return;
    for (const k of active) {
      const mc = outcomes[k]!.monte_carlo!;
      const i = index[k]!;
      const request: MonteCarloRequest = { ...(ctx.monteCarlo ?? monteCarloRequest(settings, plan.decisionFloor)), draws: nextLook(mc.draws, mc.cap) };
      const again = test(plan.claims[i]!, { ...ctx, monteCarlo: request });
      if (!(again.ok && again.outcome.monte_carlo !== undefined && again.outcome.monte_carlo.draws > mc.draws)) stuck.add(i);
      results[i] = again;
    }
  }
}

/**
 * For each tested claim, what the audit adds about its Monte-Carlo decision: the threshold its p
 * faces (`criticalValues` at the reported p-values), the risk and the interval the decision used,
 * `p_undecided` when the verdict is not decided, and for an undecided Monte-Carlo claim the draws
 * that would likely decide it (`proposedDraws`, at least twice the cap). Cost: O(k log k) once.
 */
function monteCarloAnnotator(tested: readonly TestOutcome[], settings: AuditSettings): (t: TestOutcome, i: number) => Partial<TestedClaim> {
  if (!tested.some((t) => t.monte_carlo)) return () => ({});
  const judged = judgeMonteCarlo(tested, settings);
  const thresholds = criticalValues(tested.map((t) => t.p), settings.adjust, settings.alpha);
  return (t, i) => {
    const out: Partial<TestedClaim> = {};
    if (t.monte_carlo) {
      out.monte_carlo = { ...t.monte_carlo, threshold: thresholds[i]!, risk: judged.risk, decision_interval: judged.intervals[i]! };
    }
    if (!judged.decided[i]) {
      out.p_undecided = true;
      if (t.monte_carlo) {
        const proposal = proposedDraws(t.p, thresholds[i]!, judged.risk, judged.family);
        if (proposal !== undefined) out.p_proposed_B = Math.min(MAX_CAP, Math.max(proposal, 2 * t.monte_carlo.cap));
      }
    }
    return out;
  };
}

/** The linear-adjustment check a flexible test put in its details, if any (mutable: the audit adds its verdict). */
interface LinearAdjustmentDetails {
  p: number;
  effect: number;
  p_adjusted?: number;
  verdict?: "contradicted" | "consistent";
  verdict_differs?: boolean;
}

function linearAdjustmentOf(o: { details?: Record<string, unknown> }): LinearAdjustmentDetails | undefined {
  const lin = o.details?.linear_adjustment as LinearAdjustmentDetails | undefined;
  return lin && Number.isFinite(lin.p) ? lin : undefined;
}

/** Whether two lists hold the same names (ignoring order and repeats). */
function sameSet(a: readonly string[], b: readonly string[]): boolean {
  const sa = new Set(a);
  const sb = new Set(b);
  return sa.size === sb.size && [...sa].every((v) => sb.has(v));
}

/** Why a claim cannot be tested before any method runs (constant or identifier-like variables), as an untestable result. */
function precheck(claim: Claim, constant: Map<string, string>): MethodResult | undefined {
  for (const v of [claim.x, claim.y, ...claim.given]) {
    const why = constant.get(v);
    if (why) return { ok: false, reason: why };
  }
  return undefined;
}

/** Variables with fewer than two distinct observed values (among the rows allowed, and of positive weight when the rows have weights). */
function constantColumns(table: Table, names: readonly string[], rowFilter?: Uint8Array, weights?: Float64Array): Map<string, string> {
  const out = new Map<string, string>();
  for (const name of names) {
    const v = table.column(name)!.values;
    let first = NaN;
    let distinct = 0;
    for (let r = 0; r < v.length; r++) {
      if ((rowFilter && !rowFilter[r]) || weights?.[r] === 0) continue;
      const x = v[r]!;
      if (Number.isNaN(x)) continue;
      if (distinct === 0) {
        first = x;
        distinct = 1;
      } else if (x !== first) {
        distinct = 2;
        break;
      }
    }
    const why = constantReason(table, name, distinct, first, rowFilter !== undefined);
    if (why) out.set(name, why);
  }
  return out;
}

/**
 * Why a variable with `distinct` (0, 1, or 2 meaning more) observed values cannot be tested, or
 * undefined; `first` is its one value when constant. The wording of the row checks, shared with
 * callers that count values elsewhere ({@link runAuditOnMoments}). Cost: O(1).
 * @example constantReason(table, "sex", 1, 0, false) // "\"sex\" is constant (every observed value is 0), so it carries no information"
 */
export function constantReason(table: Table, name: string, distinct: number, first: number, listwise: boolean): string | undefined {
  if (distinct === 0) return `"${name}" has no observed values${listwise ? " among the listwise-complete rows" : ""}`;
  if (distinct === 1) return `"${name}" is constant (every observed value is ${formatValue(table, name, first)}), so it carries no information`;
  return undefined;
}

function formatValue(table: Table, name: string, v: number): string {
  const c = table.column(name)!;
  if (c.type === "nominal" && c.levels) return JSON.stringify(c.levels[v] ?? String(v));
  return String(v);
}

function nonFinite(o: TestOutcome): string | undefined {
  if (!Number.isFinite(o.statistic)) return "statistic";
  if (!Number.isFinite(o.df)) return "df";
  if (!(o.p >= 0 && o.p <= 1)) return "p-value";
  if (!Number.isFinite(o.effect)) return "effect";
  if (!o.ci.every((v) => Number.isFinite(v))) return "confidence interval";
  return undefined;
}

/**
 * Listwise deletion: 1 for the rows where every one of `variables` is observed, else 0.
 * Cost: O(rows · variables).
 */
export function listwiseFilter(table: Table, variables: readonly string[]): Uint8Array {
  const filter = new Uint8Array(table.rows).fill(1);
  for (const name of variables) {
    const v = table.column(name)!.values;
    for (let r = 0; r < filter.length; r++) if (Number.isNaN(v[r]!)) filter[r] = 0;
  }
  return filter;
}

/** Rows that enter at least one test: rows of the patterns that observe some claim's variables. */
function usedRows(moments: PatternMoments, claimVars: string[][]): number {
  let n = 0;
  for (const pat of moments.patternList()) {
    const seen = new Set(pat.observed);
    if (claimVars.some((vars) => vars.every((v) => seen.has(v)))) n += pat.rows;
  }
  return n;
}

export type { VariableType };

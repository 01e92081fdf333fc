/**
 * Data-guided revisions of a graph: which single added arrow or shared cause explains most of
 * the contradicted claims, taken greedily, step by step.
 *
 * Terms: a *candidate* is a repair of a contradicted claim (`x -> y`, `y -> x` or `x <-> y`, as
 * `repairArrows` offers them: never one that closes a directed cycle or breaks the declared time
 * order). Each candidate graph is audited afresh (its claims derived and tested with the same
 * settings) and scored by, in order: the number of contradicted claims (fewer is better); for
 * all-continuous data without unmeasured nodes, the BIC of the linear Gaussian structural model
 * with `<->` as correlated errors (`stats/gaussianSem.ts`; lower is better; Schwarz 1978); the
 * p-value of Fisher's C over the candidate's claims (higher is better); then a directed arrow
 * before a shared cause (the simpler account: `<->` asserts a cause nobody measured), then the
 * order of the claims. A candidate *explains* a contradicted claim when its pair is no longer
 * contradicted. The best candidate is added and the search repeats, up to `maxAdditions` steps,
 * stopping early when nothing is contradicted or no candidate lowers the count.
 *
 * Data-guided revisions are hypotheses: each needs subject-matter justification and, ideally,
 * confirmation in other data ({@link REVISION_CAUTION}).
 */
import { createGraph } from "../graph/createGraph.js";
import { CycleError } from "../errors.js";
import type { Graph } from "../graph/Graph.js";
import type { Table } from "../data/Table.js";
import { fitGaussianSem } from "../stats/gaussianSem.js";
import { quoteName, repairArrows } from "./repairArrows.js";
import { runAudit, runAuditOnSummary, type AuditOptions, type SummaryAuditInput } from "./runAudit.js";
import type { AuditResult, TestedClaim } from "./types.js";

/** The caution every output of `suggest` carries. */
export const REVISION_CAUTION =
  "These revisions are suggested by the same data they are judged on. Add an arrow or a shared cause only where subject-matter knowledge supports it, and, ideally, confirm it in other data: a search over many candidates finds some that fit by chance, and a better fit is not evidence that the revised graph is true.";

export interface SuggestOptions extends AuditOptions {
  /** Most additions (greedy steps). Default 3. */
  maxAdditions?: number;
  /** Called before each candidate is audited (step, index, count), e.g. for progress. */
  onCandidate?: (step: number, index: number, count: number) => void;
}

/** How well a graph fits the data. */
export interface RevisionScore {
  /** Claims tested. */
  claims: number;
  contradicted: number;
  fisher_c: number;
  fisher_c_df: number;
  fisher_c_p: number;
  /** BIC of the linear Gaussian structural model; absent when it does not apply ({@link Suggestions.bic_note}). */
  bic?: number;
}

export interface RevisionCandidate {
  /** The edge added, in graph-file notation (`x -> y`, `x <-> y`). */
  change: string;
  kind: "->" | "<->";
  from: string;
  to: string;
  score: RevisionScore;
  /** BIC of the candidate minus that of the graph before this step. */
  delta_bic?: number;
  /** Contradicted claims before this step that the candidate no longer contradicts. */
  explains: string[];
  /** Claims the candidate's graph still contradicts. */
  still_contradicted: string[];
}

export interface RevisionStep {
  step: number;
  /** Every candidate of the step, best first. */
  candidates: RevisionCandidate[];
  chosen: RevisionCandidate;
}

export interface Suggestions {
  start: RevisionScore & { contradicted_claims: string[] };
  /** The additions made, in order. */
  steps: RevisionStep[];
  /** The candidates of the step that stopped the search because none lowered the count (not applied). */
  unapplied?: RevisionStep;
  /** The graph after the chosen additions. */
  graph: Graph;
  /** Why the search stopped. */
  stopped: string;
  /** Why there is no BIC, when there is none. */
  bic_note?: string;
  caution: string;
}

/**
 * Greedy data-guided revisions of `graph` (see the module comment).
 * Cost: per step, one audit per candidate (about three per contradicted pair), each the cost of
 * `runAudit` on the candidate graph less the claims already tested (their results are cached
 * by claim), plus an RICF fit per candidate for the BIC.
 * `data` is a table of rows, or summary statistics (a covariance or correlation matrix and its n,
 * `runAuditOnSummary`): then every candidate is audited with the partial-correlation test, and the
 * BIC is that of the matrix (scaled to unit diagonal, which shifts every graph's BIC by the same
 * constant, so the differences are those of the original units).
 * @throws whatever runAudit (or runAuditOnSummary) throws for the starting graph (e.g. too many claims)
 * @example suggestRevisions(graph, table, { maxAdditions: 1 }).steps[0]?.chosen.change // "bmi -> sbp"
 */
export function suggestRevisions(graph: Graph, data: Table | SummaryAuditInput, options: SuggestOptions = {}): Suggestions {
  const maxAdditions = options.maxAdditions ?? 3;
  if (!(Number.isInteger(maxAdditions) && maxAdditions >= 1)) throw new RangeError(`maxAdditions must be a whole number of at least 1, got ${maxAdditions}`);
  // every candidate graph shares most of its claims with the graph before it: their results are reused
  const claimCache = options.claimCache ?? new Map();
  const momentsCache = options.momentsCache ?? new Map();
  const summary = isSummaryInput(data) ? data : undefined;
  const audit = summary
    ? (g: Graph): AuditResult => runAuditOnSummary(g, summary, options)
    : (g: Graph): AuditResult => runAudit(g, data as Table, { ...options, claimCache, momentsCache });
  const bic = summary ? summaryBicModel(graph, summary) : bicModel(graph, data as Table);
  let current = graph;
  let result = audit(current);
  let score = scoreOf(result, bic.fit(current));
  const start = { ...score, contradicted_claims: contradicted(result).map(claimText) };
  const steps: RevisionStep[] = [];
  let unapplied: RevisionStep | undefined;
  let stopped = `reached the most additions asked for (${maxAdditions})`;
  for (let step = 1; step <= maxAdditions; step++) {
    const before = contradicted(result);
    if (before.length === 0) {
      stopped = step === 1 ? "no claim is contradicted: nothing to revise" : "no claim is contradicted any more";
      break;
    }
    const edges = candidateEdges(current, before);
    const candidates: RevisionCandidate[] = [];
    // each candidate's graph and audit, so the chosen one is not built and audited again
    const audited = new Map<string, { graph: Graph; result: AuditResult }>();
    edges.forEach((e, k) => {
      options.onCandidate?.(step, k + 1, edges.length);
      const g = withEdge(current, e);
      if (!g) return;
      const r = audit(g);
      audited.set(e.text, { graph: g, result: r });
      const s = scoreOf(r, bic.fit(g));
      const after = new Set(contradicted(r).map(pairKey));
      candidates.push({
        change: e.text,
        kind: e.kind,
        from: e.from,
        to: e.to,
        score: s,
        ...(s.bic !== undefined && score.bic !== undefined ? { delta_bic: s.bic - score.bic } : {}),
        explains: before.filter((c) => !after.has(pairKey(c))).map(claimText),
        still_contradicted: contradicted(r).map(claimText),
      });
    });
    candidates.sort(compareCandidates);
    const best = candidates[0];
    if (!best || best.score.contradicted >= score.contradicted) {
      stopped = best ? `no single addition lowers the number of contradicted claims (${score.contradicted})` : "no addition is possible without a cycle or breaking the time order";
      if (best) unapplied = { step, candidates, chosen: best };
      break;
    }
    steps.push({ step, candidates, chosen: best });
    ({ graph: current, result } = audited.get(best.change)!);
    score = best.score;
  }
  return {
    start,
    steps,
    ...(unapplied ? { unapplied } : {}),
    graph: current,
    stopped,
    ...(bic.note ? { bic_note: bic.note } : {}),
    caution: REVISION_CAUTION,
  };
}

/** A claim as text, `x ⫫ y | a, b` (`∅` for the empty set). */
export function claimText(c: { x: string; y: string; given: readonly string[] }): string {
  return `${c.x} ⫫ ${c.y} | ${c.given.length ? c.given.join(", ") : "∅"}`;
}

function contradicted(r: AuditResult): TestedClaim[] {
  return r.claims.filter((c) => c.verdict === "contradicted");
}

function pairKey(c: { x: string; y: string }): string {
  return c.x < c.y ? `${c.x}\u0000${c.y}` : `${c.y}\u0000${c.x}`;
}

interface Edge {
  kind: "->" | "<->";
  from: string;
  to: string;
  text: string;
}

/** The repairs of the contradicted claims, each once, in the order of the claims. */
function candidateEdges(graph: Graph, claims: readonly TestedClaim[]): Edge[] {
  const out: Edge[] = [];
  const seen = new Set<string>();
  for (const c of claims) {
    for (const text of repairArrows(graph, c.x, c.y)) {
      const kind = text.includes("<->") ? "<->" : "->";
      const forward = text.startsWith(quoteName(c.x) + " ");
      const [from, to] = kind === "<->" ? [c.x, c.y] : forward ? [c.x, c.y] : [c.y, c.x];
      const key = kind === "<->" ? `<->${pairKey({ x: from, y: to })}` : `->${from}\u0000${to}`;
      if (seen.has(key)) continue;
      seen.add(key);
      out.push({ kind, from, to, text });
    }
  }
  return out;
}

/** The graph with one more arrow or shared cause; undefined when that would close a cycle. */
function withEdge(graph: Graph, e: Edge): Graph | undefined {
  const unmeasured = graph.nodes.filter((n) => !graph.isMeasured(n));
  const time = graph.timeOrder;
  try {
    return createGraph({
      nodes: graph.nodes,
      arrows: e.kind === "->" ? [...graph.arrows, [e.from, e.to]] : graph.arrows,
      bidirected: e.kind === "<->" ? [...graph.bidirected, [e.from, e.to]] : graph.bidirected,
      unmeasured,
      ...(time ? { periods: time.periods, fixed: time.fixed } : {}),
    });
  } catch (err) {
    if (err instanceof CycleError) return undefined;
    throw err;
  }
}

function scoreOf(r: AuditResult, bic: number | undefined): RevisionScore {
  return {
    claims: r.claims.length,
    contradicted: r.global.contradicted,
    fisher_c: r.global.statistic,
    fisher_c_df: r.global.df,
    fisher_c_p: r.global.p,
    ...(bic !== undefined ? { bic } : {}),
  };
}

/** Fewer contradicted claims, then lower BIC, then higher Fisher's C p-value, then `->` before `<->`. */
function compareCandidates(a: RevisionCandidate, b: RevisionCandidate): number {
  if (a.score.contradicted !== b.score.contradicted) return a.score.contradicted - b.score.contradicted;
  if (a.score.bic !== undefined && b.score.bic !== undefined && Math.abs(a.score.bic - b.score.bic) > 1e-6 * (1 + Math.abs(a.score.bic))) return a.score.bic - b.score.bic;
  if (Math.abs(a.score.fisher_c_p - b.score.fisher_c_p) > 1e-12) return b.score.fisher_c_p - a.score.fisher_c_p;
  if (a.kind !== b.kind) return a.kind === "->" ? -1 : 1;
  return 0;
}

/** Whether the data are summary statistics rather than rows. */
function isSummaryInput(data: Table | SummaryAuditInput): data is SummaryAuditInput {
  return "source" in data && "moments" in data;
}

/**
 * The BIC of a graph's linear Gaussian structural model on the rows complete on every measured
 * variable, when it applies: every measured variable continuous, no unmeasured node, and no pair
 * joined by both an arrow and `<->` (a bow, whose parameters are not identified).
 */
function bicModel(graph: Graph, table: Table): BicModel {
  const names = graph.nodes.filter((n) => graph.isMeasured(n));
  if (names.length !== graph.nodes.length) return noBic(UNMEASURED_NOTE);
  const cols = names.map((n) => table.column(n));
  if (cols.some((c) => !c || c.type !== "continuous")) return noBic(NOT_CONTINUOUS_NOTE);
  const values = cols.map((c) => c!.values);
  const rows: number[] = [];
  for (let r = 0; r < table.rows; r++) if (values.every((v) => v[r] === v[r])) rows.push(r);
  const n = rows.length;
  const p = names.length;
  if (n <= p + 1) return noBic(`only ${n} rows are complete on every variable, too few for the BIC of the structural model`);
  const means = values.map((v) => rows.reduce((s, r) => s + v[r]!, 0) / n);
  const S = new Float64Array(p * p);
  for (let a = 0; a < p; a++) for (let b = 0; b <= a; b++) {
    let s = 0;
    for (const r of rows) s += (values[a]![r]! - means[a]!) * (values[b]![r]! - means[b]!);
    S[a * p + b] = S[b * p + a] = s / n;
  }
  return semBic(names, S, n);
}

/**
 * {@link bicModel} from summary statistics: the matrix of the measured variables (as the audit
 * reads it, scaled to unit diagonal) times (n − 1)/n, the maximum-likelihood covariance of n
 * complete cases when the matrix is the usual (n − 1)-divisor one.
 */
function summaryBicModel(graph: Graph, input: SummaryAuditInput): BicModel {
  const names = graph.nodes.filter((n) => graph.isMeasured(n));
  if (names.length !== graph.nodes.length) return noBic(UNMEASURED_NOTE);
  if (names.some((v) => input.table.column(v)?.type !== "continuous")) return noBic(NOT_CONTINUOUS_NOTE);
  const dead = names.find((v) => input.untestableVariables?.has(v));
  if (dead !== undefined) return noBic(`"${dead}" has variance 0 in the matrix, so the structural model has no likelihood`);
  const n = input.moments.completeRows;
  const p = names.length;
  if (n <= p + 1) return noBic(`n = ${n} is too few for the BIC of the structural model of ${p} variables`);
  const cov = input.moments.momentsFor(names).cov;
  const S = Float64Array.from(cov, (v) => (v * (n - 1)) / n);
  return semBic(names, S, n);
}

interface BicModel {
  fit: (g: Graph) => number | undefined;
  note?: string;
}

const UNMEASURED_NOTE = "the graph has unmeasured nodes, so the BIC of the structural model (which would need them) is not computed";
const NOT_CONTINUOUS_NOTE = "not every variable is continuous, so the BIC of the linear Gaussian structural model is not computed";

function noBic(note: string): BicModel {
  return { fit: () => undefined, note };
}

/** The BIC of each graph's structural model fitted to the maximum-likelihood covariance S (p × p, row-major) of n cases. */
function semBic(names: readonly string[], S: Float64Array, n: number): BicModel {
  const p = names.length;
  const index = new Map(names.map((nm, i) => [nm, i]));
  return {
    fit: (g: Graph): number | undefined => {
      const bow = g.bidirected.some(([a, b]) => g.parents(a).includes(b) || g.parents(b).includes(a));
      if (bow) return undefined;
      const parents = names.map((v) => g.parents(v).map((u) => index.get(u)!));
      const spouses = names.map((v) => g.spouses(v).map((u) => index.get(u)!));
      try {
        return fitGaussianSem(S, p, n, parents, spouses).bic;
      } catch {
        return undefined;
      }
    },
  };
}

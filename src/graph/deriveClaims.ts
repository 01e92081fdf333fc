/**
 * Deriving the testable independence claims a causal graph implies, one per missing arrow.
 *
 * Terms (see dSeparated.ts for d-separation and separating set):
 * - A *missing arrow* is an unordered pair of measured nodes joined by no arrow in either direction.
 *   A pair joined only by `a <-> b` is a missing arrow too, but an untestable one: the two share an
 *   unmeasured common cause, so no set of measured variables separates them.
 * - A *claim* x ⫫ y | given says that `given` d-separates x and y, so x and y should be independent
 *   given `given` in the data. `x` is the member of the pair that comes first in topological order.
 * - The *basis set* of Shipley (2000), Structural Equation Modeling 7:206–218: for each missing
 *   arrow, given = pa(x) ∪ pa(y). In a DAG, if x precedes y in a topological order then x and pa(x)
 *   are non-descendants of y, so the local Markov property y ⫫ nd(y) | pa(y) and weak union give
 *   x ⫫ y | pa(x) ∪ pa(y) (Pearl 2009, Causality, 2nd ed., §1.2.3). When every such parent is
 *   measured (counting the hidden common parent of a `<->` edge as an unmeasured parent), the
 *   claim is valid and testable; the claims of a basis set are mutually independent, which is what
 *   a combined (Fisher's C) test needs.
 */
import type { Claim, UntestableClaim } from "../audit/types.js";
import { UsageError } from "../errors.js";
import type { Graph } from "./Graph.js";
import { expandGraph, nodeLabel, type ExpandedGraph } from "./ancestors.js";
import { dSeparatedIndex } from "./dSeparated.js";
import { findMinimalSeparator, prepareSeparatorSearch } from "./findMinimalSeparator.js";
import { listMinimalSeparators } from "./listMinimalSeparators.js";

export type ClaimSets = "union-parents" | "minimal" | "all-minimal";

export interface DeriveClaimsOptions {
  /**
   * - "union-parents" (default): Shipley's basis set pa(x) ∪ pa(y), falling back to the minimum
   *   measured separating set when a parent is unmeasured or the union fails to separate.
   * - "minimal": the minimum-cardinality measured separating set (see findMinimalSeparator).
   * - "all-minimal": one claim per minimal measured separating set; all claims of a pair share x and y.
   */
  sets?: ClaimSets;
  /** For "all-minimal": most sets listed per pair (default 100). */
  cap?: number;
}

export interface DerivedClaims {
  /** Ordered by topological position of x, then of y; `given` in topological order. */
  claims: Claim[];
  /** Missing arrows no measured set separates, in the same order, each with a plain-words reason. */
  untestable: UntestableClaim[];
  /** For "all-minimal": pairs with more than `cap` minimal sets, of which only `cap` were kept. */
  truncatedPairs: number;
}

/**
 * Derive-implied-claims: for every missing arrow between measured nodes, either the claim(s)
 * x ⫫ y | given that test it, or an untestable entry saying why none exists. Exactly one entry per
 * missing arrow, except that "all-minimal" gives one claim per minimal separating set.
 * Cost: union-parents O(P · (d + V + E)) for P missing arrows, d the parents' count, where the
 * O(V + E) d-separation check runs only when the graph has unmeasured nodes or `<->` edges (the
 * basis-set theorem makes it redundant otherwise); "minimal" and "all-minimal" cost one separator
 * search per pair (see findMinimalSeparator, listMinimalSeparators).
 * Source: Shipley (2000), Structural Equation Modeling 7:206–218 (basis set); Pearl (2009),
 * Causality, 2nd ed., §1.2.3; van der Zander, Liśkiewicz & Textor (2019), Artificial Intelligence
 * 270:1–40 (separators restricted to measured nodes).
 * @throws UsageError for an unknown `sets` value or a cap that is not a positive whole number
 * @example
 * const g = createGraph({ arrows: [["a", "b"], ["b", "c"]] });
 * deriveClaims(g).claims; // [{ x: "a", y: "c", given: ["b"] }]
 */
export function deriveClaims(graph: Graph, options: DeriveClaimsOptions = {}): DerivedClaims {
  const claims: Claim[] = [];
  const untestable: UntestableClaim[] = [];
  const entries = claimEntries(graph, options);
  for (let r = entries.next(); ; r = entries.next()) {
    if (r.done) return { claims, untestable, truncatedPairs: r.value.truncatedPairs };
    if (r.value.kind === "claim") claims.push(r.value.claim);
    else untestable.push(r.value.untestable);
  }
}

/** One entry of the derivation, in order: a claim, or a missing arrow no measured set separates. */
export type ClaimEntry = { kind: "claim"; claim: Claim } | { kind: "untestable"; untestable: UntestableClaim };

/**
 * The entries of `deriveClaims` one at a time, in the same order, for callers that write them
 * out as they come (a graph of 5,000 nodes has 12.5 million missing arrows: the list alone would
 * fill gigabytes). Returns `{ truncatedPairs }` when done. Memory: O(V + E), whatever the number
 * of claims. Cost, source and errors: as `deriveClaims` (the errors are thrown by the first `next()`).
 * @example [...claimEntries(createGraph({ arrows: [["a", "b"], ["b", "c"]] }))] // [{ kind: "claim", claim: { x: "a", y: "c", given: ["b"] } }]
 */
export function* claimEntries(graph: Graph, options: DeriveClaimsOptions = {}): Generator<ClaimEntry, { truncatedPairs: number }, undefined> {
  const sets = options.sets ?? "union-parents";
  if (sets !== "union-parents" && sets !== "minimal" && sets !== "all-minimal") {
    throw new UsageError(`unknown separating-set choice "${String(sets)}": use "union-parents", "minimal" or "all-minimal"`);
  }
  const cap = options.cap ?? 100;
  if (!Number.isInteger(cap) || cap < 1) {
    throw new UsageError(`cap ${cap} is not a positive whole number: give the most separating sets to list per pair, e.g. 100`);
  }
  const e = expandGraph(graph);
  const measured: number[] = [];
  for (let i = 0; i < e.userCount; i++) if (e.measured[i]) measured.push(i);
  const hasLatent = e.size > e.userCount || measured.length < e.userCount;
  const restrict = (n: string) => graph.isMeasured(n);
  let truncatedPairs = 0;

  const adjacent = new Uint8Array(e.userCount); // 1 arrow, 2 only <->
  for (const i of measured) {
    const xName = e.names[i]!;
    for (const p of e.parents[i]!) if (p < e.userCount) adjacent[p] = 1;
    for (const c of e.children[i]!) adjacent[c] = 1;
    for (const sp of graph.spouses(xName)) {
      const j = e.index.get(sp)!;
      if (!adjacent[j]) adjacent[j] = 2;
    }
    for (const j of measured) {
      if (j <= i || adjacent[j] === 1) continue;
      const yName = e.names[j]!;
      if (adjacent[j] === 2) {
        yield {
          kind: "untestable",
          untestable: {
            x: xName,
            y: yName,
            reason: `no set of measured variables separates ${JSON.stringify(xName)} and ${JSON.stringify(yName)}: they share the unmeasured common cause ${JSON.stringify(xName)} <-> ${JSON.stringify(yName)}`,
          },
        };
        continue;
      }
      if (sets === "union-parents") {
        const given = unionParents(e, i, j);
        if (given !== undefined && (!hasLatent || dSeparatedIndex(e, [i], [j], given))) {
          yield { kind: "claim", claim: { x: xName, y: yName, given: given.map((k) => e.names[k]!) } };
          continue;
        }
      }
      if (sets === "all-minimal") {
        const list = listMinimalSeparators(graph, xName, yName, { restrict, cap });
        if (list.truncated) truncatedPairs++;
        if (list.sets.length > 0) {
          for (const given of list.sets) yield { kind: "claim", claim: { x: xName, y: yName, given } };
          continue;
        }
      } else {
        const given = findMinimalSeparator(graph, xName, yName, { restrict });
        if (given !== undefined) {
          yield { kind: "claim", claim: { x: xName, y: yName, given } };
          continue;
        }
      }
      yield { kind: "untestable", untestable: { x: xName, y: yName, reason: explainInseparable(graph, e, xName, yName) } };
    }
    for (const p of e.parents[i]!) if (p < e.userCount) adjacent[p] = 0;
    for (const c of e.children[i]!) adjacent[c] = 0;
    for (const sp of graph.spouses(xName)) adjacent[e.index.get(sp)!] = 0;
  }
  return { truncatedPairs };
}

/**
 * Count-missing-arrows: the number of unordered pairs of measured nodes joined by no arrow (a
 * pair joined only by `<->` counts), which is the number of entries `deriveClaims` gives with
 * "union-parents" or "minimal" (one claim or untestable entry each; "all-minimal" may give more).
 * m(m − 1)/2 for m measured nodes, less the arrows between measured nodes. Exact up to 2⁵³.
 * Cost: O(V + E), so callers can refuse a graph too large to list before listing it.
 * @example countMissingArrows(createGraph({ arrows: [["a", "b"], ["b", "c"]] })) // 1 (a and c)
 */
export function countMissingArrows(graph: Graph): number {
  let m = 0;
  for (const n of graph.nodes) if (graph.isMeasured(n)) m++;
  let joined = 0;
  for (const [a, b] of graph.arrows) if (graph.isMeasured(a) && graph.isMeasured(b)) joined++;
  return (m * Math.max(0, m - 1)) / 2 - joined; // max: no −0 for an empty graph
}

/** pa(i) ∪ pa(j) in topological order, or undefined when one of them is unmeasured or hidden. */
function unionParents(e: ExpandedGraph, i: number, j: number): number[] | undefined {
  const a = e.parents[i]!;
  const b = e.parents[j]!;
  const out: number[] = [];
  let p = 0;
  let q = 0;
  while (p < a.length || q < b.length) {
    const v = q >= b.length || (p < a.length && a[p]! <= b[q]!) ? a[p]! : b[q]!;
    if (p < a.length && a[p] === v) p++;
    if (q < b.length && b[q] === v) q++;
    if (!e.measured[v]) return undefined; // also false for hidden common causes of <-> edges
    out.push(v);
  }
  return out;
}

/**
 * Plain-words reason why no measured set separates x and y: a shortest path between them in the
 * moral ancestral graph whose inner nodes are all unmeasured (one exists, by Fact 1 of
 * findMinimalSeparator.ts), named node by node.
 */
function explainInseparable(graph: Graph, e: ExpandedGraph, x: string, y: string): string {
  const s = prepareSeparatorSearch(graph, x, y, (n) => graph.isMeasured(n));
  const n = s.m.nodes.length;
  const prev = new Int32Array(n).fill(-1);
  prev[s.lx] = s.lx;
  const queue = [s.lx];
  for (let qi = 0; qi < queue.length && prev[s.ly] === -1; qi++) {
    const v = queue[qi]!;
    for (const w of s.m.adj[v]!) {
      if (prev[w] !== -1 || s.allowed[w]) continue;
      prev[w] = v;
      if (w !== s.ly) queue.push(w);
    }
  }
  const head = `no set of measured variables separates ${JSON.stringify(x)} and ${JSON.stringify(y)}`;
  if (prev[s.ly] === -1) return `${head}: every separating set would need an unmeasured variable`;
  const inner: number[] = [];
  for (let v = prev[s.ly]!; v !== s.lx; v = prev[v]!) inner.unshift(s.m.nodes[v]!);
  const xi = e.index.get(x)!;
  const yi = e.index.get(y)!;
  if (inner.length === 1) {
    const u = inner[0]!;
    if (e.children[u]!.includes(xi) && e.children[u]!.includes(yi)) {
      return `${head}: they share the unmeasured common cause ${nodeLabel(e, u)}`;
    }
  }
  return `${head}: they are linked through unmeasured variables that no measured set can stand in for: ${inner.map((u) => nodeLabel(e, u)).join(", ")}`;
}

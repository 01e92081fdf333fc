/**
 * Minimal and minimum separating sets restricted to allowed nodes (e.g. the measured ones).
 *
 * Terms (see dSeparated.ts for path, collider, blocked/open path, d-separation):
 * - A *separating set* (d-separator) of x and y is a set Z, not containing x or y, such that x
 *   and y are d-separated given Z. A separating set is *allowed* when all its nodes satisfy the
 *   caller's `restrict` predicate (hidden common causes of `<->` edges are never allowed).
 * - A separating set is *minimal* (inclusion-minimal) when no proper subset of it separates, and
 *   *minimum* when no separating allowed set has fewer nodes. A minimum set is also minimal.
 * - A (vertex) *cut* between x and y in an undirected graph is a node set meeting every x–y path.
 *
 * Facts used:
 * 1. Some allowed set separates x and y iff R ∩ An({x, y}) \ {x, y} does, R the allowed nodes
 *    (van der Zander, Liśkiewicz & Textor 2019, Artificial Intelligence 270:1–40; Tian, Paz &
 *    Pearl 1998, Technical Report R-254, UCLA). Adjacent x and y are never separated.
 * 2. Every minimal separating set lies inside An({x, y}) (Tian, Paz & Pearl 1998), so by
 *    Lauritzen's criterion (ancestors.ts) the minimal separating sets are exactly the minimal
 *    x–y cuts made of allowed nodes in the moral graph of An({x, y}).
 * 3. A minimum such cut is a minimum vertex cut, found by a maximum flow with unit capacity on
 *    allowed nodes and unlimited capacity on all others (Acid & de Campos 1996, Proc. 12th
 *    Conference on Uncertainty in Artificial Intelligence, 3–10; Tian, Paz & Pearl 1998). Among all
 *    minimum cuts, the one whose source side is smallest is unique — it is the set reachable from
 *    the source in the residual network of any maximum flow (Ford & Fulkerson 1962, Flows in
 *    Networks, Princeton University Press; Picard & Queyranne 1980, Mathematical Programming
 *    Study 13:8–16): this module returns the
 *    minimum cut nearest to whichever of x and y comes first in topological order, so the answer
 *    does not depend on argument order or search order.
 */
import { UsageError } from "../errors.js";
import type { Graph } from "./Graph.js";
import { expandGraph, moralAncestralGraph, nodeIndex, type ExpandedGraph, type MoralGraph } from "./ancestors.js";

export interface SeparatorOptions {
  /** Whether a node may be in the separating set (e.g. `(n) => graph.isMeasured(n)`). */
  restrict: (name: string) => boolean;
  /** Return a minimum-cardinality set (default true); false returns some minimal set in linear time. */
  minimum?: boolean;
}

/** Everything the separator searches share for one pair (internal to src/graph). */
export interface SeparatorSearch {
  readonly e: ExpandedGraph;
  /** Moral graph of An({x, y}) in the expanded graph. */
  readonly m: MoralGraph;
  /** Per local node: 1 when it may be in a separating set (never x, y or a latent node). */
  readonly allowed: Uint8Array;
  readonly lx: number;
  readonly ly: number;
}

/**
 * Prepare the moral ancestral graph and allowed marks for a pair.
 * @throws UnknownNodeError for an unknown name; UsageError when x and y are the same node
 */
export function prepareSeparatorSearch(graph: Graph, x: string, y: string, restrict: (name: string) => boolean): SeparatorSearch {
  const e = expandGraph(graph);
  const xi = nodeIndex(e, x, "x");
  const yi = nodeIndex(e, y, "y");
  if (xi === yi) throw new UsageError(`x and y are both "${x}": a separating set needs two different nodes`);
  const m = moralAncestralGraph(e, [xi, yi]);
  const allowed = new Uint8Array(m.nodes.length);
  m.nodes.forEach((v, k) => {
    allowed[k] = v < e.userCount && v !== xi && v !== yi && restrict(e.names[v]!) ? 1 : 0;
  });
  return { e, m, allowed, lx: m.local[xi]!, ly: m.local[yi]! };
}

/**
 * Nodes of `stopAt` met by a search from `from` in the moral graph that does not pass through `stopAt`;
 * `undefined` when the search reaches `target` (so `stopAt` does not cut `from` from `target`).
 */
function boundaryReached(m: MoralGraph, from: number, target: number, stopAt: Uint8Array): number[] | undefined {
  const seen = new Uint8Array(m.nodes.length);
  const met: number[] = [];
  const stack = [from];
  seen[from] = 1;
  while (stack.length > 0) {
    const v = stack.pop()!;
    for (const w of m.adj[v]!) {
      if (seen[w]) continue;
      seen[w] = 1;
      if (w === target) return undefined;
      if (stopAt[w]) met.push(w);
      else stack.push(w);
    }
  }
  return met;
}

/**
 * A minimal allowed separating set by the linear-time FindMinSep of van der Zander, Liśkiewicz &
 * Textor (2019) with no forced nodes (I = ∅), in local indices; `undefined` when none exists (Fact 1).
 */
export function findMinSepLocal(s: SeparatorSearch): number[] | undefined {
  const z1 = s.allowed; // R ∩ An({x, y}) \ {x, y}
  const z2 = boundaryReached(s.m, s.lx, s.ly, z1);
  if (z2 === undefined) return undefined;
  const mark2 = new Uint8Array(s.m.nodes.length);
  for (const v of z2) mark2[v] = 1;
  const z = boundaryReached(s.m, s.ly, s.lx, mark2)!;
  return z.sort((a, b) => a - b);
}

/** The unique minimum allowed cut nearest to `source`, by unit augmenting paths (Fact 3). */
function minimumCutLocal(s: SeparatorSearch, source: number, sink: number): number[] {
  const n = s.m.nodes.length;
  const INF = 1 << 30;
  let arcs = 2 * n;
  for (const list of s.m.adj) arcs += 2 * list.length;
  const head = new Int32Array(2 * n).fill(-1);
  const to = new Int32Array(arcs);
  const cap = new Int32Array(arcs);
  const next = new Int32Array(arcs);
  let used = 0;
  const arc = (a: number, b: number, c: number) => {
    to[used] = b, cap[used] = c, next[used] = head[a]!, head[a] = used++;
    to[used] = a, cap[used] = 0, next[used] = head[b]!, head[b] = used++;
  };
  // Node k becomes in = 2k -> out = 2k + 1.
  for (let k = 0; k < n; k++) arc(2 * k, 2 * k + 1, s.allowed[k] ? 1 : INF);
  for (let a = 0; a < n; a++) for (const b of s.m.adj[a]!) arc(2 * a + 1, 2 * b, INF);
  const src = 2 * source + 1;
  const snk = 2 * sink;
  const prevArc = new Int32Array(2 * n);
  const seen = new Uint8Array(2 * n);
  const queue = new Int32Array(2 * n);
  const search = (): boolean => {
    seen.fill(0);
    let qn = 0;
    queue[qn++] = src;
    seen[src] = 1;
    for (let qi = 0; qi < qn; qi++) {
      const v = queue[qi]!;
      for (let a = head[v]!; a !== -1; a = next[a]!) {
        const w = to[a]!;
        if (cap[a]! > 0 && !seen[w]) {
          seen[w] = 1;
          prevArc[w] = a;
          if (w === snk) return true;
          queue[qn++] = w;
        }
      }
    }
    return false;
  };
  // Every augmenting path crosses an allowed node (a separating set exists), so each carries 1 unit.
  while (search()) {
    for (let v = snk; v !== src; v = to[prevArc[v]! ^ 1]!) {
      cap[prevArc[v]!]! -= 1;
      cap[prevArc[v]! ^ 1]! += 1;
    }
  }
  // `seen` now marks the residual-reachable side of the final search: the source side of the nearest min cut.
  const cut: number[] = [];
  for (let k = 0; k < n; k++) if (s.allowed[k] && seen[2 * k] && !seen[2 * k + 1]) cut.push(k);
  return cut;
}

/**
 * Find-minimal-separating-set: an allowed set that d-separates x and y and is minimal; by default
 * of minimum cardinality (the unique minimum set nearest to the topologically earlier of x, y).
 * Returns `undefined` when no allowed set separates them (always so when they are adjacent by an
 * arrow or a `<->`). The set is sorted by topological order; `[]` means x and y are separated
 * unconditionally.
 * Cost: O(V + E + Σ indeg²) to build the moral ancestral graph; then O(that) for `minimum: false`
 * (FindMinSep of van der Zander et al. 2019) or O(k · that) for the minimum set of size k.
 * Source: van der Zander, Liśkiewicz & Textor (2019), Artificial Intelligence 270:1–40;
 * Tian, Paz & Pearl (1998), Finding minimal d-separators, Technical Report R-254, UCLA;
 * Acid & de Campos (1996), An algorithm for finding minimum d-separating sets in belief networks,
 * Proc. 12th Conference on Uncertainty in Artificial Intelligence, 3–10.
 * @throws UnknownNodeError when x or y is not a node of the graph
 * @throws UsageError when x and y are the same node
 * @example
 * const g = createGraph({ arrows: [["a", "b"], ["a", "c"], ["b", "d"], ["c", "d"]] });
 * findMinimalSeparator(g, "a", "d", { restrict: () => true }); // ["b", "c"]
 * findMinimalSeparator(g, "a", "b", { restrict: () => true }); // undefined (adjacent)
 */
export function findMinimalSeparator(graph: Graph, x: string, y: string, options: SeparatorOptions): string[] | undefined {
  const s = prepareSeparatorSearch(graph, x, y, options.restrict);
  const minimal = findMinSepLocal(s);
  if (minimal === undefined) return undefined;
  let local = minimal;
  if (options.minimum !== false && minimal.length > 0) {
    const xFirst = s.m.nodes[s.lx]! < s.m.nodes[s.ly]!;
    local = xFirst ? minimumCutLocal(s, s.lx, s.ly) : minimumCutLocal(s, s.ly, s.lx);
  }
  return local.map((k) => s.e.names[s.m.nodes[k]!]!);
}

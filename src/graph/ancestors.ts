/**
 * Ancestral sets and their moral graphs, the ground the d-separation algorithms stand on.
 *
 * Terms:
 * - An *ancestor* of a node v is any node with a directed path to v; here every node counts
 *   as its own ancestor, so An(S) ⊇ S. The *ancestral set* An(S) is closed under taking parents.
 * - The *expanded graph* replaces every bidirected edge `a <-> b` by a hidden latent node L with
 *   arrows L -> a and L -> b (the explicit unmeasured common parent the edge stands for). Latent
 *   nodes are numbered after the user's nodes and have no name at all, so they can never collide
 *   with, or leak out as, a user node name; messages describe one as `"a" <-> "b"`.
 * - The *moral graph* of a DAG is the undirected graph joining every node to its parents and
 *   joining ("marrying") every two parents of a common child (Lauritzen, Dawid, Larsen &
 *   Leimer 1990, Networks 20:491–505).
 * - Lauritzen's criterion: Z d-separates X and Y exactly when Z separates X from Y (every path
 *   meets Z) in the moral graph of An(X ∪ Y ∪ Z). When Z ⊆ An(X ∪ Y) that graph is the moral graph
 *   of An(X ∪ Y), which is why the separator searches work on it alone.
 *
 * Node indices: user node i is the node at position i of `graph.topologicalOrder`, so sorting
 * indices sorts by topological order; latent nodes follow.
 */
import { UnknownNodeError } from "../errors.js";
import type { Graph } from "./Graph.js";

/** The graph with bidirected edges made explicit, in integer indices (internal to src/graph). */
export interface ExpandedGraph {
  readonly graph: Graph;
  /** Number of user nodes (indices 0..userCount-1, in topological order). */
  readonly userCount: number;
  /** User nodes plus one latent node per bidirected edge. */
  readonly size: number;
  /** Name of each user node; index = topological position. */
  readonly names: readonly string[];
  readonly index: ReadonlyMap<string, number>;
  readonly parents: ReadonlyArray<readonly number[]>;
  readonly children: ReadonlyArray<readonly number[]>;
  /** 1 for measured user nodes, 0 for unmeasured user nodes and latent nodes. */
  readonly measured: Uint8Array;
  /** For latent node userCount + k: the bidirected edge it stands for. */
  readonly latentEdges: ReadonlyArray<readonly [string, string]>;
}

const cache = new WeakMap<Graph, ExpandedGraph>();

/**
 * Expanded graph: the graph in integer indices with one hidden common parent per bidirected edge.
 * Cached per graph (graphs are read-only). Cost: O(V + E + B) the first time, O(1) after.
 * Internal to src/graph: callers outside it use names, never these indices.
 */
export function expandGraph(graph: Graph): ExpandedGraph {
  const hit = cache.get(graph);
  if (hit) return hit;
  const names = graph.topologicalOrder;
  const userCount = names.length;
  const size = userCount + graph.bidirected.length;
  const index = new Map<string, number>();
  names.forEach((n, i) => index.set(n, i));
  const parents: number[][] = Array.from({ length: size }, () => []);
  const children: number[][] = Array.from({ length: size }, () => []);
  for (let i = 0; i < userCount; i++) {
    for (const p of graph.parents(names[i]!)) {
      const j = index.get(p)!;
      parents[i]!.push(j);
      children[j]!.push(i);
    }
  }
  graph.bidirected.forEach(([a, b], k) => {
    const l = userCount + k;
    for (const v of [index.get(a)!, index.get(b)!]) {
      children[l]!.push(v);
      parents[v]!.push(l);
    }
  });
  for (const list of parents) list.sort((a, b) => a - b);
  for (const list of children) list.sort((a, b) => a - b);
  const measured = new Uint8Array(size);
  for (let i = 0; i < userCount; i++) measured[i] = graph.isMeasured(names[i]!) ? 1 : 0;
  const expanded: ExpandedGraph = {
    graph,
    userCount,
    size,
    names,
    index,
    parents,
    children,
    measured,
    latentEdges: graph.bidirected,
  };
  cache.set(graph, expanded);
  return expanded;
}

/**
 * Index of a user node, or an UnknownNodeError naming it and what to do.
 * @throws UnknownNodeError when `name` is not a node of the graph
 */
export function nodeIndex(e: ExpandedGraph, name: string, role: string): number {
  const i = e.index.get(name);
  if (i === undefined) {
    throw new UnknownNodeError(`unknown node "${name}" given as ${role}: use a node of the graph or add it to the graph`, [name]);
  }
  return i;
}

/** Human-readable label of a node index: `"name"` or, for a latent node, `"a" <-> "b"`. */
export function nodeLabel(e: ExpandedGraph, i: number): string {
  if (i < e.userCount) return JSON.stringify(e.names[i]);
  const [a, b] = e.latentEdges[i - e.userCount]!;
  return `${JSON.stringify(a)} <-> ${JSON.stringify(b)}`;
}

/** Mark (1) every node of An(seeds) in the expanded graph, seeds included. Cost O(V + E). */
export function ancestorMark(e: ExpandedGraph, seeds: Iterable<number>): Uint8Array {
  const mark = new Uint8Array(e.size);
  const stack: number[] = [];
  for (const s of seeds) {
    if (!mark[s]) {
      mark[s] = 1;
      stack.push(s);
    }
  }
  while (stack.length > 0) {
    const v = stack.pop()!;
    for (const p of e.parents[v]!) {
      if (!mark[p]) {
        mark[p] = 1;
        stack.push(p);
      }
    }
  }
  return mark;
}

/**
 * Ancestral set: every node with a directed path into one of `nodes`, the nodes themselves
 * included, in topological order. Hidden common causes of `<->` edges are not listed.
 * Cost: O(V + E).
 * Source: the standard definition, e.g. Pearl (2009), Causality, 2nd ed., §1.2.
 * @throws UnknownNodeError when a name is not a node of the graph
 * @example
 * ancestors(createGraph({ arrows: [["a", "b"], ["b", "c"], ["d", "c"]] }), ["b"]); // ["a", "b"]
 */
export function ancestors(graph: Graph, nodes: readonly string[]): string[] {
  const e = expandGraph(graph);
  const mark = ancestorMark(
    e,
    nodes.map((n) => nodeIndex(e, n, "a node whose ancestors are wanted")),
  );
  const out: string[] = [];
  for (let i = 0; i < e.userCount; i++) if (mark[i]) out.push(e.names[i]!);
  return out;
}

/**
 * Moral graph of the ancestral set An(seeds), in local numbering.
 * `nodes[k]` is the expanded-graph index of local node k (increasing), `local[v]` the reverse
 * (−1 outside the set), `adj[k]` the neighbours of k (deduplicated, in a deterministic order).
 */
export interface MoralGraph {
  readonly nodes: Int32Array;
  readonly local: Int32Array;
  readonly adj: ReadonlyArray<readonly number[]>;
}

/**
 * Moral graph of the ancestral set of `seeds` (Lauritzen et al. 1990).
 * Cost: O(V + E + Σ_v indeg(v)²) — the marriages of co-parents dominate for nodes with many parents.
 */
export function moralAncestralGraph(e: ExpandedGraph, seeds: Iterable<number>): MoralGraph {
  const mark = ancestorMark(e, seeds);
  const local = new Int32Array(e.size).fill(-1);
  const list: number[] = [];
  for (let v = 0; v < e.size; v++) {
    if (mark[v]) {
      local[v] = list.length;
      list.push(v);
    }
  }
  // Neighbours of v: its parents, its children inside the set, and the other parents of those
  // children. `stamp` deduplicates without hashing.
  const stamp = new Int32Array(list.length).fill(-1);
  const adj: number[][] = [];
  for (let lv = 0; lv < list.length; lv++) {
    const v = list[lv]!;
    const out: number[] = [];
    stamp[lv] = lv;
    for (const p of e.parents[v]!) {
      const lp = local[p]!; // parents of an ancestor are ancestors
      if (stamp[lp] !== lv) (stamp[lp] = lv), out.push(lp);
    }
    for (const c of e.children[v]!) {
      const lc = local[c]!;
      if (lc < 0) continue;
      if (stamp[lc] !== lv) (stamp[lc] = lv), out.push(lc);
      for (const q of e.parents[c]!) {
        const lq = local[q]!;
        if (stamp[lq] !== lv) (stamp[lq] = lv), out.push(lq);
      }
    }
    adj.push(out);
  }
  return {
    nodes: Int32Array.from(list),
    local,
    adj,
  };
}

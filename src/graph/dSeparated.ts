/**
 * d-separation by linear-time reachability.
 *
 * Terms (Pearl 2009, Causality, 2nd ed., §1.2.3):
 * - A *path* is a sequence of distinct nodes, each joined to the next by an arrow in either
 *   direction. A bidirected edge `a <-> b` counts as the path a <- L -> b through its hidden
 *   common parent L (see ancestors.ts).
 * - A node m on a path is a *collider* when both neighbouring arrows point into it (-> m <-);
 *   otherwise (chain -> m ->, or fork <- m ->) it is a non-collider.
 * - Given a set Z, a path is *blocked* when some non-collider on it is in Z, or some collider on
 *   it is neither in Z nor an ancestor of a node of Z. A path that is not blocked is *open*.
 * - X and Y are *d-separated* by Z when every path between a node of X and a node of Y is blocked
 *   given Z; Z is then a *separating set* (d-separator) of X and Y. In every distribution that
 *   factorises over the DAG, d-separation implies X ⫫ Y | Z.
 *
 * Algorithm: "Reachable" of Koller & Friedman (2009), Probabilistic Graphical Models, MIT Press,
 * Algorithm 3.1 (equivalently the Bayes-ball of Shachter 1998, UAI 14:480–487): a search over
 * (node, direction-of-arrival) states that visits each state once.
 */
import { UsageError } from "../errors.js";
import type { Graph } from "./Graph.js";
import { ancestorMark, expandGraph, nodeIndex, type ExpandedGraph } from "./ancestors.js";

/**
 * Is-d-separated: whether `given` d-separates every node of `xs` from every node of `ys`.
 * An empty `xs` or `ys` is trivially separated (true).
 * Cost: O(V + E + B) for V nodes, E arrows and B bidirected edges.
 * Source: Koller & Friedman (2009), Probabilistic Graphical Models, Algorithm 3.1;
 * Shachter (1998), Bayes-ball, UAI 14:480–487.
 * @throws UnknownNodeError when a name is not a node of the graph
 * @throws UsageError when xs, ys and given are not disjoint (like networkx's is_d_separator,
 *   a node is never asked to be separated from itself or from a set it is conditioned on)
 * @example
 * const g = createGraph({ arrows: [["a", "b"], ["b", "c"]] });
 * dSeparated(g, ["a"], ["c"], ["b"]); // true
 * dSeparated(g, ["a"], ["c"], []); // false
 */
export function dSeparated(graph: Graph, xs: readonly string[], ys: readonly string[], given: readonly string[]): boolean {
  const e = expandGraph(graph);
  const role = new Map<number, string>();
  const claim = (names: readonly string[], what: string): number[] =>
    names.map((n) => {
      const i = nodeIndex(e, n, what);
      const before = role.get(i);
      if (before !== undefined && before !== what) {
        throw new UsageError(`node "${n}" is in both ${before} and ${what}: d-separation needs disjoint sets; remove it from one of them`);
      }
      role.set(i, what);
      return i;
    });
  const x = claim(xs, "xs");
  const y = claim(ys, "ys");
  const z = claim(given, "given");
  return dSeparatedIndex(e, x, y, z);
}

/**
 * Index form of `dSeparated` for src/graph internals (sets assumed disjoint and valid).
 */
export function dSeparatedIndex(e: ExpandedGraph, x: readonly number[], y: readonly number[], z: readonly number[]): boolean {
  if (x.length === 0 || y.length === 0) return true;
  const inZ = new Uint8Array(e.size);
  for (const v of z) inZ[v] = 1;
  const ancZ = ancestorMark(e, z);
  const isY = new Uint8Array(e.size);
  for (const v of y) isY[v] = 1;
  // visited[v] bit 1: arrived "up" (from a child, or as a start); bit 2: arrived "down" (from a parent).
  const visited = new Uint8Array(e.size);
  const stack: number[] = []; // encoded 2v (up) or 2v+1 (down)
  for (const v of x) {
    if (!(visited[v]! & 1)) {
      visited[v]! |= 1;
      stack.push(2 * v);
    }
  }
  const push = (v: number, down: 0 | 1) => {
    const bit = down ? 2 : 1;
    if (!(visited[v]! & bit)) {
      visited[v]! |= bit;
      stack.push(2 * v + down);
    }
  };
  while (stack.length > 0) {
    const s = stack.pop()!;
    const v = s >> 1;
    const down = s & 1;
    if (!inZ[v] && isY[v]) return false;
    if (!down) {
      // Arrived from a child (or start): chains/forks through v are open iff v ∉ Z.
      if (inZ[v]) continue;
      for (const p of e.parents[v]!) push(p, 0);
      for (const c of e.children[v]!) push(c, 1);
    } else {
      // Arrived from a parent: onward to children iff v ∉ Z; back up through a collider iff v ∈ An(Z).
      if (!inZ[v]) for (const c of e.children[v]!) push(c, 1);
      if (ancZ[v]) for (const p of e.parents[v]!) push(p, 0);
    }
  }
  return true;
}

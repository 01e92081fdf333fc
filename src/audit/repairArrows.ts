import type { Graph } from "../graph/Graph.js";

/**
 * Repair arrows for a contradicted claim x ⫫ y | S: the edges that would remove the
 * implied independence while keeping the graph acyclic, in graph-file notation.
 * `x -> y` is offered unless y is an ancestor of x, `y -> x` unless x is an ancestor of y
 * (either would close a directed cycle), and `x <-> y` (an unmeasured common cause) always.
 * Cost: O(V + E) per call (two ancestor searches).
 * @example repairArrows(g, "a", "c") // ["a -> c", "a <-> c"] when a is an ancestor of c
 */
export function repairArrows(graph: Graph, x: string, y: string): string[] {
  const out: string[] = [];
  if (!isAncestor(graph, y, x)) out.push(`${quoteName(x)} -> ${quoteName(y)}`);
  if (!isAncestor(graph, x, y)) out.push(`${quoteName(y)} -> ${quoteName(x)}`);
  out.push(`${quoteName(x)} <-> ${quoteName(y)}`);
  return out;
}

/** Whether `a` is a proper ancestor of `b` (a directed path a -> … -> b exists). */
export function isAncestor(graph: Graph, a: string, b: string): boolean {
  if (a === b) return false;
  const seen = new Set<string>([b]);
  const stack = [b];
  while (stack.length) {
    const n = stack.pop()!;
    for (const p of graph.parents(n)) {
      if (p === a) return true;
      if (!seen.has(p)) {
        seen.add(p);
        stack.push(p);
      }
    }
  }
  return false;
}

/** A node name as written in a graph file: bare when it is a plain identifier, else double-quoted. */
export function quoteName(name: string): string {
  return /^[\p{L}\p{M}\p{N}_.]+$/u.test(name) ? name : `"${name.replace(/\\/g, "\\\\").replace(/"/g, '\\"')}"`;
}

import type { Graph } from "../graph/Graph.js";
import { arrowAgainstTime, sharedCauseAgainstTime } from "../graph/timeOrder.js";

/**
 * Repair arrows for a contradicted claim x ⫫ y | S: the edges that would remove the
 * implied independence while keeping the graph acyclic and its declared time order, in
 * graph-file notation. `x -> y` is offered unless y is an ancestor of x (a directed cycle), x is
 * in a later period than y, or y is fixed; `y -> x` likewise; `x <-> y` (an unmeasured common
 * cause) unless x or y is fixed.
 * Cost: O(V + E) per call (two ancestor searches).
 * @example repairArrows(g, "a", "c") // ["a -> c", "a <-> c"] when a is an ancestor of c
 */
export function repairArrows(graph: Graph, x: string, y: string): string[] {
  const order = graph.timeOrder;
  const out: string[] = [];
  if (!isAncestor(graph, y, x) && !arrowAgainstTime(order, x, y)) out.push(`${quoteName(x)} -> ${quoteName(y)}`);
  if (!isAncestor(graph, x, y) && !arrowAgainstTime(order, y, x)) out.push(`${quoteName(y)} -> ${quoteName(x)}`);
  if (!sharedCauseAgainstTime(order, x, y)) out.push(`${quoteName(x)} <-> ${quoteName(y)}`);
  return out;
}

/**
 * What the declared time order leaves out of a claim's repairs, in one sentence; undefined when
 * it leaves out nothing. Says when only the shared unmeasured cause remains, and when nothing does.
 * Cost: O(1).
 * @example repairTimeNote(g, "stroke", "age") // "the time order rules out stroke -> age (stroke (period 3) is later than age (period 1)); …"
 */
export function repairTimeNote(graph: Graph, x: string, y: string): string | undefined {
  const order = graph.timeOrder;
  if (!order) return undefined;
  const ruled: string[] = [];
  for (const [a, b] of [[x, y], [y, x]] as const) {
    const why = arrowAgainstTime(order, a, b);
    if (why) ruled.push(`${quoteName(a)} -> ${quoteName(b)} (${why})`);
  }
  const shared = sharedCauseAgainstTime(order, x, y);
  if (shared) ruled.push(`${quoteName(x)} <-> ${quoteName(y)} (${shared})`);
  if (ruled.length === 0) return undefined;
  const left = repairArrows(graph, x, y);
  const rest =
    left.length === 0
      ? "no arrow or shared cause can explain this dependence, so look at selection, measurement or the declarations themselves"
      : left.length === 1 && left[0]!.includes("<->")
        ? `only an unmeasured common cause, ${left[0]}, fits the time order`
        : `left: ${left.join(", ")}`;
  return `the time order rules out ${ruled.join(" and ")}; ${rest}`;
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

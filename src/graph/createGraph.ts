import { CycleError, GraphError, type SourcePosition } from "../errors.js";
import type { Graph } from "./Graph.js";

/** What a parser collects before the graph is validated. */
export interface GraphSpec {
  /** Nodes in first-appearance order (may omit nodes that only appear in arrows). */
  nodes?: readonly string[];
  arrows?: ReadonlyArray<readonly [string, string]>;
  bidirected?: ReadonlyArray<readonly [string, string]>;
  unmeasured?: readonly string[];
}

const byCodePoint = (a: string, b: string): number => (a < b ? -1 : a > b ? 1 : 0);

/**
 * Build and validate a causal graph from its parts.
 * Duplicate arrows and bidirected edges are merged (callers that want to warn about them check first).
 * Cost: O(V + E log V) (Kahn's algorithm with a sorted ready list).
 * @throws GraphError for a self-arrow or an empty graph; CycleError naming one directed cycle in full.
 * @example
 * const g = createGraph({ arrows: [["a", "b"], ["b", "c"]] });
 * g.parents("c"); // ["b"]
 */
export function createGraph(spec: GraphSpec, pos: SourcePosition = {}): Graph {
  const order: string[] = [];
  const seen = new Set<string>();
  const add = (n: string) => {
    if (!seen.has(n)) {
      seen.add(n);
      order.push(n);
    }
  };
  for (const n of spec.nodes ?? []) add(n);
  const arrows: Array<readonly [string, string]> = [];
  const arrowKeys = new Set<string>();
  for (const [a, b] of spec.arrows ?? []) {
    if (a === b) throw new GraphError(`self-arrow ${a} -> ${a}: a variable cannot cause itself; remove this arrow`, pos);
    add(a);
    add(b);
    const k = JSON.stringify([a, b]);
    if (!arrowKeys.has(k)) {
      arrowKeys.add(k);
      arrows.push([a, b]);
    }
  }
  const bidirected: Array<readonly [string, string]> = [];
  const biKeys = new Set<string>();
  for (const [a, b] of spec.bidirected ?? []) {
    if (a === b) throw new GraphError(`self-loop ${a} <-> ${a}: a common cause needs two different nodes; remove it`, pos);
    add(a);
    add(b);
    const k = JSON.stringify(a < b ? [a, b] : [b, a]);
    if (!biKeys.has(k)) {
      biKeys.add(k);
      bidirected.push([a, b]);
    }
  }
  for (const u of spec.unmeasured ?? []) add(u);
  if (order.length === 0) throw new GraphError(`${pos.file ? pos.file + ": " : ""}the graph is empty: declare at least one node or arrow`, pos);

  const parents = new Map<string, string[]>();
  const children = new Map<string, string[]>();
  const spouses = new Map<string, string[]>();
  for (const n of order) {
    parents.set(n, []);
    children.set(n, []);
    spouses.set(n, []);
  }
  for (const [a, b] of arrows) {
    children.get(a)!.push(b);
    parents.get(b)!.push(a);
  }
  for (const [a, b] of bidirected) {
    spouses.get(a)!.push(b);
    spouses.get(b)!.push(a);
  }

  // Kahn's algorithm; ties broken by name so the order is deterministic.
  const indeg = new Map<string, number>();
  for (const n of order) indeg.set(n, parents.get(n)!.length);
  const ready = order.filter((n) => indeg.get(n) === 0).sort(byCodePoint);
  const topo: string[] = [];
  while (ready.length > 0) {
    const n = ready.shift()!;
    topo.push(n);
    const newly: string[] = [];
    for (const c of children.get(n)!) {
      const d = indeg.get(c)! - 1;
      indeg.set(c, d);
      if (d === 0) newly.push(c);
    }
    if (newly.length) {
      ready.push(...newly);
      ready.sort(byCodePoint);
    }
  }
  if (topo.length < order.length) throw new CycleError(findCycle(order, children, new Set(topo)), pos);

  const index = new Map<string, number>();
  topo.forEach((n, i) => index.set(n, i));
  const unmeasured = new Set(spec.unmeasured ?? []);
  const get = (m: Map<string, string[]>, n: string): readonly string[] => {
    const v = m.get(n);
    if (!v) throw new GraphError(`unknown node "${n}"`);
    return v;
  };
  return {
    nodes: order,
    arrows,
    bidirected,
    hasNode: (n) => index.has(n),
    isMeasured: (n) => index.has(n) && !unmeasured.has(n),
    parents: (n) => get(parents, n),
    children: (n) => get(children, n),
    spouses: (n) => get(spouses, n),
    topologicalOrder: topo,
    orderIndex: (n) => {
      const i = index.get(n);
      if (i === undefined) throw new GraphError(`unknown node "${n}"`);
      return i;
    },
  };
}

/** One directed cycle among the nodes Kahn's algorithm could not order, first node repeated at the end. */
function findCycle(order: readonly string[], children: Map<string, string[]>, done: Set<string>): string[] {
  const state = new Map<string, 1 | 2>(); // 1 on stack, 2 finished
  const stack: string[] = [];
  const visit = (n: string): string[] | undefined => {
    state.set(n, 1);
    stack.push(n);
    for (const c of children.get(n)!) {
      if (done.has(c)) continue;
      const s = state.get(c);
      if (s === 1) return [...stack.slice(stack.indexOf(c)), c];
      if (s === undefined) {
        const r = visit(c);
        if (r) return r;
      }
    }
    stack.pop();
    state.set(n, 2);
    return undefined;
  };
  for (const n of order) {
    if (done.has(n) || state.has(n)) continue;
    const r = visit(n);
    if (r) return r;
  }
  return [];
}

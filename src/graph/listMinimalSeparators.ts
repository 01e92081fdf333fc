/**
 * Listing every minimal allowed separating set of two nodes.
 *
 * Terms (see dSeparated.ts and findMinimalSeparator.ts): separating set, allowed, minimal. In the
 * moral graph M of An({x, y}) (where, by Facts 1–2 of findMinimalSeparator.ts, the minimal
 * separating sets are the minimal x–y cuts of allowed nodes):
 * - for a cut S, the *x-side* C_x(S) is the connected component of x in M − S, likewise C_y(S);
 * - a cut S is minimal iff every node of S has a neighbour in C_x(S) and one in C_y(S)
 *   (the "full components" characterisation, e.g. Kloks & Kratsch 1998, SIAM J. Computing
 *   27:605–613). Hence a minimal cut of allowed nodes is minimal among allowed cuts too;
 * - for a connected set X ∋ x, the *nearest cut* close(X) is the minimal allowed cut whose x-side
 *   contains X and is as small as possible: grow X by every forbidden node reachable through
 *   forbidden nodes (they can never be cut), then take S = N(C), C the component of y in
 *   M − X − N(X). It is unique (van der Zander, Liśkiewicz & Textor 2019, Artificial Intelligence
 *   270:1–40, §5; Takata 2010, Discrete Applied Mathematics 158:1660–1667).
 *
 * Enumeration (a binary partition in the style of Takata 2010): a search state is a connected set
 * X that must lie on the x-side and a set K that must not. Its nearest cut S is reported; every
 * other cut T of the state has a larger x-side, which contains some node of S; splitting on the
 * first such node v_i in S's order gives the child states (C_x(S) ∪ {v_i}, K ∪ {v_1..v_{i−1}}),
 * which partition the rest. A state whose nearest cut's x-side meets K holds no cut and is pruned,
 * so each reported set costs at most |S| nearest-cut computations: polynomial delay.
 */
import { UsageError } from "../errors.js";
import type { Graph } from "./Graph.js";
import { findMinSepLocal, prepareSeparatorSearch, type SeparatorSearch } from "./findMinimalSeparator.js";

export interface ListSeparatorsOptions {
  /** Whether a node may be in a separating set (e.g. `(n) => graph.isMeasured(n)`). */
  restrict: (name: string) => boolean;
  /** Stop after this many sets (default 100); `truncated` then says more exist. */
  cap?: number;
}

export interface SeparatorList {
  /** Minimal separating sets, each sorted by topological order; the list sorted by size, then topologically. */
  sets: string[][];
  /** True when more than `cap` minimal sets exist and only `cap` are listed. */
  truncated: boolean;
}

interface Nearest {
  cut: number[];
  /** Marks C_x(cut). */
  side: Uint8Array;
}

/** close(X) in local indices, or undefined when y cannot be cut off from X by allowed nodes. */
function nearestCut(s: SeparatorSearch, start: Uint8Array): Nearest | undefined {
  const { m, allowed, ly } = s;
  const n = m.nodes.length;
  const inX = new Uint8Array(n);
  const stack: number[] = [];
  for (let v = 0; v < n; v++) {
    if (start[v]) {
      inX[v] = 1;
      stack.push(v);
    }
  }
  // Grow X through forbidden nodes: they can never be cut, so they share X's side.
  while (stack.length > 0) {
    const v = stack.pop()!;
    for (const w of m.adj[v]!) {
      if (inX[w] || allowed[w]) continue;
      if (w === ly) return undefined;
      inX[w] = 1;
      stack.push(w);
    }
  }
  // C = component of y in M − X − N(X); every node of N(X) is allowed now.
  const blocked = new Uint8Array(n);
  for (let v = 0; v < n; v++) {
    if (!inX[v]) continue;
    blocked[v] = 1;
    for (const w of m.adj[v]!) blocked[w] = 1;
  }
  const inC = new Uint8Array(n);
  const isCut = new Uint8Array(n);
  inC[ly] = 1;
  stack.push(ly);
  while (stack.length > 0) {
    const v = stack.pop()!;
    for (const w of m.adj[v]!) {
      if (inC[w]) continue;
      if (blocked[w]) {
        if (!inX[w]) isCut[w] = 1;
        continue;
      }
      inC[w] = 1;
      stack.push(w);
    }
  }
  const cut: number[] = [];
  for (let v = 0; v < n; v++) if (isCut[v]) cut.push(v);
  // x-side: component of X in M − cut.
  const side = new Uint8Array(n);
  for (let v = 0; v < n; v++) {
    if (inX[v]) {
      side[v] = 1;
      stack.push(v);
    }
  }
  while (stack.length > 0) {
    const v = stack.pop()!;
    for (const w of m.adj[v]!) {
      if (side[w] || isCut[w]) continue;
      side[w] = 1;
      stack.push(w);
    }
  }
  return { cut, side };
}

/**
 * List-minimal-separating-sets: every inclusion-minimal set of allowed nodes that d-separates x
 * and y, up to `cap` sets. Empty when no allowed set separates them (e.g. adjacent nodes);
 * `[[]]` when they are separated unconditionally.
 * Cost: O(V + E + Σ indeg²) to build the moral ancestral graph M, then O(|S| · |M|) per set listed
 * (polynomial delay), so O(cap · V · |M|) at most.
 * Source: van der Zander, Liśkiewicz & Textor (2019), Artificial Intelligence 270:1–40 (listing
 * minimal d-separators via the moral ancestral graph); Takata (2010), Discrete Applied Mathematics
 * 158:1660–1667 (binary-partition listing of minimal vertex separators).
 * @throws UnknownNodeError when x or y is not a node of the graph
 * @throws UsageError when x and y are the same node, or cap is not a positive integer
 * @example
 * const g = createGraph({ arrows: [["a", "b"], ["a", "c"], ["b", "d"], ["c", "d"]] });
 * listMinimalSeparators(g, "a", "d", { restrict: () => true }); // { sets: [["b", "c"]], truncated: false }
 */
export function listMinimalSeparators(graph: Graph, x: string, y: string, options: ListSeparatorsOptions): SeparatorList {
  const cap = options.cap ?? 100;
  if (!Number.isInteger(cap) || cap < 1) {
    throw new UsageError(`cap ${cap} is not a positive whole number: give the most separating sets to list, e.g. 100`);
  }
  const s = prepareSeparatorSearch(graph, x, y, options.restrict);
  if (findMinSepLocal(s) === undefined) return { sets: [], truncated: false };
  const n = s.m.nodes.length;
  const found: number[][] = [];
  const visit = (start: Uint8Array, excluded: Uint8Array): void => {
    if (found.length > cap) return;
    const near = nearestCut(s, start);
    if (near === undefined) return;
    for (let v = 0; v < n; v++) if (near.side[v] && excluded[v]) return;
    found.push(near.cut);
    const k = excluded.slice();
    for (const v of near.cut) {
      if (found.length > cap) return;
      if (excluded[v]) continue;
      const next = near.side.slice();
      next[v] = 1;
      visit(next, k.slice());
      k[v] = 1;
    }
  };
  const start = new Uint8Array(n);
  start[s.lx] = 1;
  visit(start, new Uint8Array(n));
  const truncated = found.length > cap;
  const sets = found.slice(0, cap).sort((a, b) => a.length - b.length || compareLex(a, b));
  return { sets: sets.map((set) => set.map((k) => s.e.names[s.m.nodes[k]!]!)), truncated };
}

function compareLex(a: readonly number[], b: readonly number[]): number {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i]! - b[i]!;
  return 0;
}

import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { UnknownNodeError, UsageError } from "../../src/errors.js";
import { ancestors } from "../../src/graph/ancestors.js";
import { createGraph, type GraphSpec } from "../../src/graph/createGraph.js";
import { dSeparated } from "../../src/graph/dSeparated.js";
import type { Graph } from "../../src/graph/Graph.js";
import { graphArbitrary } from "../helpers/randomGraph.js";

const g = (arrows: Array<[string, string]>, extra: Partial<GraphSpec> = {}) => createGraph({ arrows, ...extra });

/**
 * The definition itself, by brute force (Pearl 2009, Causality, 2nd ed., §1.2.3): enumerate every
 * simple path of the graph with each `<->` replaced by an explicit latent parent, and call x, y
 * separated when every path has a non-collider in Z or a collider outside Z with no descendant in Z.
 * Exponential: small graphs only. Independent of the reachability algorithm under test.
 */
function separatedByDefinition(graph: Graph, xs: string[], ys: string[], zs: string[]): boolean {
  const par = new Map<string, string[]>();
  const kids = new Map<string, string[]>();
  const add = (a: string, b: string) => {
    kids.get(a)!.push(b);
    par.get(b)!.push(a);
  };
  const all = [...graph.nodes];
  for (const n of all) par.set(n, []), kids.set(n, []);
  for (const [a, b] of graph.arrows) add(a, b);
  graph.bidirected.forEach(([a, b], k) => {
    const l = `\u0000latent${k}`; // cannot be a node name of these test graphs
    par.set(l, []), kids.set(l, []);
    add(l, a), add(l, b);
  });
  const z = new Set(zs);
  const descendantsOrSelf = (v: string): Set<string> => {
    const out = new Set([v]);
    const st = [v];
    while (st.length) for (const c of kids.get(st.pop()!)!) if (!out.has(c)) out.add(c), st.push(c);
    return out;
  };
  const open = (path: string[]): boolean => {
    for (let i = 1; i < path.length - 1; i++) {
      const [a, m, b] = [path[i - 1]!, path[i]!, path[i + 1]!];
      const collider = par.get(m)!.includes(a) && par.get(m)!.includes(b);
      if (collider) {
        if (![...descendantsOrSelf(m)].some((d) => z.has(d))) return false;
      } else if (z.has(m)) return false;
    }
    return true;
  };
  const neighbours = (v: string) => [...par.get(v)!, ...kids.get(v)!];
  const ySet = new Set(ys);
  for (const x of xs) {
    const path = [x];
    const onPath = new Set([x]);
    const walk = (): boolean => {
      const v = path[path.length - 1]!;
      if (ySet.has(v) && path.length > 1) return open(path);
      for (const w of neighbours(v)) {
        if (onPath.has(w)) continue;
        path.push(w), onPath.add(w);
        const found = walk();
        path.pop(), onPath.delete(w);
        if (found) return true;
      }
      return false;
    };
    if (ySet.has(x)) return false;
    if (walk()) return false;
  }
  return true;
}

describe("dSeparated on the textbook patterns (Pearl 2009, Causality, §1.2.3)", () => {
  it("dSeparated(chain a -> b -> c): separated given {b}, not given ∅", () => {
    const chain = g([["a", "b"], ["b", "c"]]);
    expect(dSeparated(chain, ["a"], ["c"], ["b"])).toBe(true);
    expect(dSeparated(chain, ["a"], ["c"], [])).toBe(false);
  });

  it("dSeparated(fork a <- b -> c): separated given {b}, not given ∅", () => {
    const fork = g([["b", "a"], ["b", "c"]]);
    expect(dSeparated(fork, ["a"], ["c"], ["b"])).toBe(true);
    expect(dSeparated(fork, ["a"], ["c"], [])).toBe(false);
  });

  it("dSeparated(collider a -> b <- c): separated given ∅, not given {b}", () => {
    const collider = g([["a", "b"], ["c", "b"]]);
    expect(dSeparated(collider, ["a"], ["c"], [])).toBe(true);
    expect(dSeparated(collider, ["a"], ["c"], ["b"])).toBe(false);
  });

  it("dSeparated(descendant d of a collider): conditioning on d opens the path, ∅ keeps it closed", () => {
    const desc = g([["a", "b"], ["c", "b"], ["b", "d"]]);
    expect(dSeparated(desc, ["a"], ["c"], [])).toBe(true);
    expect(dSeparated(desc, ["a"], ["c"], ["d"])).toBe(false);
  });

  it("dSeparated(M-structure x <- u1 -> m <- u2 -> y): ∅ separates, {m} does not, {m, u1} does", () => {
    const m = g([["u1", "x"], ["u1", "m"], ["u2", "m"], ["u2", "y"]]);
    expect(dSeparated(m, ["x"], ["y"], [])).toBe(true);
    expect(dSeparated(m, ["x"], ["y"], ["m"])).toBe(false);
    expect(dSeparated(m, ["x"], ["y"], ["m", "u1"])).toBe(true);
    expect(dSeparated(m, ["x"], ["y"], ["m", "u2"])).toBe(true);
  });

  it("dSeparated(sprinkler graph, Pearl 2009 Fig. 1.2): X2 and X3 separated by {X1}, not by {X1, X5}", () => {
    // from memory: the textbook's worked example of d-separation (season, sprinkler, rain, wet, slippery)
    const s = g([["X1", "X2"], ["X1", "X3"], ["X2", "X4"], ["X3", "X4"], ["X4", "X5"]]);
    expect(dSeparated(s, ["X2"], ["X3"], ["X1"])).toBe(true);
    expect(dSeparated(s, ["X2"], ["X3"], ["X1", "X5"])).toBe(false);
    expect(dSeparated(s, ["X1"], ["X5"], ["X4"])).toBe(true);
    expect(dSeparated(s, ["X1"], ["X5"], ["X2"])).toBe(false);
  });

  it("dSeparated with a <-> b acts as an explicit unmeasured common parent", () => {
    const bi = g([["a", "c"]], { bidirected: [["a", "b"]] });
    expect(dSeparated(bi, ["a"], ["b"], [])).toBe(false);
    expect(dSeparated(bi, ["a"], ["b"], ["c"])).toBe(false);
    // b <-> a -> c: c and b are connected through a, and a blocks it
    expect(dSeparated(bi, ["c"], ["b"], ["a"])).toBe(true);
    expect(dSeparated(bi, ["c"], ["b"], [])).toBe(false);
    // a <-> b where a and b are colliders of the latent path: x -> a <-> b <- y
    const col = g([["x", "a"], ["y", "b"]], { bidirected: [["a", "b"]] });
    expect(dSeparated(col, ["x"], ["y"], [])).toBe(true);
    expect(dSeparated(col, ["x"], ["y"], ["a"])).toBe(true);
    expect(dSeparated(col, ["x"], ["y"], ["a", "b"])).toBe(false);
  });

  it("dSeparated with sets of nodes and Unicode names", () => {
    const u = g([["血压", "β"], ["β", "café"], ["🫀", "café"]]);
    expect(dSeparated(u, ["血压", "🫀"], ["café"], ["β"])).toBe(false); // 🫀 -> café directly
    expect(dSeparated(u, ["血压"], ["café", "🫀"], ["β"])).toBe(true);
    expect(dSeparated(u, ["血压"], ["🫀"], [])).toBe(true);
    expect(dSeparated(u, ["血压"], ["🫀"], ["café"])).toBe(false);
  });
});

describe("doc examples", () => {
  it("dSeparated and ancestors @example blocks run as written", () => {
    const g1 = createGraph({ arrows: [["a", "b"], ["b", "c"]] });
    expect(dSeparated(g1, ["a"], ["c"], ["b"])).toBe(true);
    expect(dSeparated(g1, ["a"], ["c"], [])).toBe(false);
    expect(ancestors(createGraph({ arrows: [["a", "b"], ["b", "c"], ["d", "c"]] }), ["b"])).toEqual(["a", "b"]);
  });
});

describe("dSeparated edge cases and errors", () => {
  const chain = g([["a", "b"], ["b", "c"]]);

  it("dSeparated with an empty xs or ys is trivially true", () => {
    expect(dSeparated(chain, [], ["c"], [])).toBe(true);
    expect(dSeparated(chain, ["a"], [], [])).toBe(true);
  });

  it("dSeparated on a one-node graph and on two isolated nodes", () => {
    const two = createGraph({ nodes: ["p", "q"] });
    expect(dSeparated(two, ["p"], ["q"], [])).toBe(true);
    expect(ancestors(two, ["p"])).toEqual(["p"]);
  });

  it("dSeparated throws UnknownNodeError naming the unknown node", () => {
    expect(() => dSeparated(chain, ["a"], ["zz"], [])).toThrow(UnknownNodeError);
    try {
      dSeparated(chain, ["a"], ["c"], ["nope"]);
      expect.unreachable();
    } catch (err) {
      expect(err).toBeInstanceOf(UnknownNodeError);
      expect((err as UnknownNodeError).names).toEqual(["nope"]);
      expect((err as Error).message).toBe('unknown node "nope" given as given: use a node of the graph or add it to the graph');
    }
  });

  it("dSeparated throws UsageError when xs, ys and given overlap", () => {
    expect(() => dSeparated(chain, ["a"], ["a"], [])).toThrow(UsageError);
    expect(() => dSeparated(chain, ["a"], ["c"], ["a"])).toThrow(UsageError);
    expect(() => dSeparated(chain, ["a"], ["c"], ["c"])).toThrow(/node "c" is in both ys and given: d-separation needs disjoint sets; remove it from one of them/);
    // a repeated name within one set is not an overlap
    expect(dSeparated(chain, ["a", "a"], ["c"], ["b", "b"])).toBe(true);
  });

  it("dSeparated does not mutate its inputs (frozen arrays)", () => {
    const xs = Object.freeze(["a"]);
    const ys = Object.freeze(["c"]);
    const zs = Object.freeze(["b"]);
    expect(dSeparated(chain, xs, ys, zs)).toBe(true);
  });

  it("ancestors(graph, nodes) lists the ancestral set in topological order, hidden causes excluded", () => {
    const a = g([["a", "b"], ["b", "c"], ["d", "c"], ["e", "d"]], { bidirected: [["a", "e"]] });
    expect(ancestors(a, ["c"])).toEqual(["a", "b", "e", "d", "c"].sort((p, q) => a.orderIndex(p) - a.orderIndex(q)));
    expect(ancestors(a, ["b"])).toEqual(["a", "b"]);
    expect(() => ancestors(a, ["zz"])).toThrow(UnknownNodeError);
  });
});

describe("dSeparated properties on random graphs", () => {
  it("dSeparated(x, y, Z) agrees with the path-by-path definition on small random graphs", () => {
    fc.assert(
      fc.property(graphArbitrary(7), fc.integer({ min: 0, max: 1e9 }), ({ graph }, pick) => {
        const nodes = graph.nodes;
        if (nodes.length < 2) return;
        // deterministic spread of (x, y, Z) from `pick`
        let r = pick;
        const next = (k: number) => {
          const v = r % k;
          r = Math.floor(r / k) + 7919 * v + 1;
          return v;
        };
        const x = nodes[next(nodes.length)]!;
        const rest = nodes.filter((n) => n !== x);
        const y = rest[next(rest.length)]!;
        const z = rest.filter((n) => n !== y && next(3) === 0);
        const got = dSeparated(graph, [x], [y], z);
        expect(got).toBe(separatedByDefinition(graph, [x], [y], z));
        expect(dSeparated(graph, [y], [x], z)).toBe(got); // symmetry
      }),
      { numRuns: 300, seed: 11 },
    );
  });

  it("dSeparated: every node is separated from its non-descendants by its parents (local Markov property)", () => {
    fc.assert(
      fc.property(graphArbitrary(10), ({ graph }) => {
        for (const v of graph.nodes) {
          // expanded parents: arrows plus one hidden parent per <->, so only test nodes without <->
          if (graph.spouses(v).length > 0) continue;
          const desc = new Set<string>([v]);
          const st = [v];
          while (st.length) for (const c of graph.children(st.pop()!)) if (!desc.has(c)) desc.add(c), st.push(c);
          const pa = new Set(graph.parents(v));
          const others = graph.nodes.filter((n) => !desc.has(n) && !pa.has(n));
          if (others.length > 0) expect(dSeparated(graph, [v], others, [...pa])).toBe(true);
          // and the parents themselves are never separated from v
          for (const p of pa) expect(dSeparated(graph, [v], [p], others)).toBe(false);
        }
      }),
      { numRuns: 150, seed: 12 },
    );
  });
});

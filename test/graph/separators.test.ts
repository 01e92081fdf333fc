import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { UnknownNodeError, UsageError } from "../../src/errors.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { dSeparated } from "../../src/graph/dSeparated.js";
import { findMinimalSeparator } from "../../src/graph/findMinimalSeparator.js";
import type { Graph } from "../../src/graph/Graph.js";
import { listMinimalSeparators } from "../../src/graph/listMinimalSeparators.js";
import { graphArbitrary } from "../helpers/randomGraph.js";

const all = () => true;
const key = (s: readonly string[]) => JSON.stringify([...s].sort());

/** Every allowed subset that separates x and y, by brute force over subsets (small graphs only). */
function bruteForce(graph: Graph, x: string, y: string, allowed: (n: string) => boolean) {
  const cands = graph.nodes.filter((n) => n !== x && n !== y && allowed(n));
  const separating: string[][] = [];
  for (let mask = 0; mask < 1 << cands.length; mask++) {
    const z = cands.filter((_, i) => mask & (1 << i));
    if (dSeparated(graph, [x], [y], z)) separating.push(z);
  }
  const sepKeys = new Set(separating.map(key));
  const minimal = separating.filter((z) => z.every((_, i) => !sepKeys.has(key(z.filter((__, j) => j !== i)))));
  const minSize = separating.length ? Math.min(...separating.map((z) => z.length)) : undefined;
  return { separating, minimal, minSize };
}

/** Minimal: separates, and stops separating when any one member is removed. */
function expectMinimalSeparator(graph: Graph, x: string, y: string, z: string[]) {
  expect(dSeparated(graph, [x], [y], z)).toBe(true);
  for (let i = 0; i < z.length; i++) {
    expect(dSeparated(graph, [x], [y], z.filter((_, j) => j !== i))).toBe(false);
  }
}

describe("findMinimalSeparator on worked examples", () => {
  const diamond = createGraph({ arrows: [["a", "b"], ["a", "c"], ["b", "d"], ["c", "d"]] });

  it("findMinimalSeparator(diamond a -> {b, c} -> d, a, d) is {b, c}; adjacent a, b gives undefined", () => {
    expect(findMinimalSeparator(diamond, "a", "d", { restrict: all })).toEqual(["b", "c"]);
    expect(findMinimalSeparator(diamond, "d", "a", { restrict: all })).toEqual(["b", "c"]);
    expect(findMinimalSeparator(diamond, "a", "b", { restrict: all })).toBeUndefined();
    expect(findMinimalSeparator(diamond, "b", "a", { restrict: all })).toBeUndefined();
    expect(findMinimalSeparator(diamond, "b", "c", { restrict: all })).toEqual(["a"]);
  });

  it("listMinimalSeparators @example runs as written", () => {
    expect(listMinimalSeparators(diamond, "a", "d", { restrict: all })).toEqual({ sets: [["b", "c"]], truncated: false });
  });

  it("findMinimalSeparator returns undefined when the only separating node is not allowed", () => {
    expect(findMinimalSeparator(diamond, "b", "c", { restrict: (n) => n !== "a" })).toBeUndefined();
    expect(findMinimalSeparator(diamond, "a", "d", { restrict: (n) => n !== "c" })).toBeUndefined();
  });

  it("findMinimalSeparator(M-structure) is empty; conditioning on the collider is never needed", () => {
    const m = createGraph({ arrows: [["u1", "x"], ["u1", "m"], ["u2", "m"], ["u2", "y"]] });
    expect(findMinimalSeparator(m, "x", "y", { restrict: all })).toEqual([]);
    expect(findMinimalSeparator(m, "x", "y", { restrict: all, minimum: false })).toEqual([]);
    expect(listMinimalSeparators(m, "x", "y", { restrict: all })).toEqual({ sets: [[]], truncated: false });
  });

  it("findMinimalSeparator: a <-> b is never separable, and its hidden cause is never returned", () => {
    const bi = createGraph({ arrows: [["c", "a"], ["c", "b"]], bidirected: [["a", "b"]] });
    expect(findMinimalSeparator(bi, "a", "b", { restrict: all })).toBeUndefined();
    expect(listMinimalSeparators(bi, "a", "b", { restrict: all })).toEqual({ sets: [], truncated: false });
    // x -> a <-> b <- y: the hidden cause sits between two colliders; ∅ separates x and y
    const col = createGraph({ arrows: [["x", "a"], ["y", "b"]], bidirected: [["a", "b"]] });
    expect(findMinimalSeparator(col, "x", "y", { restrict: all })).toEqual([]);
    // x <- a <-> b -> y: x and y are linked through the hidden cause, cut by a or b
    const chain = createGraph({ arrows: [["a", "x"], ["b", "y"]], bidirected: [["a", "b"]] });
    expect(findMinimalSeparator(chain, "x", "y", { restrict: all })).toEqual(["a"]);
    expect(listMinimalSeparators(chain, "x", "y", { restrict: all }).sets).toEqual([["a"], ["b"]]);
  });

  it("findMinimalSeparator: the minimum set is smaller than the linear-time minimal one where they differ", () => {
    // x <- p1 <- h, x <- p2 <- h, h -> y. Sets near x: {p1, p2} (minimal); near y: {h} (minimum).
    const gr = createGraph({ arrows: [["h", "p1"], ["h", "p2"], ["p1", "x"], ["p2", "x"], ["h", "y"]] });
    const minimum = findMinimalSeparator(gr, "x", "y", { restrict: all })!;
    expect(minimum).toEqual(["h"]);
    const lists = listMinimalSeparators(gr, "x", "y", { restrict: all });
    expect(lists.sets).toEqual([["h"], ["p1", "p2"]]);
  });

  it("findMinimalSeparator is unique among ties: the minimum set nearest the topologically earlier node", () => {
    // two size-1 separators on a chain a -> b -> c -> d: {b} is nearer to a
    const chain = createGraph({ arrows: [["a", "b"], ["b", "c"], ["c", "d"]] });
    expect(findMinimalSeparator(chain, "a", "d", { restrict: all })).toEqual(["b"]);
    expect(findMinimalSeparator(chain, "d", "a", { restrict: all })).toEqual(["b"]);
    expect(listMinimalSeparators(chain, "a", "d", { restrict: all }).sets).toEqual([["b"], ["c"]]);
  });

  it("findMinimalSeparator throws UnknownNodeError / UsageError", () => {
    expect(() => findMinimalSeparator(diamond, "a", "zz", { restrict: all })).toThrow(UnknownNodeError);
    expect(() => findMinimalSeparator(diamond, "a", "a", { restrict: all })).toThrow(UsageError);
    expect(() => listMinimalSeparators(diamond, "q", "a", { restrict: all })).toThrow(UnknownNodeError);
    expect(() => listMinimalSeparators(diamond, "a", "d", { restrict: all, cap: 0 })).toThrow(/cap 0 is not a positive whole number/);
  });

  it("listMinimalSeparators stops at cap with truncated = true (2^8 sets on 8 parallel paths)", () => {
    const arrows: Array<[string, string]> = [];
    for (let i = 0; i < 8; i++) arrows.push(["x", `a${i}`], [`a${i}`, `b${i}`], [`b${i}`, "y"]);
    const par = createGraph({ arrows });
    const capped = listMinimalSeparators(par, "x", "y", { restrict: all });
    expect(capped.truncated).toBe(true);
    expect(capped.sets).toHaveLength(100); // default cap
    for (const z of capped.sets) expect(z).toHaveLength(8);
    expect(new Set(capped.sets.map(key)).size).toBe(100);
    const full = listMinimalSeparators(par, "x", "y", { restrict: all, cap: 256 });
    expect(full).toMatchObject({ truncated: false });
    expect(full.sets).toHaveLength(256); // 2 choices on each of 8 paths
    const over = listMinimalSeparators(par, "x", "y", { restrict: all, cap: 255 });
    expect(over.truncated).toBe(true);
    expect(findMinimalSeparator(par, "x", "y", { restrict: all })).toHaveLength(8);
  });
});

describe("separating sets: theorems on random graphs against brute force", () => {
  it("findMinimalSeparator: exists iff some allowed set separates; minimum size equals brute force; result minimal", () => {
    fc.assert(
      fc.property(graphArbitrary(8), ({ graph }) => {
        const allowed = (n: string) => graph.isMeasured(n);
        const ns = graph.nodes;
        for (let i = 0; i < ns.length; i++) {
          for (let j = i + 1; j < ns.length; j++) {
            const [x, y] = [ns[i]!, ns[j]!];
            const bf = bruteForce(graph, x, y, allowed);
            const minimum = findMinimalSeparator(graph, x, y, { restrict: allowed });
            const minimal = findMinimalSeparator(graph, x, y, { restrict: allowed, minimum: false });
            const listed = listMinimalSeparators(graph, x, y, { restrict: allowed });
            if (bf.minSize === undefined) {
              expect(minimum).toBeUndefined();
              expect(minimal).toBeUndefined();
              expect(listed).toEqual({ sets: [], truncated: false });
              continue;
            }
            expect(minimum).toBeDefined();
            expect(minimal).toBeDefined();
            expectMinimalSeparator(graph, x, y, minimum!);
            expectMinimalSeparator(graph, x, y, minimal!);
            for (const z of [...minimum!, ...minimal!]) expect(allowed(z)).toBe(true);
            expect(minimum!.length).toBe(bf.minSize);
            // argument order does not change the minimum set
            expect(findMinimalSeparator(graph, y, x, { restrict: allowed })).toEqual(minimum);
            // the list is exactly the brute-force minimal sets, each sorted topologically
            expect(listed.truncated).toBe(false);
            expect(new Set(listed.sets.map(key))).toEqual(new Set(bf.minimal.map(key)));
            expect(listed.sets.length).toBe(bf.minimal.length);
            for (const z of listed.sets) {
              expect(z).toEqual([...z].sort((a, b) => graph.orderIndex(a) - graph.orderIndex(b)));
              expect(minimum!.length).toBeLessThanOrEqual(z.length);
            }
            expect(listed.sets.map(key)).toContain(key(minimum!));
            expect(listed.sets.map(key)).toContain(key(minimal!));
          }
        }
      }),
      { numRuns: 120, seed: 21 },
    );
  });
});

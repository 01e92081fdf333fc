import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { createGraph } from "../../src/graph/createGraph.js";
import { isAncestor, quoteName, repairArrows } from "../../src/audit/repairArrows.js";
import { graphArbitrary } from "../helpers/randomGraph.js";

describe("repairArrows", () => {
  it("repairArrows offers only the direction that keeps the graph acyclic, and always <->", () => {
    const g = createGraph({ arrows: [["a", "b"], ["b", "c"]] });
    expect(repairArrows(g, "a", "c")).toEqual(["a -> c", "a <-> c"]); // c -> a would close a -> b -> c -> a
    const h = createGraph({ arrows: [["z", "x"], ["z", "y"]] });
    expect(repairArrows(h, "x", "y")).toEqual(["x -> y", "y -> x", "x <-> y"]);
  });
  it("repairArrows quotes names the graph format needs quoted", () => {
    const g = createGraph({ arrows: [["systolic bp", "b"]], nodes: ["c"] });
    expect(repairArrows(g, "systolic bp", "c")).toContain('"systolic bp" -> c');
    expect(quoteName("âge_2")).toBe("âge_2");
    expect(quoteName('a"b')).toBe('"a\\"b"');
  });
  it("every offered directed repair keeps the graph acyclic (property, createGraph rejects cycles)", () => {
    fc.assert(
      fc.property(graphArbitrary(8), ({ graph }) => {
        const nodes = graph.nodes;
        for (let i = 0; i < nodes.length; i++)
          for (let j = i + 1; j < nodes.length; j++) {
            const [x, y] = [nodes[i]!, nodes[j]!];
            if (graph.parents(y).includes(x) || graph.parents(x).includes(y)) continue;
            for (const [a, b] of [[x, y], [y, x]] as const) {
              const offered = !isAncestor(graph, b, a);
              let acyclic = true;
              try {
                createGraph({ nodes: graph.nodes, arrows: [...graph.arrows, [a, b]], bidirected: graph.bidirected });
              } catch {
                acyclic = false;
              }
              if (offered !== acyclic) return false;
            }
          }
        return true;
      }),
      { numRuns: 60, seed: 3 },
    );
  });
});

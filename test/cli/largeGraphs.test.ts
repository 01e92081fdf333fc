/**
 * Large graphs in the command layer: counting missing arrows before listing them, deriving
 * claims one at a time, the streamed `claims --json` document, the size limits, the graph
 * building that was quadratic or recursive, and the layout methods chosen by size.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { checkClaimCount } from "../../cli/limits.js";
import { parseResults } from "../../cli/readResults.js";
import { writeClaimsJson } from "../../cli/writeClaimsJson.js";
import { run } from "../../cli/program.js";
import type { Io } from "../../cli/io.js";
import { GraphError } from "../../src/errors.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { claimEntries, countMissingArrows, deriveClaims } from "../../src/graph/deriveClaims.js";
import { graphSummary } from "../../src/graph/graphSummary.js";
import type { Graph } from "../../src/graph/Graph.js";
import { chooseLayout, LAYOUT_THRESHOLDS, layoutGraph } from "../../src/report/layoutGraph.js";
import { longestPathLayers, placeInLayers } from "../../src/report/placeInLayers.js";
import { join } from "node:path";

/** A random DAG: nodes n0…n(k-1), arrows from lower to higher index, some unmeasured nodes and `<->` edges. */
const dagSpec = fc
  .integer({ min: 2, max: 14 })
  .chain((k) =>
    fc.record({
      k: fc.constant(k),
      arrows: fc.uniqueArray(fc.tuple(fc.nat(k - 1), fc.nat(k - 1)).filter(([a, b]) => a < b), { maxLength: 30, selector: ([a, b]) => `${a} ${b}` }),
      bidirected: fc.uniqueArray(fc.tuple(fc.nat(k - 1), fc.nat(k - 1)).filter(([a, b]) => a < b), { maxLength: 4, selector: ([a, b]) => `${a} ${b}` }),
      unmeasured: fc.uniqueArray(fc.nat(k - 1), { maxLength: 3 }),
    }),
  );
function graphOf(s: { k: number; arrows: [number, number][]; bidirected: [number, number][]; unmeasured: number[] }): Graph {
  const name = (i: number) => `n${i}`;
  return createGraph({
    nodes: Array.from({ length: s.k }, (_, i) => name(i)),
    arrows: s.arrows.map(([a, b]) => [name(a), name(b)] as const),
    bidirected: s.bidirected.map(([a, b]) => [name(a), name(b)] as const),
    unmeasured: s.unmeasured.map(name),
  });
}

describe("countMissingArrows and claimEntries", () => {
  it("countMissingArrows equals the number of entries deriveClaims gives (one per missing arrow), by the definition", () => {
    fc.assert(
      fc.property(dagSpec, (s) => {
        const g = graphOf(s);
        // from the definition: unordered pairs of measured nodes with no arrow either way
        const measured = g.nodes.filter((n) => g.isMeasured(n));
        let brute = 0;
        for (let i = 0; i < measured.length; i++) {
          for (let j = i + 1; j < measured.length; j++) {
            const [a, b] = [measured[i]!, measured[j]!];
            if (!g.parents(a).includes(b) && !g.parents(b).includes(a)) brute++;
          }
        }
        expect(countMissingArrows(g)).toBe(brute);
        for (const sets of ["union-parents", "minimal"] as const) {
          const d = deriveClaims(g, { sets });
          expect(d.claims.length + d.untestable.length).toBe(brute);
        }
      }),
      { numRuns: 150 },
    );
  });

  it("claimEntries yields deriveClaims' entries in the same order, for every kind of set", () => {
    fc.assert(
      fc.property(dagSpec, fc.constantFrom("union-parents", "minimal", "all-minimal" as const), (s, sets) => {
        const g = graphOf(s);
        const d = deriveClaims(g, { sets, cap: 3 });
        const claims = [];
        const untestable = [];
        const it = claimEntries(g, { sets, cap: 3 });
        let r = it.next();
        for (; !r.done; r = it.next()) {
          if (r.value.kind === "claim") claims.push(r.value.claim);
          else untestable.push(r.value.untestable);
        }
        expect({ claims, untestable, truncatedPairs: r.value.truncatedPairs }).toEqual(d);
      }),
      { numRuns: 100 },
    );
  });

  it("countMissingArrows @example: a -> b -> c has one missing arrow", () => {
    expect(countMissingArrows(createGraph({ arrows: [["a", "b"], ["b", "c"]] }))).toBe(1);
  });

  it("checkClaimCount passes a graph at the limit and refuses one above it, naming the counts", () => {
    const chain = (n: number) => createGraph({ arrows: Array.from({ length: n - 1 }, (_, i) => [`c${i}`, `c${i + 1}`] as const) });
    const g = chain(10); // 45 pairs − 9 arrows = 36 missing arrows
    expect(() => checkClaimCount(g, "g.txt", 36, "test tests", "do less")).not.toThrow();
    expect(() => checkClaimCount(g, "g.txt", 35, "test tests", "do less")).toThrow(GraphError);
    expect(() => checkClaimCount(g, "g.txt", 35, "test tests", "do less")).toThrow("g.txt: 10 measured nodes with 36 missing arrows among them, one claim each; test tests at most 35 (see Limits in the README); do less");
  });
});

describe("streamed claims --json", () => {
  const write = (g: Graph, tail: Record<string, unknown> = {}) => {
    let out = "";
    const chunks: string[] = [];
    writeClaimsJson((s) => (chunks.push(s), (out += s)), { graph: graphSummary(g) }, claimEntries(g), () => tail);
    return { out, chunks };
  };

  it("writeClaimsJson equals JSON.stringify(doc, null, 2) on random graphs (ECMA-262 JSON.stringify as the reference)", () => {
    fc.assert(
      fc.property(dagSpec, (s) => {
        const g = graphOf(s);
        const d = deriveClaims(g);
        expect(write(g, { ignored_columns: ["z"] }).out).toBe(JSON.stringify({ graph: graphSummary(g), claims: d.claims, untestable: d.untestable, ignored_columns: ["z"] }, null, 2) + "\n");
      }),
      { numRuns: 100 },
    );
  });

  it("writeClaimsJson writes names that JSON must escape exactly as JSON.stringify does, and an empty claims list as []", () => {
    const odd = ['say "hi"', "back\\slash", "tab\there", "nul\u0000", "é", "\u2028line", "😀"];
    const g = createGraph({ nodes: odd, arrows: [[odd[0]!, odd[1]!], [odd[1]!, odd[2]!]] });
    const d = deriveClaims(g);
    expect(write(g).out).toBe(JSON.stringify({ graph: graphSummary(g), claims: d.claims, untestable: d.untestable }, null, 2) + "\n");
    const complete = createGraph({ arrows: [["a", "b"], ["a", "c"], ["b", "c"]] });
    expect(write(complete).out).toBe(JSON.stringify({ graph: graphSummary(complete), claims: [], untestable: [] }, null, 2) + "\n");
  });

  it("writeClaimsJson writes in chunks, not one string, and derives the first entry before writing anything", () => {
    const g = createGraph({ nodes: Array.from({ length: 400 }, (_, i) => `node_${i}`) }); // 79,800 claims
    const { out, chunks } = write(g);
    expect(chunks.length).toBeGreaterThan(50);
    expect(Math.max(...chunks.map((c) => c.length))).toBeLessThan(2 * 65536);
    expect(JSON.parse(out).claims).toHaveLength(79_800);
    const bad = claimEntries(g, { sets: "none" as never });
    let written = "";
    expect(() => writeClaimsJson((s) => (written += s), {}, bad, () => ({}))).toThrow("unknown separating-set choice");
    expect(written).toBe("");
  });
});

describe("graph building at scale", () => {
  /** The order the sorted ready list gave before the heap (Kahn's algorithm, smallest name first): the reference. */
  function sortedListOrder(nodes: string[], arrows: [string, string][]): string[] {
    const indeg = new Map(nodes.map((n) => [n, 0]));
    const kids = new Map(nodes.map((n) => [n, [] as string[]]));
    for (const [a, b] of arrows) {
      indeg.set(b, indeg.get(b)! + 1);
      kids.get(a)!.push(b);
    }
    const ready = nodes.filter((n) => indeg.get(n) === 0);
    const out: string[] = [];
    while (ready.length) {
      ready.sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
      const n = ready.shift()!;
      out.push(n);
      for (const c of kids.get(n)!) {
        indeg.set(c, indeg.get(c)! - 1);
        if (indeg.get(c) === 0) ready.push(c);
      }
    }
    return out;
  }

  it("createGraph's topological order (a heap of ready nodes) is the one the sorted ready list gave", () => {
    fc.assert(
      fc.property(dagSpec, fc.array(fc.string({ minLength: 1, maxLength: 3 }), { minLength: 14, maxLength: 14 }), (s, labels) => {
        const names = [...new Set(labels.map((l, i) => `${l}${i % 3}`))];
        if (names.length < s.k) return;
        const arrows = s.arrows.map(([a, b]) => [names[a]!, names[b]!] as [string, string]);
        const g = createGraph({ nodes: names.slice(0, s.k), arrows });
        expect(g.topologicalOrder).toEqual(sortedListOrder(names.slice(0, s.k), arrows));
      }),
      { numRuns: 200 },
    );
  });

  it("createGraph names a cycle of 200,000 nodes in full (the recursive search overflowed the stack)", () => {
    const n = 200_000;
    const arrows = Array.from({ length: n }, (_, i) => [`c${i}`, `c${(i + 1) % n}`] as const);
    let cycle: readonly string[] = [];
    try {
      createGraph({ arrows });
    } catch (e) {
      cycle = (e as { cycle: readonly string[] }).cycle;
    }
    expect(cycle).toHaveLength(n + 1);
    expect(cycle[0]).toBe(cycle[n]);
    for (let i = 0; i < n; i++) expect(cycle[i + 1]).toBe(`c${(Number(cycle[i]!.slice(1)) + 1) % n}`);
  });

  it("createGraph's cycle is a real directed cycle on random graphs with a back arrow", () => {
    fc.assert(
      fc.property(dagSpec, (s) => {
        if (s.arrows.length === 0) return;
        const [a, b] = s.arrows[0]!;
        const arrows = [...s.arrows.map(([x, y]) => [`n${x}`, `n${y}`] as const), [`n${b}`, `n${a}`] as const];
        let cycle: readonly string[] = [];
        try {
          createGraph({ arrows });
        } catch (e) {
          cycle = (e as { cycle: readonly string[] }).cycle;
        }
        expect(cycle.length).toBeGreaterThan(2);
        expect(cycle[0]).toBe(cycle.at(-1));
        const set = new Set(arrows.map(([x, y]) => `${x} ${y}`));
        for (let i = 0; i + 1 < cycle.length; i++) expect(set.has(`${cycle[i]} ${cycle[i + 1]}`)).toBe(true);
      }),
      { numRuns: 100 },
    );
  });
});

describe("layouts by size", () => {
  const chainSummary = (n: number) => graphSummary(createGraph({ nodes: Array.from({ length: n }, (_, i) => `c${i}`), arrows: Array.from({ length: n - 1 }, (_, i) => [`c${i}`, `c${i + 1}`] as const) }));

  it("longestPathLayers @example: 0 -> 1 -> 2 with 0 -> 2 has three layers and one dummy", () => {
    const l = longestPathLayers(3, [[0, 1], [1, 2], [0, 2]]);
    expect([...l.layer]).toEqual([0, 1, 2]);
    expect(l.layers).toBe(3);
    expect(l.dummies).toBe(1);
  });

  it("placeInLayers @example and properties: arrows run left to right, boxes in a layer never overlap, all inside the canvas", () => {
    const spacing = { pad: 28, betweenLayers: 64, betweenNodes: 30 };
    expect(placeInLayers([[0, 1]], [{ width: 60, height: 34 }, { width: 60, height: 34 }], spacing).x[1]).toBe(152); // 28 + 60 + 64
    fc.assert(
      fc.property(dagSpec, (s) => {
        const sizes = Array.from({ length: s.k }, (_, i) => ({ width: 52 + (i % 5) * 9, height: i % 2 ? 38 : 34 }));
        const p = placeInLayers(s.arrows, sizes, spacing);
        for (const [a, b] of s.arrows) expect(p.x[b]!).toBeGreaterThanOrEqual(p.x[a]! + sizes[a]!.width + spacing.betweenLayers);
        for (let i = 0; i < s.k; i++) {
          expect(p.x[i]!).toBeGreaterThanOrEqual(spacing.pad);
          expect(p.y[i]!).toBeGreaterThanOrEqual(spacing.pad - 1e-9);
          expect(p.x[i]! + sizes[i]!.width).toBeLessThanOrEqual(p.width - spacing.pad + 1e-9);
          expect(p.y[i]! + sizes[i]!.height).toBeLessThanOrEqual(p.height - spacing.pad + 1e-9);
          for (let j = i + 1; j < s.k; j++) {
            const apart = p.x[i]! + sizes[i]!.width <= p.x[j]! || p.x[j]! + sizes[j]!.width <= p.x[i]! || p.y[i]! + sizes[i]!.height <= p.y[j]! || p.y[j]! + sizes[j]!.height <= p.y[i]!;
            expect(apart).toBe(true);
          }
        }
      }),
      { numRuns: 100 },
    );
  });

  it("chooseLayout switches at its thresholds: full layout to 500 nodes and dummies, faster placement to 3,000, simple above or beyond 1,500 layers", () => {
    expect(chooseLayout(chainSummary(LAYOUT_THRESHOLDS.layered)).method).toBe("layered");
    expect(chooseLayout(chainSummary(LAYOUT_THRESHOLDS.layered + 1)).method).toBe("layered-fast");
    expect(chooseLayout(chainSummary(LAYOUT_THRESHOLDS.elkLayers)).method).toBe("layered-fast");
    expect(chooseLayout(chainSummary(LAYOUT_THRESHOLDS.elkLayers + 1)).method).toBe("layered-simple");
    // a star of one root and its leaves: two layers, no dummies, so the work is the number of nodes
    const star = graphSummary(createGraph({ arrows: Array.from({ length: 2_999 }, (_, i) => ["root", `leaf${i}`] as const) }));
    expect(chooseLayout(star)).toMatchObject({ method: "layered-fast", nodes: 3_000, layers: 2, dummies: 0 });
    const star2 = graphSummary(createGraph({ arrows: Array.from({ length: 3_000 }, (_, i) => ["root", `leaf${i}`] as const) }));
    expect(chooseLayout(star2).method).toBe("layered-simple");
  });

  it("layoutGraph of a 2,000-node chain uses the simple layout (elkjs overflowed its stack on deep chains) with every node placed", async () => {
    const g = chainSummary(2_000);
    const l = await layoutGraph(g);
    expect(l.method).toBe("layered-simple");
    expect(l.nodes).toHaveLength(2_000);
    expect(l.arrows.every((a) => a.points.length === 2 && a.points[1]!.x > a.points[0]!.x)).toBe(true);
  });

  it("the demo graph keeps the full layered layout", async () => {
    const { readFileSync } = await import("node:fs");
    const { readGraphSource } = await import("../../src/graph/readGraphSource.js");
    const g = readGraphSource(readFileSync(join(import.meta.dirname, "..", "..", "data", "demo", "graph.txt")), { file: "graph.txt" }).graph;
    expect(chooseLayout(graphSummary(g)).method).toBe("layered");
  });

  it("draw on a terminal says which layout it is computing, then clears the line", async () => {
    let stderr = "";
    const { mkdtempSync, writeFileSync, rmSync } = await import("node:fs");
    const { tmpdir } = await import("node:os");
    const dir = mkdtempSync(join(tmpdir(), "arrowaudit-draw-"));
    writeFileSync(join(dir, "g.txt"), Array.from({ length: 1_999 }, (_, i) => `c${i} -> c${i + 1}`).join("\n"));
    const io: Io = { stdout: () => {}, stderr: (s) => (stderr += s), stdoutIsTTY: false, stderrIsTTY: true, env: {}, cwd: dir, now: () => new Date(0) };
    expect(await run(["draw", "g.txt"], io)).toBe(0);
    rmSync(dir, { recursive: true, force: true });
    expect(stderr).toContain("\rdrawing 2,000 nodes and 1,999 arrows: simple layered layout (no crossing reduction)…");
    expect(stderr).toMatch(/\r +\r/);
  });
});

describe("results files", () => {
  it("parseResults keeps the claims of a valid result as they are", () => {
    const claims = [
      { x: "a", y: "c", given: ["b"], test: "gcm", effect: -0.31, ci: [-0.4, -0.2], verdict: "contradicted", rank: 1, n: 90, details: {} },
      { x: "a", y: "d", given: [], test: "stratified-chisq", effect: 0, ci: [0, 0.1], verdict: "consistent", rank: 2 },
    ];
    expect(parseResults(JSON.stringify({ tool: {}, claims }), "r.json").claims).toEqual(claims);
  });

  it("parseResults names the first wrong field of each kind", () => {
    const ok = { x: "a", y: "b", given: [], test: "gcm", effect: 0.1, ci: [0, 0.2], verdict: "consistent", rank: 1 };
    const cases: Array<[unknown, string]> = [
      [{ ...ok, x: "" }, "claims[0].x is \"\"; expected a node name"],
      [{ ...ok, y: 7 }, "claims[0].y is 7; expected a node name"],
      [{ ...ok, given: "b" }, 'claims[0].given is "b"; expected a list of node names'],
      [{ ...ok, effect: 1.5 }, "claims[0].effect is 1.5; expected a number from -1 to 1"],
      [{ ...ok, effect: null }, "claims[0].effect is null"],
      [{ ...ok, ci: [0.3, 0.2] }, "claims[0].ci is a list of 2; expected two numbers [lower, upper], lower first"],
      [{ ...ok, rank: 1.5 }, "claims[0].rank is 1.5"],
      [{ ...ok, details: [] }, "claims[0].details is a list of 0; expected an object"],
      [[ok], "claims[0] is a list of 1; expected an object with x, y, given, test, effect, ci, verdict, rank"],
    ];
    for (const [claim, message] of cases) expect(() => parseResults(JSON.stringify({ claims: [claim] }), "r.json")).toThrow(`r.json: ${message}`);
  });
});

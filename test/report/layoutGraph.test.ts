import { describe, expect, it } from "vitest";
import { layoutGraph, contradictionMarks } from "../../src/report/layoutGraph.js";
import { UnknownNodeError } from "../../src/errors.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";

type Box = { x: number; y: number; width: number; height: number };
const overlap = (a: Box, b: Box) => a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;

describe("layoutGraph", () => {
  it("layoutGraph(result) places one box per node, inside the canvas, none overlapping", async () => {
    const r = sampleResult();
    const l = await layoutGraph(r);
    expect(l.nodes.map((n) => n.id)).toEqual(r.graph.nodes);
    for (const n of l.nodes) {
      expect(n.x).toBeGreaterThanOrEqual(0);
      expect(n.y).toBeGreaterThanOrEqual(0);
      expect(n.x + n.width).toBeLessThanOrEqual(l.width);
      expect(n.y + n.height).toBeLessThanOrEqual(l.height);
    }
    for (let i = 0; i < l.nodes.length; i++) for (let j = i + 1; j < l.nodes.length; j++) expect(overlap(l.nodes[i]!, l.nodes[j]!)).toBe(false);
    expect(l.nodes.find((n) => n.id === "workload")!.measured).toBe(false);
    expect(l.nodes.find((n) => n.id === "sbp")!.measured).toBe(true);
  });

  it("layoutGraph(result) routes every arrow left to right and one connector per bidirected edge and contradiction", async () => {
    const r = sampleResult();
    const l = await layoutGraph(r);
    expect(l.arrows).toHaveLength(r.graph.arrows.length);
    expect(l.bidirected).toHaveLength(r.graph.bidirected.length);
    const contradicted = r.claims.filter((c) => c.verdict === "contradicted");
    expect(l.contradictions).toHaveLength(contradicted.length);
    const box = new Map(l.nodes.map((n) => [n.id, n]));
    for (const a of l.arrows) {
      // layered left-to-right: an arrow's head is right of its tail's box
      expect(box.get(a.to)!.x).toBeGreaterThan(box.get(a.from)!.x + box.get(a.from)!.width - 1e-9);
      const last = a.points[a.points.length - 1]!;
      expect(Math.abs(last.x - box.get(a.to)!.x)).toBeLessThan(1.5);
    }
  });

  it("layoutGraph(result) is deterministic: same input, same coordinates", async () => {
    const a = await layoutGraph(sampleResult());
    const b = await layoutGraph(sampleResult());
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
  });

  it("contradictionMarks(result) labels each contradicted claim with its effect symbol and value, in rank order", () => {
    const marks = contradictionMarks(sampleResult());
    // the fixture's top contradictions: r = 0.214 (pearson), ρ = 0.162 (rank-based), r = -0.108 (pearson)
    expect(marks.map((m) => m.label)).toEqual(["r = 0.21", "ρ = 0.16", "r = \u22120.11"]);
    expect(marks.map((m) => m.rank)).toEqual([1, 2, 3]);
  });

  it("layoutGraph(graph, marks) takes explicit contradictions and a bare graph", async () => {
    const g = { nodes: ["a", "b", "c"], measured: ["a", "b", "c"], unmeasured: [], arrows: [["a", "b"], ["b", "c"]] as [string, string][], bidirected: [] };
    const l = await layoutGraph(g, { contradictions: [{ x: "a", y: "c", effect: 0.3, label: "r = 0.30", rank: 1 }] });
    expect(l.contradictions).toHaveLength(1);
    expect(l.contradictions[0]!.label).toBe("r = 0.30");
    expect(await layoutGraph(g).then((x) => x.contradictions)).toHaveLength(0);
  });

  it("layoutGraph handles an empty graph, a single node and Unicode names", async () => {
    const empty = await layoutGraph({ nodes: [], measured: [], unmeasured: [], arrows: [], bidirected: [] });
    expect(empty.nodes).toHaveLength(0);
    const one = await layoutGraph({ nodes: ["体重"], measured: ["体重"], unmeasured: [], arrows: [], bidirected: [] });
    expect(one.nodes).toHaveLength(1);
    // a CJK label is wider than an ASCII label of the same length
    const ascii = await layoutGraph({ nodes: ["ab"], measured: ["ab"], unmeasured: [], arrows: [], bidirected: [] });
    expect(one.nodes[0]!.width).toBeGreaterThanOrEqual(ascii.nodes[0]!.width);
  });

  it("layoutGraph throws UnknownNodeError naming a node missing from the graph", async () => {
    const g = { nodes: ["a"], measured: ["a"], unmeasured: [], arrows: [["a", "zz"]] as [string, string][], bidirected: [] };
    await expect(layoutGraph(g)).rejects.toBeInstanceOf(UnknownNodeError);
    await expect(layoutGraph(g)).rejects.toThrow(/"zz"/);
  });

  it("layoutGraph does not mutate its input", async () => {
    const r = sampleResult();
    const frozen = JSON.stringify(r);
    await layoutGraph(r);
    expect(JSON.stringify(r)).toBe(frozen);
  });
});

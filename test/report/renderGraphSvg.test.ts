import { describe, expect, it } from "vitest";
import { layoutGraph } from "../../src/report/layoutGraph.js";
import { renderGraphSvg } from "../../src/report/renderGraphSvg.js";
import { HOSTILE_NAME, hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { count, hasInjectedMarkup } from "./helpers.js";

describe("renderGraphSvg", () => {
  it("renderGraphSvg(layout) draws one node group per node, one arrow per arrow, one connector per bidirected edge and contradiction", async () => {
    const r = sampleResult();
    const svg = renderGraphSvg(await layoutGraph(r));
    expect(count(svg, /<g class="node /)).toBe(r.graph.nodes.length);
    expect(count(svg, /<g class="node measured"/)).toBe(r.graph.measured.length);
    expect(count(svg, /<g class="node unmeasured"/)).toBe(r.graph.unmeasured.length);
    expect(count(svg, /<path class="arrow"/)).toBe(r.graph.arrows.length);
    expect(count(svg, /<path class="bidirected"/)).toBe(r.graph.bidirected.length);
    expect(count(svg, /<g class="contradiction"/)).toBe(r.claims.filter((c) => c.verdict === "contradicted").length);
    for (const n of r.graph.nodes) expect(svg).toContain(`data-node="${n}"`);
  });

  it("renderGraphSvg distinguishes unmeasured nodes by shape and dash, not colour alone", async () => {
    const svg = renderGraphSvg(await layoutGraph(sampleResult()));
    const unmeasured = svg.match(/<g class="node unmeasured"[^]*?<\/g>/)![0];
    const measured = svg.match(/<g class="node measured"[^]*?<\/g>/)![0];
    expect(unmeasured).toContain("<ellipse");
    expect(unmeasured).toContain("stroke-dasharray");
    expect(measured).toContain("<rect");
    expect(measured).not.toContain("stroke-dasharray");
  });

  it("renderGraphSvg labels each contradiction with its effect and draws a legend", async () => {
    const svg = renderGraphSvg(await layoutGraph(sampleResult()));
    expect(svg).toContain(">r = 0.21<");
    expect(svg).toContain('<g class="legend">');
    expect(renderGraphSvg(await layoutGraph(sampleResult()), { legend: false })).not.toContain('class="legend"');
  });

  it("renderGraphSvg references no external resource; only the standalone form declares the namespace", async () => {
    const l = await layoutGraph(sampleResult());
    const inline = renderGraphSvg(l);
    expect(inline).not.toMatch(/https?:/);
    expect(inline).not.toMatch(/href=/);
    const file = renderGraphSvg(l, { standalone: true });
    expect(file.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(count(file, /https?:/)).toBe(1);
  });

  it("renderGraphSvg is deterministic: the same result gives byte-identical SVG", async () => {
    const a = renderGraphSvg(await layoutGraph(sampleResult()));
    const b = renderGraphSvg(await layoutGraph(sampleResult()));
    expect(b).toBe(a);
  });

  it("renderGraphSvg escapes hostile node names and levels", async () => {
    const svg = renderGraphSvg(await layoutGraph(hostileResult()));
    expect(hasInjectedMarkup(svg)).toBe(false);
    expect(svg).toContain("&lt;script&gt;alert(1)&lt;/script&gt;");
    expect(svg).not.toContain(HOSTILE_NAME);
  });

  it("renderGraphSvg draws an empty graph as a legend only", async () => {
    const svg = renderGraphSvg(await layoutGraph({ nodes: [], measured: [], unmeasured: [], arrows: [], bidirected: [] }));
    expect(count(svg, /class="node /)).toBe(0);
    expect(svg).toContain('class="legend"');
  });
});

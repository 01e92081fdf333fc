/**
 * Benchmark: deriving claims from large random DAGs.
 * Run: node --import tsx bench/claims.ts   (prints JSON)
 * Cases: 200 nodes / 600 arrows (~19,300 missing arrows) and 1,000 nodes / 3,000 arrows
 * (~496,000 missing arrows), all measured (basis sets without the d-separation check); then the
 * 200-node graph with 20 unmeasured nodes and 10 `<->` edges (every basis set checked, fallbacks
 * searched) and with sets: "minimal" (a separator search per pair).
 */
import { pathToFileURL } from "node:url";
import { deriveClaims, type DeriveClaimsOptions } from "../src/graph/deriveClaims.js";
import type { Graph } from "../src/graph/Graph.js";
import { randomGraph, type RandomGraphOptions } from "../test/helpers/randomGraph.js";

const MB = 1024 * 1024;

function run(name: string, spec: RandomGraphOptions, options: DeriveClaimsOptions = {}): Record<string, unknown> {
  const graph: Graph = randomGraph(20240611, spec);
  const t0 = performance.now();
  const r = deriveClaims(graph, options);
  const ms = performance.now() - t0;
  const mem = process.memoryUsage();
  return {
    name,
    nodes: spec.nodes,
    arrows: graph.arrows.length,
    unmeasured: spec.unmeasured ?? 0,
    bidirected: spec.bidirected ?? 0,
    sets: options.sets ?? "union-parents",
    claims: r.claims.length,
    untestable: r.untestable.length,
    ms: Math.round(ms * 10) / 10,
    heapUsedMB: Math.round((mem.heapUsed / MB) * 10) / 10,
    rssMB: Math.round((mem.rss / MB) * 10) / 10,
  };
}

/** Run every case once and return the measurements (times in ms, memory in MB after the case). */
export async function benchClaims(): Promise<Record<string, unknown>> {
  const cases = [
    run("200 nodes, all measured", { nodes: 200, arrows: 600 }),
    run("1000 nodes, all measured", { nodes: 1000, arrows: 3000 }),
    run("200 nodes, 20 unmeasured, 10 <->", { nodes: 200, arrows: 600, unmeasured: 20, bidirected: 10 }),
    run("200 nodes, minimum sets", { nodes: 200, arrows: 600, unmeasured: 20, bidirected: 10 }, { sets: "minimal" }),
  ];
  return { bench: "claims", node: process.version, cases };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  console.log(JSON.stringify(await benchClaims(), null, 2));
}

import type { Graph } from "./Graph.js";

/** The graph as plain data, the `graph` part of every JSON result. */
export interface GraphSummary {
  nodes: string[];
  measured: string[];
  unmeasured: string[];
  arrows: [string, string][];
  bidirected: [string, string][];
}

/**
 * The graph as plain data: nodes in declaration order split into measured and unmeasured,
 * arrows and bidirected edges as pairs. Cost: O(V + E).
 * @example graphSummary(createGraph({ arrows: [["a", "b"]] })).arrows // [["a", "b"]]
 */
export function graphSummary(graph: Graph): GraphSummary {
  return {
    nodes: [...graph.nodes],
    measured: graph.nodes.filter((n) => graph.isMeasured(n)),
    unmeasured: graph.nodes.filter((n) => !graph.isMeasured(n)),
    arrows: graph.arrows.map(([a, b]) => [a, b]),
    bidirected: graph.bidirected.map(([a, b]) => [a, b]),
  };
}

import { UnknownNodeError } from "../errors.js";
import type { Graph } from "./Graph.js";
import { createGraph } from "./createGraph.js";

/**
 * The same graph with more nodes declared unmeasured (e.g. from a command-line option).
 * Cost: O(V + E log V).
 * @throws UnknownNodeError when a name is not a node of the graph.
 * @example withUnmeasured(g, ["u"]).isMeasured("u") // false
 */
export function withUnmeasured(graph: Graph, names: readonly string[]): Graph {
  if (names.length === 0) return graph;
  const unknown = names.filter((n) => !graph.hasNode(n));
  if (unknown.length) {
    throw new UnknownNodeError(
      `--unmeasured names ${unknown.map((n) => `"${n}"`).join(", ")}, which ${unknown.length > 1 ? "are not nodes" : "is not a node"} of the graph; check the spelling`,
      unknown,
    );
  }
  const unmeasured = [...graph.nodes.filter((n) => !graph.isMeasured(n)), ...names];
  const time = graph.timeOrder;
  return createGraph({ nodes: graph.nodes, arrows: graph.arrows, bidirected: graph.bidirected, unmeasured, ...(time ? { periods: time.periods, fixed: time.fixed } : {}) });
}

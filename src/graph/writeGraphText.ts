import type { Graph } from "./Graph.js";
import { displayName } from "./parseGraph.js";

/**
 * A graph in the arrows format (docs/graph-format.md): `unmeasured:`, `period:` and `fixed:`
 * lines (empty periods left out), then one line per arrow and per shared cause in declaration order, then the isolated
 * nodes; names quoted where the format needs it. parseGraph reads it back to the same graph.
 * Cost: O(V + E).
 * @example writeGraphText(parseGraph("a -> b\nc\n").graph) // "a -> b\nc\n"
 */
export function writeGraphText(graph: Graph): string {
  const lines: string[] = [];
  const list = (names: readonly string[]) => names.map(displayName).join(", ");
  const unmeasured = graph.nodes.filter((n) => !graph.isMeasured(n));
  if (unmeasured.length) lines.push(`unmeasured: ${list(unmeasured)}`);
  // an empty period (a gap in DOT's period numbers) orders nothing and cannot be written
  for (const group of graph.timeOrder?.periods ?? []) if (group.length) lines.push(`period: ${list(group)}`);
  if (graph.timeOrder?.fixed.length) lines.push(`fixed: ${list(graph.timeOrder.fixed)}`);
  for (const [a, b] of graph.arrows) lines.push(`${displayName(a)} -> ${displayName(b)}`);
  for (const [a, b] of graph.bidirected) lines.push(`${displayName(a)} <-> ${displayName(b)}`);
  const touched = new Set<string>([...graph.arrows.flat(), ...graph.bidirected.flat(), ...unmeasured, ...(graph.timeOrder?.periods.flat() ?? []), ...(graph.timeOrder?.fixed ?? [])]);
  for (const n of graph.nodes) if (!touched.has(n)) lines.push(displayName(n));
  return lines.join("\n") + "\n";
}

/**
 * `--counts COLUMN` of `test` and `report`: the data give one row per cell with a frequency column,
 * expanded to one row per unit before the audit (`src/data/expandCounts.ts`).
 */
import { InputError, UsageError } from "../src/errors.js";
import type { Graph } from "../src/graph/Graph.js";
import { findClosestNames } from "../src/graph/checkColumns.js";

/**
 * The count column named by `--counts`, as the header spells it, and its 1-based field; undefined
 * without `--counts`.
 * @throws InputError when the header has no such column (with the closest names); UsageError when
 *   it is a measured node of the graph
 */
export function findCountsColumn(graph: Graph, header: readonly string[], opts: Record<string, unknown>, file: string): { name: string; field: number } | undefined {
  if (opts.counts === undefined) return undefined;
  const wanted = String(opts.counts).normalize("NFC");
  const field = header.findIndex((h) => h.normalize("NFC") === wanted);
  if (field < 0) {
    const near = findClosestNames(String(opts.counts), header);
    throw new InputError(`${file}: --counts ${JSON.stringify(String(opts.counts))} is not a column of the data${near.length ? ` (did you mean ${near.map((c) => JSON.stringify(c)).join(", ")}?)` : ""}; name the column that holds each row's number of units`, { file, line: 1 });
  }
  const name = header[field]!;
  if (graph.hasNode(name) && graph.isMeasured(name)) {
    throw new UsageError(`--counts ${JSON.stringify(name)} is a measured node of the graph; the count column holds each row's number of units, not a variable: rename the node, or name another column`);
  }
  return { name, field: field + 1 };
}

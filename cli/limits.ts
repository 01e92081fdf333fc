/**
 * Size limits of the commands, checked before the work starts so that a graph too large to list
 * or test gets a clear message instead of running out of memory or time. The README's "Limits"
 * section gives the figures they were chosen from.
 */
import { GraphError } from "../src/errors.js";
import type { Graph } from "../src/graph/Graph.js";
import { countMissingArrows } from "../src/graph/deriveClaims.js";
import { formatCount } from "../src/report/format.js";
import { MAX_AUDIT_CLAIMS } from "../src/audit/runAudit.js";

/**
 * Most missing arrows `claims` lists. `--json` is written as the claims are derived, in constant
 * memory, about 176 bytes each (5,000 nodes: 12.4 million claims, 2.2 GB, 24–34 s, 140 MB RSS), so
 * the limit is one of time and disk: 50 million claims (10,000 measured nodes) take minutes.
 */
export const MAX_LISTED_CLAIMS = 50_000_000;
/**
 * Most missing arrows of the text listing of `claims`, which is laid out as one text: 2 million
 * claims (2,000 measured nodes) took 12 s and 1.5 GB peak RSS, 124 MB of text.
 */
export const MAX_TEXT_CLAIMS = 2_000_000;
/** Most missing arrows `test` and `report` test: the library's own limit (src/audit/runAudit.ts), checked here before the data are read. */
export const MAX_TESTED_CLAIMS = MAX_AUDIT_CLAIMS;

/**
 * Refuse a graph with more missing arrows among its measured nodes than `limit`, counted in
 * O(V + E) before any claim is derived. `what` says who does what ("claims lists"), `advice` what to do.
 * @throws GraphError naming the graph, the counts, the limit and what to do
 * @example checkClaimCount(graph, "chain.txt", MAX_TESTED_CLAIMS, "test and report test", "…")
 */
export function checkClaimCount(graph: Graph, file: string, limit: number, what: string, advice: string): void {
  const missing = countMissingArrows(graph);
  if (missing <= limit) return;
  const measured = graph.nodes.filter((n) => graph.isMeasured(n)).length;
  throw new GraphError(
    `${file}: ${formatCount(measured)} measured nodes with ${formatCount(missing)} missing arrows among them, one claim each; ${what} at most ${formatCount(limit)} (see Limits in the README); ${advice}`,
    { file },
  );
}

/** Most nodes `draw` draws (above the layered layout's range the drawing is too large to read; see LAYOUT_THRESHOLDS). */
export const MAX_DRAWN_NODES = 20_000;

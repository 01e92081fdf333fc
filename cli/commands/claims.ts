import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { checkColumns } from "../../src/graph/checkColumns.js";
import { readHeader } from "../../src/data/readHeader.js";
import { renderClaimsText } from "../../src/report/terminal.js";
import { EXIT } from "../exitCodes.js";
import { type Io, readHead } from "../io.js";
import { loadGraph } from "../loadGraph.js";
import { graphSummary } from "../../src/graph/graphSummary.js";

/** `arrowaudit claims <graph>`: list the implied independencies. */
export async function runClaims(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  const graph = loadGraph(io, graphPath, opts);
  let ignored: string[] | undefined;
  if (typeof opts.columns === "string") {
    const header = readHeader(readHead(opts.columns, io.cwd), { file: opts.columns });
    ignored = checkColumns(graph, header, { file: opts.columns }).ignoredColumns;
  }
  const sets = opts.sets as "union-parents" | "minimal" | "all-minimal";
  const cap = opts.maxSets as number;
  const { claims, untestable, truncatedPairs } = deriveClaims(graph, { sets, cap });
  const doc = {
    graph: graphSummary(graph),
    claims,
    untestable,
    ...(ignored ? { ignored_columns: ignored } : {}),
    ...(sets === "all-minimal" ? { max_sets: cap, truncated_pairs: truncatedPairs } : {}),
  };
  if (truncatedPairs > 0) {
    io.stderr(`note: ${truncatedPairs} pair${truncatedPairs > 1 ? "s have" : " has"} more than ${cap} minimal separating sets; only the first ${cap} of each are listed (raise --max-sets to see more)\n`);
  }
  if (opts.json) io.stdout(JSON.stringify(doc, null, 2) + "\n");
  else {
    io.stdout(renderClaimsText(doc, { ascii: !!opts.ascii }));
    if (ignored?.length) io.stdout(`columns not in the graph (ignored): ${ignored.join(", ")}\n`);
  }
  return EXIT.ok;
}

import { claimEntries, deriveClaims } from "../../src/graph/deriveClaims.js";
import { checkColumns } from "../../src/graph/checkColumns.js";
import { readHeader } from "../../src/data/readHeader.js";
import { renderClaimsText } from "../../src/report/terminal.js";
import { escapeTerminal } from "../../src/report/escapeTerminal.js";
import { textWidth } from "./test.js";
import { checkInputFile } from "../checkPaths.js";
import { EXIT } from "../exitCodes.js";
import { type Io, readHead } from "../io.js";
import { checkClaimCount, MAX_LISTED_CLAIMS, MAX_TEXT_CLAIMS } from "../limits.js";
import { loadGraph } from "../loadGraph.js";
import { checkOneStdin, inputName, isStreamInput, openStreamData } from "../readStdin.js";
import { writeClaimsJson } from "../writeClaimsJson.js";
import { probeFile } from "../dataFormat.js";
import { listDuckdbFields } from "../readDuckdbTable.js";
import { resolve } from "node:path";
import { UsageError } from "../../src/errors.js";
import { graphSummary } from "../../src/graph/graphSummary.js";

/** `arrowaudit claims <graph>`: list the implied independencies (`--json` is written as the claims are derived). */
export async function runClaims(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  checkOneStdin({ graph: graphPath, "--columns file": opts.columns });
  if (typeof opts.columns === "string") checkInputFile(io, { path: opts.columns, role: "data file" });
  const graph = await loadGraph(io, graphPath, opts);
  const graphName = inputName(graphPath);
  let ignored: string[] | undefined;
  if (typeof opts.columns === "string") {
    const file = inputName(opts.columns);
    const stream = isStreamInput(io, opts.columns);
    const probe = stream ? undefined : probeFile(resolve(io.cwd, opts.columns));
    const table = typeof opts.table === "string" ? opts.table : undefined;
    if (table !== undefined && probe?.format !== "duckdb") throw new UsageError(`--table names a table of a DuckDB database file, and ${file} is not one; drop --table`);
    let names: string[];
    if (probe !== undefined && probe.format !== "csv") names = await listDuckdbFields({ path: resolve(io.cwd, opts.columns), name: file, format: probe.format, ...(table !== undefined ? { table } : {}) });
    else names = readHeader(stream ? (await openStreamData(io, opts.columns)).head : readHead(opts.columns, io.cwd), { file });
    ignored = checkColumns(graph, names, { file }).ignoredColumns;
  }
  const sets = opts.sets as "union-parents" | "minimal" | "all-minimal";
  const cap = opts.maxSets as number;
  const tail = (truncatedPairs: number) => ({
    ...(ignored ? { ignored_columns: ignored } : {}),
    ...(sets === "all-minimal" ? { max_sets: cap, truncated_pairs: truncatedPairs } : {}),
  });
  let truncatedPairs: number;
  checkClaimCount(graph, graphName, MAX_LISTED_CLAIMS, "claims lists", "list the claims of the part of the graph you are asking about (a graph file with those nodes and their ancestors), or declare the nodes you will not test unmeasured (--unmeasured)");
  if (opts.json) {
    truncatedPairs = writeClaimsJson(io.stdout, { graph: graphSummary(graph) }, claimEntries(graph, { sets, cap }), (t) => tail(t.truncatedPairs)).truncatedPairs;
  } else {
    checkClaimCount(graph, graphName, MAX_TEXT_CLAIMS, "the text listing of claims holds", `use --json, which is written as the claims are derived (up to ${MAX_LISTED_CLAIMS.toLocaleString("en-US")} claims)`);
    const derived = deriveClaims(graph, { sets, cap });
    truncatedPairs = derived.truncatedPairs;
    io.stdout(renderClaimsText({ graph: graphSummary(graph), claims: derived.claims, untestable: derived.untestable }, { ascii: !!opts.ascii, width: textWidth(io) }));
    // column names come raw from the data file's header: control characters are shown, not obeyed
    if (ignored?.length) io.stdout(`columns not in the graph (ignored): ${ignored.map((n) => escapeTerminal(n)).join(", ")}\n`);
  }
  if (truncatedPairs > 0) {
    io.stderr(`note: ${truncatedPairs} pair${truncatedPairs > 1 ? "s have" : " has"} more than ${cap} minimal separating sets; only the first ${cap} of each are listed (raise --max-sets to see more)\n`);
  }
  return EXIT.ok;
}

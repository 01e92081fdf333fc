import { GraphError, InputError } from "../../src/errors.js";
import { chooseLayout, contradictionMarks, layoutGraph, type LayoutMethod } from "../../src/report/layoutGraph.js";
import { renderGraphSvg } from "../../src/report/renderGraphSvg.js";
import { formatCount } from "../../src/report/format.js";
import { checkInputFile, refuseOverwritingInputs } from "../checkPaths.js";
import { EXIT } from "../exitCodes.js";
import { type Io, readInput } from "../io.js";
import { MAX_DRAWN_NODES } from "../limits.js";
import { loadGraph } from "../loadGraph.js";
import { statusLine } from "../progress.js";
import { parseResults } from "../readResults.js";
import { checkOneStdin, inputName, isStreamInput, readStreamBytes } from "../readStdin.js";
import { writeOutputs } from "../writeOutputs.js";
import { graphSummary } from "../../src/graph/graphSummary.js";

const METHOD_WORDS: Record<LayoutMethod, string> = {
  layered: "layered layout",
  "layered-fast": "layered layout with fast node placement",
  "layered-simple": "simple layered layout (no crossing reduction)",
};

/** `arrowaudit draw <graph> [--out graph.svg] [--results result.json]`. */
export async function runDraw(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  const results = typeof opts.results === "string" ? opts.results : undefined;
  checkOneStdin({ graph: graphPath, "--results file": results });
  checkInputFile(io, { path: graphPath, role: "graph file" });
  if (results !== undefined) checkInputFile(io, { path: results, role: "results file" });
  if (typeof opts.out === "string") {
    const inputs = [{ path: graphPath, role: "graph file" }, ...(results !== undefined ? [{ path: results, role: "results file" }] : [])];
    refuseOverwritingInputs(io, [{ path: opts.out, role: `--out ${opts.out}` }], inputs);
  }
  const graph = await loadGraph(io, graphPath, opts);
  const graphName = inputName(graphPath);
  if (graph.nodes.length > MAX_DRAWN_NODES) {
    throw new GraphError(
      `${graphName}: ${formatCount(graph.nodes.length)} nodes; draw handles at most ${formatCount(MAX_DRAWN_NODES)} (a larger drawing cannot be read; see Limits in the README); draw the part you want to see: write the nodes around your question and the arrows among them to a graph file of their own`,
      { file: graphName },
    );
  }
  let contradictions;
  if (results !== undefined) {
    const resultsName = inputName(results);
    const bytes = isStreamInput(io, results) ? await readStreamBytes(io, results) : readInput(results, io.cwd, "results file");
    const result = parseResults(new TextDecoder().decode(bytes), resultsName);
    const unknown = [...new Set(result.claims.flatMap((c) => [c.x, c.y]))].filter((n) => !graph.hasNode(n));
    if (unknown.length) throw new InputError(`${resultsName}: the result names ${unknown.map((n) => `"${n}"`).join(", ")}, not in ${graphName}; draw the graph the result was computed on`, { file: resultsName });
    contradictions = contradictionMarks(result);
  }
  const summary = graphSummary(graph);
  const choice = chooseLayout(summary);
  const status = statusLine(io, !!opts.quiet);
  let svg: string;
  try {
    status.show(`drawing ${formatCount(choice.nodes)} nodes and ${formatCount(choice.arrows)} arrows: ${METHOD_WORDS[choice.method]}…`);
    const layout = await layoutGraph(summary, { contradictions: contradictions ?? [], method: choice.method });
    status.show("drawing: writing the SVG…");
    svg = renderGraphSvg(layout, { title: "Causal graph", standalone: true });
  } finally {
    status.done();
  }
  if (choice.method === "layered-simple" && !opts.quiet) {
    io.stderr(`note: ${formatCount(choice.nodes)} nodes and ${formatCount(choice.dummies)} layer crossings of long arrows are beyond the full layered layout; drawn with the simple layered layout (no crossing reduction, straight arrows)\n`);
  }
  if (typeof opts.out === "string") {
    const path = writeOutputs(io, [{ path: opts.out, content: svg }]);
    if (!opts.quiet) io.stderr(`drawing written to ${path}\n`);
  } else io.stdout(svg);
  return EXIT.ok;
}

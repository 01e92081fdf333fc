import type { AuditResult } from "../../src/audit/types.js";
import { InputError } from "../../src/errors.js";
import { contradictionMarks, layoutGraph } from "../../src/report/layoutGraph.js";
import { renderGraphSvg } from "../../src/report/renderGraphSvg.js";
import { EXIT } from "../exitCodes.js";
import { type Io, readInput, writeAtomic } from "../io.js";
import { loadGraph } from "../loadGraph.js";
import { graphSummary } from "../../src/graph/graphSummary.js";

/** `arrowaudit draw <graph> [--out graph.svg] [--results result.json]`. */
export async function runDraw(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  const graph = loadGraph(io, graphPath, opts);
  let contradictions;
  if (typeof opts.results === "string") {
    const text = new TextDecoder().decode(readInput(opts.results, io.cwd));
    let result: AuditResult;
    try {
      result = JSON.parse(text) as AuditResult;
    } catch (e) {
      throw new InputError(`${opts.results}: not a JSON document (${(e as Error).message}); save one with \`arrowaudit test --json > result.json\``, { file: opts.results });
    }
    if (!Array.isArray(result?.claims)) throw new InputError(`${opts.results}: no "claims" list; save a result with \`arrowaudit test --json > result.json\``, { file: opts.results });
    const unknown = [...new Set(result.claims.flatMap((c) => [c.x, c.y]))].filter((n) => !graph.hasNode(n));
    if (unknown.length) throw new InputError(`${opts.results}: the result names ${unknown.map((n) => `"${n}"`).join(", ")}, not in ${graphPath}; draw the graph the result was computed on`, { file: opts.results });
    contradictions = contradictionMarks(result);
  }
  const layout = await layoutGraph(graphSummary(graph), { contradictions: contradictions ?? [] });
  const svg = renderGraphSvg(layout, { title: "Causal graph", standalone: true });
  if (typeof opts.out === "string") {
    const path = writeAtomic(opts.out, io.cwd, svg);
    if (!opts.quiet) io.stderr(`drawing written to ${path}\n`);
  } else io.stdout(svg);
  return EXIT.ok;
}

import { suggestRevisions, type RevisionCandidate, type Suggestions } from "../../src/audit/suggestRevisions.js";
import type { Graph } from "../../src/graph/Graph.js";
import { writeGraphText } from "../../src/graph/writeGraphText.js";
import { escapeTerminal } from "../../src/report/escapeTerminal.js";
import { formatP } from "../../src/report/format.js";
import { refuseOverwritingInputs } from "../checkPaths.js";
import { EXIT } from "../exitCodes.js";
import { type Io, readInput, toolVersion } from "../io.js";
import { statusLine } from "../progress.js";
import { inputName, isStreamInput } from "../readStdin.js";
import { writeOutputs } from "../writeOutputs.js";
import { loadAuditInputs, settingsFrom } from "./test.js";
import { isSiteSummaryFile } from "../loadSiteSummaries.js";
import { checkSummaryUsage, dataInputs, isSummaryInput, loadSummaryInputs } from "../loadSummary.js";
import { UsageError } from "../../src/errors.js";

/**
 * `arrowaudit suggest <graph> <data> [--max-additions 3] [--out revised.txt] [--json]`: greedy
 * data-guided revisions (src/audit/suggestRevisions.ts), the revised graph with a comment per
 * change, and the caution. The data may be a correlation or covariance matrix in place of rows
 * (`--correlations m.csv --n N`, as for `test`): every candidate then gets the partial-correlation test.
 */
export async function runSuggest(io: Io, graphPath: string, dataPath: string | undefined, opts: Record<string, unknown>): Promise<number> {
  const out = typeof opts.out === "string" ? opts.out : undefined;
  const fromMatrix = isSummaryInput(opts);
  if (fromMatrix) checkSummaryUsage(dataPath, opts);
  else if (dataPath === undefined) throw new UsageError("missing the data file: give a data file, or --correlations or --covariance with --n");
  if (out !== undefined) refuseOverwritingInputs(io, [{ path: out, role: `--out ${out}` }], [{ path: graphPath, role: "graph file" }, ...dataInputs(dataPath, opts)]);
  if (dataPath !== undefined && isSiteSummaryFile(io, dataPath)) throw new UsageError(`${dataPath} is a site summary; suggest re-audits candidate graphs, whose claims a summary of another graph does not hold, so it needs the rows (or a correlation or covariance matrix)`);
  const { graph, data } = fromMatrix
    ? await loadSummaryInputs(io, graphPath, opts).then(({ graph, input }) => ({ graph, data: input }))
    : await loadAuditInputs(io, graphPath, dataPath!, opts).then(({ graph, table }) => ({ graph, data: table }));
  const dataName = fromMatrix ? inputName(dataInputs(undefined, opts)[0]!.path) : inputName(dataPath!);
  const status = statusLine(io, !!opts.quiet);
  let s: Suggestions;
  try {
    s = suggestRevisions(graph, data, {
      settings: settingsFrom(opts),
      version: toolVersion(),
      maxAdditions: opts.maxAdditions as number,
      onCandidate: (step, k, count) => status.show(`step ${step}: auditing candidate ${k} of ${count}…`),
    });
  } finally {
    status.done();
  }
  // the revised graph: the original text with the changes appended (its comments kept), or, for DOT or standard input, the graph written out
  const arrowsText = !isStreamInput(io, graphPath) && !/\.(dot|gv)$/iu.test(graphPath) && opts.format !== "dot" ? new TextDecoder().decode(readInput(graphPath, io.cwd, "graph file")) : undefined;
  const revised = revisedGraphText(s, graph, arrowsText, inputName(graphPath), dataName);
  if (out !== undefined) writeOutputs(io, [{ path: out, content: revised }]);
  if (opts.json) {
    io.stdout(
      JSON.stringify(
        { tool: { name: "arrowaudit", version: toolVersion() }, graph: inputName(graphPath), data: dataName, ...(fromMatrix ? { data_source: { kind: opts.correlations !== undefined ? "correlations" : "covariance", n: opts.n } } : {}), settings: { ...settingsFrom(opts), ...(fromMatrix ? { method: "linear" } : {}), max_additions: opts.maxAdditions }, start: s.start, steps: s.steps, ...(s.unapplied ? { unapplied: s.unapplied } : {}), stopped: s.stopped, ...(s.bic_note ? { bic_note: s.bic_note } : {}), revised_graph: revised, caution: s.caution },
        null,
        2,
      ) + "\n",
    );
  } else if (!opts.quiet) {
    io.stdout(renderSuggestionsText(s, out));
  }
  return EXIT.ok;
}

function scoreLine(c: { contradicted: number; claims: number; fisher_c_p: number; bic?: number }, deltaBic?: number): string {
  return `${c.contradicted} of ${c.claims} claims contradicted, Fisher's C p = ${formatP(c.fisher_c_p)}${c.bic !== undefined ? `, BIC ${c.bic.toFixed(1)}${deltaBic !== undefined ? ` (${deltaBic >= 0 ? "+" : "−"}${Math.abs(deltaBic).toFixed(1)})` : ""}` : ""}`;
}

function candidateLines(list: readonly RevisionCandidate[]): string[] {
  return list.slice(0, 10).map((c, k) => `  ${String(k + 1).padStart(2)}. ${escapeTerminal(c.change).padEnd(28)} ${scoreLine(c.score, c.delta_bic)}${c.explains.length ? `; explains ${c.explains.length}` : ""}`).concat(list.length > 10 ? [`      … ${list.length - 10} more (--json lists them all)`] : []);
}

/** The terminal listing: the start, each step's ranked candidates and what it explained, the stop, the caution. */
export function renderSuggestionsText(s: Suggestions, out?: string): string {
  const lines: string[] = [];
  lines.push(`The graph as drawn: ${scoreLine(s.start)}.`);
  for (const st of s.steps) {
    lines.push("", `Step ${st.step}: candidates, best first`, ...candidateLines(st.candidates));
    lines.push(`  added ${escapeTerminal(st.chosen.change)}: it explains ${st.chosen.explains.length ? st.chosen.explains.map((c) => escapeTerminal(c)).join("; ") : "no contradicted claim"}`);
    lines.push(`  still contradicted: ${st.chosen.still_contradicted.length ? st.chosen.still_contradicted.map((c) => escapeTerminal(c)).join("; ") : "none"}`);
  }
  if (s.unapplied) lines.push("", `Step ${s.unapplied.step}: candidates, best first (none applied)`, ...candidateLines(s.unapplied.candidates));
  lines.push("", `Stopped: ${s.stopped}.`);
  if (s.bic_note) lines.push(`No BIC: ${s.bic_note}.`);
  if (out !== undefined) lines.push(`Revised graph written to ${escapeTerminal(out)}, each change with a comment.`);
  lines.push("", `Caution: ${s.caution}`);
  return lines.join("\n") + "\n";
}

/** The revised graph file: the original arrows-format text (or the graph written out) plus a comment and a line per change. */
export function revisedGraphText(s: Suggestions, original: Graph, originalText: string | undefined, graphName: string, dataName: string): string {
  const head = originalText !== undefined ? originalText.replace(/\s*$/u, "\n") : `# ${oneLine(graphName)}, written in arrowaudit's graph format\n${writeGraphText(original)}`;
  if (s.steps.length === 0) return head;
  const body = [`# revisions suggested by arrowaudit suggest from ${oneLine(dataName)} (data-guided)`, `# caution: ${s.caution}`];
  let before = s.start.contradicted;
  for (const st of s.steps) {
    const c = st.chosen;
    body.push(
      `# step ${st.step}: ${c.change} explains ${c.explains.length} contradicted claim${c.explains.length === 1 ? "" : "s"}${c.explains.length ? ` (${c.explains.map(oneLine).join("; ")})` : ""}; contradicted ${before} -> ${c.score.contradicted}; Fisher's C p ${formatP(c.score.fisher_c_p)}${c.delta_bic !== undefined ? `; BIC change ${c.delta_bic.toFixed(1)}` : ""}`,
      c.change,
    );
    before = c.score.contradicted;
  }
  return head + body.join("\n") + "\n";
}

/** Text safe inside a one-line comment. */
function oneLine(s: string): string {
  return s.replace(/[\r\n]+/gu, " ");
}

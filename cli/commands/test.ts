import { runAuditParallel } from "../../src/audit/runAudit.js";
import type { AuditResult, AuditSettings } from "../../src/audit/types.js";
import { renderTestText } from "../../src/report/terminal.js";
import { readHeader } from "../../src/data/readHeader.js";
import { checkColumns } from "../../src/graph/checkColumns.js";
import { renderCsv } from "../../src/report/csv.js";
import { claimHelper } from "../claimHelper.js";
import { parallelPatternMoments } from "../parallelPatternMoments.js";
import { EXIT } from "../exitCodes.js";
import { type Io, readHead, toolVersion } from "../io.js";
import { loadGraph } from "../loadGraph.js";
import { loadTable, readOptionsFrom } from "../loadTable.js";
import { progressBar } from "../progress.js";

/** Audit settings from parsed command-line options. */
export function settingsFrom(opts: Record<string, unknown>): Partial<AuditSettings> {
  return {
    alpha: opts.alpha as number,
    adjust: opts.adjust as AuditSettings["adjust"],
    method: opts.method as AuditSettings["method"],
    min_effect: opts.minEffect as number,
    listwise: !!opts.listwise,
    sets: opts.sets as AuditSettings["sets"],
    rank_by: opts.rankBy as AuditSettings["rank_by"],
    seed: opts.seed as number,
    ...(opts.permutations !== undefined ? { permutations: opts.permutations as number } : {}),
  };
}

/** Load the graph and the data and run the audit (shared by test, report and demo). */
export async function audit(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>): Promise<AuditResult> {
  const graph = loadGraph(io, graphPath, opts);
  const measured = graph.nodes.filter((n) => graph.isMeasured(n));
  const { delimiter } = readOptionsFrom(opts, dataPath);
  const header = readHeader(readHead(dataPath, io.cwd), { file: dataPath, ...(delimiter ? { delimiter } : {}) });
  checkColumns(graph, header, { file: dataPath });
  const table = await loadTable(io, dataPath, opts, measured);
  const bar = progressBar(io, !!opts.quiet);
  try {
    return await runAuditParallel(graph, table, { settings: settingsFrom(opts), version: toolVersion(), onProgress: bar.update, helper: claimHelper, buildMoments: (t, o) => parallelPatternMoments(t, o) });
  } finally {
    bar.done();
  }
}

/** `arrowaudit test <graph> <data>`. */
export async function runTest(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>): Promise<number> {
  const result = await audit(io, graphPath, dataPath, opts);
  if (opts.json) io.stdout(JSON.stringify(result, null, 2) + "\n");
  else if (opts.csv) io.stdout(renderCsv(result));
  else if (!opts.quiet) io.stdout(renderTestText(result, { ascii: !!opts.ascii, color: useColor(io) }));
  return opts.failOnContradiction && result.global.contradicted > 0 ? EXIT.contradiction : EXIT.ok;
}

/** Colours only on a TTY and never with NO_COLOR (https://no-color.org convention). */
export function useColor(io: Io): boolean {
  return io.stdoutIsTTY && io.env.NO_COLOR === undefined;
}

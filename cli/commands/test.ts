import { runAuditOnCounts, runAuditParallel } from "../../src/audit/runAudit.js";
import type { AuditResult, AuditSettings } from "../../src/audit/types.js";
import type { Graph } from "../../src/graph/Graph.js";
import type { Table } from "../../src/data/Table.js";
import { DEFAULT_TEXT_WIDTH, renderTestText } from "../../src/report/terminal.js";
import { readHeader } from "../../src/data/readHeader.js";
import { checkColumns } from "../../src/graph/checkColumns.js";
import { renderCsv } from "../../src/report/csv.js";
import { claimHelper } from "../claimHelper.js";
import { parallelPatternMoments } from "../parallelPatternMoments.js";
import { EXIT } from "../exitCodes.js";
import { checkInputFile } from "../checkPaths.js";
import { type Io, toolVersion } from "../io.js";
import { checkClaimCount, MAX_TESTED_CLAIMS } from "../limits.js";
import { loadGraph } from "../loadGraph.js";
import { readOptionsFrom } from "../readOptionsFrom.js";
import { checkOneStdin, inputName, openData } from "../readStdin.js";
import { progressBar } from "../progress.js";
import { auditSummary, isSummaryInput } from "../loadSummary.js";
import { findCountsColumn } from "../countsColumn.js";
import { countsTable, expandCounts, type CountsOptions } from "../../src/data/expandCounts.js";
import { UsageError } from "../../src/errors.js";
import { auditSites, isSiteSummaryFile } from "../loadSiteSummaries.js";
import { auditFromDuckdbMoments } from "../duckdbMomentsAudit.js";

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
    ...(opts.power !== undefined ? { power: opts.power as number } : {}),
    ...(opts.margin !== undefined ? { margin: opts.margin as number } : {}),
    ...(opts.permutations !== undefined ? { permutations: opts.permutations as number } : {}),
    ...(opts.resamplingRisk !== undefined ? { resampling_risk: opts.resamplingRisk as number } : {}),
  };
}

/** Load the graph and the data and run the audit (shared by test, report and demo). */
export async function audit(io: Io, graphPath: string, dataPath: string | undefined, opts: Record<string, unknown>, moreData: readonly string[] = []): Promise<AuditResult> {
  if (isSummaryInput(opts)) return auditSummary(io, graphPath, dataPath, opts, settingsFrom(opts));
  // several data arguments, or one site summary: pool the sites (the kind is read from the content)
  if (dataPath !== undefined && (moreData.length > 0 || isSiteSummaryFile(io, dataPath))) return auditSites(io, graphPath, [dataPath, ...moreData], opts, settingsFrom(opts));
  if (dataPath === undefined) throw new UsageError("missing the data file: give a data file, or --correlations or --covariance with --n");
  // --method linear on a Parquet file or DuckDB table: the moments from SQL, no rows loaded (undefined when the run does not qualify)
  const rowsFree = await auditFromDuckdbMoments(io, graphPath, dataPath, opts, settingsFrom(opts), toolVersion());
  if (rowsFree) return rowsFree;
  const { graph, table, counts } = await readAuditInputs(io, graphPath, dataPath, opts);
  const bar = progressBar(io, !!opts.quiet);
  try {
    if (counts) {
      // --counts: every claim tested from tables of counts when every test allows it, else one row per unit
      const cells = countsTable(table, counts.name, counts.options);
      const counted = runAuditOnCounts(graph, cells.table, cells.weights, { settings: settingsFrom(opts), version: toolVersion(), onProgress: bar.update });
      if (counted) return counted;
    }
    const rows = counts ? expandCounts(table, counts.name, counts.options) : table;
    return await runAuditParallel(graph, rows, { settings: settingsFrom(opts), version: toolVersion(), onProgress: bar.update, helper: claimHelper, buildMoments: (t, o) => parallelPatternMoments(t, o) });
  } finally {
    bar.done();
  }
}

/** Check the paths, read the graph, check the data file's header against it and read the measured columns, with `--counts` expanded to one row per unit (shared by the commands that audit). */
export async function loadAuditInputs(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>): Promise<{ graph: Graph; table: Table }> {
  const { graph, table, counts } = await readAuditInputs(io, graphPath, dataPath, opts);
  return { graph, table: counts ? expandCounts(table, counts.name, counts.options) : table };
}

/** {@link loadAuditInputs} with `--counts` not expanded: the table of cells with its count column, and where that column is. */
async function readAuditInputs(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>): Promise<{ graph: Graph; table: Table; counts?: { name: string; options: CountsOptions } }> {
  checkOneStdin({ graph: graphPath, data: dataPath });
  checkInputFile(io, { path: graphPath, role: "graph file" });
  checkInputFile(io, { path: dataPath, role: "data file" });
  const graph = await loadGraph(io, graphPath, opts);
  checkClaimCount(graph, inputName(graphPath), MAX_TESTED_CLAIMS, "test and report test", "test the part of the graph you are asking about (a graph file with those nodes and their ancestors), or declare the nodes you will not test unmeasured (--unmeasured)");
  const measured = graph.nodes.filter((n) => graph.isMeasured(n));
  const data = await openData(io, dataPath, opts);
  const { delimiter } = readOptionsFrom(opts, data.name);
  const header = data.fields ?? readHeader(data.head, { file: data.name, ...(delimiter ? { delimiter } : {}) });
  checkColumns(graph, header, { file: data.name });
  const counts = findCountsColumn(graph, header, opts, data.name); // --counts: one row per cell with its number of units
  const table = await data.load(counts ? [...measured, counts.name] : measured);
  return { graph, table, ...(counts ? { counts: { name: counts.name, options: { file: data.name, field: counts.field } } } : {}) };
}

/** `arrowaudit test <graph> <data>`. */
export async function runTest(io: Io, graphPath: string, dataPath: string | undefined, opts: Record<string, unknown>, moreData: readonly string[] = []): Promise<number> {
  const result = await audit(io, graphPath, dataPath, opts, moreData);
  if (opts.json) io.stdout(JSON.stringify(result, null, 2) + "\n");
  else if (opts.csv) io.stdout(renderCsv(result));
  else if (!opts.quiet) io.stdout(renderTestText(result, { ascii: !!opts.ascii, color: useColor(io), width: textWidth(io) }));
  return opts.failOnContradiction && result.global.contradicted > 0 ? EXIT.contradiction : EXIT.ok;
}

/** Narrowest width the text output is laid out for, whatever the terminal says. */
const MIN_TEXT_WIDTH = 40;

/**
 * Columns available to the text output: COLUMNS when it holds a positive whole number (POSIX
 * Base Definitions §8.3: the user's preferred width, which overrides the terminal's), else the
 * terminal's width when stdout is a terminal, else DEFAULT_TEXT_WIDTH (100) for pipes and files,
 * so saved output does not depend on the window it was made in; never below 40.
 */
export function textWidth(io: Io): number {
  const env = io.env.COLUMNS?.trim();
  const fromEnv = env !== undefined && /^\d+$/.test(env) ? Number(env) : 0;
  const fromTty = io.stdoutIsTTY ? (process.stdout.columns ?? 0) : 0;
  const w = fromEnv > 0 ? fromEnv : fromTty > 0 ? fromTty : DEFAULT_TEXT_WIDTH;
  return Math.max(MIN_TEXT_WIDTH, w);
}

/** Colours only on a TTY and never with NO_COLOR (https://no-color.org convention). */
export function useColor(io: Io): boolean {
  return io.stdoutIsTTY && io.env.NO_COLOR === undefined;
}

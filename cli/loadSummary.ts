/**
 * Summary-statistics input of `test` and `report`: `--correlations matrix.csv --n N [--sd sds.csv]`
 * or `--covariance matrix.csv --n N` in place of the data file. Reads and checks the files, matches
 * the matrix's names to the graph, and runs the audit on the matrix (`runAuditOnSummary`).
 */
import { InputError, UsageError } from "../src/errors.js";
import { runAuditOnSummary, type SummaryAuditInput } from "../src/audit/runAudit.js";
import type { AuditResult, AuditSettings } from "../src/audit/types.js";
import type { Graph } from "../src/graph/Graph.js";
import { checkColumns, findClosestNames } from "../src/graph/checkColumns.js";
import { parseTypeDeclarations } from "../src/data/readOptions.js";
import { parseStandardDeviations, parseSummaryMatrix, type SummaryKind } from "../src/data/parseSummaryMatrix.js";
import { checkSummaryMatrix } from "../src/data/checkSummaryMatrix.js";
import { createSummaryData } from "../src/data/summaryData.js";
import type { VariableType } from "../src/data/Table.js";
import { checkInputFile, type NamedPath } from "./checkPaths.js";
import { type Io, readInput, toolVersion } from "./io.js";
import { checkClaimCount, MAX_TESTED_CLAIMS } from "./limits.js";
import { loadGraph } from "./loadGraph.js";
import { checkOneStdin, inputName, isStreamInput, readStreamBytes } from "./readStdin.js";

/** Whether the options ask for summary-statistics input. */
export function isSummaryInput(opts: Record<string, unknown>): boolean {
  return opts.correlations !== undefined || opts.covariance !== undefined;
}

/** The input files of an audit for the checks of output paths and the report's record: the data file, or the matrix and standard deviations. */
export function dataInputs(dataPath: string | undefined, opts: Record<string, unknown>): NamedPath[] {
  if (!isSummaryInput(opts)) return dataPath !== undefined ? [{ path: dataPath, role: "data file" }] : [];
  const kind = opts.correlations !== undefined ? "correlations" : "covariance";
  return [{ path: String(opts[kind]), role: `--${kind} file` }, ...(opts.sd !== undefined ? [{ path: String(opts.sd), role: "--sd file" }] : [])];
}

/** Options that read rows and mean nothing for a matrix. */
const ROW_OPTIONS: ReadonlyArray<[string, string]> = [
  ["missing", "--missing"],
  ["levels", "--levels"],
  ["ignore", "--ignore"],
  ["decimalComma", "--decimal-comma"],
  ["permutations", "--permutations"],
  ["counts", "--counts"],
];

/**
 * Check the command line of summary input: one matrix, --n, --sd only with correlations, no data
 * file, no option that reads rows, and a method the matrix allows.
 * @throws UsageError naming the conflicting option and what to do
 */
export function checkSummaryUsage(dataPath: string | undefined, opts: Record<string, unknown>): void {
  if (opts.correlations !== undefined && opts.covariance !== undefined) throw new UsageError("choose one of --correlations and --covariance");
  const flag = opts.correlations !== undefined ? "--correlations" : "--covariance";
  if (dataPath !== undefined) throw new UsageError(`${flag} replaces the data file; give either the data file ${JSON.stringify(dataPath)} or ${flag}, not both`);
  if (opts.n === undefined) throw new UsageError(`${flag} needs --n, the number of complete cases the matrix was computed on`);
  if (opts.sd !== undefined && opts.covariance !== undefined) throw new UsageError("--sd turns a correlation matrix into covariances; a --covariance matrix already holds the variances, so drop --sd");
  for (const [key, name] of ROW_OPTIONS) {
    if (opts[key] !== undefined && opts[key] !== false) throw new UsageError(`${name} reads rows, which ${flag} does not have; drop ${name}`);
  }
  if (opts.listwise) throw new UsageError(`--listwise selects rows, which ${flag} does not have; the matrix must come from one set of complete cases already, so drop --listwise`);
  if (opts.method !== undefined && opts.method !== "auto" && opts.method !== "linear") {
    throw new UsageError(`--method ${String(opts.method)} needs rows; from ${flag} every claim gets the partial-correlation test (--method linear), so drop --method or give --method linear`);
  }
}

/** UTF-8 text of an input file or stream (`-`: standard input), without a byte-order mark. */
async function readText(io: Io, path: string, role: string): Promise<string> {
  const bytes = isStreamInput(io, path) ? await readStreamBytes(io, path) : readInput(path, io.cwd, role);
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(bytes).replace(/^\uFEFF/, "");
  } catch {
    throw new InputError(`${inputName(path)}: the ${role} is not UTF-8 text; save it as UTF-8 (CSV UTF-8)`, { file: inputName(path) });
  }
}

/**
 * Read the graph and the matrix (with the standard deviations), check them against each other and
 * build the audit's input. The matrix's variables that the graph does not measure are left out.
 * @throws UsageError for a wrong command line; InputError (exit 2) for a bad matrix, standard
 *   deviations, names that do not match the graph (with "did you mean"), or n too small
 */
export async function loadSummaryInputs(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<{ graph: Graph; input: SummaryAuditInput }> {
  const kind: SummaryKind = opts.correlations !== undefined ? "correlations" : "covariance";
  const path = String(opts[kind]);
  const file = inputName(path);
  checkOneStdin({ graph: graphPath, [`${kind === "correlations" ? "correlation" : "covariance"} matrix`]: path, ...(opts.sd !== undefined ? { "standard deviations": String(opts.sd) } : {}) });
  checkInputFile(io, { path: graphPath, role: "graph file" });
  checkInputFile(io, { path, role: `--${kind} file` });
  if (opts.sd !== undefined) checkInputFile(io, { path: String(opts.sd), role: "--sd file" });
  const graph = await loadGraph(io, graphPath, opts);
  checkClaimCount(graph, graphPath, MAX_TESTED_CLAIMS, "test and report test", "test the part of the graph you are asking about (a graph file with those nodes and their ancestors), or declare the nodes you will not test unmeasured (--unmeasured)");
  const delimiter = typeof opts.delimiter === "string" ? (opts.delimiter === "tab" || opts.delimiter === "\\t" ? "\t" : opts.delimiter) : undefined;
  const matrix = parseSummaryMatrix(await readText(io, path, `--${kind} file`), { file, kind, ...(delimiter ? { delimiter } : {}) });
  checkColumns(graph, matrix.names, { file });
  const checked = checkSummaryMatrix(matrix);
  const m = matrix.names.length;
  const nodeByNfc = new Map(graph.nodes.map((v) => [v.normalize("NFC"), v]));
  const used = matrix.names.map((name, i) => ({ name, i, node: nodeByNfc.get(name.normalize("NFC")) })).filter((u) => u.node !== undefined && graph.isMeasured(u.node));
  const n = opts.n as number;
  if (!(n > used.length + 2)) {
    throw new InputError(
      `--n ${n}: the matrix's ${used.length} variables of the graph need more than ${used.length + 2} complete cases (a partial correlation given the other variables has n − ${used.length} df); give the number of complete cases the matrix was computed on`,
      { file },
    );
  }
  let sd: Float64Array | undefined;
  if (opts.sd !== undefined) {
    const sdFile = inputName(String(opts.sd));
    const sds = parseStandardDeviations(await readText(io, String(opts.sd), "--sd file"), { file: sdFile, ...(delimiter ? { delimiter } : {}) });
    const inMatrix = new Set(matrix.names.map((v) => v.normalize("NFC")));
    for (const [name, where] of sds.where) {
      if (!inMatrix.has(name)) {
        const near = findClosestNames(name, matrix.names);
        throw new InputError(`${sdFile}:${where.line}:${where.column}: ${JSON.stringify(name)} is not a variable of the matrix ${file}${near.length ? ` (did you mean ${near.map((v) => JSON.stringify(v)).join(", ")}?)` : ""}; use the matrix's names`, { file: sdFile, ...where });
      }
    }
    sd = new Float64Array(m);
    for (const u of used) {
      const v = sds.byName.get(u.name.normalize("NFC"));
      if (v === undefined) throw new InputError(`${sdFile}: no standard deviation for ${JSON.stringify(u.name)}; give one for every variable of the graph in the matrix`, { file: sdFile });
      sd[u.i] = v;
    }
  }
  // The audit reads the matrix scaled to unit diagonal, D^−½ S D^−½ (the covariance of the
  // standardised variables; a variable of variance 0 keeps its zeros), so that no product overflows
  // or underflows whatever the units. Partial correlations do not depend on the scales, so
  // covariances, and correlations with or without their standard deviations, give the same tests.
  const k = used.length;
  const cov = new Float64Array(k * k);
  const variance = (i: number) => checked.values[i * m + i]! * (sd ? sd[i]! * sd[i]! : 1);
  for (let a = 0; a < k; a++) {
    for (let b = 0; b < k; b++) {
      const i = used[a]!.i;
      const j = used[b]!.i;
      const scale = Math.sqrt(variance(i)) * Math.sqrt(variance(j));
      cov[a * k + b] = scale > 0 ? (checked.values[i * m + j]! * (sd ? sd[i]! * sd[j]! : 1)) / scale : 0;
    }
  }
  const declared = typeof opts.types === "string" ? parseTypeDeclarations(opts.types) : {};
  const names = used.map((u) => u.node!);
  const types: Record<string, VariableType> = {};
  const byNfc = new Map(names.map((v) => [v.normalize("NFC"), v]));
  for (const [name, type] of Object.entries(declared)) {
    const node = byNfc.get(name.normalize("NFC"));
    if (node === undefined) {
      const near = findClosestNames(name, names);
      throw new UsageError(`--types: ${JSON.stringify(name)} is not a measured variable of the graph in ${file}${near.length ? ` (did you mean ${near.map((v) => JSON.stringify(v)).join(", ")}?)` : ""}`);
    }
    types[node] = type;
  }
  const zero = new Set(checked.zeroVariance);
  const untestableVariables = new Map<string, string>();
  for (const u of used) if (zero.has(u.i)) untestableVariables.set(u.node!, `"${u.node}" has variance 0 in ${file}, so it carries no information`);
  const data = createSummaryData(names, cov, n, types, file);
  return { graph, input: { ...data, source: { kind, n, ...(opts.sd !== undefined ? { sd_file: String(opts.sd) } : {}) }, untestableVariables } };
}

/**
 * Load summary input and run the audit (for `test` and `report`).
 * @throws as {@link checkSummaryUsage} and {@link loadSummaryInputs}
 */
export async function auditSummary(io: Io, graphPath: string, dataPath: string | undefined, opts: Record<string, unknown>, settings: Partial<AuditSettings>): Promise<AuditResult> {
  checkSummaryUsage(dataPath, opts);
  const { graph, input } = await loadSummaryInputs(io, graphPath, opts);
  return runAuditOnSummary(graph, input, { settings, version: toolVersion() });
}

/**
 * Site summaries as the data argument of `test` and `report`: detects them by their content, reads
 * and checks them, and runs the pooled audit (`poolSiteSummaries`).
 */
import { closeSync, openSync, readSync } from "node:fs";
import { resolve } from "node:path";
import { InputError, UsageError } from "../src/errors.js";
import { poolSitePool } from "../src/audit/poolSiteSummaries.js";
import { SitePoolBuilder, type SitePool } from "../src/audit/sitePool.js";
import type { AuditResult, AuditSettings } from "../src/audit/types.js";
import { checkInputFile } from "./checkPaths.js";
import { type Io, sha256File, toolVersion } from "./io.js";
import { readSummaryFile } from "./readSummaryFile.js";
import { loadGraph, splitList } from "./loadGraph.js";
import { isStdin, isStreamInput } from "./readStdin.js";

/**
 * Whether a data argument is a site summary: a regular file (not standard input or a pipe) whose first character
 * other than a byte-order mark or white space is "{" (a data table's header never starts a JSON
 * object). Cost: reads at most 4 KiB.
 */
export function isSiteSummaryFile(io: Pick<Io, "cwd">, path: string): boolean {
  // a stream (standard input, a named pipe) is never a summary: opening a pipe here would block until a writer came, and reading it would spend the data
  if (isStreamInput(io, path)) return false;
  let fd: number;
  try {
    fd = openSync(resolve(io.cwd, path), "r");
  } catch {
    return false; // the data reader reports it
  }
  try {
    const buf = Buffer.alloc(4096);
    const got = readSync(fd, buf, 0, buf.length, 0);
    const head = buf.subarray(0, got).toString("utf8").replace(/^\uFEFF/, "").trimStart();
    return head.startsWith("{");
  } catch {
    return false;
  } finally {
    closeSync(fd);
  }
}

/** Options that read rows or matrices, which site summaries do not have. */
const ROW_OPTIONS: ReadonlyArray<[string, string]> = [
  ["missing", "--missing"],
  ["levels", "--levels"],
  ["types", "--types"],
  ["ignore", "--ignore"],
  ["decimalComma", "--decimal-comma"],
  ["counts", "--counts"],
  ["correlations", "--correlations"],
  ["covariance", "--covariance"],
  ["table", "--table"],
];

/**
 * Read the graph and the site summaries, check them and pool them.
 * @throws UsageError for options that read rows or a --method or --unmeasured other than the
 *   summaries'; InputError (exit 2) for a summary that is not one, or made with another graph or settings
 */
export async function auditSites(io: Io, graphPath: string, paths: readonly string[], opts: Record<string, unknown>, settings: Partial<AuditSettings>): Promise<AuditResult> {
  for (const [key, name] of ROW_OPTIONS) {
    if (opts[key] !== undefined && opts[key] !== false) throw new UsageError(`${name} reads rows, which site summaries do not have; give it to arrowaudit summarize at each site, and drop it here`);
  }
  if (opts.listwise) throw new UsageError("--listwise selects rows, which site summaries do not have; give it to arrowaudit summarize at each site, and drop it here");
  if (isStdin(graphPath)) throw new UsageError("pooling site summaries needs the graph as a file, to check its SHA-256 against theirs; give the graph file's path");
  checkInputFile(io, { path: graphPath, role: "graph file" });
  const pool = readSites(io, paths);
  const first = pool.sites[0]!;
  const method = opts.method as string | undefined;
  if (method !== undefined && method !== "auto" && method !== first.settings.method) {
    throw new UsageError(`--method ${method}: the site summaries were made with --method ${first.settings.method}, which decides the tests; drop --method, or summarize the sites again with --method ${method}`);
  }
  const given = splitList(opts.unmeasured).sort();
  if (opts.unmeasured !== undefined && JSON.stringify(given) !== JSON.stringify(first.settings.unmeasured)) {
    throw new UsageError(`--unmeasured ${String(opts.unmeasured)}: the site summaries were made with --unmeasured ${JSON.stringify(first.settings.unmeasured.join(","))}; drop --unmeasured here, the summaries' is used`);
  }
  const graph = await loadGraph(io, graphPath, { ...opts, unmeasured: first.settings.unmeasured.join(",") });
  const sha = await sha256File(graphPath, io.cwd);
  return poolSitePool(graph, sha, graphPath, pool, { settings, version: toolVersion() });
}

/**
 * Check and read the summary files into one site pool, the sites in the order given; each file is
 * added to the pool as it is read and its parsed claims let go before the next (memory holds one
 * parsed file and the pool, rather than every file's claims).
 * @throws UsageError for standard input; InputError for the first file, in the order given, that
 *   is missing, unreadable, a data table, not UTF-8 or not a valid summary
 */
function readSites(io: Io, paths: readonly string[]): SitePool {
  const builder = new SitePoolBuilder();
  for (const path of paths) {
    if (isStdin(path)) throw new UsageError("site summaries are read from files; give their paths instead of -");
    checkInputFile(io, { path, role: "site summary" });
    if (!isSiteSummaryFile(io, path)) throw new InputError(`${path}: is a data table among site summaries; give either one data file or site summaries written by arrowaudit summarize`, { file: path });
    builder.add(readSummaryFile(path, io.cwd));
  }
  return builder.pool;
}

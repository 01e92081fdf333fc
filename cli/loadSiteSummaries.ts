/**
 * Site summaries as the data argument of `test` and `report`: detects them by their content, reads
 * and checks them, and runs the pooled audit (`poolSiteSummaries`).
 */
import { isUtf8 } from "node:buffer";
import { closeSync, openSync, readSync } from "node:fs";
import { resolve } from "node:path";
import { InputError, UsageError } from "../src/errors.js";
import { parseSiteSummary, poolSiteSummaries, type SiteSummaryFile } from "../src/audit/poolSiteSummaries.js";
import type { AuditResult, AuditSettings } from "../src/audit/types.js";
import { checkInputFile } from "./checkPaths.js";
import { type Io, readInput, sha256File, toolVersion } from "./io.js";
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

/**
 * A summary file's bytes as text: strict UTF-8 (checked by `isUtf8`, then decoded by Buffer, which
 * is faster on megabytes than a fatal TextDecoder and gives the same text), without a leading
 * byte-order mark (up to two, as the TextDecoder, which drops one, followed by a replace did).
 * @throws InputError when the bytes are not UTF-8
 */
function decodeSummary(bytes: Uint8Array, path: string): string {
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (!isUtf8(buf)) throw new InputError(`${path}: the site summary is not UTF-8 text; give the file that arrowaudit summarize wrote, unchanged`, { file: path });
  const bom = buf.length >= 3 && buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf ? 3 : 0;
  return buf.toString("utf8", bom).replace(/^\uFEFF/, "");
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
  const sites: SiteSummaryFile[] = [];
  for (const path of paths) {
    if (isStdin(path)) throw new UsageError("site summaries are read from files; give their paths instead of -");
    checkInputFile(io, { path, role: "site summary" });
    if (!isSiteSummaryFile(io, path)) throw new InputError(`${path}: is a data table among site summaries; give either one data file or site summaries written by arrowaudit summarize`, { file: path });
    const text = decodeSummary(readInput(path, io.cwd, "site summary"), path);
    sites.push({ file: path, summary: parseSiteSummary(text, path) });
  }
  const first = sites[0]!.summary;
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
  return poolSiteSummaries(graph, sha, graphPath, sites, { settings, version: toolVersion() });
}

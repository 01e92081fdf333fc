import { openSync, readSync, closeSync } from "node:fs";
import { resolve } from "node:path";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { checkColumns } from "../../src/graph/checkColumns.js";
import { readHeader } from "../../src/data/readHeader.js";
import { InputError } from "../../src/errors.js";
import { renderClaimsText } from "../../src/report/terminal.js";
import { EXIT } from "../exitCodes.js";
import type { Io } from "../io.js";
import { graphJson, loadGraph } from "../loadGraph.js";

/** Read at most the first 1 MiB of a file as text (enough for any header row). */
function readHead(path: string, cwd: string): string {
  let fd: number;
  try {
    fd = openSync(resolve(cwd, path), "r");
  } catch (e) {
    throw new InputError(`${path}: cannot read the file (${(e as NodeJS.ErrnoException).code ?? "error"}); check the path`, { file: path });
  }
  try {
    const buf = Buffer.alloc(1 << 20);
    const n = readSync(fd, buf, 0, buf.length, 0);
    return buf.subarray(0, n).toString("utf8");
  } finally {
    closeSync(fd);
  }
}

/** `arrowaudit claims <graph>`: list the implied independencies. */
export async function runClaims(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  const graph = loadGraph(io, graphPath, opts);
  let ignored: string[] | undefined;
  if (typeof opts.columns === "string") {
    const header = readHeader(readHead(opts.columns, io.cwd), { file: opts.columns });
    ignored = checkColumns(graph, header, { file: opts.columns }).ignoredColumns;
  }
  const { claims, untestable } = deriveClaims(graph, { sets: opts.sets as "union-parents" | "minimal" | "all-minimal" });
  const doc = { graph: graphJson(graph), claims, untestable, ...(ignored ? { ignored_columns: ignored } : {}) };
  if (opts.json) io.stdout(JSON.stringify(doc, null, 2) + "\n");
  else {
    io.stdout(renderClaimsText(doc, { ascii: !!opts.ascii }));
    if (ignored?.length) io.stdout(`columns not in the graph (ignored): ${ignored.join(", ")}\n`);
  }
  return EXIT.ok;
}

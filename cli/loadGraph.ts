import { escapeTerminalMessage } from "../src/report/escapeTerminal.js";
import { readGraphSource } from "../src/graph/readGraphSource.js";
import { withUnmeasured } from "../src/graph/withUnmeasured.js";
import type { Graph } from "../src/graph/Graph.js";
import { checkInputFile } from "./checkPaths.js";
import { type Io, readInput } from "./io.js";
import { inputName, isStreamInput, readStreamBytes } from "./readStdin.js";

export const splitList = (s: unknown): string[] =>
  typeof s === "string" ? s.split(",").map((x) => x.trim()).filter((x) => x !== "") : [];

/**
 * Read, parse and validate a graph file (`-`: standard input, named "standard input" in
 * messages; a pipe is read once, as a stream); print its warnings on stderr (unless --quiet).
 * @throws InputError when the file cannot be read (named, with the cause); the parsers' errors
 */
export async function loadGraph(io: Io, path: string, opts: Record<string, unknown>): Promise<Graph> {
  checkInputFile(io, { path, role: "graph file" });
  const bytes = isStreamInput(io, path) ? await readStreamBytes(io, path) : readInput(path, io.cwd, "graph file");
  const parsed = readGraphSource(bytes, { file: inputName(path), format: (opts.format as "auto" | "arrows" | "dot") ?? "auto" });
  // warnings quote names and lines of the graph file: control characters are shown, not obeyed
  if (!opts.quiet) for (const w of parsed.warnings) io.stderr(`warning: ${escapeTerminalMessage(w)}\n`);
  return withUnmeasured(parsed.graph, splitList(opts.unmeasured));
}

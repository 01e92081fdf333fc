import { readGraphSource } from "../src/graph/readGraphSource.js";
import { withUnmeasured } from "../src/graph/withUnmeasured.js";
import type { Graph } from "../src/graph/Graph.js";
import { type Io, readInput } from "./io.js";

export const splitList = (s: unknown): string[] =>
  typeof s === "string" ? s.split(",").map((x) => x.trim()).filter((x) => x !== "") : [];

/** Read, parse and validate a graph file; print its warnings on stderr (unless --quiet). */
export function loadGraph(io: Io, path: string, opts: Record<string, unknown>): Graph {
  const bytes = readInput(path, io.cwd);
  const parsed = readGraphSource(bytes, { file: path, format: (opts.format as "auto" | "arrows" | "dot") ?? "auto" });
  if (!opts.quiet) for (const w of parsed.warnings) io.stderr(`warning: ${w}\n`);
  return withUnmeasured(parsed.graph, splitList(opts.unmeasured));
}

/**
 * Loading benchmark: the I/O floor (read the file in 4 MiB chunks and count line feeds),
 * readTable end to end from a 4 MiB-chunk stream (or the two-thread reader), and buildPatternMoments over every column,
 * with wall time and the process's peak resident set size after each phase.
 * Usage: node --import tsx bench/loading.ts [path] [--parallel]   (default: bench/out/numeric-1m-50.csv,
 * generated first with bench/generateNumericCsv.ts if absent; --parallel reads with
 * cli/parallelReadTable.ts, two threads, instead of the one-thread stream)
 */
import { existsSync } from "node:fs";
import { open } from "node:fs/promises";
import { pathToFileURL } from "node:url";
import { buildPatternMoments } from "../src/data/buildPatternMoments.js";
import { readTable } from "../src/data/readTable.js";
import { parallelReadTable } from "../cli/parallelReadTable.js";
import { DEFAULT_OUT, generateNumericCsv } from "./generateNumericCsv.js";

const CHUNK = 4 * 1024 * 1024;

export interface LoadingPhase {
  phase: string;
  seconds: number;
  /** Peak resident set size of the process so far, MiB. */
  peakRssMiB: number;
  detail: string;
}

async function* fileChunks(path: string): AsyncIterable<Uint8Array> {
  const fh = await open(path, "r");
  try {
    for (;;) {
      const buf = new Uint8Array(CHUNK);
      const { bytesRead } = await fh.read(buf, 0, CHUNK, null);
      if (bytesRead === 0) return;
      yield bytesRead === CHUNK ? buf : buf.subarray(0, bytesRead);
    }
  } finally {
    await fh.close();
  }
}

const peakMiB = () => process.resourceUsage().maxRSS / 1024;

/** Run the three phases on `path` and return their figures. */
export async function benchLoading(path: string, parallel = false): Promise<LoadingPhase[]> {
  const out: LoadingPhase[] = [];
  let t0 = performance.now();
  let lines = 0;
  let bytes = 0;
  const fh = await open(path, "r");
  const buf = new Uint8Array(CHUNK);
  for (;;) {
    const { bytesRead } = await fh.read(buf, 0, CHUNK, null);
    if (bytesRead === 0) break;
    bytes += bytesRead;
    const view = bytesRead === CHUNK ? buf : buf.subarray(0, bytesRead);
    for (let i = view.indexOf(10); i >= 0; i = view.indexOf(10, i + 1)) lines++;
  }
  await fh.close();
  out.push({ phase: "I/O floor", seconds: (performance.now() - t0) / 1000, peakRssMiB: peakMiB(), detail: `${(bytes / 1e6).toFixed(1)} MB, ${lines} lines` });

  t0 = performance.now();
  const table = parallel
    ? await parallelReadTable(path, { file: path })
    : await readTable(fileChunks(path), { file: path }, { totalBytes: bytes });
  out.push({
    phase: parallel ? "parallelReadTable" : "readTable",
    seconds: (performance.now() - t0) / 1000,
    peakRssMiB: peakMiB(),
    detail: `${table.rows} rows × ${table.columns.length} columns, ${table.columns.reduce((s, c) => s + c.missing, 0)} missing cells`,
  });

  t0 = performance.now();
  const names = table.columns.map((c) => c.name);
  const pm = buildPatternMoments(table, { variables: names });
  out.push({
    phase: "buildPatternMoments",
    seconds: (performance.now() - t0) / 1000,
    peakRssMiB: peakMiB(),
    detail: `${pm.patterns} patterns, ${pm.completeRows} complete rows`,
  });

  t0 = performance.now();
  const m = pm.momentsFor(names);
  out.push({ phase: "momentsFor(all)", seconds: (performance.now() - t0) / 1000, peakRssMiB: peakMiB(), detail: `n = ${m.n}, d = ${m.design.length}` });
  return out;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const args = process.argv.slice(2);
  const parallel = args.includes("--parallel");
  const path = args.find((a) => !a.startsWith("--")) ?? DEFAULT_OUT;
  if (!existsSync(path)) {
    console.log(`generating ${path} ...`);
    generateNumericCsv(path);
  }
  const phases = await benchLoading(path, parallel);
  for (const p of phases) console.log(`${p.phase.padEnd(22)} ${p.seconds.toFixed(2).padStart(6)} s   peak RSS ${p.peakRssMiB.toFixed(0).padStart(5)} MiB   ${p.detail}`);
  const floor = phases[0]!.seconds;
  const load = phases[1]!.seconds + phases[2]!.seconds;
  console.log(`readTable + buildPatternMoments = ${load.toFixed(2)} s = ${(load / floor).toFixed(1)} × the I/O floor`);
}

/**
 * Pattern moments with two threads: the main thread plans them (design columns, shifts, the
 * pattern of every row), then accumulates the first half of the rows while a worker thread
 * accumulates the second half with the same shifts, reading the same column buffers; the two
 * parts are added pattern by pattern. Same moments as `buildPatternMoments` up to the order of
 * floating-point summation.
 *
 * Falls back to one thread for small tables, ranks (`useRanks`), plans without a row pass (too
 * many patterns), columns outside shared memory too large to copy to the worker, or a worker
 * that cannot start; a worker that fails has its range accumulated by the main thread.
 *
 * Measured on the benchmark's 1,000,000 × 50 table with the flexible basis columns of the
 * default test (146 design columns): 2.55–2.62 s on two threads against 3.5–3.8 s on one. With
 * the 50 plain columns alone two threads had bought nothing (the pass is then bound by memory).
 */
import type { Worker } from "node:worker_threads";
import {
  accumulatePatternRange,
  buildPatternMoments,
  patternMomentsFromParts,
  planPatternMoments,
  type PatternMomentsOptions,
  type PatternPart,
} from "../src/data/buildPatternMoments.js";
import type { PatternMoments } from "../src/data/Moments.js";
import type { Table } from "../src/data/Table.js";
import type { MomentsReply, MomentsTask } from "./patternMomentsWorker.js";
import { startWorker } from "./startWorker.js";

const MIN_ROWS = 200_000;
/** Column bytes outside shared memory that may be copied to the worker. */
const MAX_COPY_BYTES = 64 * 1024 * 1024;

export interface ParallelMomentsOptions {
  /** Tables with fewer rows are done by one thread (default 200,000). */
  minRows?: number;
  /** Told how the moments were built: 2 threads, or 1 and why (for tests and benchmarks). */
  onThreads?: (threads: 1 | 2, reason?: string) => void;
}

/**
 * Build pattern moments of `options.variables` over two threads when the table is large (see
 * the module comment); same result as `buildPatternMoments(table, options)` up to summation order.
 * Cost: O(n · v) for the plan plus O(n · d²) / 2 wall time on two free cores; memory as
 * `buildPatternMoments` plus one staging area per thread.
 * Source: Chan, Golub & LeVeque (1983), The American Statistician 37(3):242–247 (shifted sums).
 * @throws UnknownNodeError, RangeError as `buildPatternMoments`
 * @example const pm = await parallelPatternMoments(table, { variables: ["age", "sbp"] })
 */
export async function parallelPatternMoments(
  table: Table,
  options: PatternMomentsOptions,
  opts: ParallelMomentsOptions = {},
): Promise<PatternMoments> {
  const serial = (reason: string): PatternMoments => {
    opts.onThreads?.(1, reason);
    return buildPatternMoments(table, options);
  };
  if (options.useRanks) return serial("ranks");
  if (table.rows < (opts.minRows ?? MIN_ROWS)) return serial("small table");

  // Start the worker first: it loads while the plan is made.
  let worker: Worker;
  try {
    worker = startWorker(import.meta.url, "patternMomentsWorker", { kind: "patternMoments" });
  } catch {
    return serial("worker did not start");
  }
  const reply = new Promise<MomentsReply>((resolve) => {
    worker.once("message", (m: MomentsReply) => resolve(m));
    worker.once("error", () => resolve({ ok: false }));
    worker.once("exit", () => resolve({ ok: false }));
  });
  try {
    const plan = planPatternMoments(table, options);
    const pass = plan.pass;
    if (!pass) {
      opts.onThreads?.(1, "too many patterns to group");
      return patternMomentsFromParts(plan, []);
    }
    const n = plan.rows;
    if (copyBytes(pass.columns) > MAX_COPY_BYTES) {
      opts.onThreads?.(1, "columns not in shared memory");
      return patternMomentsFromParts(plan, [accumulatePatternRange(pass, 0, n)]);
    }
    const mid = Math.floor(n / 2);
    const task: MomentsTask = { pass, from: mid, to: n };
    worker.postMessage(task);
    const first = accumulatePatternRange(pass, 0, mid);
    const answer = await reply;
    let second: PatternPart;
    if (answer.ok) {
      second = answer.part;
      opts.onThreads?.(2);
    } else {
      second = accumulatePatternRange(pass, mid, n);
      opts.onThreads?.(1, "worker failed");
    }
    return patternMomentsFromParts(plan, [first, second]);
  } finally {
    void worker.terminate();
  }
}

/** Bytes the structured clone would copy: the buffers of the columns not in shared memory. */
function copyBytes(columns: readonly { scores?: Float64Array; codes?: Int32Array }[]): number {
  const seen = new Set<ArrayBufferLike>();
  let bytes = 0;
  for (const c of columns) {
    for (const a of [c.scores, c.codes]) {
      if (!a || a.buffer instanceof SharedArrayBuffer || seen.has(a.buffer)) continue;
      seen.add(a.buffer);
      bytes += a.buffer.byteLength;
    }
  }
  return bytes;
}

/**
 * Worker thread of {@link parallelReadTable}: reads the records in bytes [start, end) of a
 * delimited file into columns placed in shared memory, and posts the builder's state back.
 * Posts `{ ok: false }` instead when the range holds a quote character or a record the
 * reader rejects; the main thread then reads the whole file the ordinary way, which reports
 * the error with its exact line.
 */
import { closeSync, openSync, readSync } from "node:fs";
import { parentPort, workerData } from "node:worker_threads";
import { UnquotedRecordReader } from "../src/data/fastNumericScan.js";
import { createBuilder, type TablePlan } from "../src/data/readTable.js";
import type { ReadOptions } from "../src/data/readOptions.js";

/** What the main thread hands to the worker. */
export interface RangeTask {
  path: string;
  start: number;
  end: number;
  plan: TablePlan;
  options: ReadOptions;
  /** One shared buffer per kept column; this range writes rows [offset, offset + length). */
  buffers: SharedArrayBuffer[];
  offset: number;
  length: number;
}

const CHUNK = 4 * 1024 * 1024;

/** Read bytes [start, end) of the file at `path` into the columns; the builder's state, or undefined at a quote. */
export function readRange(task: RangeTask): ReturnType<ReturnType<typeof createBuilder>["exportState"]> | undefined {
  const builder = createBuilder(task.plan, task.options);
  builder.useStorage(task.buffers.map((b) => new Float64Array(b, task.offset * 8, task.length)));
  const reader = new UnquotedRecordReader(builder, task.plan.delimiter.charCodeAt(0), 0);
  const fd = openSync(task.path, "r");
  try {
    const buf = new Uint8Array(CHUNK);
    for (let pos = task.start; pos < task.end; ) {
      const got = readSync(fd, buf, 0, Math.min(CHUNK, task.end - pos), pos);
      if (got === 0) break;
      pos += got;
      if (!reader.feed(got === CHUNK ? buf : buf.subarray(0, got))) return undefined;
    }
  } finally {
    closeSync(fd);
  }
  if (!reader.finish()) return undefined;
  return builder.exportState();
}

if (parentPort && workerData && (workerData as { kind?: string }).kind === "readRange") {
  let reply: unknown;
  try {
    const state = readRange((workerData as { task: RangeTask }).task);
    reply = state ? { ok: true, state } : { ok: false };
  } catch {
    reply = { ok: false };
  }
  parentPort.postMessage(reply);
}

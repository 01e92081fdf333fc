/**
 * Read a large delimited file with two threads: the main thread reads the first half of the
 * data records and a worker thread the second half (split at a line feed), both writing
 * numbers straight into the same shared column buffers; the halves are then joined in place
 * and typed once, exactly as a single reader would (same values, types, declared levels and
 * scores, warnings and errors).
 *
 * Falls back to one thread (the ordinary streaming reader) for small files, files that end
 * lines with a lone CR, the papaparse engine, a quote character anywhere in the data, a
 * record the fast reader rejects (the ordinary reader then reports it with its exact line),
 * or a worker that cannot start.
 */
import { closeSync, createReadStream, fstatSync, openSync, readSync } from "node:fs";
import type { Worker } from "node:worker_threads";
import type { BuilderState } from "../src/data/columnBuilder.js";
import { UnquotedRecordReader } from "../src/data/fastNumericScan.js";
import type { ReadOptions } from "../src/data/readOptions.js";
import { createBuilder, estimateRecords, finishTable, planTable, readTable } from "../src/data/readTable.js";
import { utf16ByteOrderMark } from "../src/data/textBytes.js";
import type { Table } from "../src/data/Table.js";
import type { RangeTask } from "./readRangeWorker.js";
import { startWorker } from "./startWorker.js";

const CHUNK = 4 * 1024 * 1024;
const HEAD_BYTES = 256 * 1024;
const LF = 10;

export interface ParallelReadOptions {
  /** Files smaller than this are read by one thread (default 16 MiB). */
  minBytes?: number;
  /** Told how the file was read: 2 threads, or 1 and why (for tests and benchmarks). */
  onRead?: (threads: 1 | 2, reason?: string) => void;
}

/**
 * Read the table in the file at `path` (an absolute or working-directory-relative path) with
 * two threads when it is large and quote-free, else with one. Same result as
 * `readTable(stream of the file, options)`.
 * Cost: O(bytes / 2) wall time on two free cores, plus O(rows · columns) to join the halves;
 * memory: the columns (3% spare) plus two 4 MiB read buffers.
 * @throws DataError, UsageError as `readTable`; the file system's errors when the file cannot be read
 * @example await parallelReadTable("cohort.csv", { file: "cohort.csv", columns: ["age", "sbp"] })
 */
export async function parallelReadTable(path: string, options: ReadOptions, opts: ParallelReadOptions = {}): Promise<Table> {
  const fd = openSync(path, "r");
  let size: number;
  let head: Uint8Array;
  try {
    size = fstatSync(fd).size;
    head = new Uint8Array(Math.min(size, HEAD_BYTES));
    head = head.subarray(0, readSync(fd, head, 0, head.length, 0));
  } finally {
    closeSync(fd);
  }
  const serial = (reason: string) => {
    opts.onRead?.(1, reason);
    return readTable(createReadStream(path, { highWaterMark: CHUNK }), options, { totalBytes: size });
  };
  if (size < (opts.minBytes ?? 16 * 1024 * 1024) || options.engine === "papaparse") return serial("small file or papaparse engine");
  if (utf16ByteOrderMark(head)) return serial("UTF-16 (transcoded by the streaming reader)");
  const plan = planTable(head, head.length === size, options);
  if (!plan || plan.lineEnd !== "\n" || plan.sampleRecords === 0) return serial("no sample records in the first 256 KiB, or lone-CR line ends");

  // Split the data at the first line feed after its middle.
  const dataStart = plan.headerEnd + 1;
  const split = findLineStart(path, dataStart + Math.floor((size - dataStart) / 2), size);
  if (split === undefined) return serial("no line feed after the middle");
  const rows0 = estimateRecords(plan, split - dataStart);
  const rows1 = estimateRecords(plan, size - split);

  const builder = createBuilder(plan, options);
  const k = builder.names.length;
  const buffers = Array.from({ length: k }, () => new SharedArrayBuffer(8 * (rows0 + rows1)));
  builder.useStorage(buffers.map((b) => new Float64Array(b, 0, rows0)));
  const task: RangeTask = { path, start: split, end: size, plan, options, buffers, offset: rows0, length: rows1 };

  let worker: Worker;
  try {
    worker = startWorker(import.meta.url, "readRangeWorker", { kind: "readRange", task });
  } catch {
    return serial("worker did not start");
  }
  const reply = new Promise<{ ok: boolean; state?: BuilderState }>((resolve) => {
    worker.once("message", (m: { ok: boolean; state?: BuilderState }) => resolve(m));
    worker.once("error", () => resolve({ ok: false }));
    worker.once("exit", () => resolve({ ok: false }));
  });

  let lineBase: number;
  try {
    const reader = new UnquotedRecordReader(builder, plan.delimiter.charCodeAt(0), plan.firstLine);
    const ok = readRangeInto(path, dataStart, split, reader);
    if (!ok) {
      await worker.terminate();
      return serial("quote in the first half");
    }
    lineBase = reader.line;
  } catch (e) {
    // A record in the first half the fast reader rejects: the first error in file order.
    await worker.terminate();
    throw e;
  }
  const answer = await reply;
  await worker.terminate();
  if (!answer.ok || !answer.state) return serial("quote or rejected record in the second half");
  builder.absorb(answer.state, lineBase, rows0);
  opts.onRead?.(2);
  return finishTable(builder);
}

/** Scan bytes [start, end) of the file into the reader; false at a quote. */
function readRangeInto(path: string, start: number, end: number, reader: UnquotedRecordReader): boolean {
  const fd = openSync(path, "r");
  try {
    const buf = new Uint8Array(CHUNK);
    for (let pos = start; pos < end; ) {
      const got = readSync(fd, buf, 0, Math.min(CHUNK, end - pos), pos);
      if (got === 0) break;
      pos += got;
      if (!reader.feed(got === CHUNK ? buf : buf.subarray(0, got))) return false;
    }
  } finally {
    closeSync(fd);
  }
  return reader.finish();
}

/** Offset just after the first line feed at or after `from`, or undefined when none ends before `size`. */
function findLineStart(path: string, from: number, size: number): number | undefined {
  const fd = openSync(path, "r");
  try {
    const buf = new Uint8Array(64 * 1024);
    for (let pos = from; pos < size; ) {
      const got = readSync(fd, buf, 0, Math.min(buf.length, size - pos), pos);
      if (got === 0) return undefined;
      const i = buf.subarray(0, got).indexOf(LF);
      if (i >= 0) return pos + i + 1 < size ? pos + i + 1 : undefined;
      pos += got;
    }
  } finally {
    closeSync(fd);
  }
  return undefined;
}

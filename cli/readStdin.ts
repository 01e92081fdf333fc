/**
 * Inputs that are streams rather than files, as pipelines give them: `-` (standard input) for
 * the graph, the data, `claims --columns` or `draw --results`, and paths that are not regular
 * files (a named pipe, or `<(zcat cohort.csv.gz)` in a shell, which is /dev/fd/63). A stream can
 * be read once: its first bytes are kept for the header instead of being read twice, data go
 * through the streaming reader (the two-thread reader needs a file), and the bytes are hashed as
 * they are read, so that a report can give the SHA-256 of what it read where it would hash a file
 * (hashing the path again would read nothing, or wait forever). At most one input of a command
 * may be `-`.
 */
import { createHash, type Hash } from "node:crypto";
import { createReadStream, statSync } from "node:fs";
import { resolve } from "node:path";
import { UsageError } from "../src/errors.js";
import { decodeHead } from "../src/data/readHeader.js";
import { readTable } from "../src/data/readTable.js";
import type { Table } from "../src/data/Table.js";
import type { Io } from "./io.js";
import { readOptionsFrom } from "./readOptionsFrom.js";
import { openDataFile } from "./openDataFile.js";

/** The file name that means standard input. */
export const STDIN_ARG = "-";
/** How standard input is named in messages and reports. */
export const STDIN_NAME = "standard input";

export const isStdin = (path: unknown): boolean => path === STDIN_ARG;

/** How an input is named in messages: "standard input" for `-`, else its path as given. */
export const inputName = (path: string): string => (isStdin(path) ? STDIN_NAME : path);

/** Per Io: the streams read so far (by path as given, `-` for standard input), with the SHA-256 of all their bytes once read to the end. */
const streams = new WeakMap<object, Map<string, { digest?: string }>>();

/**
 * Refuse `-` for more than one input of a command (standard input can be read once).
 * `inputs` maps each input's role to its path as given.
 * @throws UsageError naming the inputs that asked for standard input
 * @example checkOneStdin({ graph: "-", data: "-" }) // throws: "the graph and the data cannot both be read from standard input (-)…"
 */
export function checkOneStdin(inputs: Record<string, unknown>): void {
  const roles = Object.entries(inputs)
    .filter(([, p]) => isStdin(p))
    .map(([role]) => role);
  if (roles.length > 1) {
    throw new UsageError(`the ${roles.slice(0, -1).join(", the ")} and the ${roles.at(-1)} cannot both be read from standard input (-): it can be read only once; give all but one of them as files`);
  }
}

/**
 * Whether an input is read as a stream: `-`, or a path that exists and is neither a regular file
 * nor a folder (a pipe, a character device). Folders and missing paths are left to the checks of
 * checkPaths.ts.
 */
export function isStreamInput(io: Pick<Io, "cwd">, path: string): boolean {
  if (isStdin(path)) return true;
  try {
    const s = statSync(resolve(io.cwd, path));
    return !s.isFile() && !s.isDirectory();
  } catch {
    return false;
  }
}

/** Open the stream of `path` (standard input for `-`), once per Io and path. */
function take(io: Io, path: string): { stream: AsyncIterable<Uint8Array>; record: { digest?: string } } {
  let seen = streams.get(io);
  if (!seen) streams.set(io, (seen = new Map()));
  if (seen.has(path)) throw new UsageError(`${inputName(path)} was already read; it can be read only once: give the other inputs as files`);
  let stream: AsyncIterable<Uint8Array>;
  if (isStdin(path)) {
    if (io.stdin === undefined) throw new UsageError("- means standard input, which is not available here; give a file name");
    stream = io.stdin;
  } else stream = createReadStream(resolve(io.cwd, path), { highWaterMark: 4 * 1024 * 1024 });
  const record: { digest?: string } = {};
  seen.set(path, record);
  return { stream, record };
}

/**
 * SHA-256 (hex) of everything read from the stream input `path` (`-` for standard input), once
 * it was read to the end; undefined when it was not read as a stream or not to the end.
 */
export function streamDigest(io: Io, path: string): string | undefined {
  return streams.get(io)?.get(path)?.digest;
}

/**
 * All the bytes of a stream input (for a graph or a results file), hashed as they come.
 * Cost: O(bytes). @throws UsageError when standard input is unavailable or the stream was already read
 */
export async function readStreamBytes(io: Io, path: string): Promise<Uint8Array> {
  const { stream, record } = take(io, path);
  const hash = createHash("sha256");
  const parts: Uint8Array[] = [];
  for await (const chunk of stream) {
    hash.update(chunk);
    parts.push(chunk);
  }
  record.digest = hash.digest("hex");
  return Buffer.concat(parts);
}

/** A delimited table arriving on a stream: the text of its first records, and all its bytes. */
export interface StreamData {
  /** The header record and the complete rows read with it, for `readHeader` (as `readHead` gives for a file). */
  head: string;
  /** Every byte of the stream, the head included, for `readTable`. */
  chunks: AsyncIterable<Uint8Array>;
}

/**
 * Open a data table on a stream input: read until its header record is complete, keep those
 * bytes, and hand back the header text and a stream of every byte (the kept ones first).
 * Cost: O(header bytes) now; the rest as `chunks` is read.
 * @throws UsageError when standard input is unavailable or the stream was already read
 * @throws DataError when the head is not UTF-8 text (see `decodeHead`)
 */
export async function openStreamData(io: Io, path: string): Promise<StreamData> {
  const { stream, record } = take(io, path);
  const hash = createHash("sha256");
  const it = stream[Symbol.asyncIterator]();
  const kept: Uint8Array[] = [];
  let done = false;
  let head: string | undefined;
  for (;;) {
    head = decodeHead(Buffer.concat(kept), done, inputName(path));
    if (head !== undefined || done) break;
    const next = await it.next();
    if (next.done) done = true;
    else {
      hash.update(next.value);
      kept.push(next.value);
    }
  }
  return { head: head ?? "", chunks: rest(kept, it, done, hash, record) };
}

async function* rest(kept: Uint8Array[], it: AsyncIterator<Uint8Array>, done: boolean, hash: Hash, record: { digest?: string }): AsyncIterable<Uint8Array> {
  yield* kept;
  while (!done) {
    const next = await it.next();
    if (next.done) break;
    hash.update(next.value);
    yield next.value;
  }
  record.digest = hash.digest("hex");
}

/** A data table to audit, from a file or a stream: its name in messages, its first records, and a reader of its columns. */
export interface DataSource {
  /** The path as given, or "standard input". */
  name: string;
  /** The header record and the rows read with it (see `readHead`). */
  head: string;
  /** The column names when they do not come from a header line (a Parquet file, a database table); `head` is then "". */
  fields?: string[];
  /** Read the table, keeping `columns`: the two-thread reader or DuckDB for a file (`openDataFile`), the streaming reader for a stream. */
  load(columns: string[]): Promise<Table>;
}

/**
 * Open the data of `test`, `report` and `demo`: a regular file (read later by `loadTable`), or a
 * stream (`-` or a pipe), read once as it streams in by `readTable`.
 * @throws InputError when the file cannot be read; UsageError when standard input is unavailable
 */
export async function openData(io: Io, path: string, opts: Record<string, unknown>): Promise<DataSource> {
  if (!isStreamInput(io, path)) return openDataFile(io, path, opts);
  const name = inputName(path);
  if (opts.engine === "duckdb" || opts.table !== undefined) throw new UsageError(`${name} is a stream, and DuckDB (--engine duckdb, --table) reads files; give the data as a file, or drop those options`);
  const data = await openStreamData(io, path);
  return { name, head: data.head, load: (columns) => readTable(data.chunks, readOptionsFrom(opts, name, columns)) };
}

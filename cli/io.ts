/** File and process plumbing for the CLI; the library in src/ never touches these. */
import { createHash } from "node:crypto";
import { closeSync, createReadStream, existsSync, openSync, readSync, readFileSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { errnoCode, readFailure } from "./fileErrors.js";
import { deferTerminationSignals } from "./signals.js";
import { writeStderr, writeStdout } from "./standardStreams.js";
import { writeOutputs } from "./writeOutputs.js";
import { decodeHead } from "../src/data/readHeader.js";

/** Where the CLI writes: injectable so tests capture output in-process. */
export interface Io {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  /** Whether stdout is a terminal (colours) and stderr is one (progress bar). */
  stdoutIsTTY: boolean;
  stderrIsTTY: boolean;
  env: Record<string, string | undefined>;
  cwd: string;
  /** The date written into reports, ISO 8601; tests fix it. */
  now: () => Date;
  /** Standard input, for `-` as a file name; absent when the caller offers none. */
  stdin?: AsyncIterable<Uint8Array>;
  /** Called before output files are written: from then on SIGINT/SIGTERM wait for them (cli/signals.ts). */
  deferSignals?: () => void;
}

export const processIo = (): Io => ({
  stdout: writeStdout,
  stderr: writeStderr,
  stdoutIsTTY: !!process.stdout.isTTY,
  stderrIsTTY: !!process.stderr.isTTY,
  env: process.env,
  cwd: process.cwd(),
  now: () => (process.env.ARROWAUDIT_DATE ? new Date(process.env.ARROWAUDIT_DATE) : new Date()),
  stdin: process.stdin,
  deferSignals: deferTerminationSignals,
});

/** The project root (the folder holding package.json), from the running module's location. */
export function packageRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 5; i++) {
    if (existsSync(join(dir, "package.json"))) return dir;
    dir = dirname(dir);
  }
  throw new Error("arrowaudit: cannot find package.json above the CLI");
}

export function toolVersion(): string {
  return (JSON.parse(readFileSync(join(packageRoot(), "package.json"), "utf8")) as { version: string }).version;
}

/** Read a whole input file, with an error that names it, its role (`what`) and the cause when it cannot be read. */
export function readInput(path: string, cwd: string, what = "file"): Uint8Array {
  try {
    return readFileSync(resolve(cwd, path));
  } catch (e) {
    throw readFailure(path, e, what);
  }
}

/** SHA-256 of a file, hex, streamed. */
export async function sha256File(path: string, cwd: string): Promise<string> {
  const h = createHash("sha256");
  for await (const chunk of createReadStream(resolve(cwd, path), { highWaterMark: 4 * 1024 * 1024 })) h.update(chunk as Buffer);
  return h.digest("hex");
}

/** Write one file atomically (a temporary beside it, then a rename); see `writeOutputs` for groups and signals. */
export function writeAtomic(path: string, cwd: string, content: string): string {
  return writeOutputs({ cwd }, [{ path, content }]);
}

/**
 * Read the first bytes of a file as text for `readHeader`: the whole header record, however long
 * (1 MiB at first, doubling until the header ends), and the complete rows read with it.
 * @throws InputError when the file cannot be read; DataError when it is not UTF-8 text (see `decodeHead`)
 */
export function readHead(path: string, cwd: string): string {
  let fd: number;
  try {
    fd = openSync(resolve(cwd, path), "r");
  } catch (e) {
    throw readFailure(path, e, "data file");
  }
  try {
    let buf = Buffer.alloc(1 << 20);
    let n = 0;
    for (;;) {
      let eof = false;
      while (n < buf.length) {
        const got = readSync(fd, buf, n, buf.length - n, n);
        if (got === 0) {
          eof = true;
          break;
        }
        n += got;
      }
      const text = decodeHead(buf.subarray(0, n), eof, path);
      if (text !== undefined) return text;
      const grown = Buffer.alloc(2 * buf.length);
      buf.copy(grown, 0, 0, n);
      buf = grown;
    }
  } catch (e) {
    throw errnoCode(e) === undefined ? e : readFailure(path, e, "data file"); // EISDIR: a folder opens but cannot be read
  } finally {
    closeSync(fd);
  }
}

/** File and process plumbing for the CLI; the library in src/ never touches these. */
import { createHash, randomBytes } from "node:crypto";
import { closeSync, createReadStream, existsSync, openSync, readSync, readFileSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { InputError } from "../src/errors.js";
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
}

export const processIo = (): Io => ({
  stdout: (s) => process.stdout.write(s),
  stderr: (s) => process.stderr.write(s),
  stdoutIsTTY: !!process.stdout.isTTY,
  stderrIsTTY: !!process.stderr.isTTY,
  env: process.env,
  cwd: process.cwd(),
  now: () => (process.env.ARROWAUDIT_DATE ? new Date(process.env.ARROWAUDIT_DATE) : new Date()),
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

/** Read a whole input file, with an error that names it when it cannot be read. */
export function readInput(path: string, cwd: string): Uint8Array {
  try {
    return readFileSync(resolve(cwd, path));
  } catch (e) {
    throw new InputError(`${path}: cannot read the file (${(e as NodeJS.ErrnoException).code ?? "error"}); check the path`, { file: path });
  }
}

/** SHA-256 of a file, hex, streamed. */
export async function sha256File(path: string, cwd: string): Promise<string> {
  const h = createHash("sha256");
  for await (const chunk of createReadStream(resolve(cwd, path), { highWaterMark: 4 * 1024 * 1024 })) h.update(chunk as Buffer);
  return h.digest("hex");
}

/** Write a file atomically: a temporary file beside it, then rename over the target. */
export function writeAtomic(path: string, cwd: string, content: string): string {
  const full = resolve(cwd, path);
  const tmp = join(dirname(full), `.${randomBytes(6).toString("hex")}.arrowaudit.tmp`);
  try {
    writeFileSync(tmp, content);
    renameSync(tmp, full);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw new InputError(`${path}: cannot write the output file (${(e as NodeJS.ErrnoException).code ?? "error"}); check the folder exists and is writable`, { file: path });
  }
  return full;
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
    throw new InputError(`${path}: cannot read the file (${(e as NodeJS.ErrnoException).code ?? "error"}); check the path`, { file: path });
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
  } finally {
    closeSync(fd);
  }
}

/**
 * Writing to standard output and standard error the way Unix tools do: synchronously, so that
 * a failed write is known at once; a reader that went away (EPIPE: `| head`, `| true`) stops the
 * run quietly, and any other failure (ENOSPC: `> /dev/full`) is an output error (exit 4).
 */
import { writeSync } from "node:fs";
import { errnoCode, OutputClosedError, OutputWriteError } from "./fileErrors.js";

const pause = new Int32Array(new SharedArrayBuffer(4));

/**
 * Write all of `text` to file descriptor `fd`, retrying partial writes, and waiting a
 * millisecond when a non-blocking descriptor is full (EAGAIN).
 * @throws the file system's error of a failed write
 */
export function writeFully(fd: number, text: string): void {
  const bytes = Buffer.from(text, "utf8");
  let off = 0;
  while (off < bytes.length) {
    try {
      off += writeSync(fd, bytes, off, bytes.length - off);
    } catch (e) {
      if (errnoCode(e) !== "EAGAIN") throw e;
      Atomics.wait(pause, 0, 0, 1);
    }
  }
}

/**
 * Write `text` to standard output.
 * @throws OutputClosedError when the reader closed the pipe (EPIPE)
 * @throws OutputWriteError for any other failure (no space, I/O error...)
 */
export function writeStdout(text: string): void {
  try {
    writeFully(1, text);
  } catch (e) {
    if (errnoCode(e) === "EPIPE") throw new OutputClosedError();
    throw new OutputWriteError("standard output", e);
  }
}

/** Write `text` to standard error; a failure is ignored, as there is nowhere left to report it. */
export function writeStderr(text: string): void {
  try {
    writeFully(2, text);
  } catch {
    // standard error is closed or full: nothing can be said
  }
}

/**
 * Plain-words messages for the file system's errors, and the two errors of writing output that
 * are not input errors: standard output closed by its reader (EPIPE), and output that could not
 * be written (no space left, a device error, a read-only file system...).
 */
import { InputError } from "../src/errors.js";

/** What an errno code means, in words a user can act on (POSIX error names, IEEE Std 1003.1 <errno.h>). */
const REASONS: Record<string, string> = {
  ENOENT: "no such file or folder",
  EISDIR: "it is a folder, not a file",
  ENOTDIR: "a part of the path is not a folder",
  EACCES: "permission denied",
  EPERM: "operation not permitted",
  ENOSPC: "no space left on the device",
  EDQUOT: "disk quota exceeded",
  EFBIG: "the file is too large for the file system",
  EIO: "input/output error on the device",
  EROFS: "the file system is read-only",
  ELOOP: "too many levels of symbolic links",
  ENAMETOOLONG: "the path is too long",
  EMFILE: "too many open files",
  ENFILE: "too many open files in the system",
  EXDEV: "the temporary file and the target are on different file systems",
  EBUSY: "the file is busy",
  ETXTBSY: "the file is busy",
  EINVAL: "the file does not accept this operation",
};

/** The errno code of a file-system error, if it has one. */
export function errnoCode(e: unknown): string | undefined {
  const code = (e as NodeJS.ErrnoException | undefined)?.code;
  return typeof code === "string" ? code : undefined;
}

/**
 * A file-system error in words: "permission denied (EACCES)". Unknown codes are shown as they
 * are, and an error without a code by its message.
 * @example fsReason(Object.assign(new Error("x"), { code: "ENOSPC" })) // "no space left on the device (ENOSPC)"
 */
export function fsReason(e: unknown): string {
  const code = errnoCode(e);
  if (code === undefined) return (e as Error | undefined)?.message ?? String(e);
  return REASONS[code] ? `${REASONS[code]} (${code})` : code;
}

/**
 * The input error for an input file that cannot be read, saying what to do for each cause.
 * `what` names the file's role ("graph file", "data file", "results file").
 * @example readFailure("data/", err, "data file").message // "data/: it is a folder, not a file (EISDIR); give the data file itself"
 */
export function readFailure(path: string, e: unknown, what = "file"): InputError {
  const code = errnoCode(e);
  let advice: string;
  if (code === "ENOENT") advice = "check the path";
  else if (code === "EISDIR") advice = `give the ${what} itself`;
  else if (code === "EACCES" || code === "EPERM") advice = "check the file's permissions (ls -l) or run as a user who may read it";
  else if (code === "ENOTDIR") advice = "check the path";
  else advice = `check the ${what}`;
  return new InputError(`${path}: cannot read the ${what}: ${fsReason(e)}; ${advice}`, { file: path });
}

/**
 * Standard output was closed by the program reading it (EPIPE, as with `| head`). Not a
 * failure: the run stops quietly with exit 0, as Unix filters do.
 */
export class OutputClosedError extends Error {
  override name = "OutputClosedError";
  constructor() {
    super("standard output was closed by its reader");
  }
}

/**
 * Output that could not be written: standard output or an output file (no space left on the
 * device, an I/O error, a read-only file system, no permission...). Exit code 4.
 */
export class OutputWriteError extends Error {
  override name = "OutputWriteError";
  /** "standard output" or the output file's path as given. */
  readonly target: string;
  constructor(target: string, cause: unknown) {
    super(`cannot write ${target === "standard output" ? "to standard output" : target}: ${fsReason(cause)}`, { cause });
    this.target = target;
  }
}

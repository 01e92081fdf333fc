/**
 * Checks of the paths a command was given, before any work: every input is a readable file, and
 * no output (companion files included) is one of the inputs, however it is reached.
 *
 * Terms: two paths name the *same file* when they reach the same inode of the same device
 * (POSIX stat(2) `st_dev` and `st_ino`), whether through the same name, a symbolic link (to the
 * file or to a folder on the way) or a hard link. An output that does not exist yet cannot be an
 * input; it is compared by its resolved folder and name all the same.
 */
import { accessSync, constants, realpathSync, statSync, type Stats } from "node:fs";
import { basename, dirname, join, resolve } from "node:path";
import { InputError } from "../src/errors.js";
import { readFailure } from "./fileErrors.js";
import type { Io } from "./io.js";
import { isStdin } from "./readStdin.js";

/** A path given on the command line, with what it is for the messages ("graph file", "--out report.md"). */
export interface NamedPath {
  path: string;
  role: string;
}

/**
 * Check that an input is a file this process can read: it exists, is not a folder, and its
 * permissions let us read it. `-` (standard input) passes. Cost: two system calls.
 * @throws InputError naming the path, its role and what to do
 * @example checkInputFile(io, { path: "data/", role: "data file" }) // throws: "data/: cannot read the data file: it is a folder, not a file (EISDIR); give the data file itself"
 */
export function checkInputFile(io: Pick<Io, "cwd">, input: NamedPath): void {
  if (isStdin(input.path)) return;
  const full = resolve(io.cwd, input.path);
  let stats: Stats;
  try {
    stats = statSync(full);
  } catch (e) {
    throw readFailure(input.path, e, input.role);
  }
  if (stats.isDirectory()) throw readFailure(input.path, Object.assign(new Error("is a directory"), { code: "EISDIR" }), input.role);
  try {
    accessSync(full, constants.R_OK);
  } catch (e) {
    throw readFailure(input.path, e, input.role);
  }
}

/** The path with symbolic links resolved, for a file that may not exist yet (its folder resolved). */
function resolvedPath(full: string): string {
  try {
    return realpathSync(full);
  } catch {
    try {
      return join(realpathSync(dirname(full)), basename(full));
    } catch {
      return full;
    }
  }
}

/** The file a path reaches (symbolic links followed), or undefined when it reaches none. */
function identity(full: string): Stats | undefined {
  try {
    return statSync(full);
  } catch {
    return undefined;
  }
}

/**
 * Refuse to write any output onto an input: compares each output with each input by device and
 * inode (following symbolic links, and catching hard links), and, for an output that does not
 * exist yet, by resolved path. Also refuses an output that is an existing folder. `-` is
 * skipped on either side (standard input and output are not files we replace).
 * Cost: O(outputs · inputs) system calls.
 * @throws InputError naming both paths and what to do
 * @example refuseOverwritingInputs(io, [{ path: "g.html", role: "--out g.html" }], [{ path: "g.html", role: "graph file" }]) // throws
 */
export function refuseOverwritingInputs(io: Pick<Io, "cwd">, outputs: readonly NamedPath[], inputs: readonly NamedPath[]): void {
  const ins = inputs
    .filter((i) => !isStdin(i.path))
    .map((i) => {
      const full = resolve(io.cwd, i.path);
      return { ...i, full, real: resolvedPath(full), stats: identity(full) };
    });
  for (const out of outputs) {
    if (isStdin(out.path)) continue;
    const full = resolve(io.cwd, out.path);
    const stats = identity(full);
    if (stats?.isDirectory()) {
      throw new InputError(`${out.role}: ${out.path} is a folder; give a file name for the output`, { file: out.path });
    }
    const real = resolvedPath(full);
    for (const i of ins) {
      const same = stats !== undefined && i.stats !== undefined ? stats.dev === i.stats.dev && stats.ino === i.stats.ino : real === i.real;
      if (!same) continue;
      const how = full === i.full ? "" : real === i.real ? " (the same file, through a symbolic link)" : " (the same file, through a hard link)";
      throw new InputError(
        `${out.role} would overwrite the ${i.role} ${i.path}${how}; arrowaudit never modifies its inputs: choose another output name`,
        { file: out.path },
      );
    }
  }
}

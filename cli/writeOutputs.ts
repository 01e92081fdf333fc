/**
 * Writing output files so that an interrupted or failed run never leaves a half-written file
 * under a real name, and a group of files (a Markdown report and its drawing) is replaced
 * together.
 *
 * Terms: the *target* is the file a user asked for; its *temporary* is a hidden file beside it,
 * named `.<target name>.arrowaudit-<process id>-<12 hex digits>.tmp`, that is renamed over the
 * target once complete (a rename within one folder replaces the target in one step: POSIX
 * rename(2)). A temporary is *stale* when the process named in it no longer runs (it was killed
 * before it could remove its temporary, e.g. by SIGKILL); a later run writing the same target
 * removes the stale temporaries of that target.
 *
 * Order, for a group: every temporary is written and flushed to the disk first; then the
 * temporaries are renamed in the order given, the main file (the report) last, so that a reader
 * who sees the new report also finds its new companions. When any step fails, the temporaries
 * not yet renamed are removed. A target that exists and is not a regular file (a terminal,
 * `/dev/null`, a named pipe) is written in place, as every Unix tool does.
 */
import { randomBytes } from "node:crypto";
import { closeSync, fchmodSync, fsyncSync, openSync, readdirSync, renameSync, rmSync, statSync, writeFileSync, writeSync } from "node:fs";
import { basename, dirname, join, resolve } from "node:path";
import { InputError } from "../src/errors.js";
import { OutputWriteError } from "./fileErrors.js";
import type { Io } from "./io.js";

/** One file to write: its path as the user gave it (relative to the working folder) and its content. */
export interface OutputFile {
  path: string;
  content: string | Uint8Array;
}

export interface WriteOutputsOptions {
  /**
   * Called once every temporary is written, before the first rename (for tests that interrupt
   * the write at its most delicate point).
   */
  afterTemporaries?: () => void;
}

/** Temporaries of this process not yet renamed or removed (removed on SIGINT/SIGTERM, see signals.ts). */
const live = new Set<string>();

/** Longest part of the target's name kept in a temporary's name (names are limited to 255 bytes). */
const NAME_PART = 100;
const TEMP = /^\.(.*)\.arrowaudit-(\d+)-[0-9a-f]{12}\.tmp$/su;

/**
 * Name of a temporary for `target` (a file name without folder) written by process `pid`.
 * @example temporaryName("report.md", 4242, "0123456789ab") // ".report.md.arrowaudit-4242-0123456789ab.tmp"
 */
export function temporaryName(target: string, pid: number, hex: string): string {
  return `.${[...target].slice(0, NAME_PART).join("")}.arrowaudit-${pid}-${hex}.tmp`;
}

/** Whether a process with this id is running (signal 0 checks without sending anything). */
function processRuns(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === "EPERM"; // it runs, as another user
  }
}

/**
 * Remove the stale temporaries of `full` (an absolute path): those in its folder named for the
 * same target by a process that no longer runs. Returns the names removed. Never throws: a
 * folder that cannot be listed has nothing we could remove.
 */
export function removeStaleTemporaries(full: string): string[] {
  const folder = dirname(full);
  const part = [...basename(full)].slice(0, NAME_PART).join("");
  let names: string[];
  try {
    names = readdirSync(folder);
  } catch {
    return [];
  }
  const removed: string[] = [];
  for (const name of names) {
    const m = TEMP.exec(name);
    if (!m || m[1] !== part) continue;
    const pid = Number(m[2]);
    if (pid === process.pid || processRuns(pid)) continue;
    try {
      rmSync(join(folder, name), { force: true });
      removed.push(name);
    } catch {
      // left for the user; the README says the pattern is safe to delete
    }
  }
  return removed;
}

/** Remove every temporary this process still holds (for signal handlers). Never throws. */
export function removeLiveTemporaries(): void {
  for (const t of live) {
    try {
      rmSync(t, { force: true });
    } catch {
      // nothing more can be done while the process is ending
    }
    live.delete(t);
  }
}

/** Whether an existing target is written in place (a device, a pipe, a socket) rather than replaced. */
function writtenInPlace(full: string): boolean {
  try {
    const s = statSync(full);
    if (s.isDirectory()) throw new InputError(`${full}: the output is a folder; give a file name for the output`, { file: full });
    return !s.isFile();
  } catch (e) {
    if (e instanceof InputError) throw e;
    return false;
  }
}

/** Write all of `content` to an open file, flushing it to the device when it is a regular file. */
function writeAll(fd: number, content: string | Uint8Array, flush: boolean): void {
  const bytes = typeof content === "string" ? Buffer.from(content, "utf8") : content;
  for (let off = 0; off < bytes.length; ) off += writeSync(fd, bytes, off, bytes.length - off);
  if (flush) fsyncSync(fd);
}

/**
 * Write output files safely (see the module comment for the order): each regular target is
 * replaced by renaming a complete, flushed temporary over it; a group is renamed in the order
 * given, so give companions first and the main file last. Stale temporaries of the targets are
 * removed first. SIGINT and SIGTERM that arrive meanwhile wait until the files are in place
 * (`io.deferSignals`). Returns the absolute path of the last file.
 * Cost: O(total bytes) plus one fsync per file.
 * @throws InputError when a target is a folder
 * @throws OutputWriteError when a file cannot be written (no space, no permission, no folder...);
 *   every temporary not yet renamed is removed first
 * @example writeOutputs(io, [{ path: "report.svg", content: svg }, { path: "report.md", content: md }])
 */
export function writeOutputs(io: Pick<Io, "cwd" | "deferSignals">, files: readonly OutputFile[], options: WriteOutputsOptions = {}): string {
  const plan = files.map((f) => {
    const full = resolve(io.cwd, f.path);
    return { ...f, full, inPlace: writtenInPlace(full), temp: undefined as string | undefined };
  });
  io.deferSignals?.();
  let current = plan[0]!;
  try {
    for (const p of plan) {
      current = p;
      if (p.inPlace) continue;
      removeStaleTemporaries(p.full);
      p.temp = join(dirname(p.full), temporaryName(basename(p.full), process.pid, randomBytes(6).toString("hex")));
      live.add(p.temp);
      const fd = openSync(p.temp, "wx", 0o666);
      try {
        const mode = existingMode(p.full);
        if (mode !== undefined) fchmodSync(fd, mode);
        writeAll(fd, p.content, true);
      } finally {
        closeSync(fd);
      }
    }
    options.afterTemporaries?.();
    for (const p of plan) {
      current = p;
      if (p.inPlace) writeFileSync(p.full, p.content);
      else {
        renameSync(p.temp!, p.full);
        live.delete(p.temp!);
        p.temp = undefined;
      }
    }
  } catch (e) {
    for (const p of plan) {
      if (p.temp === undefined) continue;
      rmSync(p.temp, { force: true });
      live.delete(p.temp);
    }
    if (e instanceof InputError) throw e;
    throw new OutputWriteError(current.path, e);
  }
  return plan[plan.length - 1]!.full;
}

/** Permission bits of an existing regular file, kept by its replacement; undefined when there is none. */
function existingMode(full: string): number | undefined {
  try {
    const s = statSync(full);
    return s.isFile() ? s.mode & 0o7777 : undefined;
  } catch {
    return undefined;
  }
}

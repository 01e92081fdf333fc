/**
 * Run the command line in-process, as the tests do: `run(argv, io)` with output captured, no
 * terminal, a fixed clock (so reports carry the same date) and the given folder, environment
 * and standard input.
 */
import type { Readable } from "node:stream";
import type { Io } from "../../cli/io.js";
import { run } from "../../cli/program.js";

export interface CliRun {
  code: number;
  stdout: string;
  stderr: string;
}

export interface CliOptions {
  /** Working folder of the run (relative paths in argv resolve against it). */
  cwd: string;
  /** Environment the command sees (default: none). */
  env?: Record<string, string>;
  /** Bytes on standard input. */
  stdin?: Readable;
}

/** The fixed clock of every in-process run. */
export const TEST_NOW = new Date("2026-01-15T09:30:00Z");

/**
 * Run `arrowaudit <argv>` in-process and return its exit code and output.
 * @example const r = await runCli(["claims", "g.txt"], { cwd: dir }); r.code // 0
 */
export async function runCli(argv: string[], options: CliOptions): Promise<CliRun> {
  let stdout = "";
  let stderr = "";
  const io: Io = {
    stdout: (s) => (stdout += s),
    stderr: (s) => (stderr += s),
    stdoutIsTTY: false,
    stderrIsTTY: false,
    env: options.env ?? {},
    cwd: options.cwd,
    now: () => TEST_NOW,
    ...(options.stdin !== undefined ? { stdin: options.stdin } : {}),
  };
  const code = await run(argv, io);
  return { code, stdout, stderr };
}

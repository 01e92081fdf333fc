/**
 * Exit codes of the arrowaudit command (documented in the README):
 * 0 success (whatever the verdicts); 1 usage error; 2 invalid input (graph or data);
 * 3 with --fail-on-contradiction, at least one claim contradicted; 4 output could not be written
 * (standard output or an output file: no space left, an I/O error...); 10 internal error (a bug: please
 * report it). A reader closing standard output early (`| head`) ends the run quietly with 0; a run
 * stopped by SIGINT or SIGTERM while writing output ends with 130 or 143 (cli/signals.ts).
 */
import { ArrowauditError, UsageError } from "../src/errors.js";
import { escapeTerminalMessage } from "../src/report/escapeTerminal.js";
import { OutputClosedError, OutputWriteError } from "./fileErrors.js";

export const EXIT = { ok: 0, usage: 1, input: 2, contradiction: 3, output: 4, internal: 10 } as const;

/**
 * Map a thrown error to its exit code and the message to print on stderr, with control
 * characters and bidirectional overrides made visible (messages quote names and lines from the
 * input files, which must not drive the terminal).
 */
export function exitFor(e: unknown): { code: number; message: string } {
  const { code, message } = exitMessage(e);
  return { code, message: escapeTerminalMessage(message) };
}

function exitMessage(e: unknown): { code: number; message: string } {
  if (e instanceof OutputClosedError) return { code: EXIT.ok, message: "" };
  if (e instanceof OutputWriteError) return { code: EXIT.output, message: `arrowaudit: ${e.message}; check the space and permissions of the output's device, or write elsewhere` };
  if (e instanceof UsageError) return { code: EXIT.usage, message: `arrowaudit: ${e.message}` };
  if (e instanceof ArrowauditError) return { code: EXIT.input, message: `arrowaudit: ${e.message}` };
  const err = e as Error;
  return { code: EXIT.internal, message: `arrowaudit: internal error: ${err?.stack ?? String(e)}\nplease report this with the command you ran` };
}

/**
 * Termination signals while output is written. Until the first output file is written, SIGINT
 * and SIGTERM keep their default action (the run stops at once; nothing has been written). From
 * then on they are caught: output files are written synchronously, so a caught signal takes
 * effect once the files are in place (or their temporaries removed after a failure); the
 * handler then removes any temporary still held and exits with 128 + the signal's number, the
 * shell convention (130 for SIGINT, 143 for SIGTERM, 129 for SIGHUP).
 */
import { constants } from "node:os";
import { removeLiveTemporaries } from "./writeOutputs.js";

const CAUGHT = ["SIGINT", "SIGTERM", "SIGHUP"] as const;
let installed = false;

/**
 * Exit code for a run ended by `signal`: 128 + its number (POSIX shells report a process killed
 * by signal n as 128 + n).
 * @example exitCodeForSignal("SIGINT") // 130
 */
export function exitCodeForSignal(signal: (typeof CAUGHT)[number]): number {
  return 128 + constants.signals[signal];
}

/** From now on, let SIGINT, SIGTERM and SIGHUP wait for the output being written (see module comment). Idempotent. */
export function deferTerminationSignals(): void {
  if (installed) return;
  installed = true;
  for (const signal of CAUGHT) {
    process.on(signal, () => {
      removeLiveTemporaries();
      process.exit(exitCodeForSignal(signal));
    });
  }
}

/**
 * One turn of the event loop, so that a signal caught during a synchronous write takes effect
 * (its handler runs when the loop polls; a process with nothing left to do would end first).
 */
export function settleSignals(): Promise<void> {
  return new Promise((resolve) => setImmediate(resolve));
}

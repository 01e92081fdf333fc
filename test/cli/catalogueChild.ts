/**
 * The command line in a real process, for catalogue rows that need one (closed pipes, full
 * devices, signals, another user): the same as cli/main.ts, except that with
 * CATALOGUE_SIGNAL_AT_WRITE=SIGINT (or SIGTERM) the process sends itself that signal at the
 * moment it starts writing its output files, so the signal is pending for the whole write.
 */
import { processIo } from "../../cli/io.js";
import { run } from "../../cli/program.js";
import { settleSignals } from "../../cli/signals.js";

const io = processIo();
const signal = process.env.CATALOGUE_SIGNAL_AT_WRITE as NodeJS.Signals | undefined;
const defer = io.deferSignals;
if (signal && defer) {
  io.deferSignals = () => {
    defer();
    process.kill(process.pid, signal);
  };
}
const code = await run(process.argv.slice(2), io);
await settleSignals();
process.exitCode = code;

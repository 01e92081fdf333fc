import type { Io } from "./io.js";

/**
 * A progress bar on stderr for runs longer than about two seconds, on a TTY only.
 * Returns no-op functions otherwise.
 */
export function progressBar(io: Io, quiet: boolean): { update: (done: number, total: number) => void; done: () => void } {
  if (quiet || !io.stderrIsTTY) return { update: () => {}, done: () => {} };
  const start = Date.now();
  let shown = false;
  let last = 0;
  return {
    update(done, total) {
      const now = Date.now();
      if (now - start < 2000 || now - last < 100) return;
      last = now;
      shown = true;
      const w = 30;
      const f = total ? Math.round((done / total) * w) : w;
      io.stderr(`\rtesting claims [${"#".repeat(f)}${"-".repeat(w - f)}] ${done}/${total}`);
    },
    done() {
      if (shown) io.stderr("\r" + " ".repeat(60) + "\r");
    },
  };
}

/**
 * A one-line status on stderr for a step that cannot report its progress (such as a layout
 * computed in one call), on a TTY only, replaced by the next status and cleared by `done`.
 * No-op functions otherwise.
 */
export function statusLine(io: Io, quiet: boolean): { show: (text: string) => void; done: () => void } {
  if (quiet || !io.stderrIsTTY) return { show: () => {}, done: () => {} };
  let width = 0;
  return {
    show(text) {
      io.stderr(`\r${text}${" ".repeat(Math.max(0, width - text.length))}`);
      width = text.length;
    },
    done() {
      if (width > 0) io.stderr("\r" + " ".repeat(width) + "\r");
      width = 0;
    },
  };
}

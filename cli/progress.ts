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

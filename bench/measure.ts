/** Benchmark plumbing: time a child process and sample its peak resident memory from /proc. */
import { spawn } from "node:child_process";
import { readFileSync } from "node:fs";

export interface Measured {
  seconds: number;
  peakRssMB: number;
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Run `cmd args`, return wall time, exit code, output and peak RSS (VmHWM, read until exit). */
export function measure(cmd: string, args: string[], opts: { cwd?: string } = {}): Promise<Measured> {
  return new Promise((resolve, reject) => {
    const t0 = process.hrtime.bigint();
    const child = spawn(cmd, args, { cwd: opts.cwd, stdio: ["ignore", "pipe", "pipe"] });
    let peak = 0;
    let out = "";
    let err = "";
    child.stdout.on("data", (d) => (out += d));
    child.stderr.on("data", (d) => (err += d));
    const sample = () => {
      try {
        const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${child.pid}/status`, "utf8"));
        if (m) peak = Math.max(peak, Number(m[1]) / 1024);
      } catch {
        /* process gone */
      }
    };
    const timer = setInterval(sample, 20);
    child.on("error", reject);
    child.on("exit", (code) => {
      clearInterval(timer);
      const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
      resolve({ seconds, peakRssMB: peak, code, stdout: out, stderr: err });
    });
  });
}

/**
 * The I/O floor as the issue and ../shared/STACK.md define it: Node reads the file in 4 MiB
 * chunks and counts newlines with a byte loop (about 0.5 s for 390 MB here). `memchrSeconds`
 * is the same read counting with Buffer.indexOf (a vectorised search), reported beside it.
 */
export async function ioFloor(path: string): Promise<{ seconds: number; memchrSeconds: number; lines: number }> {
  const { createReadStream } = await import("node:fs");
  const run = async (fast: boolean): Promise<[number, number]> => {
    const t0 = process.hrtime.bigint();
    let lines = 0;
    for await (const chunk of createReadStream(path, { highWaterMark: 4 << 20 })) {
      const buf = chunk as Buffer;
      if (fast) {
        let i = -1;
        while ((i = buf.indexOf(10, i + 1)) !== -1) lines++;
      } else for (let i = 0; i < buf.length; i++) if (buf[i] === 10) lines++;
    }
    return [Number(process.hrtime.bigint() - t0) / 1e9, lines];
  };
  const [seconds, lines] = await run(false);
  const [memchrSeconds] = await run(true);
  return { seconds, memchrSeconds, lines };
}

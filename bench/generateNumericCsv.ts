/**
 * Write a seeded 1,000,000 × 50 continuous CSV for the loading benchmark: rows of a linear
 * Gaussian model over a random 50-node DAG (nodes in topological order; each earlier node is a
 * parent with probability 3/j, at most 4 parents, weights ±U(0.2, 0.6), N(0, 1) noise), values
 * with 4 decimals, 3% of the cells of every fifth column left empty (missing).
 * Usage: node --import tsx bench/generateNumericCsv.ts [rows] [out]   (default bench/out/numeric-1m-50.csv)
 */
import { closeSync, mkdirSync, openSync, writeSync } from "node:fs";
import { dirname } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { mulberry32 } from "../src/stats/mulberry32.js";

export const DEFAULT_OUT = fileURLToPath(new URL("./out/numeric-1m-50.csv", import.meta.url));


/** Write `rows` rows of `cols` columns to `path`; returns the bytes written. Cost: O(rows · cols). */
export function generateNumericCsv(path: string, rows = 1_000_000, cols = 50, seed = 20240611): number {
  const rnd = mulberry32(seed);
  const normal = (): number => {
    const u = 1 - rnd();
    const v = rnd();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
  const parents: number[][] = [];
  const weights: number[][] = [];
  for (let j = 0; j < cols; j++) {
    const ps: number[] = [];
    const ws: number[] = [];
    for (let i = 0; i < j && ps.length < 4; i++) {
      if (rnd() < 3 / j) {
        ps.push(i);
        ws.push((rnd() < 0.5 ? -1 : 1) * (0.2 + 0.4 * rnd()));
      }
    }
    parents.push(ps);
    weights.push(ws);
  }
  mkdirSync(dirname(path), { recursive: true });
  const fd = openSync(path, "w");
  const buf = Buffer.alloc(8 * 1024 * 1024);
  let pos = 0;
  let total = 0;
  const flush = () => {
    writeSync(fd, buf, 0, pos);
    total += pos;
    pos = 0;
  };
  const header = Array.from({ length: cols }, (_, j) => `x${j + 1}`).join(",") + "\n";
  pos += buf.write(header, pos, "latin1");
  const x = new Float64Array(cols);
  const digits = new Uint8Array(24);
  for (let r = 0; r < rows; r++) {
    if (pos > buf.length - cols * 24) flush();
    for (let j = 0; j < cols; j++) {
      let v = normal();
      const ps = parents[j]!;
      for (let k = 0; k < ps.length; k++) v += weights[j]![k]! * x[ps[k]!]!;
      x[j] = v;
      if (j > 0) buf[pos++] = 44;
      if (j % 5 === 4 && rnd() < 0.03) continue; // missing: empty cell
      // fixed-point with 4 decimals, written byte by byte
      let n = Math.round(v * 1e4);
      if (n < 0) {
        buf[pos++] = 45;
        n = -n;
      }
      let d = 0;
      while (n > 0 || d < 5) {
        digits[d++] = 48 + (n % 10);
        n = Math.floor(n / 10);
      }
      for (let k = d - 1; k >= 0; k--) {
        buf[pos++] = digits[k]!;
        if (k === 4) buf[pos++] = 46;
      }
    }
    buf[pos++] = 10;
  }
  flush();
  closeSync(fd);
  return total;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const rows = process.argv[2] ? Number(process.argv[2]) : 1_000_000;
  const out = process.argv[3] ?? DEFAULT_OUT;
  const t0 = performance.now();
  const bytes = generateNumericCsv(out, rows);
  console.log(`wrote ${out}: ${rows} rows, ${(bytes / 1e6).toFixed(1)} MB in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
}

/**
 * Micro-benchmark of the noncentral chi-square tails on realistic arguments: df 1–10, λ 0–50, x
 * near the 0.95 quantile of χ²(df, λ) (where power and effect-interval solvers evaluate them).
 * Prints the time per call. Run: node --import tsx scripts/ncx2Bench.ts [calls] [rounds]
 */
import { noncentralChiSquareCdf, noncentralChiSquareUpper } from "../src/stats/noncentralChiSquare.js";

const calls = Number(process.argv[2] ?? 5000);
const rounds = Number(process.argv[3] ?? 7);
// x near the 0.95 quantile: mean df + λ plus 1.645 sd, sd = √(2(df + 2λ)) (normal approximation)
const args: [number, number, number][] = [];
let seed = 12345;
const rand = (): number => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
for (let i = 0; i < calls; i++) {
  const df = 1 + Math.floor(rand() * 10);
  const lambda = rand() * 50;
  const x = df + lambda + 1.645 * Math.sqrt(2 * (df + 2 * lambda)) * (0.8 + 0.4 * rand());
  args.push([x, df, lambda]);
}
let sink = 0;
let sinkUpper = 0;
const times: number[] = [];
for (let r = 0; r < rounds; r++) {
  const t0 = process.hrtime.bigint();
  for (const [x, df, lambda] of args) {
    const u = noncentralChiSquareUpper(x, df, lambda);
    sinkUpper += u;
    sink += u + noncentralChiSquareCdf(x, df, lambda);
  }
  times.push(Number(process.hrtime.bigint() - t0) / 1e6);
}
times.sort((a, b) => a - b);
console.log(`${calls} × (upper + cdf), ${rounds} rounds: median ${times[rounds >> 1].toFixed(1)} ms, best ${times[0].toFixed(1)} ms, ${((times[rounds >> 1] * 1000) / (2 * calls)).toFixed(2)} µs per call (Σ upper ${(sinkUpper / rounds).toPrecision(15)}, Σ(upper + cdf) ${(sink / rounds).toPrecision(15)})`);

/**
 * Seeded simulation of linear Gaussian data from a graph, for calibration and end-to-end tests.
 * Each node is a linear combination of its parents plus N(0, 1) noise; `coef` gives the arrow
 * weights (default 0.5). Invented data.
 */
import { createGraph, type GraphSpec } from "../../src/graph/createGraph.js";
import { mulberry32 } from "./randomGraph.js";

export function normalSource(seed: number): () => number {
  const rand = mulberry32(seed);
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

export function simulateLinear(
  spec: GraphSpec,
  n: number,
  seed: number,
  coef: Record<string, number> = {},
): Record<string, Float64Array> {
  const g = createGraph(spec);
  const normal = normalSource(seed);
  const out: Record<string, Float64Array> = {};
  for (const v of g.topologicalOrder) out[v] = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    for (const v of g.topologicalOrder) {
      let s = normal();
      for (const p of g.parents(v)) s += (coef[`${p}->${v}`] ?? 0.5) * out[p]![r]!;
      out[v]![r] = s;
    }
  }
  return out;
}

/**
 * The central 99% (or `level`) interval of a Binomial(trials, p) count: the smallest k_lo and
 * largest k_hi with P(X < k_lo) ≤ (1 − level)/2 and P(X > k_hi) ≤ (1 − level)/2, from the exact pmf.
 */
export function binomialInterval(trials: number, p: number, level = 0.99): [number, number] {
  const logPmf = (k: number) => lgamma(trials + 1) - lgamma(k + 1) - lgamma(trials - k + 1) + k * Math.log(p) + (trials - k) * Math.log(1 - p);
  const tail = (1 - level) / 2;
  let lo = 0;
  let acc = 0;
  while (acc + Math.exp(logPmf(lo)) <= tail) acc += Math.exp(logPmf(lo++));
  let hi = trials;
  acc = 0;
  while (acc + Math.exp(logPmf(hi)) <= tail) acc += Math.exp(logPmf(hi--));
  return [lo, hi];
}

/** log Γ(x) for x > 0 by the Lanczos approximation (g = 7, n = 9; Numerical Recipes 3rd ed. §6.1). */
function lgamma(x: number): number {
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - lgamma(1 - x);
  x -= 1;
  let a = c[0]!;
  const t = x + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (x + i);
  return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * Linear Gaussian structural models with `<->` (RICF) against references outside the fit:
 * - without `<->`, the likelihood is the sum of each node's least-squares regression on its parents
 *   (closed form, Gaussian regression log-likelihood −n/2·(ln(2π·RSS/n) + 1); common practice);
 * - a single `a <-> b` is the saturated bivariate model: Σ̂ = S (closed form);
 * - a bow-free graph with `<->` edges: the maximum of the same log-likelihood found by
 *   scipy.optimize.minimize (BFGS, several starts) over the free entries of B and Ω, live with python3.
 */
import { spawnSync } from "node:child_process";
import { describe, expect, it } from "vitest";
import { fitGaussianSem } from "../../src/stats/gaussianSem.js";
import { simulateFromGraph } from "../../src/data/simulateFromGraph.js";
import { parseGraph } from "../../src/graph/parseGraph.js";

const hasScipy = spawnSync("python3", ["-c", "import scipy, numpy"], { encoding: "utf8" }).status === 0;

/** ML covariance (divisor n) of the graph's measured columns, and the index lists of the graph. */
function setup(text: string, n: number, seed: number, effects = 0.4) {
  const graph = parseGraph(text).graph;
  const data = simulateFromGraph(graph, { n, seed, effects });
  const names = data.columns.map((c) => c.name);
  const p = names.length;
  const cols = data.columns.map((c) => Float64Array.from(c.values as number[]));
  const means = cols.map((c) => c.reduce((s, v) => s + v, 0) / n);
  const S = new Float64Array(p * p);
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) {
    let s = 0;
    for (let r = 0; r < n; r++) s += (cols[a]![r]! - means[a]!) * (cols[b]![r]! - means[b]!);
    S[a * p + b] = s / n;
  }
  const idx = (v: string) => names.indexOf(v);
  const parents = names.map((v) => graph.parents(v).map(idx));
  const spouses = names.map((v) => graph.spouses(v).map(idx));
  return { S, p, parents, spouses, names };
}

function logDet(S: Float64Array, p: number): number {
  // via LU without pivoting on an SPD matrix (Gaussian elimination), independent of the fit's Cholesky
  const a = Float64Array.from(S);
  let ld = 0;
  for (let k = 0; k < p; k++) {
    ld += Math.log(a[k * p + k]!);
    for (let i = k + 1; i < p; i++) {
      const f = a[i * p + k]! / a[k * p + k]!;
      for (let j = k; j < p; j++) a[i * p + j] = a[i * p + j]! - f * a[k * p + j]!;
    }
  }
  return ld;
}

describe("fitGaussianSem", () => {
  it("without <->: the sum of the nodes' regression log-likelihoods, in one sweep", () => {
    const n = 2000;
    const { S, p, parents, spouses } = setup("a -> b -> c\na -> c\nd -> c\n", n, 3);
    const fit = fitGaussianSem(S, p, n, parents, spouses);
    expect(fit.sweeps).toBe(1);
    // each node: RSS/n = S_ii − S_i,pa S_pa,pa⁻¹ S_pa,i, solved here by Gauss–Jordan on the small system
    let ll = 0;
    for (let i = 0; i < p; i++) {
      const pa = parents[i]!;
      const k = pa.length;
      const M = pa.map((a) => [...pa.map((b) => S[a * p + b]!), S[a * p + i]!]);
      for (let c = 0; c < k; c++) {
        for (let r = 0; r < k; r++) {
          if (r === c) continue;
          const f = M[r]![c]! / M[c]![c]!;
          for (let j = c; j <= k; j++) M[r]![j] = M[r]![j]! - f * M[c]![j]!;
        }
      }
      let rss = S[i * p + i]!;
      for (let c = 0; c < k; c++) rss -= S[pa[c]! * p + i]! * (M[c]![k]! / M[c]![c]!);
      ll += (-n / 2) * (Math.log(2 * Math.PI * rss) + 1);
    }
    expect(fit.logLik).toBeCloseTo(ll, 8);
    expect(fit.parameters).toBe(2 * 4 + 4);
    expect(fit.bic).toBeCloseTo(-2 * ll + 12 * Math.log(n), 8);
  });

  it("a <-> b alone is saturated: Σ̂ = S, ℓ = −n/2·(p ln 2π + ln|S| + p)", () => {
    const n = 1500;
    const { S, p, parents, spouses } = setup("a <-> b\n", n, 5, 0.7);
    const fit = fitGaussianSem(S, p, n, parents, spouses);
    expect(fit.converged).toBe(true);
    expect(fit.logLik).toBeCloseTo((-n / 2) * (p * Math.log(2 * Math.PI) + logDet(S, p) + p), 7);
    expect(fit.Omega[1]).toBeCloseTo(S[1]!, 9);
  });

  it.skipIf(!hasScipy)("bow-free graphs with <->: the same maximum as scipy.optimize.minimize on the likelihood", () => {
    for (const [text, seed] of [
      ["a -> b\nb <-> c\nc -> d\na -> d\n", 11],
      ["x -> m -> y\nx <-> y\nz -> m\nz <-> y\n", 12],
      ["a -> b -> c -> d\na <-> c\nb <-> d\n", 13],
    ] as const) {
      const n = 1000;
      const { S, p, parents, spouses } = setup(text, n, seed, 0.5);
      const fit = fitGaussianSem(S, p, n, parents, spouses);
      expect(fit.converged).toBe(true);
      const script = `
import json, sys, numpy as np
from scipy.optimize import minimize
d = json.load(sys.stdin)
p, n = d["p"], d["n"]
S = np.array(d["S"]).reshape(p, p)
B_idx = [(i, j) for i in range(p) for j in d["parents"][i]]
O_idx = [(i, j) for i in range(p) for j in d["spouses"][i] if j < i]
def unpack(t):
    B = np.zeros((p, p)); O = np.zeros((p, p))
    for k, (i, j) in enumerate(B_idx): B[i, j] = t[k]
    off = len(B_idx)
    for k, (i, j) in enumerate(O_idx): O[i, j] = O[j, i] = t[off + k]
    off += len(O_idx)
    for i in range(p): O[i, i] = np.exp(t[off + i])
    return B, O
def nll(t):
    B, O = unpack(t)
    Ai = np.linalg.inv(np.eye(p) - B)
    Sig = Ai @ O @ Ai.T
    sign, ld = np.linalg.slogdet(Sig)
    if sign <= 0: return 1e300
    return n / 2 * (p * np.log(2 * np.pi) + ld + np.trace(np.linalg.solve(Sig, S)))
best = None
rng = np.random.default_rng(1)
for start in range(5):
    t0 = np.concatenate([rng.normal(0, 0.2, len(B_idx) + len(O_idx)) * (start > 0), np.log(np.diag(S))])
    r = minimize(nll, t0, method="BFGS", options={"gtol": 1e-9, "maxiter": 20000})
    if best is None or r.fun < best.fun: best = r
print(json.dumps({"loglik": -best.fun}))
`;
      const out = spawnSync("python3", ["-c", script], { input: JSON.stringify({ p, n, S: Array.from(S), parents, spouses }), encoding: "utf8" });
      expect(out.status, out.stderr).toBe(0);
      const ref = JSON.parse(out.stdout).loglik as number;
      // RICF reaches the optimiser's maximum (and never falls below it)
      expect(fit.logLik).toBeGreaterThan(ref - 1e-6 * Math.abs(ref));
      expect(Math.abs(fit.logLik - ref)).toBeLessThan(1e-6 * Math.abs(ref));
    }
  }, 60_000);

  it("refuses a malformed covariance", () => {
    expect(() => fitGaussianSem([1, 0, 0], 2, 10, [[], []], [[], []])).toThrow(/not 2×2/);
    expect(() => fitGaussianSem([1, 0, 0, 1], 2, 10, [[], [5]], [[], []])).toThrow(/node index 5/);
  });
});

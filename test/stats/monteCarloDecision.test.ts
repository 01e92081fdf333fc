import { spawnSync } from "node:child_process";
import { describe, expect, it } from "vitest";
import { adjustPValues } from "../../src/stats/adjustPValues.js";
import { betaQuantile, clopperPearson, clopperPearsonMissing } from "../../src/stats/clopperPearson.js";
import { FIRST_LOOK, lookRisk, lookSchedule, nextLook, sequenceInterval } from "../../src/stats/confidenceSequence.js";
import { bracketVerdicts, criticalValues } from "../../src/stats/criticalValues.js";
import {
  defaultPermutationCap, monteCarloSummary, planOf, proposedDraws, runMonteCarloKept, runMonteCarloTest, type MonteCarloPlan,
} from "../../src/stats/monteCarloDecision.js";
import { createRng } from "../../src/stats/rng.js";

/** Run a python3 snippet that reads JSON on stdin and prints JSON (scipy, live). */
function python<T>(script: string, input: unknown): T {
  const run = spawnSync("python3", ["-c", script], { input: JSON.stringify(input), encoding: "utf8", timeout: 60_000 });
  if (run.status !== 0) throw new Error(`python3 with scipy is needed for this reference: ${run.stderr || run.error?.message}`);
  return JSON.parse(run.stdout) as T;
}

const SCIPY_CP = `
import json, sys
from scipy.stats import beta
out = []
for h, n, d in json.load(sys.stdin):
    lo = 0.0 if h == 0 else float(beta.ppf(d / 2, h, n - h + 1))
    hi = 1.0 if h == n else float(beta.isf(d / 2, h + 1, n - h))
    out.append([lo, hi])
print(json.dumps(out))
`;

describe("clopperPearson [reference: scipy.stats.beta.ppf / beta.isf, live]", () => {
  const cases: [number, number, number][] = [
    [0, 10, 0.05], [3, 10, 0.05], [10, 10, 0.05], [5, 200, 0.01], [1000, 20000, 0.01], [0, 1e7, 0.01], [3, 1e7, 0.01],
    [12, 452, 1e-9], [27, 452, 1e-3 / 8], [0, 200, 1e-3 / 7], [199, 200, 1e-6], [100, 200, 1e-12], [1, 25600, 1e-5], [6400, 12800, 2e-5],
  ];
  it("clopperPearsonMissing(h, n, δ) matches scipy's beta quantiles B⁻¹(δ/2; h, n − h + 1) and B⁻¹(1 − δ/2; h + 1, n − h) to 1e-9", () => {
    const ref = python<[number, number][]>(SCIPY_CP, cases);
    cases.forEach(([h, n, d], i) => {
      const [lo, hi] = clopperPearsonMissing(h, n, d);
      const [rlo, rhi] = ref[i]!;
      expect(Math.abs(lo - rlo)).toBeLessThanOrEqual(1e-9 * Math.max(rlo, 1e-300)); // scipy.stats.beta.ppf, relative 1e-9
      expect(Math.abs(hi - rhi)).toBeLessThanOrEqual(1e-9 * rhi); // scipy.stats.beta.isf, relative 1e-9
    });
    // doc example: clopperPearson(0, 10, 0.95)[1] = scipy.stats.beta.ppf(0.975, 1, 10) = 0.3084971078187608
    expect(clopperPearson(0, 10, 0.95)[1]).toBeCloseTo(0.3084971078187608, 12);
  });

  it("betaQuantile inverts the beta distribution at both tails (Beta(1, 1) is uniform; Beta(1, n) has the closed form 1 − (1 − q)^(1/n))", () => {
    expect(betaQuantile(0.5, 1, 1)).toBeCloseTo(0.5, 14); // uniform, textbook
    for (const [q, n] of [[0.9, 10], [1 - 1e-8, 5000], [0.3, 1e6]] as const) {
      expect(betaQuantile(q, 1, n)).toBeCloseTo(1 - (1 - q) ** (1 / n), 12); // closed form of Beta(1, n), textbook
      expect(betaQuantile(1 - q, 1, n, true)).toBeCloseTo(1 - (1 - q) ** (1 / n), 12);
    }
    expect(betaQuantile(0, 2, 3)).toBe(0);
    expect(betaQuantile(1, 2, 3)).toBe(1);
    expect(() => betaQuantile(0.5, 0, 1)).toThrow(/positive/);
    expect(() => betaQuantile(1.5, 1, 1)).toThrow(/\[0, 1\]/);
    expect(() => clopperPearson(3, 2, 0.95)).toThrow(/hits/);
    expect(() => clopperPearson(1, 2.5, 0.95)).toThrow(/draws/);
    expect(() => clopperPearson(1, 2, 1)).toThrow(/level/);
  });
});

describe("the confidence sequence", () => {
  it("lookSchedule doubles from 200 below the cap and ends at the cap; nextLook and lookRisk follow it (hand computation)", () => {
    expect(lookSchedule(1000)).toEqual([200, 400, 800, 1000]);
    expect(lookSchedule(20000)).toEqual([200, 400, 800, 1600, 3200, 6400, 12800, 20000]);
    expect(lookSchedule(200)).toEqual([200]);
    expect(lookSchedule(99)).toEqual([99]);
    expect(nextLook(200, 1000)).toBe(400);
    expect(nextLook(800, 1000)).toBe(1000);
    expect(nextLook(1000, 1000)).toBe(1000);
    expect(lookRisk(1e-3, 1, 1000)).toBeCloseTo(2.5e-4, 18); // 0.001 / (1 claim · 4 looks)
    expect(lookRisk(1e-3, 10, 20000)).toBeCloseTo(1.25e-5, 18); // 0.001 / (10 · 8)
    expect(() => lookSchedule(0)).toThrow(/positive integer/);
    expect(() => lookRisk(0, 1, 10)).toThrow(/resampling risk/);
    expect(() => lookRisk(0.1, 0, 10)).toThrow(/positive integer/);
  });

  it("sequenceInterval is Clopper–Pearson at δ = ε/(m·J) [reference: scipy.stats.beta, live], widened to hold p̂ = (1 + h)/(1 + n)", () => {
    const looks: [number, number, number, number, number][] = [[236, 3200, 20000, 1e-3, 1], [0, 20000, 20000, 1e-3, 1], [17, 300, 300, 1e-3, 1], [5, 400, 70000, 1e-3, 120]];
    const ref = python<[number, number][]>(SCIPY_CP, looks.map(([h, n, cap, e, m]) => [h, n, e / (m * lookSchedule(cap).length)]));
    looks.forEach(([h, n, cap, e, m], i) => {
      const [lo, hi] = sequenceInterval(h, n, cap, e, m);
      const pHat = (1 + h) / (1 + n);
      expect(lo).toBeCloseTo(Math.min(ref[i]![0], pHat), 10);
      expect(hi).toBeCloseTo(Math.max(ref[i]![1], pHat), 10);
      expect(lo <= pHat && pHat <= hi).toBe(true);
    });
  });

  it("defaultPermutationCap: a stream without hits is decided below the floor by half the cap, at least 10,000 draws (closed form of the h = 0 upper end)", () => {
    expect(defaultPermutationCap(0.05, 1e-3, 1)).toBe(10_000);
    expect(defaultPermutationCap(undefined, 1e-3, 1)).toBe(10_000);
    for (const [floor, m] of [[0.05 / 120, 120], [0.01 / 999, 999], [0.05 / 10, 10], [1e-5, 1]] as const) {
      const cap = defaultPermutationCap(floor, 1e-3, m);
      const delta = 1e-3 / (m * lookSchedule(cap).length);
      // Clopper & Pearson (1934) with h = 0: upper end 1 − (δ/2)^(1/n)
      expect(1 - (delta / 2) ** (1 / Math.floor(cap / 2))).toBeLessThan(floor);
      expect(cap).toBeLessThanOrEqual(10_000_000);
    }
    // a floor that would need more than 10⁷ draws gets the limit
    expect(defaultPermutationCap(1e-7, 1e-3, 1)).toBe(10_000_000);
    // about ln(2mJ/ε)/floor draws at half the cap: 120 claims at 0.05/120 → 2 · 14.5 · 2400 ≈ 70,000
    expect(defaultPermutationCap(0.05 / 120, 1e-3, 120)).toBeGreaterThan(60_000);
    expect(defaultPermutationCap(0.05 / 120, 1e-3, 120)).toBeLessThan(80_000);
  });

  it("planOf: the user's cap, else the default of the floor; ε = 0.001 for one claim and the band [floor, 0.05] when the audit says nothing", () => {
    expect(planOf({ decisionFloor: 0.05 })).toEqual({ cap: 10_000, risk: 1e-3, family: 1, band: [0.05, 0.05] });
    expect(planOf({ permutations: 999 }).cap).toBe(999);
    const req = { risk: 0.01, family: 5, band: [0.01, 0.05] as [number, number] };
    expect(planOf({ decisionFloor: 0.01, monteCarlo: req })).toEqual({ ...req, cap: defaultPermutationCap(0.01, 0.01, 5) });
  });

  it("monteCarloSummary: standard error √(p̂(1 − p̂)/n) and the 99% Clopper–Pearson interval [reference: scipy.stats.beta, live]", () => {
    const s = monteCarloSummary(236, 3200, 20000);
    const ref = python<[number, number][]>(SCIPY_CP, [[236, 3200, 0.01]]);
    const p = 237 / 3201;
    expect(s.se).toBeCloseTo(Math.sqrt((p * (1 - p)) / 3200), 14);
    expect(s.ci99[0]).toBeCloseTo(ref[0]![0], 10);
    expect(s.ci99[1]).toBeCloseTo(ref[0]![1], 10);
    expect(s).toMatchObject({ draws: 3200, hits: 236, cap: 20000 });
  });
});

/** A stream of Bernoulli(π) draws as statistics: 1 is a hit against the observed 1. */
function bernoulli(pi: number, seed: number, key: string): () => number {
  const rng = createRng(seed, key);
  return () => (rng.nextFloat() < pi ? 1 : 0);
}

describe("runMonteCarloTest", () => {
  const plan = (cap: number, band: [number, number], extra: Partial<MonteCarloPlan> = {}): MonteCarloPlan => ({ cap, risk: 1e-3, family: 1, band, ...extra });

  it("adapts: 200 draws when π is far from the threshold, thousands near it, the cap when π sits on it", () => {
    const far = runMonteCarloTest(1, bernoulli(0.5, 1, "far"), plan(20000, [0.05, 0.05]));
    expect(far.draws).toBe(FIRST_LOOK);
    const tiny = runMonteCarloTest(1, bernoulli(0, 1, "tiny"), plan(20000, [0.05, 0.05]));
    expect(tiny.draws).toBe(FIRST_LOOK); // no hit in 200: upper end 1 − (δ/2)^(1/200) ≈ 0.047 < 0.05
    const near = runMonteCarloTest(1, bernoulli(0.061, 1, "near"), plan(20000, [0.05, 0.05]));
    expect(near.draws).toBeGreaterThan(2000);
    expect(near.p).toBeGreaterThanOrEqual(0.05);
    const on = runMonteCarloTest(1, bernoulli(0.05, 1, "on"), plan(20000, [0.05, 0.05]));
    expect(on.draws).toBe(20000);
  });

  it("stops inside the band (the other claims decide), below it or above it; with draws set it draws exactly that many; null moments from ≥ nullDraws draws", () => {
    const inside = runMonteCarloTest(1, bernoulli(0.01, 2, "inside"), plan(1e6, [0.0005, 0.05], { family: 100 }));
    const [lo, hi] = sequenceInterval(inside.hits, inside.draws, 1e6, 1e-3, 100);
    expect(lo >= 0.0005 && hi < 0.05).toBe(true);
    expect(inside.draws).toBeLessThan(20000);
    const exact = runMonteCarloTest(1, bernoulli(0.5, 3, "x"), plan(20000, [0.05, 0.05], { draws: 3200 }));
    expect(exact.draws).toBe(3200);
    // the same stream: the first 200 draws of the longer run are the shorter run's
    const { stream, ...first } = runMonteCarloTest(1, bernoulli(0.5, 3, "x"), plan(20000, [0.05, 0.05], { draws: 200 }));
    expect(stream).toBeDefined(); // asked for fewer draws than the cap: it can go on
    const firstOfLong = runMonteCarloTest(1, bernoulli(0.5, 3, "x"), plan(20000, [0.05, 0.05]));
    expect(firstOfLong.stream).toBeUndefined(); // decided above the band: nothing to go on with
    expect(firstOfLong).toEqual(first);
    const withNull = runMonteCarloTest(0, () => 1, plan(150, [0.05, 0.05]), 400);
    expect(withNull).toEqual({ hits: 150, draws: 150, p: 1, mean: 1, variance: 0, nullDraws: 400 });
    expect(() => runMonteCarloTest(NaN, () => 0, plan(10, [0.05, 0.05]))).toThrow(/finite/);
    expect(() => runMonteCarloTest(0, () => 0, plan(10, [0.05, 0.05], { draws: 11 }))).toThrow(/cap 10/);
    expect(() => runMonteCarloTest(0, () => 0, plan(10, [0.05, 0.05]), -1)).toThrow(/non-negative/);
  });

  it("operating characteristics: with π at the threshold or just beside it, the share of wrong decisions stays under ε = 0.05 (exact binomial band, scipy.stats.binom.ppf live)", () => {
    const R = 1500;
    const eps = 0.05;
    const t = 0.05;
    // largest count of wrong decisions compatible with a rate of ε: binom.ppf(0.999, R, ε)
    const [upper] = python<number[]>(`
import json, sys
from scipy.stats import binom
R, e = json.load(sys.stdin)
print(json.dumps([int(binom.ppf(0.999, R, e))]))
`, [R, eps]);
    for (const pi of [t, t * 1.04, t * 0.96]) {
      let wrong = 0;
      let undecided = 0;
      let draws = 0;
      for (let r = 0; r < R; r++) {
        const run = runMonteCarloTest(1, bernoulli(pi, r, `oc ${pi}`), { cap: 20000, risk: eps, family: 1, band: [t, t] });
        const [lo, hi] = sequenceInterval(run.hits, run.draws, 20000, eps, 1);
        const rejected = hi < t;
        const accepted = lo >= t;
        // the reported p agrees with a decision
        if (rejected) expect(run.p).toBeLessThan(t);
        if (accepted) expect(run.p).toBeGreaterThanOrEqual(t);
        if (!rejected && !accepted) undecided++;
        if ((rejected && pi >= t) || (accepted && pi < t)) wrong++;
        draws += run.draws;
      }
      console.log(`π = ${pi.toFixed(4)} at threshold ${t}: ${wrong}/${R} wrong, ${undecided} undecided at the cap, mean draws ${(draws / R).toFixed(0)}`);
      expect(wrong).toBeLessThanOrEqual(upper!);
      // the bound is loose (Bonferroni over looks and two tails): the observed share is far below ε
      expect(wrong / R).toBeLessThan(eps);
    }
  }, 60_000);
});

describe("runMonteCarloKept", () => {
  it("a stream kept between runs goes on where it stopped and gives the result of a fresh run with the same draws; only the new draws are made", () => {
    const plan = (draws: number): MonteCarloPlan => ({ cap: 20000, risk: 1e-3, family: 3, band: [0.01, 0.05], draws });
    const streams = new Map();
    let made = 0;
    const counted = (seed: number) => {
      const d = bernoulli(0.03, seed, "kept");
      return () => {
        made++;
        return d();
      };
    };
    const a = runMonteCarloKept(1, () => counted(5), plan(400), 200, streams, "k");
    expect(made).toBe(400);
    expect(streams.has("k")).toBe(true);
    const { stream: _b, ...b } = runMonteCarloKept(1, () => counted(5), plan(1600), 200, streams, "k");
    expect(made).toBe(1600); // 1,200 new draws, not 1,600 again
    const { stream: _c, ...fresh } = runMonteCarloTest(1, bernoulli(0.03, 5, "kept"), plan(1600), 200);
    expect(b).toEqual(fresh);
    expect(a.draws).toBe(400);
    // a different observed statistic, or fewer draws than kept, starts afresh
    const other = runMonteCarloKept(0.5, () => bernoulli(0.03, 5, "kept"), plan(800), 200, streams, "k");
    expect(other.draws).toBe(800);
    // at the cap nothing is kept
    runMonteCarloKept(1, () => bernoulli(0.03, 5, "kept"), { ...plan(20000) }, 200, streams, "k");
    expect(streams.has("k")).toBe(false);
    expect(() => runMonteCarloTest(1, () => 0, plan(100), 0, { draw: () => 0, observed: 1, count: 200, hits: 0, mean: 0, m2: 0 })).toThrow(/resumed/);
  });
});

describe("verdicts at both ends of the intervals", () => {
  it("criticalValues: claim i is rejected by Holm, Benjamini–Hochberg or none exactly when p_i < t_i, the others fixed (property against adjustPValues, with ties)", () => {
    const rng = createRng(3, "critical values");
    let checks = 0;
    for (let rep = 0; rep < 1500; rep++) {
      const k = 1 + rng.nextInt(8);
      const p = Array.from({ length: k }, () => (rng.nextInt(3) === 0 ? Math.round(rng.nextFloat() * 20) / 400 : rng.nextFloat() ** 2 * 0.2));
      for (const adjust of ["holm", "bh", "none"] as const) {
        const t = criticalValues(p, adjust, 0.05);
        for (let i = 0; i < k; i++) {
          for (const x of [t[i]! * 0.999999, t[i]! * 1.000001, ...p]) {
            if (Math.abs(x - t[i]!) <= 1e-12 || x > 1) continue; // at the threshold itself rounding decides
            const q = p.slice();
            q[i] = x;
            expect(adjustPValues(q, adjust)[i]! < 0.05).toBe(x < t[i]!);
            checks++;
          }
        }
      }
    }
    expect(checks).toBeGreaterThan(50_000);
    // doc example: Holm with three claims, hand computation
    expect(criticalValues([0.01, 0.04, 0.03], "holm", 0.05)).toEqual([0.05 / 3, 0.05 / 2, 0.05 / 2]);
  });

  it("bracketVerdicts: rejections at the upper ends ⊆ at any p inside the intervals ⊆ at the lower ends, so a decided verdict is the one at the true p (property)", () => {
    const rng = createRng(4, "brackets");
    for (let rep = 0; rep < 500; rep++) {
      const k = 2 + rng.nextInt(10);
      const claims = Array.from({ length: k }, () => {
        const c = rng.nextFloat() * 0.1;
        const w = rng.nextInt(3) === 0 ? 0 : rng.nextFloat() * 0.02;
        return { lower: Math.max(0, c - w), upper: Math.min(1, c + w), relevant: rng.nextInt(10) > 0 };
      });
      for (const adjust of ["holm", "bh", "none"] as const) {
        const b = bracketVerdicts(claims, adjust, 0.05);
        const inside = claims.map((c) => c.lower + rng.nextFloat() * (c.upper - c.lower));
        const truth = adjustPValues(inside, adjust).map((v, i) => claims[i]!.relevant && v < 0.05);
        truth.forEach((rej, i) => {
          if (b.rejectedHigh[i]) expect(rej).toBe(true);
          if (!b.rejectedLow[i]) expect(rej).toBe(false);
          if (b.decided[i]) expect(rej).toBe(b.rejectedHigh[i]);
        });
      }
    }
  });

  it("proposedDraws: about z²p̂(1 − p̂)/(p̂ − t)² draws, two significant digits, none when out of reach", () => {
    const n = proposedDraws(0.061, 0.05, 1e-3, 1)!;
    // z = Φ⁻¹(1 − δ/2) ≈ 3.8–4.0 for δ = 0.001/J with J ≈ 7: 14.4–16 · 0.0573 / 0.000121 ≈ 6,800–7,600
    expect(n).toBeGreaterThan(6000);
    expect(n).toBeLessThan(8000);
    expect(Number.isInteger(n / 100)).toBe(true);
    expect(proposedDraws(0.05, 0.05, 1e-3, 1)).toBeUndefined();
    expect(proposedDraws(0.050001, 0.05, 1e-3, 1)).toBeUndefined(); // over 10⁷ draws
  });
});

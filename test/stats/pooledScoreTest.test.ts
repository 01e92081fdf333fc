import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import {
  categoryProbabilities, efficientScore, multinomialScoreInformation, newtonStep, pooledScoreStatistic, scoreInformationAt, scoreQuadraticForm,
} from "../../src/stats/pooledScoreTest.js";
import { logisticRegression } from "../../src/stats/logisticRegression.js";
import { multinomialLogit } from "../../src/stats/multinomialLogit.js";
import { chiSquareUpper } from "../../src/stats/pvalues.js";
import { printedReference } from "../fixtures/stats/loadReference.js";

/** Reference values from scripts/pooled_score_reference.py (statsmodels/numpy), live or the committed fixture. */
interface SingleRef {
  name: string; response: string; added: string; given: string[]; n: number;
  theta: number[]; score: number[]; information: number[][];
  efficient_score: number[]; efficient_information: number[][]; statistic: number;
  llf_null: number; llf_full: number; lr: number; glm_score_test?: number;
}
interface Ref { source: string; levels: Record<string, string[]>; single: Record<string, SingleRef> }
const fixtures = new URL("../fixtures/pooled-score/", import.meta.url);
const { ref, from } = printedReference<Ref>("pooled_score_reference.py", "pooled-score/reference.json", "python3 statsmodels/numpy (live)");

/** single.csv as columns: z, and the codes of the categorical columns on the script's level lists. */
function single(): { z: number[]; codes: Record<string, number[]>; m: number } {
  const lines = readFileSync(new URL("single.csv", fixtures), "utf8").trim().split("\n");
  const head = lines[0]!.split(",");
  const rows = lines.slice(1).map((l) => l.split(","));
  const col = (name: string) => rows.map((r) => r[head.indexOf(name)]!);
  const codes: Record<string, number[]> = {};
  for (const [name, levels] of Object.entries(ref.levels)) codes[name] = col(name).map((v) => levels.indexOf(v));
  return { z: col("z").map(Number), codes, m: rows.length };
}

/** The script's designs: N = [1, z standardised (ddof 1), c=b, c=c], F = [N, the added side's indicators but the first]. */
function designs(c: SingleRef): { F: Float64Array; N: Float64Array; p0: number; p: number; y: Int32Array; K: number; m: number } {
  const d = single();
  const m = d.m;
  const mean = d.z.reduce((a, b) => a + b, 0) / m;
  const sd = Math.sqrt(d.z.reduce((a, b) => a + (b - mean) ** 2, 0) / (m - 1));
  const La = ref.levels[c.added]!.length;
  const p0 = 4;
  const p = p0 + La - 1;
  const F = new Float64Array(m * p);
  const N = new Float64Array(m * p0);
  for (let i = 0; i < m; i++) {
    const row = [1, (d.z[i]! - mean) / sd, d.codes.c![i] === 1 ? 1 : 0, d.codes.c![i] === 2 ? 1 : 0];
    for (let l = 1; l < La; l++) row.push(d.codes[c.added]![i] === l ? 1 : 0);
    row.forEach((v, j) => (F[i * p + j] = v));
    for (let j = 0; j < p0; j++) N[i * p0 + j] = row[j]!;
  }
  return { F, N, p0, p, y: Int32Array.from(d.codes[c.response]!), K: ref.levels[c.response]!.length, m };
}

const maxAbs = (v: ArrayLike<number>) => Math.max(...Array.from(v, Math.abs));
/** Largest difference relative to the largest reference entry (entries near 0, such as the nuisance score at the MLE, are compared on that scale). */
const relDiff = (a: ArrayLike<number>, b: ArrayLike<number>) => Math.max(...Array.from(a, (v, i) => Math.abs(v - b[i]!))) / maxAbs(b);
const added = (c: SingleRef, p0: number, p: number, K: number) => Array.from({ length: K - 1 }, (_, k) => Array.from({ length: p - p0 }, (_, j) => k * p + p0 + j)).flat();
const nuisance = (p0: number, p: number, K: number) => Array.from({ length: K - 1 }, (_, k) => Array.from({ length: p0 }, (_, j) => k * p + j)).flat();

describe(`pooledScoreTest against statsmodels [${from}]`, () => {
  for (const name of ["logistic", "logistic3", "multinomial"]) {
    it(`multinomialScoreInformation at the ${name} null MLE matches statsmodels score and −hessian (1e-7 relative)`, () => {
      const c = ref.single[name]!;
      const { F, p, y, K, m } = designs(c);
      const si = multinomialScoreInformation(F, m, p, y, K, c.theta);
      expect(relDiff(si.score, c.score)).toBeLessThan(1e-7); // statsmodels Logit/MNLogit.score at the embedded null fit
      expect(relDiff(si.information, c.information.flat())).toBeLessThan(1e-7); // −statsmodels hessian
      expect(Math.abs(si.logLik - c.llf_null) / Math.abs(c.llf_null)).toBeLessThan(1e-12); // statsmodels llf of the null fit
    });

    it(`efficientScore and scoreQuadraticForm of the ${name} claim match numpy's Schur complement and U'I⁻¹U (1e-8)`, () => {
      const c = ref.single[name]!;
      const { F, p0, p, K } = designs(c);
      const si = multinomialScoreInformation(F, F.length / p, p, designs(c).y, K, c.theta);
      const eff = efficientScore(si.score, si.information, (K - 1) * p, added(c, p0, p, K), nuisance(p0, p, K));
      expect(relDiff(eff.score, c.efficient_score)).toBeLessThan(1e-8); // numpy: U_a − I_ab I_bb⁻¹ U_b
      expect(relDiff(eff.information, c.efficient_information.flat())).toBeLessThan(1e-8); // numpy: I_aa − I_ab I_bb⁻¹ I_ba
      expect(eff.nuisanceRank).toBe((K - 1) * p0);
      const q = scoreQuadraticForm(eff.score, eff.information, eff.score.length);
      expect(q.df).toBe((K - 1) * (p - p0));
      expect(Math.abs(q.statistic - c.statistic) / c.statistic).toBeLessThan(1e-8); // numpy U'I_eff⁻¹U
      if (c.glm_score_test !== undefined) expect(Math.abs(q.statistic - c.glm_score_test) / c.glm_score_test).toBeLessThan(1e-8); // statsmodels GLM.score_test
    });

    it(`our own ${name} null fit gives the statsmodels score statistic (1e-8): the efficient score absorbs the fit's convergence error`, () => {
      const c = ref.single[name]!;
      const { F, N, p0, p, y, K, m } = designs(c);
      const fit = K === 2 ? logisticRegression(N, m, p0, y) : multinomialLogit(N, m, p0, y, K);
      expect(fit.status).toBe("converged");
      expect(Math.abs(fit.logLik - c.llf_null) / Math.abs(c.llf_null)).toBeLessThan(1e-10); // statsmodels llf
      const theta = new Float64Array((K - 1) * p);
      for (let k = 0; k < K - 1; k++) for (let j = 0; j < p0; j++) theta[k * p + j] = fit.coef[k * p0 + j]!;
      const si = multinomialScoreInformation(F, m, p, y, K, theta);
      const eff = efficientScore(si.score, si.information, (K - 1) * p, added(c, p0, p, K), nuisance(p0, p, K));
      const q = scoreQuadraticForm(eff.score, eff.information, eff.score.length);
      expect(Math.abs(q.statistic - c.statistic) / c.statistic).toBeLessThan(1e-8); // numpy U'I_eff⁻¹U at statsmodels' fit
    });
  }
});

describe("pooledScoreTest pieces", () => {
  it("scoreInformationAt of one binary row at π = 0.5 is score 0.5 and information 0.25 (from the definition)", () => {
    const r = scoreInformationAt(new Float64Array([1]), 1, 1, [1], 2, new Float64Array([0.5, 0.5]));
    expect(r.score[0]).toBe(0.5); // y − π
    expect(r.information[0]).toBe(0.25); // π(1 − π)
    expect(r.logLik).toBeCloseTo(Math.log(0.5), 15);
  });

  it("scoreInformationAt keeps the weight π(1 − π) of a row fitted with near certainty to relative precision", () => {
    // π = 1 − 1e-17 on the observed category: 1 − π would round to 0, the other category's probability does not
    const r = scoreInformationAt(new Float64Array([1]), 1, 1, [1], 2, new Float64Array([1e-17, 1]));
    expect(r.information[0]! / 1e-17).toBeCloseTo(1, 12); // π(1 − π) = 1e-17 (from the definition)
    expect(r.score[0]! / 1e-17).toBeCloseTo(1, 12); // y − π = 1e-17
  });

  it("categoryProbabilities does not overflow at linear predictors of 1000 and sums to 1", () => {
    const pr = categoryProbabilities(new Float64Array([1, 1]), 2, 1, 3, [1000, -1000]);
    expect(pr[1]).toBe(1);
    expect(pr[0]! + pr[1]! + pr[2]!).toBe(1);
    expect(pr[3]! + pr[4]! + pr[5]!).toBe(1);
  });

  it("efficientScore of I = [[2, 1], [1, 2]] with the first parameter a nuisance is 1.5 (by hand: 2 − 1·1/2)", () => {
    const e = efficientScore(new Float64Array([0, 1]), new Float64Array([2, 1, 1, 2]), 2, [1], [0]);
    expect(e.information[0]).toBeCloseTo(1.5, 14); // by hand
    expect(e.score[0]).toBe(1);
  });

  it("efficientScore skips a nuisance direction without information (a separated level), as the limit of the Schur complement", () => {
    // nuisance 0 has information, nuisance 1 none (its rows fitted with certainty): the complement is that of nuisance 0 alone
    const I = new Float64Array([4, 0, 2, 0, 0, 0, 2, 0, 3]);
    const e = efficientScore(new Float64Array([0, 0, 1]), I, 3, [2], [0, 1]);
    expect(e.nuisanceRank).toBe(1);
    expect(e.information[0]).toBeCloseTo(3 - 4 / 4, 14); // by hand: 3 − 2·2/4
  });

  it("scoreQuadraticForm drops an aliased coordinate and a coordinate without information, df counting the rest", () => {
    // coordinates 0 and 1 identical, 2 zero: rank 1, statistic u²/i of one of them
    const I = new Float64Array([2, 2, 0, 2, 2, 0, 0, 0, 0]);
    const q = scoreQuadraticForm(new Float64Array([1, 1, 0]), I, 3);
    expect(q.df).toBe(1);
    expect(q.statistic).toBeCloseTo(0.5, 14); // by hand: 1²/2
    expect(q.dropped).toHaveLength(2);
    expect(q.dropped).toContain(2);
    expect(q.kept[0]).toBeLessThan(2);
  });

  it("scoreQuadraticForm equals UᵀI⁻¹U for a well-conditioned 3 × 3 information (by hand: 2.5)", () => {
    // I = diag(1, 2, 4) rotated trivially; U = (1, 1, 2): 1 + 1/2 + 4/4 = 2.5
    const q = scoreQuadraticForm(new Float64Array([1, 1, 2]), new Float64Array([1, 0, 0, 0, 2, 0, 0, 0, 4]), 3);
    expect(q.df).toBe(3);
    expect(q.statistic).toBeCloseTo(2.5, 14); // by hand
  });

  it("pooledScoreStatistic adds the sites' scores and informations, and its p is the χ²(df) tail", () => {
    const r = pooledScoreStatistic([{ score: [1, 0], information: [[2, 0], [0, 1]] }, { score: [1, 2], information: [[2, 0], [0, 3]] }]);
    expect(Array.from(r.score)).toEqual([2, 2]);
    expect(r.statistic).toBeCloseTo(4 / 4 + 4 / 4, 14); // by hand
    expect(r.df).toBe(2);
    expect(r.p).toBeCloseTo(Math.exp(-1), 14); // χ²(2) tail at 2 is e^{−1} (from memory)
    expect(r.p).toBeCloseTo(chiSquareUpper(2, 2), 15);
  });

  it("pooledScoreStatistic never returns p = 0 and keeps log p where p underflows", () => {
    const r = pooledScoreStatistic([{ score: [100], information: [[1e-2]] }]);
    expect(r.p).toBeGreaterThan(0);
    expect(r.log_p).toBeLessThan(-400000); // statistic 1e6 on 1 df: ln p ≈ −5e5 (from memory: −x/2 − ½ ln(πx/2))
  });

  it("newtonStep solves I δ = U on the directions with information and leaves the others at 0", () => {
    // I = [[2, 0, 0], [0, 0, 0], [0, 0, 4]] (the second direction has no information), U = (1, 5, 2): δ = (0.5, 0, 0.5) by hand
    const d = newtonStep(new Float64Array([1, 5, 2]), new Float64Array([2, 0, 0, 0, 0, 0, 0, 0, 4]), 3);
    expect(d[0]).toBeCloseTo(0.5, 15);
    expect(d[1]).toBe(0);
    expect(d[2]).toBeCloseTo(0.5, 15);
  });

  it("newtonStep from statsmodels' null fit moved by 1e-3 returns to it: one scoring step for the logistic model (1e-5)", () => {
    const c = ref.single.logistic!;
    const { N, p0, y, m } = designs(c);
    const theta0 = Array.from({ length: p0 }, (_, j) => c.theta[j]!);
    const start = theta0.map((v) => v + 1e-3);
    const si = multinomialScoreInformation(N, m, p0, y, 2, start);
    const next = start.map((v, j) => v + newtonStep(si.score, si.information, p0)[j]!);
    // Newton converges quadratically: an error of 1e-3 becomes of the order of 1e-6
    for (let j = 0; j < p0; j++) expect(Math.abs(next[j]! - theta0[j]!)).toBeLessThan(1e-5); // statsmodels Logit params
  });

  it("pooledScoreStatistic refuses sites of different sizes, naming the site", () => {
    expect(() => pooledScoreStatistic([{ score: [1], information: [[1]] }, { score: [1, 2], information: [[1, 0], [0, 1]] }])).toThrow(/site 1/);
    expect(() => pooledScoreStatistic([])).toThrow(/at least one site/);
  });
});

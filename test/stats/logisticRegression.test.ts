import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { logisticRegression, weightedCrossProduct } from "../../src/stats/logisticRegression.js";

// Seeded dataset and statsmodels fits written by scripts/statsmodels_reference.py (committed fixtures)
const dir = new URL("../fixtures/statsmodels/", import.meta.url);
const ref = JSON.parse(readFileSync(new URL("regression-ref.json", dir), "utf8"));
const lines = readFileSync(new URL("regression-data.csv", dir), "utf8").trim().split("\n").slice(1);
const data = lines.map((l) => l.split(",").map(Number));
const m = data.length;
function design(withX1: boolean): { X: Float64Array; p: number } {
  const p = withX1 ? 5 : 4;
  const X = new Float64Array(m * p);
  data.forEach(([x1, x2, x3], i) => {
    const row = withX1 ? [1, x1!, x2!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0] : [1, x2!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0];
    X.set(row, i * p);
  });
  return { X, p };
}
const yb = data.map((r) => r[3]!);

function expectRelative(actual: ArrayLike<number>, expected: readonly number[], rel: number): void {
  expect(actual.length).toBe(expected.length);
  expected.forEach((e, j) => expect(Math.abs(actual[j]! - e)).toBeLessThanOrEqual(rel * Math.max(Math.abs(e), 1e-3)));
}

describe("logisticRegression", () => {
  it("logisticRegression matches statsmodels Logit coefficients (1e-6 relative) and log-likelihood (1e-8)", () => {
    const { X, p } = design(true);
    const f = logisticRegression(X, m, p, yb);
    expect(f.status).toBe("converged");
    expect(f.separation).toBe("none");
    expectRelative(f.coef, ref.logit.params, 1e-6); // statsmodels Logit.fit(tol=1e-12)
    expect(Math.abs(f.logLik - ref.logit.llf)).toBeLessThan(1e-8); // statsmodels Logit llf
    const f0 = logisticRegression(design(false).X, m, 4, yb);
    expect(Math.abs(f0.logLik - ref.logit.llf_null_without_x1)).toBeLessThan(1e-8);
    expect(2 * (f.logLik - f0.logLik)).toBeCloseTo(ref.logit.llr, 7);
  });

  it("logisticRegression on grouped rows with counts as weights equals the row-level fit (statsmodels GLM Binomial)", () => {
    // group identical (x2, x3, y) rows
    const counts = new Map<string, number>();
    for (const r of data) {
      const k = `${r[1]},${r[2]},${r[3]}`;
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
    const keys = [...counts.keys()];
    const X = new Float64Array(keys.length * 4);
    const y = new Float64Array(keys.length);
    const w = new Float64Array(keys.length);
    keys.forEach((k, i) => {
      const [x2, x3, yy] = k.split(",").map(Number);
      X.set([1, x2!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0], i * 4);
      y[i] = yy!;
      w[i] = counts.get(k)!;
    });
    const f = logisticRegression(X, keys.length, 4, y, { weights: w });
    expect(keys.length).toBeLessThanOrEqual(12);
    expectRelative(f.coef, ref.logit_categorical.params, 1e-6); // statsmodels GLM(Binomial).fit(tol=1e-12)
    expect(Math.abs(f.logLik - ref.logit_categorical.llf)).toBeLessThan(1e-8);
  });

  it("logisticRegression reports complete separation instead of diverging to NaN", () => {
    const X = new Float64Array([1, -2, 1, -1, 1, 1, 1, 2]);
    const f = logisticRegression(X, 4, 2, [0, 0, 1, 1]);
    expect(f.separation).toBe("complete");
    expect(f.status).not.toBe("converged");
    expect(Number.isFinite(f.logLik)).toBe(true);
    expect(f.logLik).toBeGreaterThan(-1e-6); // supremum of the likelihood is 1 (ℓ → 0)
    expect([...f.coef].every(Number.isFinite)).toBe(true);
  });

  it("logisticRegression reports quasi-complete separation when one level has a single outcome", () => {
    // level z = 1 has only y = 1; level z = 0 has both outcomes (Albert & Anderson 1984 quasi-complete case)
    const z = [0, 0, 0, 0, 0, 0, 1, 1, 1];
    const y = [0, 1, 0, 1, 1, 0, 1, 1, 1];
    const X = new Float64Array(z.flatMap((v) => [1, v]));
    const f = logisticRegression(X, 9, 2, y);
    expect(f.separation).toBe("quasi-complete");
    expect(f.separatedRows).toBe(3);
    // ℓ tends to that of the saturated fit on z = 0 rows: 6·ln(1/2)
    expect(f.logLik).toBeCloseTo(6 * Math.log(0.5), 6);
  });

  it("logisticRegression with an intercept only gives logit of the mean (example)", () => {
    const f = logisticRegression(new Float64Array([1, 1, 1, 1]), 4, 1, [1, 0, 0, 0]);
    expect(f.coef[0]).toBeCloseTo(Math.log(1 / 3), 10); // logit(1/4) (common practice)
    expect(f.logLik).toBeCloseTo(Math.log(0.25) + 3 * Math.log(0.75), 10);
  });

  it("logisticRegression flags a singular design and rejects bad input", () => {
    const X = new Float64Array([1, 2, 1, 2, 1, 2, 1, 2]); // second column = 2 × intercept
    expect(logisticRegression(X, 4, 2, [0, 1, 0, 1]).status).toBe("singular");
    expect(() => logisticRegression(X, 4, 2, [0, 2, 0, 1])).toThrow(/0 or 1/);
    expect(() => logisticRegression(X, 4, 2, [0, 1, 0])).toThrow(RangeError);
    expect(() => logisticRegression(X, 4, 2, [0, 1, 0, 1], { weights: [1, -1, 1, 1] })).toThrow(/non-negative/);
  });

  it("weightedCrossProduct equals Σ v_i x_i x_iᵀ by the definition, with zero entries and zero weights (and the doc example)", () => {
    const { X, p } = design(true);
    const v = Float64Array.from({ length: m }, (_, i) => (i % 7 === 0 ? 0 : 0.1 + (i % 5) / 10));
    const H = weightedCrossProduct(X, m, p, v, new Float64Array(p * p), new Int32Array(p), new Float64Array(p));
    for (let a = 0; a < p; a++) {
      for (let b = 0; b < p; b++) {
        let s = 0;
        for (let i = 0; i < m; i++) s += v[i]! * X[i * p + a]! * X[i * p + b]!; // textbook definition
        expect(H[a * p + b]).toBeCloseTo(s, 9);
      }
    }
    const ex = weightedCrossProduct(new Float64Array([1, 0, 1, 2]), 2, 2, new Float64Array([1, 3]), new Float64Array(4), new Int32Array(2), new Float64Array(2));
    expect([...ex]).toEqual([4, 6, 6, 12]); // 1·[1,0][1,0]ᵀ + 3·[1,2][1,2]ᵀ by hand
  });

  it("logisticRegression from a start far from or at the optimum reaches the same fit; a start of the wrong length throws", () => {
    const { X, p } = design(true);
    const f = logisticRegression(X, m, p, yb, { start: [2, -1, 1, 0.5, -0.5] });
    expect(f.status).toBe("converged");
    expectRelative(f.coef, ref.logit.params, 1e-6); // statsmodels Logit.fit(tol=1e-12)
    const g = logisticRegression(X, m, p, yb, { start: ref.logit.params });
    expect(g.status).toBe("converged");
    expect(g.iterations).toBeLessThanOrEqual(2);
    expect(Math.abs(g.logLik - ref.logit.llf)).toBeLessThan(1e-8);
    expect(() => logisticRegression(X, m, p, yb, { start: [0, 0] })).toThrow(/start has 2/);
  });
});

// ---- designs in factor form (indicator cells + dense columns) ----
import { designCrossProduct, designFromRowMajor, logisticRegressionDesign, type FactorDesign } from "../../src/stats/logisticRegression.js";

/** The fixture with x3 (3 levels) as indicator cells: parameters [intercept, x3=1, x3=2, x1?, x2]. */
function factorDesign(withX1: boolean, rows = data): FactorDesign {
  const d = withX1 ? 2 : 1;
  const dense = new Float64Array(rows.length * d);
  rows.forEach(([x1, x2], i) => dense.set(withX1 ? [x1!, x2!] : [x2!], i * d));
  return {
    rows: rows.length, dense, denseColumns: d, factorColumns: 3,
    cellOf: Int32Array.from(rows, (r) => r[2]!), // cell = level of x3
    cellStart: new Int32Array([0, 1, 3, 5]), cellColumns: new Int32Array([0, 0, 1, 0, 2]),
  };
}

describe("logisticRegressionDesign", () => {
  it("logisticRegressionDesign with x3 as indicator cells matches statsmodels Logit (coefficients 1e-6 relative, ℓ 1e-8), both kernels", () => {
    for (const kernel of ["unrolled", "loop"] as const) {
      const f = logisticRegressionDesign(factorDesign(true), yb, { kernel });
      expect(f.status).toBe("converged");
      const [b0, b1, b2, b31, b32] = ref.logit.params as number[]; // statsmodels order: const, x1, x2, x3=1, x3=2
      expectRelative(f.coef, [b0!, b31!, b32!, b1!, b2!], 1e-6);
      expect(Math.abs(f.logLik - ref.logit.llf)).toBeLessThan(1e-8); // statsmodels Logit llf
      const f0 = logisticRegressionDesign(factorDesign(false), yb, { kernel });
      expect(Math.abs(f0.logLik - ref.logit.llf_null_without_x1)).toBeLessThan(1e-8);
    }
  });

  it("the unrolled and loop kernels give the same fit bit for bit, weighted or not, and equal the row-major fit", () => {
    const D = factorDesign(true);
    const w = Float64Array.from({ length: m }, (_, i) => (i % 11 === 0 ? 0 : 1 + (i % 3)));
    for (const weights of [undefined, w]) {
      const a = logisticRegressionDesign(D, yb, { weights, kernel: "unrolled" });
      const b = logisticRegressionDesign(D, yb, { weights, kernel: "loop" });
      expect(a.logLik).toBe(b.logLik);
      expect([...a.coef]).toEqual([...b.coef]);
      expect(a.iterations).toBe(b.iterations);
    }
    const { X, p } = design(true);
    const r = logisticRegression(X, m, p, yb, { weights: w });
    const a = logisticRegressionDesign(D, yb, { weights: w });
    expect(a.logLik).toBeCloseTo(r.logLik, 9);
    // parameter orders: row-major [1, x1, x2, x3=1, x3=2], factor form [1, x3=1, x3=2, x1, x2]
    [0, 3, 4, 1, 2].forEach((j, t) => expect(a.coef[t]).toBeCloseTo(r.coef[j]!, 7));
  });

  it("designCrossProduct equals Σ v_i z_i z_iᵀ of the dense equivalent (textbook definition), and the doc example", () => {
    const D = factorDesign(true);
    const v = Float64Array.from({ length: m }, (_, i) => (i % 7 === 0 ? 0 : 0.1 + (i % 5) / 10));
    const H = designCrossProduct(D, v);
    const z = (i: number) => [1, data[i]![2] === 1 ? 1 : 0, data[i]![2] === 2 ? 1 : 0, data[i]![0]!, data[i]![1]!];
    for (let a = 0; a < 5; a++) {
      for (let b = 0; b < 5; b++) {
        let s = 0;
        for (let i = 0; i < m; i++) s += v[i]! * z(i)[a]! * z(i)[b]!;
        expect(H[a * 5 + b]).toBeCloseTo(s, 9);
      }
    }
    const ex = designCrossProduct({ rows: 2, dense: new Float64Array([1, 2]), denseColumns: 1, factorColumns: 1, cellOf: new Int32Array(2), cellStart: new Int32Array([0, 1]), cellColumns: new Int32Array([0]) });
    expect([...ex]).toEqual([2, 3, 3, 5]); // [[n, Σx], [Σx, Σx²]] by hand
  });

  it("designFromRowMajor keeps X as the dense part; bad designs throw RangeError naming the problem", () => {
    const X = new Float64Array([1, 2, 1, 3]);
    expect(designFromRowMajor(X, 2, 2).dense).toBe(X);
    expect(() => designFromRowMajor(X, 3, 2)).toThrow(/expected 3×2/);
    const D = factorDesign(false, data.slice(0, 4));
    expect(() => logisticRegressionDesign({ ...D, cellOf: new Int32Array([0, 1, 2, 3]) }, [0, 1, 0, 1])).toThrow(/row 3 is in cell 3/);
    expect(() => logisticRegressionDesign({ ...D, cellColumns: new Int32Array([0, 0, 1, 0, 7]) }, [0, 1, 0, 1])).toThrow(/cell column 7/);
    expect(() => logisticRegressionDesign({ ...D, dense: new Float64Array(3) }, [0, 1, 0, 1])).toThrow(/dense part has 3/);
  });
});

import { expByTable } from "../../src/stats/logisticRegression.js";
import { createRng } from "../../src/stats/rng.js";

describe("expByTable", () => {
  it("expByTable(x) is within 2 ulp of Math.exp(x) over (−745, 709) (Math.exp itself is within 1 ulp of e^x), with the edge cases", () => {
    const rng = createRng(3, "exp");
    for (let i = 0; i < 200_000; i++) {
      const x = i % 2 ? -745 + 1454 * rng.nextFloat() : -30 + 60 * rng.nextFloat();
      const ref = Math.exp(x);
      const ulp = 2 ** (Math.floor(Math.log2(ref)) - 52);
      if (ref >= 2 ** -1022) expect(Math.abs(expByTable(x) - ref)).toBeLessThanOrEqual(2 * ulp);
      else expect(expByTable(x)).toBe(ref); // subnormal results: Math.exp is used
    }
    expect(expByTable(0)).toBe(1);
    expect(expByTable(1)).toBe(Math.E); // e, correctly rounded (common practice)
    expect(expByTable(Math.LN2 * 10)).toBeCloseTo(1024, 12);
    expect(expByTable(-Infinity)).toBe(0);
    expect(expByTable(Infinity)).toBe(Infinity);
    expect(expByTable(800)).toBe(Infinity);
    expect(Number.isNaN(expByTable(NaN))).toBe(true);
    expect(expByTable(-1e-300)).toBe(1);
  });
});

describe("convergence without a further pass", () => {
  // Starts at the statsmodels optimum perturbed by a relative ε (deterministic signs), with and
  // without an approximate information matrix; every fit must reach the cold-start log-likelihood
  // and the statsmodels one within 1e-10 relative, however the loop decided to stop.
  const { X, p } = design(true);
  const cold = logisticRegression(X, m, p, yb);
  const params = ref.logit.params as number[]; // statsmodels Logit.fit(tol=1e-12)
  const llf = ref.logit.llf as number; // statsmodels Logit llf

  it("warm starts at every distance from the optimum give the cold-start ℓ within 1e-10 relative (and statsmodels' llf)", () => {
    expect(cold.status).toBe("converged");
    expect(Math.abs(cold.logLik - llf)).toBeLessThanOrEqual(1e-10 * Math.abs(llf));
    for (const eps of [0.3, 1e-2, 1e-4, 1e-6, 1e-8, 1e-10, 0]) {
      const start = params.map((b, j) => b * (1 + eps * (j % 2 ? 1 : -1)) + eps * 0.1);
      for (const information of [undefined, cold.information]) {
        const f = logisticRegression(X, m, p, yb, { start, information });
        expect(f.status).toBe("converged");
        expect(Math.abs(f.logLik - cold.logLik)).toBeLessThanOrEqual(1e-10 * Math.abs(cold.logLik));
        expect(Math.abs(f.logLik - llf)).toBeLessThanOrEqual(1e-10 * Math.abs(llf));
        expectRelative(f.coef, params, 1e-6);
        expect(f.logLik).toBeLessThanOrEqual(llf + 1e-9 * Math.abs(llf)); // never above the maximum
      }
    }
  });

  it("finalStep: the last step taken on paper gives statsmodels' ℓ (1e-12 relative) and coefficients (1e-6), in fewer passes", () => {
    for (const eps of [0.3, 1e-2, 1e-3, 1e-4]) {
      const start = params.map((b, j) => b * (1 + eps * (j % 2 ? 1 : -1)) + eps * 0.1);
      for (const information of [undefined, cold.information]) {
        const plain = logisticRegression(X, m, p, yb, { start, information });
        const f = logisticRegression(X, m, p, yb, { start, information, finalStep: 1e-8 });
        expect(f.status).toBe("converged");
        expect(Math.abs(f.logLik - llf)).toBeLessThanOrEqual(1e-12 * Math.abs(llf)); // statsmodels Logit llf
        expectRelative(f.coef, params, 1e-6); // statsmodels Logit params
        expect(f.passes).toBeLessThanOrEqual(plain.passes);
        if (eps >= 1e-3) expect(f.passes).toBe(plain.passes - 1); // the confirming pass is saved
      }
    }
  });

  it("a start at a converged fit stops after its first pass (0 steps) with the same ℓ; a far start still takes its steps", () => {
    const again = logisticRegression(X, m, p, yb, { start: cold.coef });
    expect(again.status).toBe("converged");
    expect(again.iterations).toBe(0);
    expect(Math.abs(again.logLik - cold.logLik)).toBeLessThanOrEqual(1e-10 * Math.abs(cold.logLik));
    expect([...again.coef]).toEqual([...cold.coef]);
    const far = logisticRegression(X, m, p, yb, { start: params.map((b) => b + 0.5) });
    expect(far.iterations).toBeGreaterThanOrEqual(3);
  });
});

// ---- separation: the fit at the limit ----
import { choleskyFreezing, isRankDeficient, solveInformation } from "../../src/stats/logisticRegression.js";

describe("logisticRegression at the limit under separation", () => {
  // separation-null.csv (scripts/statsmodels_separation.py): y = 1 whenever z = "c"; statsmodels'
  // exact limits in separation-ref.json (Logit on the rows z ≠ "c", which the limit leaves uncertain)
  const sep = JSON.parse(readFileSync(new URL("separation-ref.json", dir), "utf8"));
  const limit = sep.probes.null.claims[0].limit as { llf_null: number; llf_full: number }; // claim x ⫫ y | z, c
  const rows = readFileSync(new URL("separation-null.csv", dir), "utf8").trim().split("\n").slice(1).map((l) => l.split(","));
  const n = rows.length;
  const y = rows.map((r) => Number(r[3]));
  const zc = rows.map((r) => "abc".indexOf(r[0]!));
  const xc = rows.map((r) => "pqr".indexOf(r[1]!));
  /** cells: z (and x) levels; dense: c. Parameters [1, z=b, z=c, (x=q, x=r,) c]. */
  const design = (withX: boolean): FactorDesign => {
    const cellOf = Int32Array.from(rows, (_, i) => (withX ? zc[i]! * 3 + xc[i]! : zc[i]!));
    const starts = [0];
    const cols: number[] = [];
    for (let c = 0; c < (withX ? 9 : 3); c++) {
      const z = withX ? Math.floor(c / 3) : c;
      const x = withX ? c % 3 : 0;
      cols.push(0);
      if (z > 0) cols.push(z);
      if (x > 0) cols.push(2 + x);
      starts.push(cols.length);
    }
    return { rows: n, dense: Float64Array.from(rows, (r) => Number(r[2])), denseColumns: 1, factorColumns: withX ? 5 : 3, cellOf, cellStart: Int32Array.from(starts), cellColumns: Int32Array.from(cols) };
  };

  it("logisticRegressionDesign under quasi-complete separation ends at the limit: statsmodels' ℓ (1e-12 relative), z=c frozen at +∞, both kernels bit for bit", () => {
    const fits = (["unrolled", "loop"] as const).map((kernel) => logisticRegressionDesign(design(false), y, { kernel }));
    for (const f of fits) {
      expect(f.status).toBe("limit");
      expect(f.separation).toBe("quasi-complete");
      expect(f.separatedRows).toBe(27); // the rows with z = "c" (by construction)
      expect([...f.frozen]).toEqual([2]); // z=c
      expect(f.coef[2]).toBeGreaterThan(30);
      expect(Math.abs(f.logLik - limit.llf_null)).toBeLessThanOrEqual(1e-12 * Math.abs(limit.llf_null)); // statsmodels Logit on the rows z ≠ "c"
      expect([...f.coef].every(Number.isFinite)).toBe(true);
    }
    expect(fits[0]!.logLik).toBe(fits[1]!.logLik);
    expect([...fits[0]!.coef]).toEqual([...fits[1]!.coef]);
  });

  it("regression: a fit started at the null model's limit (information singular there) goes on to its own limit instead of stopping after one pass", () => {
    const f0 = logisticRegressionDesign(design(false), y);
    const start = [f0.coef[0]!, f0.coef[1]!, f0.coef[2]!, 0, 0, f0.coef[3]!]; // added coefficients 0
    const f1 = logisticRegressionDesign(design(true), y, { start });
    expect(f1.status).toBe("limit");
    expect(f1.iterations).toBeGreaterThan(1);
    expect(Math.abs(f1.logLik - limit.llf_full)).toBeLessThanOrEqual(1e-12 * Math.abs(limit.llf_full)); // statsmodels Logit on the rows z ≠ "c"
    expect(2 * (f1.logLik - f0.logLik)).toBeCloseTo(2 * (limit.llf_full - limit.llf_null), 9);
  });

  it("logisticRegression under complete separation reaches ℓ = 0 to rounding with status limit (pushed out, information factored there)", () => {
    const X = new Float64Array([1, -2, 1, -1, 1, 1, 1, 2]);
    const f = logisticRegression(X, 4, 2, [0, 0, 1, 1]);
    expect(f.status).toBe("limit");
    expect(f.separation).toBe("complete");
    expect(f.logLik).toBeLessThanOrEqual(0);
    expect(f.logLik).toBeGreaterThan(-1e-12); // supremum 0: every row fitted with certainty (Albert & Anderson 1984)
  });

  it("choleskyFreezing skips vanished pivots (doc example) and solveInformation solves the system of the kept parameters", () => {
    const a = new Float64Array([4, 2, 0, 2, 1, 0, 0, 0, 9]); // second column = half the first
    const F = choleskyFreezing(a, 3, 1e-13);
    expect([...F.frozen]).toEqual([1]);
    expect([...F.frozenDiagonal]).toEqual([1]);
    const x = solveInformation(F, 3, [8, 4, 18]);
    expect([...x]).toEqual([2, 0, 2]); // 4·x0 = 8, 9·x2 = 18 by hand; x1 left at 0
    const full = choleskyFreezing(new Float64Array([4, 2, 2, 5]), 2, 1e-13);
    expect(full.frozen.length).toBe(0);
    const s = solveInformation(full, 2, [6, 7]); // [[4, 2], [2, 5]] x = [6, 7]: x = [1, 1] by hand
    expect(s[0]).toBeCloseTo(1, 14);
    expect(s[1]).toBeCloseTo(1, 14);
  });

  it("isRankDeficient finds aliased or empty columns whatever their scale, and not a column scaled by 1e8", () => {
    // Gram matrices Σ z zᵀ of 3 rows: [1, t] with t = (1, 2, 3), t scaled by 1e8, and [1, 2·1]
    const gram = (cols: number[][]) => {
      const p = cols.length;
      const G = new Float64Array(p * p);
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) G[a * p + b] = cols[a]!.reduce((s, v, i) => s + v * cols[b]![i]!, 0);
      return G;
    };
    expect(isRankDeficient(gram([[1, 1, 1], [1, 2, 3]]), 2)).toBe(false);
    expect(isRankDeficient(gram([[1, 1, 1], [1e8, 2e8, 3e8]]), 2)).toBe(false);
    expect(isRankDeficient(gram([[1, 1, 1], [2, 2, 2]]), 2)).toBe(true);
    expect(isRankDeficient(gram([[1, 1, 1], [0, 0, 0]]), 2)).toBe(true);
  });
});

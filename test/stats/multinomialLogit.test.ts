import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { logisticRegression } from "../../src/stats/logisticRegression.js";
import { multinomialLogit } from "../../src/stats/multinomialLogit.js";

// Seeded dataset and statsmodels fits written by scripts/statsmodels_reference.py (committed fixtures)
const dir = new URL("../fixtures/statsmodels/", import.meta.url);
const ref = JSON.parse(readFileSync(new URL("regression-ref.json", dir), "utf8"));
const data = readFileSync(new URL("regression-data.csv", dir), "utf8").trim().split("\n").slice(1).map((l) => l.split(",").map(Number));
const m = data.length;
function design(withX1: boolean): { X: Float64Array; p: number } {
  const p = withX1 ? 5 : 4;
  const X = new Float64Array(m * p);
  data.forEach(([x1, x2, x3], i) => X.set(withX1 ? [1, x1!, x2!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0] : [1, x2!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0], i * p));
  return { X, p };
}
const ym = data.map((r) => r[4]!);

describe("multinomialLogit", () => {
  it("multinomialLogit matches statsmodels MNLogit coefficients (1e-6 relative) and log-likelihood (1e-8)", () => {
    const { X, p } = design(true);
    const f = multinomialLogit(X, m, p, ym, 3);
    expect(f.status).toBe("converged");
    const expected = (ref.mnlogit.params as number[][]).flat(); // statsmodels MNLogit params, category by category
    expected.forEach((e, j) => expect(Math.abs(f.coef[j]! - e)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(e), 1e-3)));
    expect(Math.abs(f.logLik - ref.mnlogit.llf)).toBeLessThan(1e-8);
    const f0 = multinomialLogit(design(false).X, m, 4, ym, 3);
    expect(Math.abs(f0.logLik - ref.mnlogit.llf_null_without_x1)).toBeLessThan(1e-8);
  });

  it("multinomialLogit with two categories equals logistic regression (theorem: K = 2 is the logit model)", () => {
    const { X, p } = design(true);
    const yb = data.map((r) => r[3]!);
    const a = multinomialLogit(X, m, p, yb, 2);
    const b = logisticRegression(X, m, p, yb);
    for (let j = 0; j < p; j++) expect(a.coef[j]).toBeCloseTo(b.coef[j]!, 8);
    expect(a.logLik).toBeCloseTo(b.logLik, 9);
  });

  it("multinomialLogit with an intercept only gives log ratios of category shares (example)", () => {
    const f = multinomialLogit(new Float64Array([1, 1, 1, 1]), 4, 1, [0, 1, 2, 2], 3);
    expect(f.coef[0]).toBeCloseTo(0, 9);
    expect(f.coef[1]).toBeCloseTo(Math.log(2), 9); // ln(2/1) (common practice)
  });

  it("multinomialLogit reports complete separation and weighted rows equal repeated rows", () => {
    const X = new Float64Array([1, -2, 1, -1, 1, 1, 1, 2, 1, 4, 1, 5]);
    const f = multinomialLogit(X, 6, 2, [0, 0, 1, 1, 2, 2], 3);
    expect(f.separation).toBe("complete");
    expect(Number.isFinite(f.logLik)).toBe(true);
    const Xw = new Float64Array([1, 0, 1, 1, 1, 0, 1, 1, 1, 0, 1, 1]);
    const y = [0, 0, 1, 1, 2, 2];
    const w = multinomialLogit(Xw, 6, 2, y, 3, { weights: [2, 1, 1, 3, 1, 1] });
    const Xr: number[] = [];
    const yr: number[] = [];
    [2, 1, 1, 3, 1, 1].forEach((c, i) => { for (let t = 0; t < c; t++) { Xr.push(Xw[2 * i]!, Xw[2 * i + 1]!); yr.push(y[i]!); } });
    const r = multinomialLogit(new Float64Array(Xr), yr.length, 2, yr, 3);
    expect(w.logLik).toBeCloseTo(r.logLik, 10);
    for (let j = 0; j < 4; j++) expect(w.coef[j]).toBeCloseTo(r.coef[j]!, 8);
    expect(() => multinomialLogit(Xw, 6, 2, [0, 0, 1, 1, 2, 3], 3)).toThrow(/0\.\.2/);
  });

  it("multinomialLogit keeps the likelihood finite when linear predictors exceed the exponential's range, and checks start", () => {
    // a column scaled by 1e3 puts η far beyond 700 during the iterations of a separated fit
    const X = new Float64Array([1, -2000, 1, -1000, 1, 1000, 1, 2000, 1, 4000, 1, 5000]);
    const f = multinomialLogit(X, 6, 2, [0, 0, 1, 1, 2, 2], 3);
    expect(f.separation).toBe("complete");
    expect(Number.isFinite(f.logLik)).toBe(true);
    expect(f.logLik).toBeLessThanOrEqual(0);
    expect(() => multinomialLogit(X, 6, 2, [0, 0, 1, 1, 2, 2], 3, { start: [0, 0, 0] })).toThrow(/start has 3/);
  });
});

import { multinomialLogitDesign } from "../../src/stats/multinomialLogit.js";
import type { FactorDesign } from "../../src/stats/logisticRegression.js";

describe("multinomialLogitDesign", () => {
  // x3 (3 levels) as indicator cells, x1 and x2 dense: parameters per category [1, x3=1, x3=2, x1, x2]
  const D: FactorDesign = {
    rows: m, dense: Float64Array.from(data.flatMap(([x1, x2]) => [x1!, x2!])), denseColumns: 2, factorColumns: 3,
    cellOf: Int32Array.from(data, (r) => r[2]!), cellStart: new Int32Array([0, 1, 3, 5]), cellColumns: new Int32Array([0, 0, 1, 0, 2]),
  };
  it("multinomialLogitDesign matches statsmodels MNLogit (coefficients 1e-6 relative, ℓ 1e-8) with both kernels, bit-identical", () => {
    const fits = (["unrolled", "loop"] as const).map((kernel) => multinomialLogitDesign(D, ym, 3, { kernel }));
    for (const f of fits) {
      expect(f.status).toBe("converged");
      expect(Math.abs(f.logLik - ref.mnlogit.llf)).toBeLessThan(1e-8); // statsmodels MNLogit llf
      (ref.mnlogit.params as number[][]).forEach((row, k) => {
        const [b0, b1, b2, b31, b32] = row; // statsmodels order: const, x1, x2, x3=1, x3=2
        [b0!, b31!, b32!, b1!, b2!].forEach((e, j) => expect(Math.abs(f.coef[k * 5 + j]! - e)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(e), 1e-3)));
      });
    }
    expect(fits[0]!.logLik).toBe(fits[1]!.logLik);
    expect([...fits[0]!.coef]).toEqual([...fits[1]!.coef]);
  });

  it("multinomialLogitDesign with weights equals repeated rows, with both kernels", () => {
    const w = Float64Array.from({ length: m }, (_, i) => 1 + (i % 3));
    const rep: number[] = [];
    w.forEach((c, i) => { for (let t = 0; t < c; t++) rep.push(i); });
    const Dr: FactorDesign = { ...D, rows: rep.length, dense: Float64Array.from(rep.flatMap((i) => [D.dense[2 * i]!, D.dense[2 * i + 1]!])), cellOf: Int32Array.from(rep, (i) => D.cellOf[i]!) };
    const r = multinomialLogitDesign(Dr, rep.map((i) => ym[i]!), 3);
    for (const kernel of ["unrolled", "loop"] as const) {
      const f = multinomialLogitDesign(D, ym, 3, { weights: w, kernel });
      expect(f.logLik).toBeCloseTo(r.logLik, 8);
      for (let j = 0; j < 10; j++) expect(f.coef[j]).toBeCloseTo(r.coef[j]!, 7);
    }
  });
});

describe("multinomialLogit: convergence without a further pass", () => {
  it("warm starts at every distance from the optimum give the cold-start ℓ within 1e-10 relative (and statsmodels' llf)", () => {
    const { X, p } = design(true);
    const cold = multinomialLogit(X, m, p, ym, 3);
    const llf = ref.mnlogit.llf as number; // statsmodels MNLogit llf
    const params = (ref.mnlogit.params as number[][]).flat(); // statsmodels MNLogit params, category by category
    expect(cold.status).toBe("converged");
    expect(Math.abs(cold.logLik - llf)).toBeLessThanOrEqual(1e-10 * Math.abs(llf));
    for (const eps of [0.3, 1e-2, 1e-4, 1e-6, 1e-8, 0]) {
      const start = params.map((b, j) => b * (1 + eps * (j % 3 ? 1 : -1)) - eps * 0.1);
      for (const information of [undefined, cold.information]) {
        const f = multinomialLogit(X, m, p, ym, 3, { start, information });
        expect(f.status).toBe("converged");
        expect(Math.abs(f.logLik - cold.logLik)).toBeLessThanOrEqual(1e-10 * Math.abs(cold.logLik));
        expect(Math.abs(f.logLik - llf)).toBeLessThanOrEqual(1e-10 * Math.abs(llf));
        params.forEach((e, j) => expect(Math.abs(f.coef[j]! - e)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(e), 1e-3)));
      }
    }
    const again = multinomialLogit(X, m, p, ym, 3, { start: cold.coef });
    expect(again.iterations).toBe(0);
    expect(Math.abs(again.logLik - cold.logLik)).toBeLessThanOrEqual(1e-10 * Math.abs(cold.logLik));
  });
});

describe("multinomialLogit at the limit under separation", () => {
  // separation-empty-cell.csv (scripts/statsmodels_separation.py): y = "v3" never occurs with x = "f".
  // Exact limit in separation-ref.json: statsmodels GLM(Poisson) with one intercept per row on the
  // (row, category) pairs other than (x = "f", "v3") (the multinomial logit in its Poisson form).
  const sep = JSON.parse(readFileSync(new URL("separation-ref.json", dir), "utf8"));
  const claim = sep.probes.empty_cell.claims[0]; // x ⫫ y | c
  const rows = readFileSync(new URL("separation-empty-cell.csv", dir), "utf8").trim().split("\n").slice(1).map((l) => l.split(","));
  const n = rows.length;
  const y = rows.map((r) => Number(r[3]!.slice(1)));
  // cells: the 6 levels of x; parameters per category [1, x=b, x=c, x=d, x=e, x=f, c]
  const D: FactorDesign = {
    rows: n, dense: Float64Array.from(rows, (r) => Number(r[2])), denseColumns: 1, factorColumns: 6,
    cellOf: Int32Array.from(rows, (r) => "abcdef".indexOf(r[0]!)),
    cellStart: new Int32Array([0, 1, 3, 5, 7, 9, 11]), cellColumns: new Int32Array([0, 0, 1, 0, 2, 0, 3, 0, 4, 0, 5]),
  };

  it("multinomialLogitDesign with an empty cell ends at the limit: statsmodels' ℓ (1e-12 relative), only x=f of v3 frozen at −∞, both kernels bit for bit", () => {
    const fits = (["unrolled", "loop"] as const).map((kernel) => multinomialLogitDesign(D, y, 5, { kernel }));
    for (const f of fits) {
      expect(f.status).toBe("limit");
      expect(f.separation).toBe("quasi-complete");
      expect(f.separatedRows).toBe(0); // no whole row is certain, only category v3 in rows x = "f"
      expect([...f.frozen]).toEqual([2 * 7 + 5]); // category 3's block, column x=f
      expect(f.coef[2 * 7 + 5]).toBeLessThan(-30);
      expect(Math.abs(f.logLik - claim.limit.llf_full)).toBeLessThanOrEqual(1e-12 * Math.abs(claim.limit.llf_full)); // statsmodels GLM(Poisson) + n
    }
    expect(fits[0]!.logLik).toBe(fits[1]!.logLik);
    expect([...fits[0]!.coef]).toEqual([...fits[1]!.coef]);
    // statsmodels MNLogit(method="newton") approaches it from below as maxiter grows (25 … 400)
    const seq = (claim.statsmodels.newton as { llf_full: number }[]).map((s) => fits[0]!.logLik - s.llf_full);
    seq.forEach((gap, k) => {
      expect(gap).toBeGreaterThanOrEqual(-1e-9);
      if (k > 0) expect(gap).toBeLessThanOrEqual(seq[k - 1]! + 1e-12);
    });
  });

  it("multinomialLogit with two categories equals logistic regression at the limit too (theorem: K = 2 is the logit model)", () => {
    const X = new Float64Array(rows.flatMap((r) => [1, r[0] === "f" ? 1 : 0, Number(r[2])]));
    const yb = y.map((v) => (v === 3 ? 1 : 0)); // "v3" against the rest: never 1 when x = "f"
    const a = multinomialLogit(X, n, 3, yb, 2);
    const b = logisticRegression(X, n, 3, yb);
    expect(a.status).toBe("limit");
    expect(b.status).toBe("limit");
    expect(a.logLik).toBeCloseTo(b.logLik, 10);
    expect([...a.frozen]).toEqual([...b.frozen]);
  });
});

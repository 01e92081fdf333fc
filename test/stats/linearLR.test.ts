import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { linearLR } from "../../src/stats/linearLR.js";

// Seeded dataset and statsmodels OLS fits written by scripts/statsmodels_reference.py (committed fixtures)
const dir = new URL("../fixtures/statsmodels/", import.meta.url);
const ref = JSON.parse(readFileSync(new URL("regression-ref.json", dir), "utf8"));
const data = readFileSync(new URL("regression-data.csv", dir), "utf8").trim().split("\n").slice(1).map((l) => l.split(",").map(Number));
const m = data.length;

describe("linearLR", () => {
  it("linearLR matches statsmodels OLS log-likelihoods, RSS and the LR of x1", () => {
    // columns ordered null model first (const, x2, x3 dummies), then x1
    const X = new Float64Array(m * 5);
    data.forEach(([x1, x2, x3], i) => X.set([1, x2!, x3 === 1 ? 1 : 0, x3 === 2 ? 1 : 0, x1!], i * 5));
    const r = linearLR(X, m, 5, 4, data.map((d) => d[5]!))!;
    expect(r.df).toBe(1);
    expect(Math.abs(r.logLik1 - ref.ols.llf)).toBeLessThan(1e-8); // statsmodels OLS llf
    expect(Math.abs(r.logLik0 - ref.ols.llf_null_without_x1)).toBeLessThan(1e-8);
    expect(r.rss1).toBeCloseTo(ref.ols.ssr, 8);
    expect(r.rss0).toBeCloseTo(ref.ols.ssr_null, 8);
    expect(r.lr).toBeCloseTo(ref.ols.llr, 8);
    expect(Math.abs(r.coef[4]! - ref.ols.params[1]) / Math.abs(ref.ols.params[1])).toBeLessThan(1e-9);
  });

  it("linearLR equals −n ln(1 − r²) for one predictor (theorem: Gaussian LR of a correlation)", () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8];
    const y = [2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8, 16.1].map((v, i) => v + (i % 3) - 1);
    const mx = x.reduce((a, b) => a + b) / 8;
    const my = y.reduce((a, b) => a + b) / 8;
    let sxy = 0, sxx = 0, syy = 0;
    x.forEach((xi, i) => { sxy += (xi - mx) * (y[i]! - my); sxx += (xi - mx) ** 2; syy += (y[i]! - my) ** 2; });
    const r2 = (sxy * sxy) / (sxx * syy);
    const res = linearLR(new Float64Array(x.flatMap((v) => [1, v])), 8, 2, 1, y)!;
    expect(res.lr).toBeCloseTo(-8 * Math.log(1 - r2), 10);
  });

  it("linearLR returns undefined for an exact fit, rank deficiency or too few rows", () => {
    const X = new Float64Array([1, 0, 1, 1, 1, 2, 1, 3]);
    expect(linearLR(X, 4, 2, 1, [0, 1, 2, 3])).toBeUndefined(); // exact line
    expect(linearLR(new Float64Array([1, 2, 1, 2, 1, 2]), 3, 2, 1, [1, 2, 4])).toBeUndefined(); // aliased
    expect(linearLR(new Float64Array([1, 0, 1, 1]), 2, 2, 1, [1, 2])).toBeUndefined(); // m ≤ p
    expect(linearLR(X, 4, 2, 1, [0, 1, 2, 4])!.lr).toBeGreaterThan(0);
    expect(() => linearLR(X, 4, 2, 2, [0, 1, 2, 4])).toThrow(/p0/);
  });
});

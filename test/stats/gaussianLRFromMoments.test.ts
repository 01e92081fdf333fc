import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { createTable } from "../../src/data/createTable.js";
import { buildPatternMoments } from "../../src/data/buildPatternMoments.js";
import { gaussianLRFromMoments } from "../../src/stats/gaussianLRFromMoments.js";
import { partialCorrelation } from "../../src/stats/partialCorrelation.js";
import { simulateLinear } from "../helpers/simulate.js";
import { mapColumnValues } from "../helpers/transformTable.js";

const fixtures = new URL("../fixtures/statsmodels/", import.meta.url);

describe("gaussianLRFromMoments", () => {
  it("gaussianLRFromMoments matches statsmodels OLS 2(llf − llf_null) on the committed regression dataset", () => {
    // scripts/statsmodels_reference.py: OLS of yc on x1, x2, x3 dummies, null model without x1 (regression-ref.json)
    const ref = JSON.parse(readFileSync(new URL("regression-ref.json", fixtures), "utf8")).ols;
    const rows = readFileSync(new URL("regression-data.csv", fixtures), "utf8").trim().split("\n").slice(1).map((l) => l.split(",").map(Number));
    const t = createTable(
      { x1: rows.map((r) => r[0]!), x2: rows.map((r) => r[1]!), x3: rows.map((r) => `k${r[2]}`), yc: rows.map((r) => r[5]!) },
      { types: { x3: "nominal" }, levels: { x3: ["k0", "k1", "k2"] } },
    );
    const m = buildPatternMoments(t, { variables: ["yc", "x1", "x2", "x3"] }).momentsFor(["yc", "x1", "x2", "x3"]);
    expect(m.design.map((d) => d.name)).toEqual(["yc", "x1", "x2", "x3=k1", "x3=k2"]);
    const fit = gaussianLRFromMoments(m.cov, 5, m.n, 0, [2, 3, 4], [1])!;
    expect(fit.df).toBe(1);
    expect(Math.abs(fit.lr - ref.llr) / ref.llr).toBeLessThan(1e-9);
    // residual variances are SSR/(n − 1): statsmodels ssr and ssr_null
    expect(fit.residualVarianceFull * (m.n - 1)).toBeCloseTo(ref.ssr, 6);
    expect(fit.residualVarianceNull * (m.n - 1)).toBeCloseTo(ref.ssr_null, 6);
    expect(fit.sign).toBe(Math.sign(ref.params[1])); // sign of the x1 coefficient
  });

  it("gaussianLRFromMoments gives −n·ln(1 − r²) for one added column, r the partial correlation (theorem)", () => {
    const d = simulateLinear({ arrows: [["a", "b"], ["a", "c"], ["b", "c"], ["d", "c"]] }, 500, 3);
    const t = createTable(d);
    const m = buildPatternMoments(t, { variables: ["a", "b", "c", "d"] }).momentsFor(["c", "b", "a", "d"]);
    const fit = gaussianLRFromMoments(m.cov, 4, m.n, 0, [2, 3], [1])!;
    const r = partialCorrelation(m.cov, 4, 0, 1, [2, 3])!;
    expect(fit.lr).toBeCloseTo(-500 * Math.log(1 - r * r), 9);
    expect(fit.sign).toBe(Math.sign(r));
  });

  it("gaussianLRFromMoments drops aliased columns from the df and returns undefined for an exact fit or a constant response", () => {
    // column 2 = 2 × column 1 (aliased given); response 0
    const cov = new Float64Array([
      2, 1, 2, 0.5,
      1, 1, 2, 0.2,
      2, 2, 4, 0.4,
      0.5, 0.2, 0.4, 1,
    ]);
    const fit = gaussianLRFromMoments(cov, 4, 100, 0, [1, 2], [3])!;
    expect(fit.givenKept).toBe(1);
    expect(fit.df).toBe(1);
    const aliasedAdded = gaussianLRFromMoments(cov, 4, 100, 0, [1], [2])!;
    expect(aliasedAdded.df).toBe(0);
    expect(aliasedAdded.lr).toBe(0);
    // response = column 1 exactly
    expect(gaussianLRFromMoments(new Float64Array([1, 1, 1, 1]), 2, 50, 0, [], [1])).toBeUndefined();
    expect(gaussianLRFromMoments(new Float64Array([0, 0, 0, 1]), 2, 50, 0, [], [1])).toBeUndefined();
  });

  it("gaussianLRFromMoments on pattern moments of columns times 2^±900 (covariances beyond the double range) gives statsmodels' LR through the scaled twin; residual variances in the response's units (regression: non-finite LR)", () => {
    // scripts/statsmodels_reference.py: OLS of yc on x1, x2, x3 dummies, null model without x1 (regression-ref.json)
    const ref = JSON.parse(readFileSync(new URL("regression-ref.json", fixtures), "utf8")).ols;
    const rows = readFileSync(new URL("regression-data.csv", fixtures), "utf8").trim().split("\n").slice(1).map((l) => l.split(",").map(Number));
    const t = createTable(
      { x1: rows.map((r) => r[0]!), x2: rows.map((r) => r[1]!), x3: rows.map((r) => `k${r[2]}`), yc: rows.map((r) => r[5]!) },
      { types: { x3: "nominal" }, levels: { x3: ["k0", "k1", "k2"] } },
    );
    const vars = ["yc", "x1", "x2", "x3"];
    const base = gaussianLRFromMoments(buildPatternMoments(t, { variables: vars }).momentsFor(vars).cov, 5, rows.length, 0, [2, 3, 4], [1])!;
    for (const k of [900, -900]) {
      const m = buildPatternMoments(mapColumnValues(t, ["x1", "yc"], (v) => v * 2 ** k), { variables: vars }).momentsFor(vars);
      if (k > 0) expect(m.cov[0]).toBe(Infinity); // yc's variance times 2^1800
      const fit = gaussianLRFromMoments(m.cov, 5, m.n, 0, [2, 3, 4], [1])!;
      expect(fit.lr, `k=${k}`).toBe(base.lr); // IEEE 754: powers of two scale without rounding
      expect(Math.abs(fit.lr - ref.llr) / ref.llr).toBeLessThan(1e-9); // statsmodels OLS llr
      expect(fit.sign).toBe(Math.sign(ref.params[1]));
      expect(fit.residualVarianceFull).toBe(k > 0 ? Infinity : base.residualVarianceFull * 2 ** (2 * k)); // SSR/(n − 1) in yc's units, beyond the double range for k = 900
    }
  });
});

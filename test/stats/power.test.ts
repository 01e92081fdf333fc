/**
 * Power and detectable effects against scipy (live with python3: scipy.stats.ncx2.ppf / .sf,
 * scipy.optimize.brentq, scipy.stats.norm.ppf) and the closed-form Fisher-z formula
 * tanh((z_{1−α/2} + z_{1−β})/√(n − |S| − 3)) (Cohen 1988, ch. 3; common practice).
 */
import { spawnSync } from "node:child_process";
import { describe, expect, it } from "vitest";
import {
  chiSquareSampleSize, correlationSampleSize, detectableChiSquareEffect, detectableCorrelation, noncentralChiSquareQuantile, noncentralityForPower,
} from "../../src/stats/power.js";

const hasScipy = spawnSync("python3", ["-c", "import scipy"], { encoding: "utf8" }).status === 0;

function python(script: string): unknown {
  const r = spawnSync("python3", ["-c", script], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout);
}

describe("power and detectable effects", () => {
  it("detectable correlation at n = 1000, no adjustment: tanh((z.975 + z.8)/√997) (closed form, z from scipy.stats.norm.ppf)", () => {
    // z_{0.975} = 1.959963984540054, z_{0.8} = 0.8416212335729143 (scipy.stats.norm.ppf)
    const ref = Math.tanh((1.959963984540054 + 0.8416212335729143) / Math.sqrt(1000 - 0 - 3));
    expect(Math.abs(detectableCorrelation(1000 - 2, 0.05, 0.8) - ref)).toBeLessThan(1e-12);
    // with three adjustment columns and Holm over 20 claims (alpha/k = 0.0025): z_{1−0.00125} = 3.0233414397...
    const z = 3.023341439739044;
    expect(Math.abs(detectableCorrelation(1000 - 2 - 3, 0.0025, 0.8) - Math.tanh((z + 0.8416212335729143) / Math.sqrt(1000 - 3 - 3)))).toBeLessThan(1e-9);
  });

  it("on 1 df the chi-square noncentrality is (z_{1−α/2} + z_{1−β})² (identity of χ²(1, λ) and the two-sided z test, up to the far tail)", () => {
    const lam = noncentralityForPower(1, 0.05, 0.8);
    // P(|Z + √λ| > 1.96) = 0.8 includes the far tail P(Z + √λ < −1.96) ≈ 1e-5, so λ is a shade below (z + z)²
    expect(Math.abs(lam - (1.959963984540054 + 0.8416212335729143) ** 2)).toBeLessThan(0.01);
    expect(detectableChiSquareEffect(1, 1000, 0.05, 0.8)).toBeCloseTo(Math.sqrt(-Math.expm1(-lam / 1000)), 14);
    expect(correlationSampleSize(0.1, 0, 0.05, 0.8)).toBe(Math.ceil((2.801585218112968 / Math.atanh(0.1)) ** 2 + 3));
    expect(chiSquareSampleSize(0.1, 1, 0.05, 0.8)).toBe(Math.ceil(lam / -Math.log1p(-0.01)));
  });

  it.skipIf(!hasScipy)("noncentral chi-square quantile against scipy.stats.ncx2.ppf to 1e-8 relative", () => {
    const cases = [[0.05, 1, 0.5], [0.5, 3, 2], [0.95, 4, 10], [0.999, 10, 50], [0.2, 2, 100], [0.01, 25, 5]];
    const ref = python(`import json; from scipy.stats import ncx2; print(json.dumps([ncx2.ppf(p, df, l) for p, df, l in ${JSON.stringify(cases)}]))`) as number[];
    cases.forEach(([p, df, l], i) => {
      const q = noncentralChiSquareQuantile(p!, df!, l!);
      expect(Math.abs(q - ref[i]!) / ref[i]!, `p=${p} df=${df} λ=${l}`).toBeLessThan(1e-8);
    });
  });

  it.skipIf(!hasScipy)("the noncentrality for a power against scipy (brentq on ncx2.sf at chi2.isf) to 1e-8 relative", () => {
    const cases = [[1, 0.05, 0.8], [3, 0.05, 0.8], [4, 0.0025, 0.9], [12, 0.01, 0.5], [1, 1e-6, 0.8]];
    const ref = python(
      `import json; from scipy.stats import ncx2, chi2; from scipy.optimize import brentq
out = []
for df, a, pw in ${JSON.stringify(cases)}:
    c = chi2.isf(a, df)
    out.append(brentq(lambda l: ncx2.sf(c, df, l) - pw, 1e-9, 1e4, xtol=1e-14, rtol=1e-14))
print(json.dumps(out))`,
    ) as number[];
    cases.forEach(([df, a, pw], i) => {
      expect(Math.abs(noncentralityForPower(df!, a!, pw!) - ref[i]!) / ref[i]!, `df=${df} α=${a} power=${pw}`).toBeLessThan(1e-8);
    });
  });

  it("refuses levels outside (0, 1)", () => {
    expect(() => detectableCorrelation(100, 0, 0.8)).toThrow(/alpha must be in/);
    expect(() => noncentralityForPower(1, 0.05, 1)).toThrow(/power must be in/);
    expect(() => correlationSampleSize(1, 0, 0.05, 0.8)).toThrow(/target effect/);
  });
});

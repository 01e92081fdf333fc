/**
 * Power and detectable effects against scipy (live with python3: scipy.stats.ncx2.ppf / .sf,
 * scipy.optimize.brentq, scipy.stats.norm.ppf; without python3, the fixture the same script wrote) and the closed-form Fisher-z formula
 * tanh((z_{1−α/2} + z_{1−β})/√(n − |S| − 3)) (Cohen 1988, ch. 3; common practice).
 */
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import {
  chiSquareSampleSize, correlationSampleSize, detectableChiSquareEffect, detectableCorrelation, noncentralChiSquareQuantile, noncentralityForPower,
} from "../../src/stats/power.js";

const hasScipy = spawnSync("python3", ["-c", "import scipy"], { encoding: "utf8" }).status === 0;
const root = join(import.meta.dirname, "..", "..");

interface Fixture {
  quantiles: { p: number; df: number; lambda: number; x: number }[];
  noncentrality: { df: number; alpha: number; power: number; lambda: number }[];
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

  // live with python3 + scipy (scripts/power_reference.py writes the same cases); else the committed fixture
  const reference = (): Fixture => {
    if (hasScipy) {
      const r = spawnSync("python3", [join(root, "scripts", "power_reference.py"), "--stdout"], { encoding: "utf8" });
      if (r.status !== 0) throw new Error(r.stderr);
      return JSON.parse(r.stdout) as Fixture;
    }
    return JSON.parse(readFileSync(join(root, "test", "fixtures", "power", "ncx2-power.json"), "utf8")) as Fixture;
  };
  const ref = reference();

  it(`noncentral chi-square quantile against scipy.stats.ncx2.ppf to 1e-8 relative (${hasScipy ? "live" : "fixture"})`, () => {
    for (const { p, df, lambda, x } of ref.quantiles) {
      expect(Math.abs(noncentralChiSquareQuantile(p, df, lambda) - x) / x, `p=${p} df=${df} λ=${lambda}`).toBeLessThan(1e-8);
    }
  });

  it(`the noncentrality for a power against scipy (brentq on ncx2.sf at chi2.isf) to 1e-8 relative (${hasScipy ? "live" : "fixture"})`, () => {
    for (const { df, alpha, power, lambda } of ref.noncentrality) {
      expect(Math.abs(noncentralityForPower(df, alpha, power) - lambda) / lambda, `df=${df} α=${alpha} power=${power}`).toBeLessThan(1e-8);
    }
  });

  it("refuses levels outside (0, 1)", () => {
    expect(() => detectableCorrelation(100, 0, 0.8)).toThrow(/alpha must be in/);
    expect(() => noncentralityForPower(1, 0.05, 1)).toThrow(/power must be in/);
    expect(() => correlationSampleSize(1, 0, 0.05, 0.8)).toThrow(/target effect/);
  });
});

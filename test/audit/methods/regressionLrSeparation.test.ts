import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import type { Column, Table, VariableType } from "../../../src/data/Table.js";
import { regressionLr } from "../../../src/audit/methods/regressionLr.js";
import type { MethodResult, TestContext } from "../../../src/audit/TestMethod.js";
import type { Claim, TestOutcome } from "../../../src/audit/types.js";
import { chiSquareUpper } from "../../../src/stats/pvalues.js";
import { createRng } from "../../../src/stats/rng.js";
import { binomialInterval } from "../../helpers/simulate.js";

// Probes and statsmodels' numbers written by scripts/statsmodels_separation.py (committed
// fixtures, see test/fixtures/statsmodels/README.md). For every claim: statsmodels 0.15 Logit /
// MNLogit fitted with method="newton" and method="bfgs" at maxiter 25, 50, 100, 200, 400
// (warnings ignored), the limit of the likelihood ratio computed exactly (statsmodels Logit on the
// rows that are not separated; for multinomial responses statsmodels GLM(Poisson) with one
// intercept per row on the (row, category) pairs that are not certain), and the degrees of
// freedom on the null model's face (numpy.linalg.matrix_rank of the designs there).
const dir = new URL("../../fixtures/statsmodels/", import.meta.url);
interface Fit { maxiter: number; llf_null: number; llf_full: number; lr: number }
interface RefClaim {
  x: string; y: string; given: string[]; model: "logistic" | "multinomial";
  statsmodels: { newton: Fit[]; bfgs: Fit[] };
  limit: { llf_null: number; llf_full: number; lr: number };
  df: number; df_nominal: number;
}
interface Probe { file: string; types: Record<string, VariableType>; claims: RefClaim[] }
const ref = JSON.parse(readFileSync(new URL("separation-ref.json", dir), "utf8")) as { probes: Record<string, Probe> };

/** A table from a fixture CSV: categorical columns with their labels sorted (the first is the baseline, as in the script's dummies). */
function load(probe: Probe, repeat = 1): Table {
  const lines = readFileSync(new URL(probe.file, dir), "utf8").trim().split("\n");
  const head = lines[0]!.split(",");
  const rows = lines.slice(1).map((l) => l.split(","));
  const all = Array.from({ length: repeat }, () => rows).flat();
  const columns: Column[] = head.map((name, j) => {
    const type = probe.types[name]!;
    if (type === "continuous") {
      const values = Float64Array.from(all, (r) => Number(r[j]));
      return { name, type, typeSource: "declared", values, missing: 0 };
    }
    const labels = all.map((r) => r[j]!);
    const levels = [...new Set(labels)].sort();
    const codes = Int32Array.from(labels, (l) => levels.indexOf(l));
    return { name, type, typeSource: "declared", codes, levels, values: Float64Array.from(codes), missing: 0 };
  });
  return { rows: all.length, columns, warnings: [], column: (n) => columns.find((c) => c.name === n) };
}
function ctx(table: Table): TestContext {
  return {
    table,
    get moments(): TestContext["moments"] {
      throw new Error("logistic and multinomial fits do not read the pattern moments");
    },
    seed: 1,
  };
}
function ok(r: MethodResult): TestOutcome {
  if (!r.ok) throw new Error(`expected a test outcome, got untestable: ${r.reason}`);
  return r.outcome;
}
const claimOf = (c: RefClaim): Claim => ({ x: c.x, y: c.y, given: c.given });
const title = (c: RefClaim) => `${c.x} ⫫ ${c.y} | ${c.given.join(", ")}`;

/** Expected separation of each probe's models (by construction of the probe, see the script). */
const expectedSeparation: Record<string, (c: RefClaim) => { null: string; full: string }> = {
  null: () => ({ null: "quasi-complete", full: "quasi-complete" }),
  full: (c) => ({ null: "none", full: c.y === "y" ? "complete" : "quasi-complete" }),
  empty_cell: () => ({ null: "none", full: "quasi-complete" }),
  df: () => ({ null: "quasi-complete", full: "quasi-complete" }),
};

describe("regressionLr under separation: the limit of the likelihood ratio", () => {
  for (const [name, probe] of Object.entries(ref.probes)) {
    const t = load(probe);
    for (const c of probe.claims) {
      it(`regressionLr.run(${title(c)}) on separation-${name}: LR at its limit (exact limit within 1e-9 relative), df ${c.df}, separation flagged`, () => {
        const o = ok(regressionLr.run(claimOf(c), ctx(t)));
        expect(o.details).toMatchObject({ model: c.model, response: c.y, separation: expectedSeparation[name]!(c) });
        // the exact limit (statsmodels on the rows or pairs that are not certain)
        expect(Math.abs(o.statistic - c.limit.lr)).toBeLessThanOrEqual(1e-9 * c.limit.lr);
        const l0 = o.details!.loglik_null as number;
        const l1 = o.details!.loglik_full as number;
        expect(Math.abs(l0 - c.limit.llf_null)).toBeLessThanOrEqual(1e-10 * (Math.abs(c.limit.llf_null) + 1));
        expect(Math.abs(l1 - c.limit.llf_full)).toBeLessThanOrEqual(1e-10 * (Math.abs(c.limit.llf_full) + 1));
        // degrees of freedom: numpy.linalg.matrix_rank on the null model's face (Geyer 2009)
        expect(o.df).toBe(c.df);
        expect(o.p).toBeCloseTo(chiSquareUpper(c.limit.lr, c.df), 12);
        if (c.df !== c.df_nominal) expect(o.details!.df_nominal).toBe(c.df_nominal);
        else expect(o.details!.df_nominal).toBeUndefined();
        expect(o.warnings!.join(" ")).toMatch(/separation in the (null|full) model/);
      });

      it(`statsmodels' LR for ${title(c)} on separation-${name} approaches ours as maxiter grows (newton within 1e-8, bfgs within 1e-3 relative at 400), and no finite fit beats our suprema`, () => {
        const o = ok(regressionLr.run(claimOf(c), ctx(t)));
        const l0 = o.details!.loglik_null as number;
        const l1 = o.details!.loglik_full as number;
        // BFGS stops at scipy's gradient tolerance (gtol 1e-5) whatever maxiter, so its LR stays up to ~3e-4 relative away
        for (const [method, tol] of [["newton", 1e-8], ["bfgs", 1e-3]] as const) {
          const fits = c.statsmodels[method]; // statsmodels 0.15, maxiter 25 … 400
          const gap = fits.map((f) => Math.abs(f.lr - o.statistic));
          expect(gap[gap.length - 1]!).toBeLessThanOrEqual(gap[0]! + 1e-9 * o.statistic); // closer at 400 than at 25
          expect(gap[gap.length - 1]!).toBeLessThanOrEqual(tol * o.statistic);
          for (const f of fits) {
            // a supremum: statsmodels' log-likelihoods never exceed ours (to rounding)
            expect(f.llf_null).toBeLessThanOrEqual(l0 + 1e-9 * Math.abs(l0) + 1e-12);
            expect(f.llf_full).toBeLessThanOrEqual(l1 + 1e-9 * Math.abs(l1) + 1e-12);
          }
        }
      });
    }
  }
});

describe("regressionLr under separation: what is reported", () => {
  it("regression: quasi-complete separation in the null model no longer gives LR = 0, p = 1 (the full fit stopped at once)", () => {
    const probe = ref.probes.null!;
    const o = ok(regressionLr.run({ x: "x", y: "y", given: ["z", "c"] }, ctx(load(probe))));
    expect(o.statistic).toBeGreaterThan(15); // statsmodels' limit 15.8977 (separation-ref.json)
    expect(o.p).toBeLessThan(1e-3);
    expect(o.details!.fixed_at_limit).toEqual({ null: ["z=c → +∞"], full: ["z=c → +∞"] }); // z = "c" always has y = 1
    expect(o.warnings).toContain("quasi-complete separation in the null model: 27 of 90 fitted rows predicted with probability → 1 (z=c → +∞); LR taken at the limit of the likelihood");
  });

  it("regression: an empty cell of the 6 × 5 table is no longer 'information matrix singular'; its coefficient is at −∞ and df stays 20", () => {
    const probe = ref.probes.empty_cell!;
    const t = load(probe);
    for (const given of [["c"], ["z"]]) {
      const r = regressionLr.run({ x: "x", y: "y", given }, ctx(t));
      expect(r.ok).toBe(true);
      const o = ok(r);
      expect(o.df).toBe(20); // (6 − 1)(5 − 1), statsmodels MNLogit df_model difference
      expect(o.details!.fixed_at_limit).toEqual({ null: [], full: ["x=f (y=v3) → −∞"] }); // y = "v3" never occurs with x = "f" (by construction)
      expect(o.warnings!.join(" ")).toMatch(/some categories of "y" have fitted probability → 0 in some rows \(x=f \(y=v3\) → −∞\)/);
    }
  });

  it("separation in the null model that leaves an added parameter without data: df drops by one and the warning says which", () => {
    const t = load(ref.probes.df!);
    const b = ok(regressionLr.run({ x: "x", y: "yb", given: ["z", "c"] }, ctx(t)));
    expect(b.df).toBe(1); // numpy.linalg.matrix_rank on the rows z ≠ "c": 5 − 4 (separation-ref.json)
    expect(b.details).toMatchObject({ df_nominal: 2, not_identifiable: ["x=r"] });
    expect(b.warnings).toContain("1 of the 2 added parameters act only on rows that the null model already predicts with certainty (x=r) and cannot be estimated: df 1 instead of 2");
    const m = ok(regressionLr.run({ x: "x", y: "ym", given: ["z", "c"] }, ctx(t)));
    expect(m.df).toBe(3); // rank of the Poisson form on the pairs the null model leaves uncertain: 4 − 1
    expect(m.details).toMatchObject({ df_nominal: 4, not_identifiable: ["x=r (ym=w)"] });
  });

  it("complete separation in the full model only is tested: LR = −2ℓ0 (ℓ1 → 0), with a warning", () => {
    const probe = ref.probes.full!;
    const c = probe.claims.find((q) => q.y === "y" && q.given[0] === "c")!;
    const o = ok(regressionLr.run(claimOf(c), ctx(load(probe))));
    expect(o.details!.loglik_full).toBeLessThanOrEqual(0);
    expect(o.details!.loglik_full as number).toBeGreaterThan(-1e-12);
    expect(o.statistic).toBeCloseTo(-2 * c.limit.llf_null, 9); // statsmodels Logit llf of the null model, times −2
    expect(o.warnings!.join(" ")).toMatch(/complete separation in the full model: "y" is predicted perfectly by "x", "c"; LR taken at the limit of the likelihood \(ℓ1 → 0, so LR → −2ℓ0\)/);
  });

  it("complete separation in the null model stays untestable: both models fit every row with certainty (LR ≡ 0 on 0 df)", () => {
    // in separation-full.csv y = x, so with x given y is determined whatever is added (Geyer 2009: both conditional models have dimension 0)
    const r = regressionLr.run({ x: "z", y: "y", given: ["x"] }, ctx(load(ref.probes.full!)));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toBe(`complete separation in the null model: "y" is predicted perfectly by "x"; the likelihood-ratio test does not apply`);
  });

  it("a null-model separation that leaves no added parameter estimable is untestable with its reason", () => {
    // by hand: y = 1 whenever z = "c", and x varies only among those rows, so every added
    // coefficient acts only on rows already fitted with certainty (df 2 − 2 = 0; Geyer 2009)
    const z = ["a", "a", "a", "a", "b", "b", "b", "b", "c", "c", "c", "c", "c", "c"];
    const y = ["0", "1", "0", "1", "1", "0", "1", "1", "1", "1", "1", "1", "1", "1"];
    const x = ["p", "p", "p", "p", "p", "p", "p", "p", "p", "q", "r", "q", "r", "p"];
    const col = (name: string, labels: string[], type: VariableType): Column => {
      const levels = [...new Set(labels)].sort();
      const codes = Int32Array.from(labels, (l) => levels.indexOf(l));
      return { name, type, typeSource: "declared", codes, levels, values: Float64Array.from(codes), missing: 0 };
    };
    const columns = [col("z", z, "nominal"), col("y", y, "binary"), col("x", x, "nominal")];
    const t: Table = { rows: z.length, columns, warnings: [], column: (n) => columns.find((c) => c.name === n) };
    const r = regressionLr.run({ x: "x", y: "y", given: ["z"] }, ctx(t));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toBe(`"x" varies only among rows whose "y" "z" already predicts with certainty (separation in the null model); the claim cannot be tested with these data`);
  });

  it("on 72,000 rows (the null probe repeated 800 times: the warm start's subsample fit separates too, so the fits start cold) the LR is 800 times statsmodels' limit, within 1e-9 relative", () => {
    const probe = ref.probes.null!;
    const t = load(probe, 800);
    const groups = new Set(Array.from({ length: 90 }, (_, i) => ["z", "x", "y"].map((n) => t.column(n)!.codes![i]).join())).size;
    for (const c of probe.claims) {
      const o = ok(regressionLr.run(claimOf(c), ctx(t)));
      expect(o.details!.fitted_rows).toBe(c.given.includes("c") ? 72_000 : groups); // rows, or distinct (z, x, y) groups when every variable is categorical
      // repeating every row k times multiplies every log-likelihood, hence their suprema and LR, by k (theorem)
      expect(Math.abs(o.statistic - 800 * c.limit.lr)).toBeLessThanOrEqual(1e-9 * 800 * c.limit.lr);
      expect(o.df).toBe(2);
    }
  });

  it("on 72,000 rows (the empty-cell probe repeated 120 times: the null model warm-starts from a subsample, the full model runs to its limit) the LR is 120 times the limit, within 1e-9 relative", () => {
    const probe = ref.probes.empty_cell!;
    const c = probe.claims.find((q) => q.given[0] === "c")!;
    const o = ok(regressionLr.run(claimOf(c), ctx(load(probe, 120))));
    expect(o.details).toMatchObject({ fitted_rows: 72_000, separation: { null: "none", full: "quasi-complete" } });
    // repeating every row k times multiplies every log-likelihood, hence their suprema and LR, by k (theorem)
    expect(Math.abs(o.statistic - 120 * c.limit.lr)).toBeLessThanOrEqual(1e-9 * 120 * c.limit.lr);
    expect(o.df).toBe(20);
  });

  it("calibration: x ⫫ y | c true, sparse binary y (empty cells in most replications): rejections at 0.05 of 500 inside the exact 99% band with the nominal df, far above it with df reduced by the coefficients at ±∞", () => {
    const R = 500;
    const [lo, hi] = binomialInterval(R, 0.05); // exact central 99% band of Binomial(500, 0.05): [13, 38]
    const rng = createRng(2024, "sparse calibration 60");
    const normal = () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
    const n = 60;
    let tested = 0;
    let separated = 0;
    let nominal = 0;
    let reduced = 0;
    for (let r = 0; r < R; r++) {
      const x = Int32Array.from({ length: n }, () => rng.nextInt(4));
      const y = Int32Array.from({ length: n }, () => (rng.nextFloat() < 0.08 ? 1 : 0));
      const c = Float64Array.from({ length: n }, normal);
      const levels = (L: number) => Array.from({ length: L }, (_, i) => `v${i}`);
      const columns: Column[] = [
        { name: "x", type: "nominal", typeSource: "declared", codes: x, levels: levels(4), values: Float64Array.from(x), missing: 0 },
        { name: "y", type: "binary", typeSource: "declared", codes: y, levels: levels(2), values: Float64Array.from(y), missing: 0 },
        { name: "c", type: "continuous", typeSource: "declared", values: c, missing: 0 },
      ];
      const r0 = regressionLr.run({ x: "x", y: "y", given: ["c"] }, ctx({ rows: n, columns, warnings: [], column: (q) => columns.find((k) => k.name === q) }));
      if (!r0.ok) continue; // y without a 1 in all 60 rows
      const o = r0.outcome;
      tested++;
      if ((o.details!.separation as { full: string }).full !== "none") separated++;
      if (o.p < 0.05) nominal++;
      // the alternative rule: drop from df every added coefficient reported at ±∞
      const atInfinity = ((o.details!.fixed_at_limit as { full: string[] } | undefined)?.full ?? []).filter((l) => l.startsWith("x=") && l.includes("∞")).length;
      if (o.df - atInfinity > 0 && chiSquareUpper(o.statistic, o.df - atInfinity) < 0.05) reduced++;
    }
    expect(tested).toBeGreaterThan(490);
    expect(separated).toBeGreaterThan(tested / 2);
    expect(nominal).toBeGreaterThanOrEqual(lo);
    expect(nominal).toBeLessThanOrEqual(hi);
    expect(reduced).toBeGreaterThan(hi);
  });
});

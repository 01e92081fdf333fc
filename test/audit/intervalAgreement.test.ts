/**
 * Every claim's interval agrees with its test: over random invented claims of every test type and
 * p-value branch, at alpha 0.05 and 0.01, `ci` excludes 0 exactly when the unadjusted p < alpha,
 * and the effect lies inside its interval (a property of the constructions: each inverts its own
 * test at level alpha; see README "Effect scale"). The dependence of x on y is drawn at random so
 * that p-values fall on both sides of alpha.
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { runAudit } from "../../src/audit/runAudit.js";
import type { AuditSettings, TestedClaim } from "../../src/audit/types.js";
import type { CellValue } from "../../src/data/createTable.js";
import { createTable } from "../../src/data/createTable.js";
import type { VariableType } from "../../src/data/Table.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { createRng, type Rng } from "../../src/stats/rng.js";
import { gamma2, normal } from "../helpers/cohortScenarios.js";

const expit = (u: number): number => 1 / (1 + Math.exp(-u));
const bern = (rng: Rng, p: number): number => (rng.nextFloat() < p ? 1 : 0);
const category = (rng: Rng, labels: readonly string[], weights: readonly number[]): string => {
  let u = rng.nextFloat() * weights.reduce((a, b) => a + b, 0);
  for (let k = 0; k < labels.length; k++) if ((u -= weights[k]!) < 0) return labels[k]!;
  return labels[labels.length - 1]!;
};

interface Kind {
  /** What the claim should be tested by, and on which branch. */
  test: TestedClaim["test"];
  pMethod: TestedClaim["p_method"];
  settings: Partial<AuditSettings>;
  types?: Record<string, VariableType>;
  /** One row: S (any number of columns), x and y, with dependence d of y on x. */
  row: (rng: Rng, d: number) => Record<string, CellValue>;
  n: number;
}

const KINDS: Record<string, Kind> = {
  "gcm continuous": { test: "gcm", pMethod: "asymptotic", settings: {}, n: 300, row: (r, d) => { const s = gamma2(r); const x = Math.log(s) + normal(r); return { s, x, y: s * s * 0.2 + d * x + normal(r) }; } },
  "gcm binary sides": { test: "gcm", pMethod: "asymptotic", settings: {}, n: 400, row: (r, d) => { const s = gamma2(r); const x = bern(r, expit(-1 + 0.8 * s)); return { s, x, y: bern(r, expit(-0.5 + 0.6 * s + 3 * d * (2 * x - 1))) }; } },
  "gcm nominal side": { test: "gcm", pMethod: "asymptotic", settings: {}, n: 400, row: (r, d) => { const s = gamma2(r); const x = category(r, ["a", "b", "c"], [1, Math.exp(0.5 * s - 1), 1]); return { s, x, y: Math.sqrt(s) + normal(r) + (x === "b" ? 4 * d : 0) }; } },
  "gcm-rank": { test: "gcm-rank", pMethod: "asymptotic", settings: { method: "rank" }, n: 300, row: (r, d) => { const s = normal(r); const x = Math.exp(s + normal(r)); return { s, x, y: Math.exp(0.5 * s + normal(r) + d * Math.log(x)) }; } },
  "pearson-partial": { test: "pearson-partial", pMethod: "asymptotic", settings: { method: "linear" }, n: 200, row: (r, d) => { const s = normal(r); const x = s + normal(r); return { s, x, y: s + d * x + normal(r) }; } },
  "regression linear": { test: "regression-lr", pMethod: "asymptotic", settings: { method: "regression" }, n: 300, row: (r, d) => { const s = normal(r); const x = s + normal(r); return { s, x, y: 0.5 * s + d * x + normal(r) }; } },
  "regression logistic": { test: "regression-lr", pMethod: "asymptotic", settings: { method: "regression" }, n: 400, row: (r, d) => { const s = normal(r); const x = s + normal(r); return { s, x, y: bern(r, expit(0.5 * s + 3 * d * x)) }; } },
  "regression multinomial": {
    test: "regression-lr", pMethod: "asymptotic", settings: { method: "regression" }, n: 400,
    row: (r, d) => { const s = normal(r); const x = s + normal(r); return { s, x, y: category(r, ["p", "q", "r"], [1, Math.exp(0.5 * s + 3 * d * x), Math.exp(-0.3 * s)]) }; },
  },
  "stratified-chisq asymptotic": {
    test: "stratified-chisq", pMethod: "asymptotic", settings: {}, n: 600,
    row: (r, d) => { const s = category(r, ["u", "v"], [1, 1]); const x = category(r, ["a", "b", "c"], s === "u" ? [1, 1, 1] : [2, 1, 1]); return { s, x, y: category(r, ["k", "l"], [1, (s === "u" ? 1 : 1.5) * Math.exp(4 * d * (x === "a" ? 1 : 0))]) }; },
  },
  "stratified-chisq permutation": {
    test: "stratified-chisq", pMethod: "permutation", settings: { permutations: 400 }, n: 300,
    row: (r, d) => { const s = category(r, ["u", "v", "w"], [1, 1, 1]); const x = category(r, ["a", "b", "c"], [1, 1, 1]); return { s, x, y: category(r, ["k", "l", "m"], [1, Math.exp(4 * d * (x === "b" ? 1 : 0)), 1]) }; },
  },
  "linear-by-linear asymptotic": {
    test: "linear-by-linear", pMethod: "asymptotic", settings: {}, n: 400, types: { x: "ordinal", y: "ordinal", s: "nominal" },
    row: (r, d) => { const s = category(r, ["u", "v", "w"], [1, 1, 1]); const sb = s === "u" ? 0 : s === "v" ? 1 : 2; const x = Math.min(4, Math.max(1, Math.round(1 + sb + 2 * r.nextFloat() - 0.5))); return { s, x, y: Math.min(4, Math.max(1, Math.round(1 + 0.5 * sb + 4 * d * x + 2 * r.nextFloat() - 0.5))) }; },
  },
  "linear-by-linear permutation": {
    test: "linear-by-linear", pMethod: "permutation", settings: { permutations: 400 }, n: 300, types: { x: "ordinal", y: "ordinal", s: "nominal" },
    row: (r, d) => { const s = category(r, ["u", "v", "w"], [1, 1, 1]); const sb = s === "u" ? 0 : s === "v" ? 1 : 2; const x = Math.min(4, Math.max(1, Math.round(1 + sb + 2 * r.nextFloat() - 0.5))); return { s, x, y: Math.min(4, Math.max(1, Math.round(1 + 0.5 * sb + 4 * d * x + 2 * r.nextFloat() - 0.5))) }; },
  },
};

/** The one claim x ⫫ y | s of an invented table of `kind` (graph s -> x, s -> y). */
function claimOf(kind: Kind, seed: number, d: number, alpha: number): TestedClaim {
  const rng = createRng(seed, "interval agreement");
  const columns: Record<string, CellValue[]> = {};
  for (let i = 0; i < kind.n; i++) for (const [k, v] of Object.entries(kind.row(rng, d))) (columns[k] ??= []).push(v);
  const table = createTable(columns, kind.types ? { types: kind.types } : {});
  const graph = createGraph({ nodes: ["s", "x", "y"], arrows: [["s", "x"], ["s", "y"]] });
  const result = runAudit(graph, table, { settings: { ...kind.settings, alpha, seed } });
  const claim = result.claims[0];
  if (!claim) throw new Error(`not tested: ${result.untestable.map((u) => u.reason).join("; ")}`);
  return claim;
}

describe("every interval agrees with its test", () => {
  it("ci excludes 0 exactly when p < alpha, and holds the effect, for random claims of every test type and branch at alpha 0.05 and 0.01 (property)", () => {
    const seen = new Map<string, { rejected: number; kept: number }>();
    fc.assert(
      fc.property(
        fc.constantFrom(...Object.keys(KINDS)), fc.integer({ min: 1, max: 1_000_000 }), fc.integer({ min: 0, max: 1000 }), fc.constantFrom(0.05, 0.01),
        (name, seed, strength, alpha) => {
          const kind = KINDS[name]!;
          // dependence uniform on [0, 0.25], or on [0, 0.05] for half the draws (near independence, where p crosses alpha)
          const d = ((seed % 2 === 0 ? 0.05 : 0.25) * strength) / 1000;
          const c = claimOf(kind, seed, d, alpha);
          const where = `${name} seed ${seed} d ${d} alpha ${alpha}: p ${c.p}, effect ${c.effect}, ci [${c.ci.join(", ")}]`;
          expect(c.test, where).toBe(kind.test);
          expect(c.p_method, where).toBe(kind.pMethod);
          expect(c.ci[0] > 0 || c.ci[1] < 0, where).toBe(c.p < alpha);
          expect(c.ci[0] <= c.effect && c.effect <= c.ci[1], where).toBe(true);
          const tally = seen.get(name) ?? { rejected: 0, kept: 0 };
          if (c.p < alpha) tally.rejected++;
          else tally.kept++;
          seen.set(name, tally);
        },
      ),
      { numRuns: 480, seed: 1203 },
    );
    // every kind was drawn, and on both sides of its threshold
    for (const name of Object.keys(KINDS)) {
      const t = seen.get(name);
      expect(t, name).toBeDefined();
      expect(t!.rejected, `${name} rejected`).toBeGreaterThan(0);
      expect(t!.kept, `${name} not rejected`).toBeGreaterThan(0);
    }
  });
});

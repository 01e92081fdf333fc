/**
 * Micro-benchmark of the categorical and regression likelihood-ratio methods at 1,000,000 rows:
 * a generated table with 30 categorical and 20 continuous variables, and one claim of each
 * kind the methods meet. Prints the wall time per claim, then the time of the two model fits
 * (null and full) of the logistic and multinomial claims on their own, without the method's
 * design building.
 * Run: node --import tsx bench/categorical.ts [rows] [label filter, a regular expression]
 */
import type { Column, Table, VariableType } from "../src/data/Table.js";
import { regressionLr } from "../src/audit/methods/regressionLr.js";
import { stratifiedChisq } from "../src/audit/methods/stratifiedChisq.js";
import type { TestContext, TestMethod } from "../src/audit/TestMethod.js";
import type { Claim } from "../src/audit/types.js";
import { logisticRegression } from "../src/stats/logisticRegression.js";
import { multinomialLogit } from "../src/stats/multinomialLogit.js";
import { createRng } from "../src/stats/rng.js";

const rows = Number(process.argv[2] ?? 1_000_000);
const only = new RegExp(process.argv[3] ?? "");
const rng = createRng(42, "bench");
const cols: Column[] = [];
const cont: Float64Array[] = [];
for (let j = 0; j < 20; j++) {
  const v = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    const u = Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
    v[i] = j > 0 ? 0.5 * cont[j - 1]![i]! + u : u;
  }
  cont.push(v);
  cols.push({ name: `c${j}`, type: "continuous", typeSource: "inferred", values: v, missing: 0 });
}
for (let j = 0; j < 30; j++) {
  const L = [2, 3, 4, 5, 8][j % 5]!;
  const type: VariableType = L === 2 ? "binary" : j % 2 ? "ordinal" : "nominal";
  const codes = new Int32Array(rows);
  const src = cont[j % 20]!;
  for (let i = 0; i < rows; i++) {
    const s = src[i]! + (rng.nextFloat() - 0.5) * 2;
    codes[i] = Math.min(L - 1, Math.max(0, Math.floor((s + 2) * (L / 4))));
    if (rng.nextFloat() < 0.01) codes[i] = -1; // 1% missing
  }
  cols.push({ name: `k${j}`, type, typeSource: "inferred", codes, levels: Array.from({ length: L }, (_, i) => `l${i}`), values: Float64Array.from(codes, (c) => (c < 0 ? NaN : c)), missing: 0 });
}
const table: Table = { rows, columns: cols, warnings: [], column: (n) => cols.find((c) => c.name === n) };
const unused = () => { throw new Error("not used"); };
const ctx = (extra: Partial<TestContext> = {}): TestContext => ({ table, moments: { patterns: 0, completeRows: 0, patternList: unused, momentsFor: unused, columnsOf: unused, momentsForColumns: unused }, seed: 1, ...extra });

const cases: [string, TestMethod, Claim, Partial<TestContext>][] = [
  ["chisq binary×binary | 3 categorical", stratifiedChisq, { x: "k0", y: "k5", given: ["k1", "k2", "k3"] }, {}],
  ["chisq 8×5 levels | 6 categorical (sparse → permutation)", stratifiedChisq, { x: "k4", y: "k3", given: ["k1", "k2", "k6", "k7", "k8", "k9"] }, {}],
  ["chisq 3×4 | 2 categorical, 2000 permutations forced", stratifiedChisq, { x: "k1", y: "k2", given: ["k6", "k7"] }, { permutations: 2000 }],
  ["regression linear: nominal x (8) → continuous y | 3 continuous + 2 categorical", regressionLr, { x: "k4", y: "c10", given: ["c1", "c2", "c3", "k1", "k2"] }, {}],
  ["regression logistic: binary y, nominal x (4) | 3 continuous", regressionLr, { x: "k2", y: "k0", given: ["c1", "c5", "c9"] }, {}],
  ["regression multinomial: nominal y (4), nominal x (4) | 2 continuous", regressionLr, { x: "k2", y: "k12", given: ["c1", "c5"] }, {}],
  ["regression multinomial: nominal y (4), binary x | 2 continuous + nominal (4) + ordinal (3)", regressionLr, { x: "k10", y: "k12", given: ["c1", "c5", "k2", "k1"] }, {}],
  ["regression logistic: binary y, binary x | 4 continuous + 2 nominal (4, 8)", regressionLr, { x: "k10", y: "k0", given: ["c1", "c5", "c9", "c12", "k2", "k14"] }, {}],
  ["regression grouped: binary y, nominal x | 3 categorical", regressionLr, { x: "k4", y: "k5", given: ["k1", "k2", "k3"] }, {}],
];
console.log(`rows: ${rows}`);
for (const [label, method, claim, extra] of cases) {
  if (!only.test(label)) continue;
  const t0 = performance.now();
  let r: ReturnType<TestMethod["run"]>;
  try {
    r = method.run(claim, ctx(extra));
  } catch (e) {
    // e.g. a method that now needs the pattern moments this bench does not build
    console.log(`   —    ${label}  [not run: ${(e as Error).message}]`);
    continue;
  }
  const ms = performance.now() - t0;
  const info = r.ok ? `${r.outcome.test} stat ${r.outcome.statistic.toFixed(2)} df ${r.outcome.df} p ${r.outcome.p.toExponential(2)} ${r.outcome.p_method}${r.outcome.warnings ? " warn: " + r.outcome.warnings.join("; ") : ""}` : `untestable: ${r.reason}`;
  console.log(`${(ms / 1000).toFixed(2).padStart(6)} s  ${label}  [${info}]`);
}

// The fits alone: intercept + continuous given (null), plus the dummies of x (full).
function design(cont: readonly string[], dummyOf: string | undefined, y: string): { X0: Float64Array; X1: Float64Array; y: Int32Array; m: number; p0: number; p: number; K: number } {
  const cc = cont.map((n) => table.column(n)!.values);
  const yc = table.column(y)!;
  const dx = dummyOf ? table.column(dummyOf)! : undefined;
  const L = dx ? dx.levels!.length : 1;
  const keep: number[] = [];
  for (let i = 0; i < rows; i++) if (yc.codes![i]! >= 0 && (!dx || dx.codes![i]! >= 0) && cc.every((c) => Number.isFinite(c[i]!))) keep.push(i);
  const m = keep.length;
  const p0 = 1 + cc.length;
  const p = p0 + L - 1;
  const X0 = new Float64Array(m * p0);
  const X1 = new Float64Array(m * p);
  const yy = new Int32Array(m);
  keep.forEach((r, i) => {
    X0[i * p0] = X1[i * p] = 1;
    cc.forEach((c, j) => (X0[i * p0 + 1 + j] = X1[i * p + 1 + j] = c[r]!));
    if (dx && dx.codes![r]! > 0) X1[i * p + p0 + dx.codes![r]! - 1] = 1;
    yy[i] = yc.codes![r]!;
  });
  return { X0, X1, y: yy, m, p0, p, K: yc.levels!.length };
}
if (only.test("fits only: logistic")) {
  const d = design(["c1", "c5", "c9"], "k2", "k0");
  const t0 = performance.now();
  const f0 = logisticRegression(d.X0, d.m, d.p0, d.y);
  const start = new Float64Array(d.p);
  start.set(f0.coef);
  const f1 = logisticRegression(d.X1, d.m, d.p, d.y, { start });
  const s = (performance.now() - t0) / 1000;
  console.log(`${s.toFixed(2).padStart(6)} s  fits only: logistic null (${d.p0} columns) + full (${d.p} columns), ${d.m} rows  [LR ${(2 * (f1.logLik - f0.logLik)).toFixed(2)}, iterations ${f0.iterations} + ${f1.iterations}]`);
}
if (only.test("fits only: multinomial")) {
  const d = design(["c1", "c5"], "k2", "k12");
  const q = d.K - 1;
  const t0 = performance.now();
  const f0 = multinomialLogit(d.X0, d.m, d.p0, d.y, d.K);
  const start = new Float64Array(q * d.p);
  for (let k = 0; k < q; k++) for (let j = 0; j < d.p0; j++) start[k * d.p + j] = f0.coef[k * d.p0 + j]!;
  const f1 = multinomialLogit(d.X1, d.m, d.p, d.y, d.K, { start });
  const s = (performance.now() - t0) / 1000;
  console.log(`${s.toFixed(2).padStart(6)} s  fits only: multinomial (${d.K} categories) null (${d.p0} columns) + full (${d.p} columns), ${d.m} rows  [LR ${(2 * (f1.logLik - f0.logLik)).toFixed(2)}, iterations ${f0.iterations} + ${f1.iterations}]`);
}

/**
 * Seeded simulations of cohort-shaped data in which a claim x ⫫ y | S holds exactly (or, for
 * the power checks, fails), for the calibration tests of the default tests and the README's
 * calibration table. Every variable is invented. Each scenario returns the columns (numbers,
 * text labels or NaN for missing, read through `createTable` so that types are inferred as from
 * a file), the graph (arrows from every member of S to x and to y) and the claim.
 */
import type { CellValue } from "../../src/data/createTable.js";
import { createRng, type Rng } from "../../src/stats/rng.js";

export interface ScenarioData {
  columns: Record<string, CellValue[]>;
  /** Members of the conditioning set; the graph has an arrow from each to x and to y. */
  given: string[];
  /** An extra arrow x -> y when the claim is false (power checks). */
  dependent?: boolean;
}

export interface Scenario {
  id: string;
  /** What the data look like, for the calibration table. */
  label: string;
  make: (rng: Rng, n: number) => ScenarioData;
}

export function normal(rng: Rng): number {
  return Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
}
/** Gamma(2, 1): the sum of two unit exponentials (skewed to the right). */
export function gamma2(rng: Rng): number {
  return -Math.log(1 - rng.nextFloat()) - Math.log(1 - rng.nextFloat());
}
/** Student's t on 3 df: Z/√(χ²₃/3). */
export function t3(rng: Rng): number {
  const z = normal(rng);
  const c = normal(rng) ** 2 + normal(rng) ** 2 + normal(rng) ** 2;
  return z / Math.sqrt(c / 3);
}
const expit = (u: number): number => 1 / (1 + Math.exp(-u));
const bernoulli = (rng: Rng, p: number): number => (rng.nextFloat() < p ? 1 : 0);
function pick<T>(rng: Rng, items: readonly T[], weights: readonly number[]): T {
  const total = weights.reduce((a, b) => a + b, 0);
  let u = rng.nextFloat() * total;
  for (let k = 0; k < items.length; k++) {
    u -= weights[k]!;
    if (u < 0) return items[k]!;
  }
  return items[items.length - 1]!;
}

/** x and y generated from S only (a true claim), or with x -> y added (`strength` > 0). */
function columnsOf(n: number, gen: (i: number) => { s: Record<string, CellValue>; x: CellValue; y: CellValue }): Record<string, CellValue[]> {
  const out: Record<string, CellValue[]> = {};
  for (let i = 0; i < n; i++) {
    const { s, x, y } = gen(i);
    for (const [k, v] of Object.entries(s)) (out[k] ??= []).push(v);
    (out.x ??= []).push(x);
    (out.y ??= []).push(y);
  }
  return out;
}

/** The scenarios of the calibration table (all true claims unless `dependence` > 0). */
export function scenarios(dependence = 0): Scenario[] {
  const d = dependence;
  return [
    {
      id: "binary-logistic",
      label: "x, y binary, each logistic in a skewed continuous S",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = gamma2(rng);
          const x = bernoulli(rng, expit(-1 + 0.8 * s));
          return { s: { s }, x, y: bernoulli(rng, expit(-0.5 + 0.6 * s + d * (2 * x - 1))) };
        }),
      }),
    },
    {
      id: "binary-logistic-strong",
      label: "same, strong dependence on S",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = gamma2(rng);
          const x = bernoulli(rng, expit(-4 + 2.5 * s));
          return { s: { s }, x, y: bernoulli(rng, expit(-3 + 2 * s + d * (2 * x - 1))) };
        }),
      }),
    },
    {
      id: "quadratic",
      label: "x, y continuous, quadratic in S",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = normal(rng);
          const x = s * s + normal(rng);
          return { s: { s }, x, y: s * s + normal(rng) + d * x };
        }),
      }),
    },
    {
      id: "threshold",
      label: "x, y continuous, a threshold effect of S",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = normal(rng);
          const x = (s > 0.5 ? 1 : 0) + normal(rng);
          return { s: { s }, x, y: (s > 0.5 ? 1 : 0) + normal(rng) + d * x };
        }),
      }),
    },
    {
      id: "nominal-integer-codes",
      label: "S nominal, 5 groups written as integer codes 1–5 (inferred ordinal), x and y depend on the group",
      make: (rng, n) => {
        const mx = [0, 2, -1, 1.5, -2, 0.5];
        const my = [0, -1, 2, 1, -1.5, 2];
        return {
          given: ["s"],
          columns: columnsOf(n, () => {
            const s = 1 + Math.floor(rng.nextFloat() * 5);
            const x = mx[s]! + normal(rng);
            return { s: { s }, x, y: my[s]! + normal(rng) + d * x };
          }),
        };
      },
    },
    {
      id: "lognormal",
      label: "x, y lognormal (exp of a linear function of S)",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = normal(rng);
          const x = Math.exp(0.5 + 0.8 * s + 0.5 * normal(rng));
          return { s: { s }, x, y: Math.exp(0.8 * s + 0.5 * normal(rng) + d * Math.log(x)) };
        }),
      }),
    },
    {
      id: "heavy-tails",
      label: "linear, heavy-tailed errors (t, 3 df)",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = normal(rng);
          const x = s + t3(rng);
          return { s: { s }, x, y: s + t3(rng) + d * x };
        }),
      }),
    },
    {
      id: "missing-by-s",
      label: "missing values that depend on S",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = normal(rng);
          const x = s + normal(rng);
          const y = 0.5 * s + normal(rng) + d * x;
          return { s: { s }, x: rng.nextFloat() < expit(s - 1) ? NaN : x, y: rng.nextFloat() < expit(-s - 1) ? NaN : y };
        }),
      }),
    },
    {
      id: "mixed-set",
      label: "binary x, skewed continuous y, S = {skewed continuous, binary, 4-level nominal}",
      make: (rng, n) => {
        const m3 = [0, 1, -1, 0.5];
        return {
          given: ["s1", "s2", "s3"],
          columns: columnsOf(n, () => {
            const s1 = gamma2(rng);
            const s2 = bernoulli(rng, 0.4);
            const k = Math.floor(rng.nextFloat() * 4);
            const x = bernoulli(rng, expit(-2 + 0.7 * s1 - s2 + m3[k]!));
            const y = Math.exp(0.3 * s1) + s2 + m3[k]! + normal(rng) * (0.5 + 0.3 * s1) + d * x;
            return { s: { s1, s2, s3: ["north", "south", "east", "west"][k]! }, x, y };
          }),
        };
      },
    },
    {
      id: "nominal-side",
      label: "nominal x (3 levels, text), continuous y, both non-linear in a skewed S",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const s = gamma2(rng);
          const x = pick(rng, ["a", "b", "c"], [1, Math.exp(0.6 * s - 1), Math.exp(0.8 * Math.sin(s))]);
          const y = Math.exp(0.4 * s) + normal(rng) * (0.5 + 0.3 * s) + (x === "b" ? d : 0);
          return { s: { s }, x, y };
        }),
      }),
    },
    {
      id: "ordinal-pair",
      label: "x, y ordinal (integer codes 1–5), S = {3-level nominal, binary}: all categorical",
      make: (rng, n) => ({
        given: ["s1", "s2"],
        columns: columnsOf(n, () => {
          const k = Math.floor(rng.nextFloat() * 3);
          const s2 = bernoulli(rng, 0.3 + 0.2 * k);
          const lx = [0.8, -0.2, 0.4][k]! + 0.7 * s2 + normal(rng);
          const ly = [-0.5, 0.6, 0.1][k]! - 0.5 * s2 + normal(rng) + d * lx;
          const cut = (v: number) => 1 + (v > -1 ? 1 : 0) + (v > -0.3 ? 1 : 0) + (v > 0.4 ? 1 : 0) + (v > 1.2 ? 1 : 0);
          return { s: { s1: ["urban", "rural", "remote"][k]!, s2 }, x: cut(lx), y: cut(ly) };
        }),
      }),
    },
    {
      id: "sparse-strata",
      label: "x, y nominal (3 and 4 levels, text) in the 4 strata of a nominal S, sparse (n = 300)",
      make: (rng, n) => ({
        given: ["s"],
        columns: columnsOf(n, () => {
          const k = Math.floor(rng.nextFloat() * 4);
          const x = pick(rng, ["a", "b", "c"], [[3, 1, 1], [1, 2, 2], [1, 1, 3], [2, 2, 1]][k]!);
          const y = pick(rng, ["p", "q", "r", "t"], k === 2 ? [1, 1, 2, 4] : [2, 2, 1, 1]);
          return { s: { s: ["n", "e", "s", "w"][k]! }, x, y: d > 0 && x === "a" && rng.nextFloat() < d ? "t" : y };
        }),
      }),
    },
  ];
}

/** A scenario whose missingness depends on x and y themselves (not missing at random given S): the known failure of complete cases. */
export const missingByXY: Scenario = {
  id: "missing-by-xy",
  label: "missing values of S that depend on x and y themselves",
  make: (rng, n) => ({
    given: ["s"],
    columns: columnsOf(n, () => {
      const s = normal(rng);
      const x = s + normal(rng);
      const y = 0.5 * s + normal(rng);
      return { s: { s: rng.nextFloat() < expit(0.6 * (x + y) - 1) ? NaN : s }, x, y };
    }),
  }),
};

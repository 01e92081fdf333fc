/**
 * Data simulated from a causal graph: a structural model with the graph's arrows, for planning
 * (what can an audit of this graph detect at this n?) and for calibration.
 *
 * The model, node by node in topological order, row by row:
 * - *linear predictor* η_v = Σ_{p → v} β_pv · z_p + Σ_{v <-> w} γ_vw · u_vw, where z_p is parent p
 *   standardised over the simulated rows (mean 0, SD 1; a nominal parent by its level scores,
 *   evenly spaced and centred) and u_vw ~ N(0, 1) is the unmeasured common cause of a `<->` pair,
 *   shared by both ends;
 * - *continuous*: x_v = η_v + ε_v, ε_v ~ N(0, 1) (linear Gaussian structural equation);
 * - *binary*: x_v = 1 when η_v + ε_v > 0, else 0 (a latent normal thresholded at 0: a probit model);
 * - *ordinal* (4 levels): the latent η_v + ε_v cut at the quartiles of its normal distribution,
 *   N(0, var(η_v) + 1), into levels 1–4;
 * - *nominal* (3 levels A, B, C): a multinomial logit with P(level ℓ) ∝ exp(a_ℓ·η_v),
 *   a = (0, 1, −1) (A the baseline).
 * Arrow weights β are `effects` (one value for every arrow), or with `"random"` drawn per arrow
 * uniformly from ±[0.1, 0.5]; `<->` loadings γ likewise. Unmeasured nodes are generated like the
 * others and then left out. Each measured cell is then missing completely at random with
 * probability `missingRate`. Every node draws from its own random stream keyed by the seed and
 * its name (see `stats/rng.ts`), and the missing cells from a stream of their own, so a seed gives
 * the same data on every run and machine. Invented data.
 */
import { createRng, type Rng } from "../stats/rng.js";
import { normalQuantile } from "../stats/quantiles.js";
import type { Graph } from "../graph/Graph.js";
import type { VariableType } from "./Table.js";

/** Levels of a simulated ordinal variable. */
export const ORDINAL_LEVELS = 4;
/** Labels of a simulated nominal variable (A is the multinomial logit's baseline). */
export const NOMINAL_LABELS = ["A", "B", "C"] as const;
/** Most rows a simulation may have. */
export const MAX_SIMULATED_ROWS = 10_000_000;
/** Most cells (nodes × rows, unmeasured included) a simulation may hold. */
export const MAX_SIMULATED_CELLS = 400_000_000;

export interface SimulationOptions {
  /** Rows, 1 to MAX_SIMULATED_ROWS. */
  n: number;
  /** Seed of every random stream (a whole number from 0 to 2^32 − 1). */
  seed: number;
  /** One weight for every arrow and `<->` loading, or "random" (±U[0.1, 0.5] each). Default 0.3. */
  effects?: number | "random";
  /** Weights of single arrows, keyed `"from -> to"`, overriding `effects` for them (library use). */
  coefficients?: Readonly<Record<string, number>>;
  /** Variable types by node name; other nodes are continuous. */
  types?: Readonly<Record<string, VariableType>>;
  /** Probability that a measured cell is missing (completely at random), 0 to < 1. Default 0. */
  missingRate?: number;
}

/** The structural model a simulation used: what the JSON beside the data holds. */
export interface SimulationModel {
  seed: number;
  n: number;
  effects: number | "random";
  missing_rate: number;
  /** One sentence per part of the model, for readers of the JSON. */
  description: string[];
  nodes: Array<{ name: string; type: VariableType; measured: boolean; levels?: string[] }>;
  arrows: Array<{ from: string; to: string; coefficient: number }>;
  shared_causes: Array<{ a: string; b: string; loading: number }>;
}

export interface SimulatedData {
  model: SimulationModel;
  /** Measured nodes in graph order, with their cells (null = missing). */
  columns: Array<{ name: string; type: VariableType; values: Array<number | string | null> }>;
}

/**
 * Simulate `n` rows from the graph's structural model (see the module comment).
 * Cost: O(n · (V + E + B)) time, O(n · V) memory for V nodes, E arrows and B `<->` pairs.
 * @throws RangeError for n, seed, effects or missingRate out of range, a type for a name that is
 *   not a node, or more cells than MAX_SIMULATED_CELLS
 * @example simulateFromGraph(g, { n: 500, seed: 1 }).columns[0]!.values.length // 500
 */
export function simulateFromGraph(graph: Graph, options: SimulationOptions): SimulatedData {
  const { n, seed } = options;
  const effects = options.effects ?? 0.3;
  const missingRate = options.missingRate ?? 0;
  const types = options.types ?? {};
  if (!(Number.isInteger(n) && n >= 1 && n <= MAX_SIMULATED_ROWS)) throw new RangeError(`n must be a whole number from 1 to ${MAX_SIMULATED_ROWS}, got ${n}`);
  if (!(Number.isInteger(seed) && seed >= 0 && seed <= 2 ** 32 - 1)) throw new RangeError(`seed must be a whole number from 0 to 2^32 − 1, got ${seed}`);
  if (effects !== "random" && !(Number.isFinite(effects) && Math.abs(effects) <= 10)) throw new RangeError(`effects must be a number from −10 to 10 or "random", got ${effects}`);
  if (!(missingRate >= 0 && missingRate < 1)) throw new RangeError(`the missing rate must be at least 0 and below 1, got ${missingRate}`);
  for (const name of Object.keys(types)) if (!graph.hasNode(name)) throw new RangeError(`a type is given for "${name}", which is not a node of the graph`);
  if (n * graph.nodes.length > MAX_SIMULATED_CELLS) {
    throw new RangeError(`${graph.nodes.length} nodes × ${n} rows is more than ${MAX_SIMULATED_CELLS} cells; simulate fewer rows`);
  }
  const typeOf = (v: string): VariableType => (Object.hasOwn(types, v) ? types[v]! : "continuous");

  // weights: fixed, or drawn in the order of the arrows and pairs from a stream of their own
  const weights = createRng(seed, "simulate:weights");
  const weight = (): number => (effects === "random" ? (weights.nextFloat() < 0.5 ? -1 : 1) * (0.1 + 0.4 * weights.nextFloat()) : effects);
  const given = options.coefficients ?? {};
  for (const key of Object.keys(given)) {
    const [from, to] = key.split(" -> ");
    if (!graph.arrows.some(([a, b]) => a === from && b === to)) throw new RangeError(`a coefficient is given for "${key}", which is not an arrow of the graph`);
  }
  const arrows = graph.arrows.map(([from, to]) => {
    const w = weight(); // drawn for every arrow, so an override leaves the other arrows' draws alone
    const key = `${from} -> ${to}`;
    return { from, to, coefficient: Object.hasOwn(given, key) ? given[key]! : w };
  });
  const shared = graph.bidirected.map(([a, b]) => ({ a, b, loading: weight() }));
  const coefficient = new Map(arrows.map((e) => [`${e.from}\u0000${e.to}`, e.coefficient]));

  // the unmeasured common cause of each <-> pair
  const latent = shared.map((e) => normals(createRng(seed, `simulate:shared:${e.a}\u0000${e.b}`), n));
  const sharedOf = new Map<string, Array<{ u: Float64Array; loading: number }>>();
  shared.forEach((e, k) => {
    for (const v of [e.a, e.b]) {
      const list = sharedOf.get(v) ?? [];
      list.push({ u: latent[k]!, loading: e.loading });
      sharedOf.set(v, list);
    }
  });

  const value = new Map<string, Float64Array>(); // numeric values (nominal: level index 0..2)
  const standard = new Map<string, Float64Array>(); // z: what children see
  for (const v of graph.topologicalOrder) {
    const eta = new Float64Array(n);
    for (const p of graph.parents(v)) {
      const b = coefficient.get(`${p}\u0000${v}`)!;
      const z = standard.get(p)!;
      for (let i = 0; i < n; i++) eta[i] += b * z[i]!;
    }
    for (const { u, loading } of sharedOf.get(v) ?? []) for (let i = 0; i < n; i++) eta[i] += loading * u[i]!;
    const rng = createRng(seed, `simulate:node:${v}`);
    const type = typeOf(v);
    const x = new Float64Array(n);
    if (type === "nominal") {
      for (let i = 0; i < n; i++) {
        // weights exp(a·η) with a = 0, 1, −1
        const w1 = Math.exp(eta[i]!);
        const w2 = 1 / w1;
        const r = rng.nextFloat() * (1 + w1 + w2);
        x[i] = r < 1 ? 0 : r < 1 + w1 ? 1 : 2;
      }
      const scores = [-1, 0, 1]; // levels A, B, C as evenly spaced scores for the children
      const s = new Float64Array(n);
      for (let i = 0; i < n; i++) s[i] = scores[x[i]!]!;
      standard.set(v, standardise(s));
    } else {
      const e = normals(rng, n);
      for (let i = 0; i < n; i++) x[i] = eta[i]! + e[i]!;
      if (type === "binary") for (let i = 0; i < n; i++) x[i] = x[i]! > 0 ? 1 : 0;
      else if (type === "ordinal") {
        const sd = Math.sqrt(variance(eta) + 1);
        const cuts = Array.from({ length: ORDINAL_LEVELS - 1 }, (_, k) => sd * normalQuantile((k + 1) / ORDINAL_LEVELS));
        for (let i = 0; i < n; i++) {
          let level = 1;
          while (level < ORDINAL_LEVELS && x[i]! > cuts[level - 1]!) level++;
          x[i] = level;
        }
      }
      standard.set(v, standardise(x));
    }
    value.set(v, x);
  }

  const missing = createRng(seed, "simulate:missing");
  const columns: SimulatedData["columns"] = [];
  for (const v of graph.nodes) {
    if (!graph.isMeasured(v)) continue;
    const type = typeOf(v);
    const x = value.get(v)!;
    const values: Array<number | string | null> = new Array(n);
    for (let i = 0; i < n; i++) values[i] = type === "nominal" ? NOMINAL_LABELS[x[i]!]! : x[i]!;
    columns.push({ name: v, type, values });
  }
  if (missingRate > 0) {
    for (let i = 0; i < n; i++) for (const c of columns) if (missing.nextFloat() < missingRate) c.values[i] = null;
  }

  const model: SimulationModel = {
    seed,
    n,
    effects,
    missing_rate: missingRate,
    description: [
      "each node: linear predictor = sum over its parents of coefficient × the parent standardised over the simulated rows (mean 0, SD 1; a nominal parent by level scores A = −1, B = 0, C = 1) + sum over its <-> pairs of loading × that pair's unmeasured N(0, 1) cause",
      "continuous: predictor + N(0, 1) error",
      "binary: 1 when predictor + N(0, 1) error > 0, else 0",
      `ordinal: predictor + N(0, 1) error cut at the quartiles of N(0, var(predictor) + 1) into levels 1–${ORDINAL_LEVELS}`,
      "nominal: multinomial logit, P(level) proportional to exp(a × predictor) with a = 0, 1, −1 for A, B, C",
      "unmeasured nodes are generated and not written; each written cell is missing completely at random with probability missing_rate",
    ],
    nodes: graph.nodes.map((name) => {
      const type = typeOf(name);
      const levels = type === "binary" ? ["0", "1"] : type === "ordinal" ? Array.from({ length: ORDINAL_LEVELS }, (_, k) => String(k + 1)) : type === "nominal" ? [...NOMINAL_LABELS] : undefined;
      return { name, type, measured: graph.isMeasured(name), ...(levels ? { levels } : {}) };
    }),
    arrows,
    shared_causes: shared,
  };
  return { model, columns };
}

/**
 * The simulated data as CSV text: a header of the measured nodes, then one line per row;
 * continuous values with 6 decimals, categorical values as their levels, missing cells empty.
 * Names that need it are quoted (RFC 4180). Cost: O(n · columns).
 * @example simulationCsv(simulateFromGraph(g, { n: 2, seed: 1 })).split("\n")[0] // "a,b"
 */
export function simulationCsv(data: SimulatedData): string {
  const field = (s: string): string => (/[",\r\n]/u.test(s) || s !== s.trim() ? `"${s.replace(/"/gu, '""')}"` : s);
  const lines = [data.columns.map((c) => field(c.name)).join(",")];
  const n = data.model.n;
  for (let i = 0; i < n; i++) {
    let line = "";
    data.columns.forEach((c, k) => {
      const v = c.values[i];
      if (k > 0) line += ",";
      if (v === null || v === undefined) return;
      line += typeof v === "string" ? v : c.type === "continuous" ? fixed(v) : String(v);
    });
    lines.push(line);
  }
  return lines.join("\n") + "\n";
}

/** v with 6 decimals, never "-0.000000". */
function fixed(v: number): string {
  const s = v.toFixed(6);
  return s === "-0.000000" ? "0.000000" : s;
}

/** n standard normal draws by the Box–Muller transform (Box & Muller 1958, Ann. Math. Statist. 29:610–611). */
function normals(rng: Rng, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i += 2) {
    const u1 = 1 - rng.nextFloat(); // (0, 1]
    const u2 = rng.nextFloat();
    const r = Math.sqrt(-2 * Math.log(u1));
    out[i] = r * Math.cos(2 * Math.PI * u2);
    if (i + 1 < n) out[i + 1] = r * Math.sin(2 * Math.PI * u2);
  }
  return out;
}

/** Sample variance (denominator n − 1; 0 for fewer than two values), two-pass. */
function variance(x: Float64Array): number {
  const n = x.length;
  if (n < 2) return 0;
  let m = 0;
  for (let i = 0; i < n; i++) m += x[i]!;
  m /= n;
  let s = 0;
  for (let i = 0; i < n; i++) s += (x[i]! - m) ** 2;
  return s / (n - 1);
}

/** (x − mean)/SD over the rows; a constant column becomes all zeros. */
function standardise(x: Float64Array): Float64Array {
  const n = x.length;
  let m = 0;
  for (let i = 0; i < n; i++) m += x[i]!;
  m /= n;
  const sd = Math.sqrt(variance(x));
  const z = new Float64Array(n);
  if (!(sd > 0)) return z;
  for (let i = 0; i < n; i++) z[i] = (x[i]! - m) / sd;
  return z;
}

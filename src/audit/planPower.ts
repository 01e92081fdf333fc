/**
 * Power before the data: for a planned sample size, the effect each claim of a graph could
 * detect, and the n at which it would detect a target effect (`arrowaudit power`).
 *
 * Each claim's test is the one `--method auto` would pick from the declared types (README, "What
 * arrowaudit tests"), and its df the one that test would have with complete data:
 * - a continuous variable anywhere, neither x nor y nominal: a partial correlation (the default
 *   test's effect) on n − 2 − p df, p the adjustment columns of S entered linearly (continuous
 *   and binary members 1, an ordinal or nominal member its levels − 1; the default test may use
 *   more, spline columns chosen from the data, so the figure is a floor on what it needs);
 * - a continuous variable anywhere and a nominal x or y: the default test's chi-square analogue on
 *   (levels(x) − 1)(levels(y) − 1) df;
 * - x and y ordinal, S categorical: the linear-by-linear test, 1 df;
 * - otherwise all categorical: the stratified chi-square on (levels(x) − 1)(levels(y) − 1) df per
 *   stratum, one stratum per combination of the levels of S (every stratum assumed used).
 * Levels come from `levels` (counts per variable), else binary 2, ordinal 4 and nominal 3 (the
 * conventions of `arrowaudit simulate`). The level and power are those of `test`
 * (`audit/detectable.ts`: α/k under Holm and Benjamini–Hochberg).
 */
import type { Graph } from "../graph/Graph.js";
import { deriveClaims, type ClaimSets } from "../graph/deriveClaims.js";
import type { VariableType } from "../data/Table.js";
import { chiSquareSampleSize, correlationSampleSize, detectableChiSquareEffect, detectableCorrelation } from "../stats/power.js";
import { DEFAULT_POWER, detectableAlpha } from "./detectable.js";
import { chooseMethod } from "./methods/index.js";
import type { AuditSettings, UntestableClaim } from "./types.js";

/** Levels assumed for a categorical variable whose count is not given. */
export const ASSUMED_LEVELS: Readonly<Record<Exclude<VariableType, "continuous">, number>> = { binary: 2, ordinal: 4, nominal: 3 };

export interface PowerPlanOptions {
  n: number;
  alpha?: number;
  adjust?: AuditSettings["adjust"];
  power?: number;
  types?: Readonly<Record<string, VariableType>>;
  /** Level counts per variable (from --levels), overriding ASSUMED_LEVELS. */
  levels?: Readonly<Record<string, number>>;
  /** With it, each claim gets n_needed: the n at which this effect is detectable. */
  targetEffect?: number;
  sets?: ClaimSets;
}

export interface PlannedClaim {
  x: string;
  y: string;
  given: string[];
  /** The test `--method auto` would use. */
  test: "partial correlation" | "chi-square" | "linear-by-linear";
  n: number;
  df: number;
  /** Smallest detectable |effect|; null when the planned n leaves the test no df. */
  detectable: number | null;
  /** The n at which targetEffect is detectable; null without a target. */
  n_needed: number | null;
}

export interface PowerPlan {
  settings: { n: number; alpha: number; adjust: AuditSettings["adjust"]; power: number; alpha_per_claim: number; target_effect: number | null; sets: ClaimSets };
  claims: PlannedClaim[];
  untestable: UntestableClaim[];
}

/**
 * Plan the audit's power for `options.n` rows (see the module comment). Cost: the claim
 * derivation plus O(1) per correlation claim and about 60 noncentral tails per chi-square claim.
 * @throws RangeError for n < 1 or a target effect outside (0, 1)
 * @example planPower(g, { n: 500 }).claims[0]?.detectable // ≈ 0.125 for an unadjusted pair
 */
export function planPower(graph: Graph, options: PowerPlanOptions): PowerPlan {
  const { n } = options;
  if (!(Number.isInteger(n) && n >= 1)) throw new RangeError(`n must be a whole number of at least 1, got ${n}`);
  const target = options.targetEffect;
  if (target !== undefined && !(target > 0 && target < 1)) throw new RangeError(`the target effect must be in (0, 1), got ${target}`);
  const alpha = options.alpha ?? 0.05;
  const adjust = options.adjust ?? "holm";
  const power = options.power ?? DEFAULT_POWER;
  const sets = options.sets ?? "union-parents";
  const types = options.types ?? {};
  const typeOf = (v: string): VariableType => (Object.hasOwn(types, v) ? types[v]! : "continuous");
  const levelsOf = (v: string): number => {
    const t = typeOf(v);
    if (t === "continuous") return 1;
    return options.levels && Object.hasOwn(options.levels, v) ? options.levels[v]! : ASSUMED_LEVELS[t];
  };
  const derived = deriveClaims(graph, { sets });
  const a = detectableAlpha({ alpha, adjust }, derived.claims.length);
  const claims = derived.claims.map((c): PlannedClaim => {
    // the test --method auto picks from the declared types (audit/methods/index.ts chooseMethod)
    const method = chooseMethod("auto", { x: typeOf(c.x), y: typeOf(c.y), given: c.given.map(typeOf) }).name;
    const nominalSide = typeOf(c.x) === "nominal" || typeOf(c.y) === "nominal";
    const pairDf = (levelsOf(c.x) - 1 || 1) * (levelsOf(c.y) - 1 || 1);
    let test: PlannedClaim["test"];
    let df: number;
    let p = 0;
    if (method === "linear-by-linear") {
      test = "linear-by-linear";
      df = 1;
    } else if (method === "stratified-chisq") {
      test = "chi-square";
      df = pairDf * c.given.reduce((s, v) => s * levelsOf(v), 1);
    } else if (nominalSide) {
      // the default test's chi-square analogue for a nominal side
      test = "chi-square";
      df = pairDf;
    } else {
      test = "partial correlation";
      for (const s of c.given) p += typeOf(s) === "continuous" ? 1 : levelsOf(s) - 1;
      df = n - 2 - p;
    }
    const correlation = test === "partial correlation";
    const detectable = correlation ? (df >= 2 ? detectableCorrelation(df, a, power) : null) : detectableChiSquareEffect(df, n, a, power);
    const n_needed = target === undefined ? null : correlation ? correlationSampleSize(target, p, a, power) : chiSquareSampleSize(target, df, a, power);
    return { x: c.x, y: c.y, given: [...c.given], test, n, df, detectable, n_needed };
  });
  return { settings: { n, alpha, adjust, power, alpha_per_claim: a, target_effect: target ?? null, sets }, claims, untestable: derived.untestable };
}

/**
 * A nested (hierarchical) regression basis for flexible adjustment of a continuous variable.
 *
 * Terms. A *basis term* is a function of one variable s that enters a regression as a column.
 * The terms of a continuous variable are grouped in *levels*; the terms of levels 0..ℓ span a
 * space of functions that contains the space of levels 0..ℓ − 1, so a regression on the terms
 * up to a higher level can only fit better (nested models):
 * - level 0: s itself (the linear term);
 * - level 1: the natural cubic spline terms for five knots at the minimum, the quartiles and the
 *   maximum of s (three terms in the truncated-power form of the restricted cubic spline,
 *   Harrell 2015, Regression Modeling Strategies, 2nd ed., §2.4.5, eq. 2.25, each divided by the
 *   squared knot range), so levels 0–1 fit any natural cubic spline with those knots;
 * - level ℓ ≥ 2: *hinges* max(0, s − t) at the quantiles t of s of order (2j − 1)/2^(ℓ+1),
 *   j = 1..2^ℓ (level 2: the odd eighths; level 3: the odd sixteenths; …), which add local,
 *   piecewise-linear bends (a threshold or a wiggle) on an ever finer grid.
 * Knots are quantiles of the observed values by linear interpolation between order statistics
 * (Hyndman & Fan 1996, The American Statistician 50:361–365, definition 7, numpy's default). A
 * knot equal to an earlier one, or not strictly inside (min, max), is skipped, so a variable with
 * few distinct values gets fewer terms (no term is constant; a hinge between two neighbouring
 * values can still duplicate the linear term, and the regressions then drop it as aliased).
 */

import { timesPowerOfTwo } from "./powerOfTwoScale.js";

/** One basis term of a continuous variable. */
export type BasisTerm =
  | { kind: "linear" }
  /** Natural cubic spline term j (0-based, j < knots.length − 2) for the knots (ascending). */
  | { kind: "spline"; knots: readonly number[]; j: number }
  | { kind: "hinge"; knot: number };

/** The terms of one continuous variable, by level (`levels[0]` holds the linear term). */
export interface VariableBasis {
  levels: BasisTerm[][];
}

/** Highest hierarchy level made (hinges at the odd 64ths). */
export const MAX_BASIS_LEVEL = 5;

/**
 * Quantile of sorted values by linear interpolation between order statistics (Hyndman & Fan
 * 1996, definition 7). Cost: O(1).
 * @throws RangeError when `sorted` is empty or p is outside [0, 1]
 * @example quantileSortedType7(Float64Array.from([1, 2, 3, 4]), 0.5) // 2.5
 */
export function quantileSortedType7(sorted: ArrayLike<number>, p: number): number {
  const m = sorted.length;
  if (m === 0) throw new RangeError("quantile of no values; pass at least one observed value");
  if (!(p >= 0 && p <= 1)) throw new RangeError(`quantile order must be in [0, 1], got ${p}`);
  const h = (m - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(m - 1, lo + 1);
  const a = sorted[lo]!;
  const gap = sorted[hi]! - a;
  // a gap beyond the double range (e.g. from −1e308 to 1e308) is interpolated in halves
  if (Number.isFinite(gap)) return a + (h - lo) * gap;
  const half = (h - lo) * (sorted[hi]! / 2 - a / 2);
  return a + half + half;
}

/**
 * The nested basis of a continuous variable from its sorted observed values, up to `maxLevel`
 * (see the module comment). Cost: O(2^maxLevel).
 * Source: Harrell (2015), Regression Modeling Strategies, 2nd ed., §2.4 (restricted cubic
 * splines); Hyndman & Fan (1996) (quantiles).
 * @throws RangeError when maxLevel is not an integer in 0..MAX_BASIS_LEVEL
 * @example flexibleBasis(Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9]), 2).levels.map((l) => l.length) // [1, 3, 4]
 */
export function flexibleBasis(sorted: ArrayLike<number>, maxLevel: number): VariableBasis {
  return basisFromQuantiles(sorted.length, (p) => quantileSortedType7(sorted, p), maxLevel);
}

/** The nested basis from a quantile function of m observed values (see the module comment). */
function basisFromQuantiles(m: number, quantile: (p: number) => number, maxLevel: number): VariableBasis {
  if (!(Number.isInteger(maxLevel) && maxLevel >= 0 && maxLevel <= MAX_BASIS_LEVEL)) {
    throw new RangeError(`basis level must be an integer in 0..${MAX_BASIS_LEVEL}, got ${maxLevel}`);
  }
  const levels: BasisTerm[][] = [[{ kind: "linear" }]];
  if (maxLevel === 0 || m === 0) return { levels };
  const min = quantile(0);
  const max = quantile(1);
  const knots: number[] = [];
  for (const p of [0, 0.25, 0.5, 0.75, 1]) {
    const t = quantile(p);
    if (knots.length === 0 || t > knots[knots.length - 1]!) knots.push(t);
  }
  const spline: BasisTerm[] = [];
  for (let j = 0; j + 2 < knots.length; j++) spline.push({ kind: "spline", knots, j });
  levels.push(spline);
  const used = new Set<number>(knots);
  for (let level = 2; level <= maxLevel; level++) {
    const parts = 2 ** (level + 1);
    const hinges: BasisTerm[] = [];
    for (let j = 1; j < parts; j += 2) {
      const t = quantile(j / parts);
      if (!(t > min && t < max) || used.has(t)) continue;
      used.add(t);
      hinges.push({ kind: "hinge", knot: t });
    }
    levels.push(hinges);
  }
  return { levels };
}

/**
 * Value of a basis term at s (NaN stays NaN). The spline term j for knots t_1 < … < t_K is
 * [(s − t_j)³₊ − (s − t_{K−1})³₊ (t_K − t_j)/(t_K − t_{K−1}) + (s − t_K)³₊ (t_{K−1} − t_j)/(t_K − t_{K−1})] / (t_K − t_1)²
 * (Harrell 2015, eq. 2.25), linear beyond the outer knots. Cost: O(1).
 * @example basisValue({ kind: "hinge", knot: 2 }, 5) // 3
 */
export function basisValue(term: BasisTerm, s: number): number {
  switch (term.kind) {
    case "linear":
      return s;
    case "hinge": {
      const d = s - term.knot;
      return d > 0 ? d : s === s ? 0 : NaN;
    }
    case "spline":
      return s === s ? splineAt(s, splineConstants(term)) : NaN;
  }
}

/**
 * The constants of a spline term: f(s) = [(s − tj)³₊ − a (s − tk1)³₊ + b (s − tk)³₊] · scale
 * (Harrell 2015, eq. 2.25), for loops that evaluate it without a call per value. Cost: O(1).
 */
export function splineConstants(term: Extract<BasisTerm, { kind: "spline" }>): { tj: number; tk1: number; tk: number; a: number; b: number; scale: number } {
  const t = term.knots;
  const K = t.length;
  const tj = t[term.j]!;
  const tk1 = t[K - 2]!;
  const tk = t[K - 1]!;
  const range = tk - t[0]!;
  return { tj, tk1, tk, a: (tk - tj) / (tk - tk1), b: (tk1 - tj) / (tk - tk1), scale: 1 / (range * range) };
}

/** The spline term at s (not missing) from its constants (see {@link splineConstants}). Cost: O(1). */
export function splineAt(s: number, k: { tj: number; tk1: number; tk: number; a: number; b: number; scale: number }): number {
  const u = s - k.tj;
  const v = s - k.tk1;
  const w = s - k.tk;
  let f = u > 0 ? u * u * u : 0;
  if (v > 0) f -= v * v * v * k.a;
  if (w > 0) f += w * w * w * k.b;
  return f * k.scale;
}

/**
 * The same term for values multiplied by `factor` (a power of two, see `powerOfTwoScale.ts`):
 * its knots multiplied by `factor`. Every term is homogeneous of degree 1 (a hinge is, and a
 * spline term is cubic over the squared knot range), so the scaled term at factor·s equals
 * factor times the term at s, exactly where neither overflows nor underflows. Callers evaluate
 * terms on values scaled so that the largest |value| lies in [0.5, 1): cubes are then at most 8
 * and distinct knots at least 2^−53 apart, so every term is finite (the cube of a raw value of
 * 1e103 or more overflows, and so does the reciprocal squared knot range of values scaled far
 * below 1). Cost: O(knots).
 * @example scaleBasisTerm({ kind: "hinge", knot: 1e200 }, 2 ** -665) // { kind: "hinge", knot: 1e200·2^−665 }
 */
export function scaleBasisTerm(term: BasisTerm, factor: number): BasisTerm {
  if (factor === 1 || term.kind === "linear") return term;
  if (term.kind === "hinge") return { kind: "hinge", knot: term.knot * factor };
  return { kind: "spline", knots: term.knots.map((t) => t * factor), j: term.j };
}

/**
 * {@link scaleBasisTerm} by 2^e for any integer e, also where 2^e itself is not a double (knots
 * times 2^e by `timesPowerOfTwo`). Cost: O(knots).
 * @example scaleBasisTermByExponent({ kind: "hinge", knot: 3 }, -1) // { kind: "hinge", knot: 1.5 }
 */
export function scaleBasisTermByExponent(term: BasisTerm, e: number): BasisTerm {
  if (e === 0 || term.kind === "linear") return term;
  if (term.kind === "hinge") return { kind: "hinge", knot: timesPowerOfTwo(term.knot, e) };
  return { kind: "spline", knots: term.knots.map((t) => timesPowerOfTwo(t, e)), j: term.j };
}

/**
 * Write basis-term values for every entry of `values` into `out` (NaN where missing). Spline
 * terms are cubic in the value: evaluate them on values (and knots) scaled to at most 1 in
 * magnitude ({@link scaleBasisTerm}) to keep them finite.
 * Cost: O(n).
 * @example fillBasisValues({ kind: "hinge", knot: 0 }, Float64Array.from([-1, 2]), new Float64Array(2)) // [0, 2]
 */
export function fillBasisValues(term: BasisTerm, values: Float64Array, out: Float64Array): Float64Array {
  const n = values.length;
  if (term.kind === "linear") {
    out.set(values.subarray(0, n));
  } else if (term.kind === "hinge") {
    const k = term.knot;
    for (let i = 0; i < n; i++) {
      const d = values[i]! - k;
      out[i] = d > 0 ? d : d === d ? 0 : NaN;
    }
  } else {
    const k = splineConstants(term);
    for (let i = 0; i < n; i++) {
      const s = values[i]!;
      out[i] = s === s ? splineAt(s, k) : NaN;
    }
  }
  return out;
}

/** A short label of a term for details and messages: `s`, `s:spline2`, `s:hinge(3.2)`. */
export function basisTermLabel(variable: string, term: BasisTerm): string {
  switch (term.kind) {
    case "linear":
      return variable;
    case "spline":
      return `${variable}:spline${term.j + 1}`;
    case "hinge":
      return `${variable}:hinge(${Number(term.knot.toPrecision(6))})`;
  }
}

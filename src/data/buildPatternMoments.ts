/**
 * Pattern-grouped sufficient statistics for linear methods (see `Moments.ts` for the terms
 * *design column* and *pattern*).
 *
 * Each design column j gets a shift c_j, a value amid its observed values (the median of a sample
 * of them, an indicator's mean; see "Extreme values" below). For every pattern p
 * we keep the row count n_p, the shifted sums S_p[j] = Σ (x_j − c_j) and the shifted
 * cross-products C_p[j,k] = Σ (x_j − c_j)(x_k − c_k) over the design columns observed in p.
 * For variables V, the rows complete on V are exactly the rows of the patterns that contain V,
 * so with n = Σ n_p, S = Σ S_p, C = Σ C_p over those patterns:
 *   mean_j = c_j + S_j / n,   cov_jk = (C_jk − S_j S_k / n) / (n − 1)   (Bessel-corrected).
 * Shifting by a value close to the rows' center keeps the subtraction well conditioned (Chan, Golub &
 * LeVeque 1983, "Algorithms for computing the sample variance: analysis and recommendations",
 * The American Statistician 37(3):242–247, the shifted-data algorithm). Rows are summed in tiles
 * of TILE rows, and tiles into the pattern totals, a two-level (blocked) summation.
 *
 * Extreme values (`stats/powerOfTwoScale.ts` for the terms). A value of 1e155 or more has a square
 * beyond the double range, a spline term is cubic in the value, and distinct values near 1e-310
 * have squares that underflow to 0; and one such value must not spoil the moments of the rows
 * without it. So:
 * - the shift c_j is the median of the column over evenly spaced rows (at most MEDIAN_ROWS), which
 *   a few extreme values do not pull away from the bulk of the rows (the mean would);
 * - a column's values are first multiplied by a power of two 2^p_j: for a spline term the one that
 *   brings its largest |value| into [0.5, 1) (its knots scaled alike), for other columns 1, or a
 *   small power below 1 when |values| reach 2^1021, so that v − c never overflows;
 * - each pattern then has a gain 2^g_pj per column, the power of two that brings that pattern's
 *   largest |T(v) − c_j| into [0.5, 1) (a basis term T is nondecreasing in v, so the pattern's
 *   smallest and largest value give it); staged values are (T(v·2^p) − c)·2^g, at most 1, and the
 *   pattern's sums and cross-products are those of the rows times powers of two;
 * - a request adds its patterns in the coarsest pattern's units per column (a power of two per
 *   pattern), so rows without the extreme value keep every digit when the request leaves it out,
 *   and are rounded relative to it when it is in (as exact arithmetic would weigh them).
 * All of this multiplies by powers of two, which changes no digit where nothing leaves the normal
 * range. `momentsFor*` undo the scale (mean·2^−E_j, cov·2^−(E_j+E_k)); where the result is not a
 * normal double (a variance beyond 1.8e308 or below 2.2e-308) the returned covariance carries its
 * scaled twin (`stats/scaledCovariance.ts`), from which scale-free statistics are computed exactly.
 *
 * Memory: O(P · d²) for P patterns and d design columns (only the columns observed in a pattern
 * are stored for it), plus two Int32 arrays of n while building. When that would exceed
 * `maxPatternBytes`, the statistics are not grouped and each `momentsFor` call reads the rows
 * again (O(n · d²) per call).
 *
 * Building runs in three steps, so that the row pass can be split over threads: a *plan*
 * ({@link planPatternMoments}: design columns, shifts, the pattern of every row), a *part* per
 * row range ({@link accumulatePatternRange}: per-pattern shifted sums and cross-products of the
 * range, all parts with the same shifts), and the merge ({@link patternMomentsFromParts}: the
 * parts added pattern by pattern). {@link buildPatternMoments} is the one-part case.
 */
import { UnknownNodeError } from "../errors.js";
import { rankColumns } from "./rankColumns.js";
import { createSimdCrossProduct } from "./simdCrossProduct.js";
import { basisTermLabel, basisValue, fillBasisValues, scaleBasisTerm, splineAt, splineConstants, type BasisTerm, type VariableBasis } from "../stats/flexibleBasis.js";
import { columnMagnitudes, columnScaleExponent, scaleExponent, timesPowerOfTwo } from "../stats/powerOfTwoScale.js";
import { attachScaledCovariance } from "../stats/scaledCovariance.js";
import type { DesignColumn, IndexedDesignColumn, Moments, PatternMoments } from "./Moments.js";
import type { Table } from "./Table.js";

const TILE = 1024;
/** Rows per staging tile of a pattern (halved while the tiles exceed STAGING_BYTES). */
const TILE_ROWS = 256;
/** Rows read per block in the one-pass accumulation; at most the smallest tile. */
const BLOCK_ROWS = 32;
/** Rows per staging tile of a pattern holding less than 1/FREQUENT_SHARE of the rows; at least BLOCK_ROWS. */
const RARE_TILE_ROWS = 32;
const FREQUENT_SHARE = 16;
/** Staging tiles up to this size are all full length (they stay in cache anyway). */
const CACHED_STAGING_BYTES = 4 * 1024 * 1024;
const STAGING_BYTES = 48 * 1024 * 1024;
const WORD_BITS = 26;
const DEFAULT_MAX_PATTERN_BYTES = 512 * 1024 * 1024;
/**
 * The exponent of a pattern's column whose values all equal its shift: its sums are 0 in any
 * units, so it sets no units for a request (which takes the smallest exponent of its patterns).
 */
const NO_EXPONENT = 2 ** 31 - 1;
/**
 * Patterns whose own gain is within this many binary orders of a column's coarsest pattern gain
 * share that gain (see patternGains): ordinary data then give every pattern the same units, and
 * only a pattern set apart by an extreme value elsewhere (2^64 ≈ 1.8·10¹⁹ times larger) keeps
 * finer units of its own.
 */
const SNAP_BITS = 64;
/**
 * A column whose finite non-zero |values| span at most 2^UNIFORM_RANGE_BITS (about 10³⁶) gives
 * every pattern the gain of its whole range. Scaled by it, a pattern's values are at least
 * 2^−120 of its own largest ones' scale, a cubic term's at least 2^−360, so their products stay
 * above 2^−720, far inside the normal range: per-pattern ranges (a pass over the rows per column)
 * would change no digit. Only a column with values far apart (a stray 1e200 among values near 1)
 * gets gains per pattern, so that patterns without the stray value keep units of their own.
 */
const UNIFORM_RANGE_BITS = 120;
/** Rows (evenly spaced) behind the shift (median) of a scored column. */
const MEDIAN_ROWS = 4096;

export interface PatternMomentsOptions {
  /** Variables (column names) the statistics cover; later requests may use any subset. */
  variables: readonly string[];
  /** Rows to use (1 = use); rows with 0 are left out entirely (e.g. listwise deletion upstream). */
  rowFilter?: Uint8Array;
  /** Use mid-ranks (Spearman) instead of the values of continuous, binary and ordinal columns. */
  useRanks?: boolean;
  /** Memory budget for the per-pattern statistics, in bytes (default 512 MiB). */
  maxPatternBytes?: number;
  /**
   * Memory budget for the one-pass staging tiles and the per-pattern cross-products they are
   * multiplied into, in bytes (default 48 MiB more than those cross-products); above it the rows
   * are first sorted by pattern and read in that order (same moments, slower reads).
   */
  maxStagingBytes?: number;
  /** Use the WebAssembly SIMD kernel where available (default true); false: scalar code, identical results. */
  simd?: boolean;
  /** Further design columns per variable (see `Moments.ts`); the default columns are always built. */
  expansions?: MomentExpansions;
}

/** Which variables get which further design columns. */
export interface MomentExpansions {
  /** Binary or ordinal variables that also get 0/1 indicators of their levels but the first. */
  indicators?: readonly string[];
  /** Scored variables that also get a column of their mid-ranks. */
  ranks?: readonly string[];
  /** Continuous variables that also get the basis terms of levels 1 and above of this basis. */
  basis?: ReadonlyMap<string, VariableBasis>;
}

/** A design column's values as the row pass reads them (plain data; may live in shared memory). */
export interface PassColumn {
  /** Scores (NaN missing), or undefined for a dummy. */
  scores?: Float64Array;
  /** The power of two 2^p the scores are multiplied by before anything else (1 for a dummy). */
  factor: number;
  /** A basis term applied to the scaled scores, its knots scaled alike (see `stats/flexibleBasis.ts`), if any. */
  term?: BasisTerm;
  /** Level codes for a dummy (-1 missing). */
  codes?: Int32Array;
  /** The dummy's level (1 where codes equal it, 0 elsewhere); -1 for a scored column. */
  level: number;
}

interface DesignSource extends PassColumn {
  column: DesignColumn;
  variable: number;
  /** Exponent p of the column's first power of two (factor = 2^p). */
  exponent: number;
}

/**
 * What the row pass needs, as structured-cloneable data: it can be posted to a worker thread
 * (typed arrays on a SharedArrayBuffer are then shared, not copied).
 */
export interface PatternPass {
  /** The design columns' values, in design order. */
  columns: PassColumn[];
  /** Shift c_j per design column (the median of its scaled values, or an indicator's mean), of the values times `factor`. */
  shift: Float64Array;
  /** Per pattern p and design column j, the gain 2^g at `p·D + j` (see the module comment). */
  gains: Float64Array;
  /** Pattern index of every row, -1 for a row left out by the row filter. */
  patternOfRow: Int32Array;
  /** Per pattern, its observed design columns (ascending design indices). */
  observed: number[][];
  /** Budget for the staging tiles, in bytes. */
  maxStagingBytes: number;
  /** Use the SIMD kernel where available. */
  simd: boolean;
}

/** The per-pattern statistics of a row range: shifted sums and lower-triangle cross-products. */
export interface PatternPart {
  /** Per pattern, Σ (x_j − c_j) over the range's rows of the pattern, for its observed design columns. */
  sums: Float64Array[];
  /** Per pattern, Σ (x_j − c_j)(x_k − c_k), d_p × d_p row-major, lower triangle filled. */
  cross: Float64Array[];
}

/**
 * The first step of building pattern moments (see {@link planPatternMoments}): everything but
 * the cross-products. `pass` is undefined when the per-pattern statistics would exceed the
 * pattern budget; the moments are then answered from the rows and need no parts.
 */
export interface PatternPlan {
  readonly rows: number;
  readonly pass: PatternPass | undefined;
  /** @internal */
  readonly finishWith: (parts: readonly PatternPart[]) => PatternMoments;
}

interface Pattern {
  count: number;
  /** Per design column, the exponent E = p + g of this pattern's sums (their units are 2^E). */
  exponent: Int32Array;
  mask: Uint32Array;
  /** Global design index → position among this pattern's observed design columns, or -1. */
  pos: Int32Array;
  sums: Float64Array;
  /** Row-major d_p × d_p, symmetric. */
  cross: Float64Array;
}

/**
 * Build pattern-grouped moments of the design columns of `variables` (nominal variables become
 * 0/1 dummies for every level but the first). `momentsFor(vars)` then gives the means and the
 * Bessel-corrected covariance over the rows complete on `vars` in O(P · d²), without rereading
 * rows. Cost to build: O(n · v) for the patterns plus O(n · d²) for the cross-products
 * (O(n log n) per column more with `useRanks`). Source: Chan, Golub & LeVeque (1983) for the
 * shifted sums; pairwise deletion by missing-data pattern as in Little & Rubin (2019),
 * Statistical Analysis with Missing Data, 3rd ed., §1.3 (patterns).
 * @throws UnknownNodeError when a variable is not a column of the table
 * @example buildPatternMoments(table, { variables: ["x", "y", "z"] }).momentsFor(["x", "y"]).cov
 */
export function buildPatternMoments(table: Table, options: PatternMomentsOptions): PatternMoments {
  const plan = planPatternMoments(table, options);
  return patternMomentsFromParts(plan, plan.pass ? [accumulatePatternRange(plan.pass, 0, plan.rows)] : []);
}

/**
 * Pattern-moments plan: the design columns of `variables`, their shifts (medians over evenly
 * spaced observed, filtered rows), the missing-data pattern of every row, the pattern counts and
 * the patterns' gains (powers of two, see the module comment), as
 * the first of the three steps of {@link buildPatternMoments}. Cost: O(n · v) time, O(n) memory
 * (O(n log n) per column more with `useRanks`). Source: as {@link buildPatternMoments}.
 * @throws UnknownNodeError when a variable is not a column of the table
 * @throws RangeError when the row filter's length is not the table's row count
 * @example const plan = planPatternMoments(table, { variables: ["x", "y"] }); plan.pass?.observed
 */
export function planPatternMoments(table: Table, options: PatternMomentsOptions): PatternPlan {
  const variables = [...new Set(options.variables)];
  const n = table.rows;
  const filter = options.rowFilter;
  if (filter && filter.length !== n) {
    throw new RangeError(`rowFilter has ${filter.length} entries but the table has ${n} rows; pass one entry per row`);
  }
  const missingNames = variables.filter((v) => !table.column(v));
  if (missingNames.length > 0) {
    throw new UnknownNodeError(
      `variable${missingNames.length > 1 ? "s" : ""} ${missingNames.map((v) => `"${v}"`).join(", ")} not in the data (columns: ${table.columns
        .slice(0, 12)
        .map((c) => c.name)
        .join(", ")}${table.columns.length > 12 ? ", ..." : ""}); check the spelling or add the column`,
      missingNames,
      { file: table.file },
    );
  }
  const ranks = options.useRanks
    ? rankColumns(
        table,
        variables.filter((v) => table.column(v)!.type !== "nominal"),
        filter,
      )
    : undefined;

  // Design columns and per-variable observation tests. The first design column of a scored
  // variable is its score (its missingness defines the variable's); `defaultOf` lists the
  // columns `momentsFor` returns (the score, or a nominal variable's dummies).
  const exp = options.expansions ?? {};
  const wantIndicators = new Set(exp.indicators ?? []);
  const wantRanks = new Set(exp.ranks ?? []);
  const extraRanks = wantRanks.size > 0 ? rankColumns(table, variables.filter((v) => wantRanks.has(v) && table.column(v)!.type !== "nominal"), filter) : undefined;
  const design: DesignSource[] = [];
  // the first power of two: that of the largest |value| for a spline term (cubic), else 1, or
  // below 1 only as far as keeps v − c finite for values reaching 2^1021
  const scaleOf = (values: Float64Array, cubic = false): { factor: number; exponent: number } => {
    const e = columnScaleExponent(values);
    const exponent = cubic ? e : Math.min(0, e + 1021);
    return { factor: 2 ** exponent, exponent };
  };
  const designOf: number[][] = [];
  const defaultOf: number[][] = [];
  variables.forEach((name, vi) => {
    const col = table.column(name)!;
    const idx: number[] = [];
    const defaults: number[] = [];
    const indicatorsOf = (): void => {
      const codes = col.codes!;
      const levels = col.levels!;
      for (let l = 1; l < levels.length; l++) {
        idx.push(design.length);
        design.push({ column: { name: `${name}=${levels[l]}`, source: name, kind: "indicator", code: l }, variable: vi, codes, level: l, factor: 1, exponent: 0 });
      }
    };
    if (col.type === "nominal") {
      indicatorsOf();
      defaults.push(...idx);
    } else {
      const scores = ranks?.get(name) ?? col.values;
      idx.push(design.length);
      defaults.push(design.length);
      design.push({ column: { name, source: name, kind: "score" }, variable: vi, scores, level: -1, ...scaleOf(scores) });
      if (wantIndicators.has(name) && col.codes && col.levels) indicatorsOf();
      const r = extraRanks?.get(name);
      if (r) {
        idx.push(design.length);
        design.push({ column: { name: `${name}:rank`, source: name, kind: "rank" }, variable: vi, scores: r, level: -1, ...scaleOf(r) });
      }
      const basis = exp.basis?.get(name);
      if (basis && col.type === "continuous") {
        basis.levels.forEach((terms, basisLevel) => {
          if (basisLevel === 0) return; // the linear term is the score itself
          for (const term of terms) {
            idx.push(design.length);
            const scale = scaleOf(col.values, term.kind === "spline");
            design.push({ column: { name: basisTermLabel(name, term), source: name, kind: "basis", term, basisLevel }, variable: vi, scores: col.values, term: scaleBasisTerm(term, scale.factor), level: -1, ...scale });
          }
        });
      }
    }
    designOf.push(idx);
    defaultOf.push(defaults);
  });
  const D = design.length;
  const V = variables.length;
  const words = Math.max(1, Math.ceil(V / WORD_BITS));

  // One pass per design source: shift (the median of a scored column's scaled values over evenly
  // spaced rows, an indicator's mean over the observed, filtered rows) and, for the variables
  // that are ever missing, a bit per row in the row's missing-pattern key.
  const shift = new Float64Array(D);
  const keyLo = new Int32Array(n);
  const keyHi = new Int32Array(n);
  let activeVars = 0;
  const bitOfVar = new Int32Array(V).fill(-1);
  // A scored variable's key bits are set in its shift pass (its bit is the next free one, kept
  // only when it is missing somewhere); `keyed` marks the variables whose bits are written.
  const keyed = new Uint8Array(V);
  const firstOfVariable = new Uint8Array(D);
  for (const idx of designOf) if (idx.length > 0) firstOfVariable[idx[0]!] = 1;
  const medians = new Map<Float64Array, number | undefined>();
  for (let j = 0; j < D; j++) {
    const src = design[j]!;
    if (src.scores) {
      // the median value of the column's array, through the column's factor and term (both nondecreasing)
      if (!medians.has(src.scores)) medians.set(src.scores, sampleMedian(src.scores, n, filter));
      const mid = medians.get(src.scores);
      shift[j] = mid === undefined ? 0 : src.term ? basisValue(src.term, mid * src.factor) : mid * src.factor;
    }
    if (src.scores && firstOfVariable[j] === 0) continue; // a rank or basis column: its variable's bits are set
    let sum = 0;
    let cnt = 0;
    let missing = 0;
    const b = activeVars;
    const word = b < 31 ? keyLo : keyHi;
    const bit = b < 53 ? 1 << b % 31 : 0;
    if (src.scores) {
      const s = src.scores;
      for (let i = 0; i < n; i++) {
        if (s[i] !== s[i]) {
          missing++;
          word[i] |= bit;
        }
      }
      if (missing > 0 && bit !== 0) keyed[src.variable] = 1;
    } else {
      const codes = src.codes!;
      for (let i = 0; i < n; i++) {
        const c = codes[i]!;
        if (c >= 0) {
          if (!filter || filter[i] !== 0) {
            if (c === src.level) sum++;
            cnt++;
          }
        } else missing++;
      }
      shift[j] = cnt > 0 ? sum / cnt : 0;
    }
    if (missing > 0 && bitOfVar[src.variable] === -1) bitOfVar[src.variable] = activeVars++;
  }
  // A nominal variable with one level has no design column but can still be missing.
  for (let vi = 0; vi < V; vi++) {
    if (bitOfVar[vi] !== -1 || designOf[vi]!.length > 0) continue;
    const codes = table.column(variables[vi]!)!.codes!;
    for (let i = 0; i < n; i++) {
      if (codes[i]! < 0) {
        bitOfVar[vi] = activeVars++;
        break;
      }
    }
  }
  // Key of a row: bit b set when the b-th ever-missing variable is missing (a 31-bit and a
  // 22-bit word packed exactly in one double up to 53 such variables, a string beyond).
  const isMissing = (vi: number, i: number): boolean => {
    const col = table.column(variables[vi]!)!;
    if (col.type === "nominal") return col.codes![i]! < 0;
    const s = design[designOf[vi]![0]!]!.scores!;
    return s[i] !== s[i];
  };
  let wide: string[] | undefined;
  if (activeVars > 53) wide = new Array<string>(n).fill("");
  for (let vi = 0; vi < V; vi++) {
    const b = bitOfVar[vi]!;
    if (b < 0 || (keyed[vi] === 1 && !wide)) continue;
    const col = table.column(variables[vi]!)!;
    const word = b < 31 ? keyLo : keyHi;
    const bit = 1 << b % 31;
    if (wide) {
      for (let i = 0; i < n; i++) if (isMissing(vi, i)) wide[i] += b + ",";
    } else if (col.type === "nominal") {
      const codes = col.codes!;
      for (let i = 0; i < n; i++) if (codes[i]! < 0) word[i] |= bit;
    } else {
      const s = design[designOf[vi]![0]!]!.scores!;
      for (let i = 0; i < n; i++) if (s[i] !== s[i]) word[i] |= bit;
    }
  }

  // Pattern of every row: an open-addressing hash of the two key words (a Map of strings for
  // wide keys), looked up only where the key changes from the row before.
  const patternOfRow = new Int32Array(n);
  const counts: number[] = [];
  const firstRow: number[] = [];
  const wideIndex = new Map<string, number>();
  const keys = new PatternKeyTable();
  let lastLo = 0;
  let lastHi = 0;
  let lastWide: string | undefined;
  let lastIdx = -1;
  for (let i = 0; i < n; i++) {
    if (filter && filter[i] === 0) {
      patternOfRow[i] = -1;
      continue;
    }
    let p: number;
    if (wide) {
      const key = wide[i]!;
      if (key === lastWide) p = lastIdx;
      else {
        const found = wideIndex.get(key);
        if (found === undefined) {
          p = counts.length;
          wideIndex.set(key, p);
          counts.push(0);
          firstRow.push(i);
        } else p = found;
        lastWide = key;
        lastIdx = p;
      }
    } else {
      const lo = keyLo[i]!;
      const hi = keyHi[i]!;
      if (lastIdx >= 0 && lo === lastLo && hi === lastHi) p = lastIdx;
      else {
        p = keys.findOrAdd(lo, hi, counts.length);
        if (p === counts.length) {
          counts.push(0);
          firstRow.push(i);
        }
        lastLo = lo;
        lastHi = hi;
        lastIdx = p;
      }
    }
    patternOfRow[i] = p;
    counts[p]!++;
  }
  wide = undefined;
  const P = counts.length;
  const masks = firstRow.map((i) =>
    maskOf(
      variables.map((_, vi) => vi).filter((vi) => !isMissing(vi, i)),
      words,
    ),
  );
  const observedDesign = (mask: Uint32Array): number[] =>
    design.map((_, j) => j).filter((j) => isObserved(mask, design[j]!.variable));
  const allMask = maskOf(
    variables.map((_, vi) => vi),
    words,
  );
  let completeRows = 0;
  for (let p = 0; p < P; p++) if (containsMask(masks[p]!, allMask)) completeRows += counts[p]!;
  const patternList = () =>
    masks.map((m, p) => ({ observed: variables.filter((_, vi) => isObserved(m, vi)), rows: counts[p]! }));

  let bytes = 0;
  for (let p = 0; p < P; p++) {
    const d = observedDesign(masks[p]!).length;
    bytes += 8 * (d * d + d) + 16 * D + 64;
  }

  const kernel = new CrossProductKernel(design, shift);
  /** Per design column: its first power of two's exponent p_j. */
  const pre = Int32Array.from(design, (src) => src.exponent);
  const variableIndex = (name: string): number => {
    const vi = variables.indexOf(name);
    if (vi < 0) {
      throw new UnknownNodeError(
        `variable "${name}" was not among the variables the moments were built over (${variables.join(", ")}); include it when building them`,
        [name],
        { file: table.file },
      );
    }
    return vi;
  };
  const designIndexOf = (vars: readonly string[]): { designIdx: number[]; req: Uint32Array } => {
    const vIdx = vars.map(variableIndex);
    return { designIdx: vIdx.flatMap((vi) => defaultOf[vi]!), req: maskOf(vIdx, words) };
  };
  const columnsRequest = (indices: readonly number[]): { designIdx: number[]; req: Uint32Array } => {
    for (const j of indices) {
      if (!(Number.isInteger(j) && j >= 0 && j < D)) throw new RangeError(`design column ${j} is not among the ${D} columns; take indices from columnsOf`);
    }
    return { designIdx: [...indices], req: maskOf([...new Set(indices.map((j) => design[j]!.variable))], words) };
  };
  const columnsOf = (name: string): IndexedDesignColumn[] => designOf[variableIndex(name)]!.map((j) => ({ index: j, column: { ...design[j]!.column } }));
  // Moments of the columns in units 2^E (S and C are sums of (T(v·2^p) − c)·2^(E − p)), then the
  // scale undone (exact where the result is a normal double); the scaled ones, with the shifts in
  // the same units, stay attached to the covariance as its twin.
  const finish = (designIdx: number[], count: number, S: Float64Array, C: Float64Array, exponent: Int32Array): Moments => {
    const d = designIdx.length;
    const scaledMeans = new Float64Array(d);
    const scaledShift = new Float64Array(d);
    const scaledCov = new Float64Array(d * d);
    const means = new Float64Array(d);
    const cov = new Float64Array(d * d);
    for (let a = 0; a < d; a++) {
      const j = designIdx[a]!;
      scaledShift[a] = timesPowerOfTwo(shift[j]!, exponent[a]! - pre[j]!);
      scaledMeans[a] = count > 0 ? scaledShift[a]! + S[a]! / count : NaN;
      means[a] = timesPowerOfTwo(scaledMeans[a]!, -exponent[a]!);
    }
    for (let a = 0; a < d; a++) {
      for (let b = 0; b <= a; b++) {
        const v = count > 1 ? (C[a * d + b]! - (S[a]! * S[b]!) / count) / (count - 1) : NaN;
        scaledCov[a * d + b] = v;
        scaledCov[b * d + a] = v;
        const u = timesPowerOfTwo(timesPowerOfTwo(v, -exponent[a]!), -exponent[b]!);
        cov[a * d + b] = u;
        cov[b * d + a] = u;
      }
    }
    attachScaledCovariance(cov, { means: scaledMeans, cov: scaledCov, exponent, shifts: scaledShift });
    return { n: count, design: designIdx.map((j) => ({ ...design[j]!.column })), means, cov };
  };

  if (bytes > (options.maxPatternBytes ?? DEFAULT_MAX_PATTERN_BYTES)) {
    // Too many patterns to keep: answer each request from the rows.
    const fromRows = ({ designIdx, req }: { designIdx: number[]; req: Uint32Array }): Moments => {
      const rows: number[] = [];
      for (let i = 0; i < n; i++) {
        const p = patternOfRow[i]!;
        if (p >= 0 && containsMask(masks[p]!, req)) rows.push(i);
      }
      const d = designIdx.length;
      const S = new Float64Array(d);
      const C = new Float64Array(d * d);
      // the gains of these rows (as for a pattern of its own)
      const gains = new Float64Array(D).fill(1);
      const exponent = new Int32Array(d);
      designIdx.forEach((j, a) => {
        const src = design[j]!;
        let g = 0;
        if (src.scores) {
          let lo = Infinity;
          let hi = -Infinity;
          for (const i of rows) {
            const v = src.scores[i]!;
            if (v < lo) lo = v;
            if (v > hi) hi = v;
          }
          const top = deviationOf(src, shift[j]!)(lo, hi);
          g = top > 0 ? scaleExponent(top) : 0;
        }
        gains[j] = 2 ** g;
        exponent[a] = pre[j]! + g;
      });
      kernel.accumulate(Int32Array.from(rows), 0, rows.length, designIdx, S, C, gains);
      return finish(designIdx, rows.length, S, C, exponent);
    };
    const rowMoments: PatternMoments = {
      patterns: P,
      completeRows,
      patternList,
      momentsFor: (vars: readonly string[]): Moments => fromRows(designIndexOf(vars)),
      columnsOf,
      momentsForColumns: (indices: readonly number[]): Moments => fromRows(columnsRequest(indices)),
    };
    return { rows: n, pass: undefined, finishWith: () => rowMoments };
  }

  const observed = masks.map((m) => observedDesign(m));
  // Per pattern and column, the gain 2^g and the exponent E = p + g of the pattern's sums.
  const { gains, exponents } = patternGains(design, shift, patternOfRow, P, observed);
  const pass: PatternPass = {
    columns: design.map((src) => ({ ...(src.scores ? { scores: src.scores } : { codes: src.codes! }), factor: src.factor, ...(src.term ? { term: src.term } : {}), level: src.level })),
    shift,
    patternOfRow,
    observed,
    // the default budget is STAGING_BYTES of tiles on top of the per-pattern cross-products
    // (which every path stores), so wide designs keep the one-pass staged path
    maxStagingBytes: options.maxStagingBytes ?? STAGING_BYTES + 8 * P * (Math.ceil(Math.max(1, D) / 4) * 4) ** 2,
    simd: options.simd ?? true,
    gains,
  };
  const finishWith = (parts: readonly PatternPart[]): PatternMoments => {
    if (parts.length === 0) throw new RangeError("patternMomentsFromParts needs at least one part; pass accumulatePatternRange(plan.pass, 0, plan.rows)");
    const patterns: Pattern[] = [];
    for (let p = 0; p < P; p++) {
      const obs = observed[p]!;
      const pos = new Int32Array(D).fill(-1);
      obs.forEach((j, k) => (pos[j] = k));
      const sums = parts[0]!.sums[p]!.slice();
      const cross = parts[0]!.cross[p]!.slice();
      for (let q = 1; q < parts.length; q++) {
        const ps = parts[q]!.sums[p]!;
        const pc = parts[q]!.cross[p]!;
        if (ps.length !== sums.length || pc.length !== cross.length) {
          throw new RangeError(`part ${q} has ${ps.length} sums for pattern ${p}, which observes ${sums.length} design columns; build every part from the same plan`);
        }
        for (let a = 0; a < sums.length; a++) sums[a] += ps[a]!;
        for (let a = 0; a < cross.length; a++) cross[a] += pc[a]!;
      }
      // Mirror the lower triangle, so that requests in any column order read it directly.
      const dp = sums.length;
      for (let a = 0; a < dp; a++) for (let b = 0; b < a; b++) cross[b * dp + a] = cross[a * dp + b]!;
      patterns.push({ count: counts[p]!, mask: masks[p]!, pos, sums, cross, exponent: exponents.subarray(p * D, (p + 1) * D) });
    }
    return momentsFromPatterns(patterns);
  };

  const momentsFromPatterns = (patterns: Pattern[]): PatternMoments => {
    const fromPatterns = ({ designIdx, req }: { designIdx: number[]; req: Uint32Array }): Moments => {
      const d = designIdx.length;
      const S = new Float64Array(d);
      const C = new Float64Array(d * d);
      let count = 0;
      const local = new Int32Array(d);
      // the request's units per column: the coarsest of its patterns' (the smallest exponent)
      const exponent = new Int32Array(d).fill(NO_EXPONENT);
      const included: Pattern[] = [];
      for (const pat of patterns) {
        if (!containsMask(pat.mask, req)) continue;
        included.push(pat);
        for (let a = 0; a < d; a++) exponent[a] = Math.min(exponent[a]!, pat.exponent[designIdx[a]!]!);
      }
      const down = new Float64Array(d);
      for (const pat of included) {
        count += pat.count;
        const sums = pat.sums;
        const cross = pat.cross;
        const pos = pat.pos;
        const dp = sums.length;
        let same = true;
        for (let a = 0; a < d; a++) {
          local[a] = pos[designIdx[a]!]!;
          // 2^(E − E_p) ≤ 1: this pattern's sums in the request's units (0 below the double range)
          down[a] = 2 ** (exponent[a]! - pat.exponent[designIdx[a]!]!);
          if (down[a] !== 1) same = false;
        }
        for (let a = 0; a < d; a++) {
          const pa = local[a]!;
          const row = pa * dp;
          const out = a * d;
          if (same) {
            S[a] += sums[pa]!;
            for (let b = 0; b <= a; b++) C[out + b] += cross[row + local[b]!]!;
          } else {
            const fa = down[a]!;
            S[a] += sums[pa]! * fa;
            for (let b = 0; b <= a; b++) C[out + b] += cross[row + local[b]!]! * fa * down[b]!;
          }
        }
      }
      // columns equal to their shift in every pattern (or no pattern at all): their first power of two
      for (let a = 0; a < d; a++) if (exponent[a] === NO_EXPONENT || included.length === 0) exponent[a] = pre[designIdx[a]!]!;
      return finish(designIdx, count, S, C, exponent);
    };
    return {
      patterns: P,
      completeRows,
      patternList,
      momentsFor: (vars: readonly string[]): Moments => fromPatterns(designIndexOf(vars)),
      columnsOf,
      momentsForColumns: (indices: readonly number[]): Moments => fromPatterns(columnsRequest(indices)),
    };
  };
  return { rows: n, pass, finishWith };
}

/**
 * Per-pattern shifted sums and cross-products of rows [from, to) (the second step of
 * {@link buildPatternMoments}); parts over disjoint ranges that cover the rows merge into the
 * moments of all rows with {@link patternMomentsFromParts}. Reads only `pass`, so it can run in a
 * worker thread on shared columns. Cost: O((to − from) · D²) time for D design columns,
 * O(P · (T · D + D²)) memory for P patterns and staging tiles of T rows.
 * Source: Chan, Golub & LeVeque (1983), shifted sums and their pairwise combination.
 * @throws RangeError when the range is outside the rows
 * @example const part = accumulatePatternRange(plan.pass!, 0, plan.rows)
 */
export function accumulatePatternRange(pass: PatternPass, from: number, to: number): PatternPart {
  const n = pass.patternOfRow.length;
  if (!(Number.isInteger(from) && Number.isInteger(to) && 0 <= from && from <= to && to <= n)) {
    throw new RangeError(`row range [${from}, ${to}) is not within the ${n} rows; pass 0 ≤ from ≤ to ≤ ${n}`);
  }
  const P = pass.observed.length;
  const counts = new Array<number>(P).fill(0);
  const rowPattern = pass.patternOfRow.subarray(from, to);
  for (let i = 0; i < rowPattern.length; i++) {
    const p = rowPattern[i]!;
    if (p >= 0) counts[p]!++;
  }
  const Z =
    accumulateByPattern(pass.columns, pass.shift, pass.gains, pass.patternOfRow, from, to, counts, pass.observed, pass.maxStagingBytes, pass.simd) ??
    accumulateSorted(new CrossProductKernel(pass.columns, pass.shift), pass.gains, pass.patternOfRow, from, to, counts, pass.observed);
  return { sums: Z.map((z) => z.sums), cross: Z.map((z) => z.cross) };
}

/**
 * Pattern moments from a plan and the parts of its row pass (the last step of
 * {@link buildPatternMoments}): the parts' sums and cross-products are added pattern by pattern.
 * The parts must come from `plan.pass` over disjoint row ranges covering all rows; none are
 * needed when `plan.pass` is undefined. Cost: O(parts · P · d²).
 * Source: Chan, Golub & LeVeque (1983) (sums of shifted statistics with a common shift).
 * @throws RangeError when no part is given for a plan with a pass, or a part does not fit the plan
 * @example patternMomentsFromParts(plan, [accumulatePatternRange(plan.pass!, 0, plan.rows)])
 */
export function patternMomentsFromParts(plan: PatternPlan, parts: readonly PatternPart[]): PatternMoments {
  return plan.finishWith(parts);
}

interface PatternSums {
  /** Shifted sums over the pattern's observed design columns. */
  sums: Float64Array;
  /** Lower triangle of the shifted cross-products, d_p × d_p row-major. */
  cross: Float64Array;
}

/**
 * Group the rows by pattern (counting sort) and run the kernel on each pattern's rows, read
 * through the row order. Used when the staging tiles of {@link accumulateByPattern} would not
 * fit its budget (very many patterns). Cost: O(n · d²), with scattered reads.
 */
function accumulateSorted(
  kernel: CrossProductKernel,
  gains: Float64Array,
  patternOfRow: Int32Array,
  from: number,
  to: number,
  counts: readonly number[],
  observed: readonly number[][],
): PatternSums[] {
  const P = counts.length;
  const start = new Int32Array(P + 1);
  for (let p = 0; p < P; p++) start[p + 1] = start[p]! + counts[p]!;
  const fill = start.slice(0, P);
  const order = new Int32Array(start[P]!);
  for (let i = from; i < to; i++) {
    const p = patternOfRow[i]!;
    if (p >= 0) order[fill[p]!++] = i;
  }
  const out: PatternSums[] = [];
  for (let p = 0; p < P; p++) {
    const d = observed[p]!.length;
    const sums = new Float64Array(d);
    const cross = new Float64Array(d * d);
    const D = gains.length / P;
    kernel.accumulate(order, start[p]!, start[p + 1]!, observed[p]!, sums, cross, gains.subarray(p * D, (p + 1) * D));
    out.push({ sums, cross });
  }
  return out;
}

/**
 * One pass over the rows in file order. Each row's shifted design values (0 for a missing
 * variable) are appended to a row-major staging tile of its pattern; a full tile is multiplied
 * (SIMD kernel, or 4 × 2 scalar register blocks) into the pattern's running
 * cross-product over all design columns (the zero entries add nothing), from which the observed
 * columns are taken at the end. Reads are sequential; the working set is the staging tiles.
 * Returns undefined when the tiles would need more than `budget` bytes.
 * Cost: O(n · D²) time, O(P · (T · D + D²)) memory for P patterns, D design columns, tiles of T rows.
 */
function accumulateByPattern(
  design: readonly PassColumn[],
  shift: Float64Array,
  gains: Float64Array,
  patternOfRow: Int32Array,
  from: number,
  to: number,
  counts: readonly number[],
  observed: readonly number[][],
  budget: number,
  useSimd: boolean,
): PatternSums[] | undefined {
  const P = counts.length;
  const D = design.length;
  const dpad = Math.ceil(Math.max(1, D) / 4) * 4;
  // When the full tiles would not stay in cache, a pattern with less than 1/FREQUENT_SHARE of
  // the rows gets short tiles, so that the tiles written between two of its rows stay small.
  let rows = 0;
  for (const c of counts) rows += c;
  const fullBytes = counts.reduce((s, c) => s + 8 * Math.min(TILE_ROWS, c) * dpad, 0);
  const short = fullBytes > CACHED_STAGING_BYTES;
  const capFor = (t: number, c: number): number => Math.min(t, c, short && c * FREQUENT_SHARE < rows ? RARE_TILE_ROWS : t);
  let tileRows = TILE_ROWS;
  const need = (t: number): number => counts.reduce((s, c) => s + 8 * (capFor(t, c) * dpad + dpad * dpad + dpad), 0);
  while (tileRows > BLOCK_ROWS && need(tileRows) > budget) tileRows /= 2;
  if (need(tileRows) > budget) return undefined;
  const capOf = new Int32Array(P);
  const offOf = new Int32Array(P);
  let total = 0;
  for (let p = 0; p < P; p++) {
    capOf[p] = capFor(tileRows, counts[p]!);
    offOf[p] = total;
    total += capOf[p]! * dpad;
  }
  if (total > 2 ** 31 - 1) return undefined;
  // The staging tiles and the cross-products live in the SIMD kernel's memory when there is one.
  const zSize = dpad * dpad;
  const simd = useSimd ? createSimdCrossProduct(total + P * zSize) : undefined;
  const mem = simd ? simd.memory : new Float64Array(total + P * zSize);
  const stage = mem;
  const zBase = total;
  const fill = new Int32Array(P);
  const blockCount = new Int32Array(P);
  const S = Array.from({ length: P }, () => new Float64Array(dpad));
  const rowBase = new Int32Array(BLOCK_ROWS);
  /** gains[rowGain[r] + k] is row r's gain for design column k (its pattern's row of gains). */
  const rowGain = new Int32Array(BLOCK_ROWS);

  const flush = (p: number): void => {
    const m = fill[p]!;
    if (m === 0) return;
    const off = offOf[p]!;
    const sums = S[p]!;
    for (let k = 0; k < D; k++) {
      let s = 0;
      for (let t = 0, o = off + k; t < m; t++, o += dpad) s += stage[o]!;
      sums[k] += s;
    }
    if (simd) simd.cross(off, m, dpad, zBase + p * zSize);
    else crossTile(mem, off, m, dpad, zBase + p * zSize);
    fill[p] = 0;
  };

  // 1 where every pattern's gain of the column is 1
  const unitGain = new Uint8Array(D).fill(1);
  for (let p = 0; p < P; p++) for (let k = 0; k < D; k++) if (gains[p * D + k] !== 1) unitGain[k] = 0;
  const scores: (Float64Array | undefined)[] = design.map((src) => src.scores);
  const factors = Float64Array.from(design, (src) => src.factor);
  const terms: (BasisTerm | undefined)[] = design.map((src) => src.term);
  for (let i0 = from; i0 < to; i0 += BLOCK_ROWS) {
    const len = Math.min(BLOCK_ROWS, to - i0);
    for (let r = 0; r < len; r++) {
      const p = patternOfRow[i0 + r]!;
      if (p >= 0) blockCount[p]++;
    }
    for (let r = 0; r < len; r++) {
      const p = patternOfRow[i0 + r]!;
      if (p < 0) {
        rowBase[r] = -1;
        continue;
      }
      const c = blockCount[p]!;
      if (c > 0) {
        if (fill[p]! + c > capOf[p]!) flush(p);
        blockCount[p] = 0;
      }
      rowBase[r] = offOf[p]! + fill[p]!++ * dpad;
      rowGain[r] = p * D;
    }
    for (let k = 0; k < D; k++) {
      const c = shift[k]!;
      const s = scores[k];
      const f = factors[k]!;
      const term = terms[k];
      // (a basis column's term is never the linear one: that is the score column itself)
      if (term !== undefined) stageBasis(stage, rowBase, rowGain, gains, s!, f, i0, len, k, c, term);
      else if (s !== undefined && unitGain[k] === 1) {
        // every pattern's gain of this column is 1 (the common case): the same values without the multiply
        for (let r = 0; r < len; r++) {
          const o = rowBase[r]!;
          if (o < 0) continue;
          const v = s[i0 + r]!;
          stage[o + k] = v === v ? v * f - c : 0;
        }
      } else if (s !== undefined) {
        for (let r = 0; r < len; r++) {
          const o = rowBase[r]!;
          if (o < 0) continue;
          const v = s[i0 + r]!;
          stage[o + k] = v === v ? (v * f - c) * gains[rowGain[r]! + k]! : 0;
        }
      } else {
        const codes = design[k]!.codes!;
        const level = design[k]!.level;
        for (let r = 0; r < len; r++) {
          const o = rowBase[r]!;
          if (o < 0) continue;
          const code = codes[i0 + r]!;
          stage[o + k] = code < 0 ? 0 : (code === level ? 1 : 0) - c;
        }
      }
    }
  }
  const out: PatternSums[] = [];
  for (let p = 0; p < P; p++) {
    flush(p);
    const obs = observed[p]!;
    const d = obs.length;
    const sums = new Float64Array(d);
    const cross = new Float64Array(d * d);
    const z = zBase + p * zSize;
    for (let a = 0; a < d; a++) {
      sums[a] = S[p]![obs[a]!]!;
      for (let b = 0; b <= a; b++) cross[a * d + b] = mem[z + obs[a]! * dpad + obs[b]!]!;
    }
    out.push({ sums, cross });
  }
  return out;
}

/**
 * Stage basis-term values of one design column (a hinge or a spline term, its knots scaled by
 * f) for a block of rows: stage[rowBase[r] + k] = (term(f·s[i0 + r]) − c)·gain, 0 where s is
 * missing, the gain that of the row's pattern; rows with rowBase −1 are skipped. Cost: O(len).
 */
function stageBasis(
  stage: Float64Array, rowBase: Int32Array, rowGain: Int32Array, gains: Float64Array, s: Float64Array, f: number, i0: number, len: number, k: number, c: number, term: BasisTerm,
): void {
  if (term.kind === "hinge") {
    const t = term.knot;
    for (let r = 0; r < len; r++) {
      const o = rowBase[r]!;
      if (o < 0) continue;
      const v = s[i0 + r]! * f;
      stage[o + k] = v === v ? ((v > t ? v - t : 0) - c) * gains[rowGain[r]! + k]! : 0;
    }
  } else if (term.kind === "spline") {
    const sc = splineConstants(term);
    for (let r = 0; r < len; r++) {
      const o = rowBase[r]!;
      if (o < 0) continue;
      const v = s[i0 + r]! * f;
      stage[o + k] = v === v ? (splineAt(v, sc) - c) * gains[rowGain[r]! + k]! : 0;
    }
  }
}

/**
 * Add the lower-triangle products of a row-major tile into Z: X holds, from `base`, m rows of
 * dpad entries (dpad a multiple of 4), Z is dpad × dpad row-major from `z` in the same array.
 * Runs in 4 × 2 register blocks (8 accumulators); per entry the same operations in the same
 * order as the SIMD kernel of `simdCrossProduct.ts`, which replaces it where available.
 * Cost: O(m · dpad²).
 */
function crossTile(X: Float64Array, base: number, m: number, dpad: number, z: number): void {
  for (let i = 0; i < dpad; i += 4) {
    for (let j = 0; j < i + 4; j += 2) {
      let s00 = 0, s01 = 0, s10 = 0, s11 = 0, s20 = 0, s21 = 0, s30 = 0, s31 = 0;
      for (let t = 0, a = base + i, b = base + j; t < m; t++, a += dpad, b += dpad) {
        const b0 = X[b]!;
        const b1 = X[b + 1]!;
        const a0 = X[a]!;
        s00 += a0 * b0;
        s01 += a0 * b1;
        const a1 = X[a + 1]!;
        s10 += a1 * b0;
        s11 += a1 * b1;
        const a2 = X[a + 2]!;
        s20 += a2 * b0;
        s21 += a2 * b1;
        const a3 = X[a + 3]!;
        s30 += a3 * b0;
        s31 += a3 * b1;
      }
      const r = z + i * dpad + j;
      X[r] += s00;
      X[r + 1] += s01;
      X[r + dpad] += s10;
      X[r + dpad + 1] += s11;
      X[r + 2 * dpad] += s20;
      X[r + 2 * dpad + 1] += s21;
      X[r + 3 * dpad] += s30;
      X[r + 3 * dpad + 1] += s31;
    }
  }
}

/**
 * Shifted sums and lower-triangle cross-products over row tiles. The tile holds the design
 * columns padded with zero columns to a multiple of 4, so the products run in full 4 × 2
 * register blocks (8 accumulators); the padding's products are zero and are dropped.
 */
class CrossProductKernel {
  private readonly tile: Float64Array;
  private readonly scratch: Float64Array;
  constructor(
    private readonly design: readonly PassColumn[],
    private readonly shift: Float64Array,
  ) {
    const dpad = Math.ceil(Math.max(1, design.length) / 4) * 4;
    this.tile = new Float64Array(TILE * dpad);
    this.scratch = new Float64Array(dpad * dpad);
  }

  /**
   * Add rows[from, to) over design columns `cols` into sums (d) and cross (d × d, lower triangle),
   * each column's values times its gain (`gains[design index]`).
   */
  accumulate(rows: Int32Array, from: number, to: number, cols: readonly number[], sums: Float64Array, cross: Float64Array, gains: ArrayLike<number>): void {
    const d = cols.length;
    const dpad = Math.ceil(d / 4) * 4;
    const X = this.tile;
    const Z = this.scratch;
    Z.fill(0, 0, dpad * dpad);
    X.fill(0, d * TILE, dpad * TILE);
    for (let t0 = from; t0 < to; t0 += TILE) {
      const m = Math.min(TILE, to - t0);
      for (let k = 0; k < d; k++) {
        const src = this.design[cols[k]!]!;
        const c = this.shift[cols[k]!]!;
        const g = gains[cols[k]!]!;
        const off = k * TILE;
        if (src.term) {
          const s = src.scores!;
          const f = src.factor;
          for (let t = 0; t < m; t++) X[off + t] = s[rows[t0 + t]!]! * f;
          const view = X.subarray(off, off + m);
          fillBasisValues(src.term, view, view);
          for (let t = 0; t < m; t++) X[off + t] = (X[off + t]! - c) * g;
        } else if (src.scores) {
          const s = src.scores;
          const f = src.factor;
          for (let t = 0; t < m; t++) X[off + t] = (s[rows[t0 + t]!]! * f - c) * g;
        } else {
          const codes = src.codes!;
          const level = src.level;
          for (let t = 0; t < m; t++) X[off + t] = ((codes[rows[t0 + t]!] === level ? 1 : 0) - c) * g;
        }
        let s = 0;
        for (let t = 0; t < m; t++) s += X[off + t]!;
        sums[k] += s;
      }
      for (let i = 0; i < dpad; i += 4) {
        const o0 = i * TILE;
        const o1 = o0 + TILE;
        const o2 = o1 + TILE;
        const o3 = o2 + TILE;
        for (let j = 0; j < i + 4; j += 2) {
          const p0 = j * TILE;
          const p1 = p0 + TILE;
          let s00 = 0, s01 = 0, s10 = 0, s11 = 0, s20 = 0, s21 = 0, s30 = 0, s31 = 0;
          for (let t = 0; t < m; t++) {
            const b0 = X[p0 + t]!;
            const b1 = X[p1 + t]!;
            const a0 = X[o0 + t]!;
            s00 += a0 * b0;
            s01 += a0 * b1;
            const a1 = X[o1 + t]!;
            s10 += a1 * b0;
            s11 += a1 * b1;
            const a2 = X[o2 + t]!;
            s20 += a2 * b0;
            s21 += a2 * b1;
            const a3 = X[o3 + t]!;
            s30 += a3 * b0;
            s31 += a3 * b1;
          }
          const r = i * dpad + j;
          Z[r] += s00;
          Z[r + 1] += s01;
          Z[r + dpad] += s10;
          Z[r + dpad + 1] += s11;
          Z[r + 2 * dpad] += s20;
          Z[r + 2 * dpad + 1] += s21;
          Z[r + 3 * dpad] += s30;
          Z[r + 3 * dpad + 1] += s31;
        }
      }
    }
    for (let i = 0; i < d; i++) for (let j = 0; j <= i; j++) cross[i * d + j] += Z[i * dpad + j]!;
  }
}

/**
 * The gains of the rows' patterns: per pattern p and design column j it observes, the exponent g
 * for which max |T(v·2^p_j) − c_j| over the pattern's rows times 2^g lies in [0.5, 1) (0 for an
 * indicator), and E = p_j + g, the exponent of the units of the pattern's sums (NO_EXPONENT for a
 * column equal to c_j throughout p). A pattern whose g is within SNAP_BITS of the column's
 * smallest (coarsest) g takes that smallest one, so that ordinary data give all patterns one unit. Basis terms are nondecreasing in v (a hinge plainly; a natural
 * spline term's derivative is a concave quadratic between its last two knots and nonnegative at
 * both), so the pattern's smallest and largest value of the variable give the largest |T − c|.
 * Cost: O(n · S + P · D) for S score arrays (values or mid-ranks).
 */
function patternGains(design: readonly DesignSource[], shift: Float64Array, patternOfRow: Int32Array, P: number, observed: readonly number[][]): { gains: Float64Array; exponents: Int32Array } {
  const D = design.length;
  // the smallest and largest value of each score array per pattern; an array whose non-zero
  // magnitudes span at most 2^UNIFORM_RANGE_BITS takes its whole range for every pattern (no pass)
  const ranges = new Map<Float64Array, { lo: Float64Array; hi: Float64Array }>();
  for (const src of design) {
    if (!src.scores || ranges.has(src.scores)) continue;
    const s = src.scores;
    const whole = columnMagnitudes(s);
    if (!(whole.maxAbs > 0) || whole.maxAbs <= whole.minAbs * 2 ** UNIFORM_RANGE_BITS) {
      ranges.set(s, { lo: new Float64Array(P).fill(whole.lo), hi: new Float64Array(P).fill(whole.hi) });
      continue;
    }
    const lo = new Float64Array(P).fill(Infinity);
    const hi = new Float64Array(P).fill(-Infinity);
    for (let i = 0; i < patternOfRow.length; i++) {
      const p = patternOfRow[i]!;
      if (p < 0) continue;
      const v = s[i]!;
      if (v < lo[p]!) lo[p] = v;
      if (v > hi[p]!) hi[p] = v;
    }
    ranges.set(s, { lo, hi });
  }
  const gains = new Float64Array(P * D).fill(1);
  const exponents = new Int32Array(P * D);
  const deviation = design.map((src, j) => (src.scores ? deviationOf(src, shift[j]!) : undefined));
  const range = design.map((src) => (src.scores ? ranges.get(src.scores)! : undefined));
  // each pattern's own gain g (undefined: the column equals its shift throughout the pattern)
  const own = new Float64Array(P * D).fill(NaN);
  const coarsest = new Float64Array(D).fill(Infinity);
  for (let p = 0; p < P; p++) {
    for (const j of observed[p]!) {
      const dev = deviation[j];
      const r = range[j];
      const top = dev && r ? dev(r.lo[p]!, r.hi[p]!) : 1;
      if (!(top > 0)) continue; // a column equal to its shift throughout the pattern sets no units (its sums are 0)
      const g = dev ? scaleExponent(top) : 0;
      own[p * D + j] = g;
      if (g < coarsest[j]!) coarsest[j] = g;
    }
  }
  for (let p = 0; p < P; p++) {
    for (const j of observed[p]!) {
      const g0 = own[p * D + j]!;
      if (g0 !== g0) {
        exponents[p * D + j] = NO_EXPONENT;
        continue;
      }
      // within SNAP_BITS of the coarsest pattern, a pattern takes the column's common gain: its
      // scaled values stay within [2^−SNAP_BITS, 1] of its own largest, exactly as precise (powers of
      // two scale without rounding), and requests then add patterns without rescaling them
      const g = g0 - coarsest[j]! <= SNAP_BITS ? coarsest[j]! : g0;
      gains[p * D + j] = 2 ** g;
      exponents[p * D + j] = design[j]!.exponent + g;
    }
  }
  return { gains, exponents };
}

/**
 * max |T(v·2^p) − c| over values lo..hi of a scored column (T its basis term or the identity,
 * nondecreasing), as a function of (lo, hi); 0 when lo > hi (no values). Cost: O(1) per call.
 */
function deviationOf(src: PassColumn, c: number): (lo: number, hi: number) => number {
  const f = src.factor;
  const term = src.term;
  const at =
    term === undefined || term.kind === "linear"
      ? (v: number) => v * f
      : term.kind === "hinge"
        ? (v: number) => Math.max(0, v * f - term.knot)
        : ((k) => (v: number) => splineAt(v * f, k))(splineConstants(term));
  return (lo, hi) => (lo <= hi ? Math.max(Math.abs(at(lo) - c), Math.abs(at(hi) - c)) : 0);
}



/**
 * The median of an array's observed values over evenly spaced rows within the filter (at most
 * MEDIAN_ROWS of them; the first such row when none of them is observed; undefined when no row is).
 * Any value amid the bulk of the rows serves as a shift, and a median is not pulled away from it
 * by a few extreme values. Cost: O(n / step + m log m) for m ≤ MEDIAN_ROWS values.
 */
function sampleMedian(s: Float64Array, n: number, filter: Uint8Array | undefined): number | undefined {
  const step = Math.max(1, Math.floor(n / MEDIAN_ROWS));
  const picked = new Float64Array(Math.ceil(n / step));
  let m = 0;
  for (let i = 0; i < n; i += step) {
    const v = s[i]!;
    if (v === v && (!filter || filter[i] !== 0)) picked[m++] = v;
  }
  if (m === 0) {
    for (let i = 0; i < n; i++) if (s[i] === s[i] && (!filter || filter[i] !== 0)) return s[i]!;
    return undefined;
  }
  const vals = picked.subarray(0, m).sort();
  return vals[m >> 1]!;
}

function isObserved(mask: Uint32Array, variable: number): boolean {
  return (Math.floor(mask[Math.floor(variable / WORD_BITS)]! / 2 ** (variable % WORD_BITS)) & 1) === 1;
}

function maskOf(vIdx: readonly number[], words: number): Uint32Array {
  const m = new Uint32Array(words);
  for (const vi of vIdx) m[Math.floor(vi / WORD_BITS)]! |= 1 << vi % WORD_BITS;
  return m;
}

function containsMask(mask: Uint32Array, req: Uint32Array): boolean {
  for (let w = 0; w < req.length; w++) if ((mask[w]! & req[w]!) !== req[w]) return false;
  return true;
}

/** Open-addressing hash table from a pattern key (two 32-bit words) to a pattern index. */
class PatternKeyTable {
  private slots = new Int32Array(64).fill(-1);
  private lo: number[] = [];
  private hi: number[] = [];

  /** The index of key (lo, hi), or `next` after adding it when it is new. Cost: O(1) expected. */
  findOrAdd(lo: number, hi: number, next: number): number {
    let mask = this.slots.length - 1;
    let h = (Math.imul(lo, 0x9e3779b1) ^ Math.imul(hi + 0x7f4a7c15, 0x85ebca77)) >>> 0;
    h = (h ^ (h >>> 15)) & mask;
    for (;;) {
      const p = this.slots[h]!;
      if (p < 0) break;
      if (this.lo[p] === lo && this.hi[p] === hi) return p;
      h = (h + 1) & mask;
    }
    this.lo.push(lo);
    this.hi.push(hi);
    this.slots[h] = next;
    if (2 * this.lo.length > this.slots.length) {
      const old = this.lo.length;
      this.slots = new Int32Array(this.slots.length * 2).fill(-1);
      mask = this.slots.length - 1;
      for (let p = 0; p < old; p++) {
        let g = (Math.imul(this.lo[p]!, 0x9e3779b1) ^ Math.imul(this.hi[p]! + 0x7f4a7c15, 0x85ebca77)) >>> 0;
        g = (g ^ (g >>> 15)) & mask;
        while (this.slots[g]! >= 0) g = (g + 1) & mask;
        this.slots[g] = p;
      }
    }
    return next;
  }
}

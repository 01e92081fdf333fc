/**
 * Pattern-grouped sufficient statistics for linear methods (see `Moments.ts` for the terms
 * *design column* and *pattern*).
 *
 * Each design column j gets a shift c_j, the mean of its observed values. For every pattern p
 * we keep the row count n_p, the shifted sums S_p[j] = Σ (x_j − c_j) and the shifted
 * cross-products C_p[j,k] = Σ (x_j − c_j)(x_k − c_k) over the design columns observed in p.
 * For variables V, the rows complete on V are exactly the rows of the patterns that contain V,
 * so with n = Σ n_p, S = Σ S_p, C = Σ C_p over those patterns:
 *   mean_j = c_j + S_j / n,   cov_jk = (C_jk − S_j S_k / n) / (n − 1)   (Bessel-corrected).
 * Shifting by a value close to the mean keeps the subtraction well conditioned (Chan, Golub &
 * LeVeque 1983, "Algorithms for computing the sample variance: analysis and recommendations",
 * The American Statistician 37(3):242–247, the shifted-data algorithm). Rows are summed in tiles
 * of TILE rows, and tiles into the pattern totals, a two-level (blocked) summation.
 *
 * Memory: O(P · d²) for P patterns and d design columns (only the columns observed in a pattern
 * are stored for it), plus two Int32 arrays of n while building. When that would exceed
 * `maxPatternBytes`, the statistics are not grouped and each `momentsFor` call reads the rows
 * again (O(n · d²) per call).
 */
import { UnknownNodeError } from "../errors.js";
import { rankColumns } from "./rankColumns.js";
import type { DesignColumn, Moments, PatternMoments } from "./Moments.js";
import type { Table } from "./Table.js";

const TILE = 1024;
const WORD_BITS = 26;
const DEFAULT_MAX_PATTERN_BYTES = 512 * 1024 * 1024;

export interface PatternMomentsOptions {
  /** Variables (column names) the statistics cover; later requests may use any subset. */
  variables: readonly string[];
  /** Rows to use (1 = use); rows with 0 are left out entirely (e.g. listwise deletion upstream). */
  rowFilter?: Uint8Array;
  /** Use mid-ranks (Spearman) instead of the values of continuous, binary and ordinal columns. */
  useRanks?: boolean;
  /** Memory budget for the per-pattern statistics, in bytes (default 512 MiB). */
  maxPatternBytes?: number;
}

interface DesignSource {
  column: DesignColumn;
  variable: number;
  /** Scores (NaN missing), or undefined for a dummy. */
  scores?: Float64Array;
  /** Level codes for a dummy. */
  codes?: Int32Array;
  level: number;
}

interface Pattern {
  count: number;
  mask: Uint32Array;
  /** Global design index → position among this pattern's observed design columns, or -1. */
  pos: Int32Array;
  sums: Float64Array;
  /** Row-major d_p × d_p; the lower triangle is filled. */
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

  // Design columns and per-variable observation tests.
  const design: DesignSource[] = [];
  const designOf: number[][] = [];
  variables.forEach((name, vi) => {
    const col = table.column(name)!;
    const idx: number[] = [];
    if (col.type === "nominal") {
      const codes = col.codes!;
      const levels = col.levels!;
      for (let l = 1; l < levels.length; l++) {
        idx.push(design.length);
        design.push({ column: { name: `${name}=${levels[l]}`, source: name }, variable: vi, codes, level: l });
      }
    } else {
      const scores = ranks?.get(name) ?? col.values;
      idx.push(design.length);
      design.push({ column: { name, source: name }, variable: vi, scores, level: -1 });
    }
    designOf.push(idx);
  });
  const D = design.length;
  const V = variables.length;
  const words = Math.max(1, Math.ceil(V / WORD_BITS));

  // Observation masks, column by column.
  const maskWords: Float64Array[] = [];
  for (let w = 0; w < words; w++) maskWords.push(new Float64Array(n));
  for (let vi = 0; vi < V; vi++) {
    const col = table.column(variables[vi]!)!;
    const mw = maskWords[Math.floor(vi / WORD_BITS)]!;
    const bit = 2 ** (vi % WORD_BITS);
    if (col.type === "nominal") {
      const codes = col.codes!;
      for (let i = 0; i < n; i++) if (codes[i]! >= 0) mw[i] += bit;
    } else {
      const s = design[designOf[vi]![0]!]!.scores!;
      for (let i = 0; i < n; i++) if (s[i] === s[i]) mw[i] += bit;
    }
  }

  // Shifts: the mean of each design column over its observed (filtered) rows.
  const shift = new Float64Array(D);
  for (let j = 0; j < D; j++) {
    const src = design[j]!;
    let sum = 0;
    let cnt = 0;
    if (src.scores) {
      const s = src.scores;
      for (let i = 0; i < n; i++) {
        const v = s[i]!;
        if (v === v && (!filter || filter[i] !== 0)) {
          sum += v;
          cnt++;
        }
      }
    } else {
      const codes = src.codes!;
      for (let i = 0; i < n; i++) {
        const c = codes[i]!;
        if (c >= 0 && (!filter || filter[i] !== 0)) {
          if (c === src.level) sum++;
          cnt++;
        }
      }
    }
    shift[j] = cnt > 0 ? sum / cnt : 0;
  }

  // Pattern of every row.
  const keyOf = (i: number): number | string => {
    if (words === 1) return maskWords[0]![i]!;
    if (words === 2) return maskWords[0]![i]! + maskWords[1]![i]! * 2 ** WORD_BITS;
    let s = "";
    for (let w = 0; w < words; w++) s += maskWords[w]![i]! + ",";
    return s;
  };
  const patternIndex = new Map<number | string, number>();
  const patternOfRow = new Int32Array(n);
  const counts: number[] = [];
  const firstRow: number[] = [];
  let lastKey: number | string | undefined;
  let lastIdx = -1;
  for (let i = 0; i < n; i++) {
    if (filter && filter[i] === 0) {
      patternOfRow[i] = -1;
      continue;
    }
    const key = keyOf(i);
    let p: number;
    if (key === lastKey) p = lastIdx;
    else {
      const found = patternIndex.get(key);
      if (found === undefined) {
        p = counts.length;
        patternIndex.set(key, p);
        counts.push(0);
        firstRow.push(i);
      } else p = found;
      lastKey = key;
      lastIdx = p;
    }
    patternOfRow[i] = p;
    counts[p]!++;
  }
  const P = counts.length;
  const masks = firstRow.map((i) => {
    const m = new Uint32Array(words);
    for (let w = 0; w < words; w++) m[w] = maskWords[w]![i]!;
    return m;
  });
  maskWords.length = 0;
  const observedDesign = (mask: Uint32Array): number[] =>
    design.map((_, j) => j).filter((j) => isObserved(mask, design[j]!.variable));
  const allMask = maskOf(
    variables.map((_, vi) => vi),
    words,
  );
  let completeRows = 0;
  for (let p = 0; p < P; p++) if (containsMask(masks[p]!, allMask)) completeRows += counts[p]!;

  let bytes = 0;
  for (let p = 0; p < P; p++) {
    const d = observedDesign(masks[p]!).length;
    bytes += 8 * (d * d + d) + 4 * D + 64;
  }

  const kernel = new CrossProductKernel(design, shift);
  const designIndexOf = (vars: readonly string[]): { designIdx: number[]; req: Uint32Array } => {
    const vIdx = vars.map((name) => {
      const vi = variables.indexOf(name);
      if (vi < 0) {
        throw new UnknownNodeError(
          `variable "${name}" was not among the variables the moments were built over (${variables.join(", ")}); include it when building them`,
          [name],
          { file: table.file },
        );
      }
      return vi;
    });
    return { designIdx: vIdx.flatMap((vi) => designOf[vi]!), req: maskOf(vIdx, words) };
  };

  const finish = (designIdx: number[], count: number, S: Float64Array, C: Float64Array): Moments => {
    const d = designIdx.length;
    const means = new Float64Array(d);
    const cov = new Float64Array(d * d);
    for (let a = 0; a < d; a++) means[a] = count > 0 ? shift[designIdx[a]!]! + S[a]! / count : NaN;
    for (let a = 0; a < d; a++) {
      for (let b = 0; b <= a; b++) {
        const v = count > 1 ? (C[a * d + b]! - (S[a]! * S[b]!) / count) / (count - 1) : NaN;
        cov[a * d + b] = v;
        cov[b * d + a] = v;
      }
    }
    return { n: count, design: designIdx.map((j) => ({ ...design[j]!.column })), means, cov };
  };

  if (bytes > (options.maxPatternBytes ?? DEFAULT_MAX_PATTERN_BYTES)) {
    // Too many patterns to keep: answer each request from the rows.
    return {
      patterns: P,
      completeRows,
      momentsFor(vars: readonly string[]): Moments {
        const { designIdx, req } = designIndexOf(vars);
        const rows: number[] = [];
        for (let i = 0; i < n; i++) {
          const p = patternOfRow[i]!;
          if (p >= 0 && containsMask(masks[p]!, req)) rows.push(i);
        }
        const d = designIdx.length;
        const S = new Float64Array(d);
        const C = new Float64Array(d * d);
        kernel.accumulate(Int32Array.from(rows), 0, rows.length, designIdx, S, C);
        return finish(designIdx, rows.length, S, C);
      },
    };
  }

  // Group rows by pattern (counting sort) and accumulate each pattern's statistics.
  const start = new Int32Array(P + 1);
  for (let p = 0; p < P; p++) start[p + 1] = start[p]! + counts[p]!;
  const fill = start.slice(0, P);
  const order = new Int32Array(start[P]!);
  for (let i = 0; i < n; i++) {
    const p = patternOfRow[i]!;
    if (p >= 0) order[fill[p]!++] = i;
  }
  const patterns: Pattern[] = [];
  for (let p = 0; p < P; p++) {
    const obs = observedDesign(masks[p]!);
    const d = obs.length;
    const pos = new Int32Array(D).fill(-1);
    obs.forEach((j, k) => (pos[j] = k));
    const sums = new Float64Array(d);
    const cross = new Float64Array(d * d);
    kernel.accumulate(order, start[p]!, start[p + 1]!, obs, sums, cross);
    patterns.push({ count: counts[p]!, mask: masks[p]!, pos, sums, cross });
  }

  return {
    patterns: P,
    completeRows,
    momentsFor(vars: readonly string[]): Moments {
      const { designIdx, req } = designIndexOf(vars);
      const d = designIdx.length;
      const S = new Float64Array(d);
      const C = new Float64Array(d * d);
      let count = 0;
      const local = new Int32Array(d);
      for (const pat of patterns) {
        if (!containsMask(pat.mask, req)) continue;
        count += pat.count;
        const dp = pat.sums.length;
        for (let a = 0; a < d; a++) local[a] = pat.pos[designIdx[a]!]!;
        for (let a = 0; a < d; a++) {
          const pa = local[a]!;
          S[a] += pat.sums[pa]!;
          for (let b = 0; b <= a; b++) {
            const pb = local[b]!;
            C[a * d + b] += pa >= pb ? pat.cross[pa * dp + pb]! : pat.cross[pb * dp + pa]!;
          }
        }
      }
      return finish(designIdx, count, S, C);
    },
  };
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
    private readonly design: readonly DesignSource[],
    private readonly shift: Float64Array,
  ) {
    const dpad = Math.ceil(Math.max(1, design.length) / 4) * 4;
    this.tile = new Float64Array(TILE * dpad);
    this.scratch = new Float64Array(dpad * dpad);
  }

  /** Add rows[from, to) over design columns `cols` into sums (d) and cross (d × d, lower triangle). */
  accumulate(rows: Int32Array, from: number, to: number, cols: readonly number[], sums: Float64Array, cross: Float64Array): void {
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
        const off = k * TILE;
        if (src.scores) {
          const s = src.scores;
          for (let t = 0; t < m; t++) X[off + t] = s[rows[t0 + t]!]! - c;
        } else {
          const codes = src.codes!;
          const level = src.level;
          for (let t = 0; t < m; t++) X[off + t] = (codes[rows[t0 + t]!] === level ? 1 : 0) - c;
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

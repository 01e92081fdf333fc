/**
 * Least-squares adjustment of response columns for a growing, nested set of adjustment columns,
 * with the amount of flexibility chosen by generalised cross-validation.
 *
 * Terms. The *responses* are q columns (the x side and the y side of a claim; a nominal side
 * contributes one 0/1 column per level but the first). The *adjustment columns* are added one at
 * a time in a fixed order and grouped in *levels* (see `flexibleBasis.ts`): after each level the
 * responses' least-squares residuals on an intercept and the columns so far are summarised by
 * their residual covariance. Everything works from covariances (Bessel-corrected, over the same
 * n complete cases), never from the rows, so the same code serves covariances computed from rows
 * and from pattern-grouped moments.
 * - A column is *aliased* (dropped) when the part of it not explained by the columns kept before
 *   it is below 1e-9 of its variance (a pivot of the Cholesky factor of their covariance); the
 *   count of kept columns gives the model's number of parameters.
 * - With the Cholesky factor L of the kept columns' covariance and z_r = L⁻¹ c_r (c_r the kept
 *   columns' covariances with response r), the residual covariance of responses a and b is
 *   C_ab − Σ_j z_aj z_bj over the kept columns so far: one forward substitution per new column
 *   gives the residuals of every nested prefix (Golub & Van Loan 2013, Matrix Computations, 4th
 *   ed., §6.2 on updating least squares by Cholesky).
 * - *Generalised cross-validation* of a side with residual sum of squares RSS and p parameters
 *   (intercept included) is GCV = (RSS/n)/(1 − p/n)² (Craven & Wahba 1979, Numerische Mathematik
 *   31:377–403); for a side of several columns RSS sums over them.
 */

/** Relative pivot below which an adjustment column is aliased with the columns before it. */
export const ALIAS_TOLERANCE = 1e-9;
/**
 * A column whose variance is below this share of its `scale` (a second moment of its values
 * about a point near their mean, which bounds the rounding error of the variance) is constant.
 */
export const CONSTANT_TOLERANCE = 1e-12;

/** The state after one level: parameters so far and the responses' residual covariance. */
export interface LevelSnapshot {
  /** Kept adjustment columns up to and including this level. */
  kept: number;
  /** Residual covariance of the responses (q × q, row-major, Bessel scale). */
  residual: Float64Array;
}

/**
 * Nested least-squares adjustment from covariances (see the module comment).
 * Cost: O(k² + k·q) per added column for k kept columns; O(q²·k) per level snapshot.
 * @example
 * const fit = new NestedAdjustment(100, responseCov, 2);
 * fit.addColumn([], 1.0, [0.3, 0.2]); fit.endLevel();
 * fit.snapshots[0].residual; // residual covariance after adjusting for one column
 */
export class NestedAdjustment {
  /** Rows of the Cholesky factor of the kept columns (row j has j + 1 entries). */
  private readonly L: Float64Array[] = [];
  /** z_r = L⁻¹ c_r for each response r, grown one entry per kept column. */
  private readonly z: number[][];
  /** Indices (in the order added) of the kept columns. */
  readonly keptColumns: number[] = [];
  readonly snapshots: LevelSnapshot[] = [];
  private added = 0;
  private readonly running: Float64Array;
  private scratch = new Float64Array(0);

  /**
   * @param n complete cases behind the covariances
   * @param responseCov covariance of the q responses (q × q row-major)
   * @param q number of response columns
   */
  constructor(
    readonly n: number,
    readonly responseCov: Float64Array,
    readonly q: number,
  ) {
    this.z = Array.from({ length: q }, () => []);
    this.running = Float64Array.from(responseCov);
  }

  /** Adjustment columns added so far (kept or not). */
  get columnsAdded(): number {
    return this.added;
  }

  /**
   * Add the next adjustment column, given its covariances with the columns added before it (in
   * the order added, kept or not: entries of dropped columns are ignored), its variance and its
   * covariances with the q responses. Returns whether it was kept (not aliased, not constant).
   * `scale`, when given, is a second moment of the column's values about a point near their mean
   * (e.g. the shifted sum of squares over n − 1): a variance below CONSTANT_TOLERANCE of it is
   * rounding error of a column that is constant on these rows, which is then not kept.
   * Cost: O(k² + k·q).
   */
  addColumn(covWithPrevious: ArrayLike<number>, variance: number, covWithResponses: ArrayLike<number>, scale?: number): boolean {
    const index = this.added++;
    if (!(variance > 0) || !Number.isFinite(variance)) return false;
    if (scale !== undefined && !(variance > CONSTANT_TOLERANCE * scale)) return false;
    const k = this.keptColumns.length;
    const row = new Float64Array(k + 1);
    let d = variance;
    for (let t = 0; t < k; t++) {
      const Lt = this.L[t]!;
      let s = covWithPrevious[this.keptColumns[t]!]!;
      for (let u = 0; u < t; u++) s -= row[u]! * Lt[u]!;
      const v = s / Lt[t]!;
      row[t] = v;
      d -= v * v;
    }
    if (!(d > ALIAS_TOLERANCE * variance)) return false;
    const ljj = Math.sqrt(d);
    row[k] = ljj;
    this.L.push(row);
    this.keptColumns.push(index);
    for (let r = 0; r < this.q; r++) {
      const zr = this.z[r]!;
      let s = covWithResponses[r]!;
      for (let u = 0; u < k; u++) s -= row[u]! * zr[u]!;
      zr.push(s / ljj);
    }
    for (let a = 0; a < this.q; a++) {
      const za = this.z[a]![k]!;
      for (let b = 0; b < this.q; b++) this.running[a * this.q + b] = this.running[a * this.q + b]! - za * this.z[b]![k]!;
    }
    return true;
  }

  /** Record the residual covariance of the responses after the columns added so far. */
  endLevel(): LevelSnapshot {
    const snap = { kept: this.keptColumns.length, residual: Float64Array.from(this.running) };
    this.snapshots.push(snap);
    return snap;
  }

  /**
   * Least-squares coefficients of response r on the first `kept` kept columns, in the scale of
   * the covariances (β = L⁻ᵀ z_r). Cost: O(kept²).
   */
  coefficients(r: number, kept: number): Float64Array {
    const beta = new Float64Array(kept);
    const zr = this.z[r]!;
    for (let i = kept - 1; i >= 0; i--) {
      let s = zr[i]!;
      for (let k = i + 1; k < kept; k++) s -= this.L[k]![i]! * beta[k]!;
      beta[i] = s / this.L[i]![i]!;
    }
    return beta;
  }

  /**
   * ‖L⁻¹ v‖² for the first `kept` kept columns (v: a row's centred values of those columns, in
   * the covariances' scale): the row's leverage is 1/n + ‖L⁻¹ v‖²/(n − 1). Cost: O(kept²).
   */
  solveNorm(v: ArrayLike<number>, kept: number): number {
    let s2 = 0;
    const w = this.scratch.length >= kept ? this.scratch : (this.scratch = new Float64Array(kept));
    for (let i = 0; i < kept; i++) {
      const Li = this.L[i]!;
      let s = v[i]!;
      for (let k = 0; k < i; k++) s -= Li[k]! * w[k]!;
      const wi = s / Li[i]!;
      w[i] = wi;
      s2 += wi * wi;
    }
    return s2;
  }

  /**
   * Generalised cross-validation score of a side (responses `from` to `to` − 1) at a snapshot:
   * (RSS/n)/(1 − p/n)² with RSS = (n − 1)·Σ residual variances and p = kept + 1 (intercept);
   * Infinity when p ≥ n. Source: Craven & Wahba (1979), Numerische Mathematik 31:377–403.
   */
  gcv(snap: LevelSnapshot, from: number, to: number): number {
    const n = this.n;
    const p = snap.kept + 1;
    if (p >= n) return Infinity;
    let rss = 0;
    for (let r = from; r < to; r++) rss += Math.max(0, snap.residual[r * this.q + r]!) * (n - 1);
    const shrink = 1 - p / n;
    return rss / n / (shrink * shrink);
  }
}

/**
 * The level (index into `snapshots`) with the smallest GCV for a side, the first on ties.
 * Cost: O(levels).
 */
export function bestLevel(fit: NestedAdjustment, from: number, to: number): number {
  let best = 0;
  let bestScore = Infinity;
  fit.snapshots.forEach((s, l) => {
    const g = fit.gcv(s, from, to);
    if (g < bestScore * (1 - 1e-12)) {
      best = l;
      bestScore = g;
    }
  });
  return best;
}

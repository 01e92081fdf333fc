/**
 * Small dense linear algebra on row-major Float64Arrays, for the sizes a claim needs
 * (a few to a few hundred columns). Symmetric positive-definite systems use Cholesky;
 * least squares uses Householder QR, never the normal equations' explicit inverse.
 * References: Golub & Van Loan (2013), Matrix Computations, 4th ed., Alg. 4.2.1 (Cholesky)
 * and §5.2 (Householder QR).
 */

/**
 * Cholesky factor L (lower triangular, row-major n×n) of a symmetric positive-definite
 * matrix `a` (row-major n×n; only the lower triangle is read), so that a = L Lᵀ.
 * Returns `undefined` when a pivot falls below `tol` times the largest diagonal entry
 * (the matrix is singular or not positive definite to working precision). Cost: O(n³/3).
 * @example cholesky(new Float64Array([4, 2, 2, 3]), 2) // [2, 0, 1, 1.414...]
 */
export function cholesky(a: ArrayLike<number>, n: number, tol = 1e-12): Float64Array | undefined {
  const L = new Float64Array(n * n);
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, Math.abs(a[i * n + i]!));
  if (!(maxDiag > 0) && n > 0) return undefined;
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j]!;
    for (let k = 0; k < j; k++) d -= L[j * n + k]! * L[j * n + k]!;
    if (!(d > tol * maxDiag)) return undefined;
    const ljj = Math.sqrt(d);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j]!;
      for (let k = 0; k < j; k++) s -= L[i * n + k]! * L[j * n + k]!;
      L[i * n + j] = s / ljj;
    }
  }
  return L;
}

/** Solve (L Lᵀ) x = b given the Cholesky factor L (row-major n×n). Cost: O(n²). */
export function choleskySolve(L: Float64Array, n: number, b: ArrayLike<number>): Float64Array {
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= L[i * n + k]! * y[k]!;
    y[i] = s / L[i * n + i]!;
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i]!;
    for (let k = i + 1; k < n; k++) s -= L[k * n + i]! * x[k]!;
    x[i] = s / L[i * n + i]!;
  }
  return x;
}

/** log-determinant of a = L Lᵀ from its Cholesky factor. */
export function choleskyLogDet(L: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += Math.log(L[i * n + i]!);
  return 2 * s;
}

export interface LeastSquaresFit {
  /** Coefficients, length p. */
  coef: Float64Array;
  /** Residual sum of squares. */
  rss: number;
  /** Numerical rank found (p when full rank). */
  rank: number;
}

/**
 * Ordinary least squares min ‖y − Xβ‖ by Householder QR (X row-major m×p, m ≥ p).
 * Returns `undefined` when X is rank deficient (a column's norm after elimination falls below
 * `tol` times its original norm). Cost: O(m p²).
 */
export function leastSquaresQR(X: ArrayLike<number>, m: number, p: number, y: ArrayLike<number>, tol = 1e-10): LeastSquaresFit | undefined {
  const A = Float64Array.from(X as ArrayLike<number>);
  const b = Float64Array.from(y as ArrayLike<number>);
  const colNorm0 = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    let s = 0;
    for (let i = 0; i < m; i++) s += A[i * p + j]! ** 2;
    colNorm0[j] = Math.sqrt(s);
  }
  const rdiag = new Float64Array(p);
  for (let k = 0; k < p; k++) {
    let norm = 0;
    for (let i = k; i < m; i++) norm += A[i * p + k]! ** 2;
    norm = Math.sqrt(norm);
    if (!(norm > tol * (colNorm0[k]! || 1)) || colNorm0[k] === 0) return undefined;
    const alpha = A[k * p + k]! > 0 ? -norm : norm;
    // v = x - alpha e1, stored in place
    A[k * p + k] = A[k * p + k]! - alpha;
    let vnorm2 = 0;
    for (let i = k; i < m; i++) vnorm2 += A[i * p + k]! ** 2;
    rdiag[k] = alpha;
    if (vnorm2 === 0) continue;
    for (let j = k + 1; j < p; j++) {
      let s = 0;
      for (let i = k; i < m; i++) s += A[i * p + k]! * A[i * p + j]!;
      const f = (2 * s) / vnorm2;
      for (let i = k; i < m; i++) A[i * p + j] = A[i * p + j]! - f * A[i * p + k]!;
    }
    let s = 0;
    for (let i = k; i < m; i++) s += A[i * p + k]! * b[i]!;
    const f = (2 * s) / vnorm2;
    for (let i = k; i < m; i++) b[i] = b[i]! - f * A[i * p + k]!;
  }
  const coef = new Float64Array(p);
  for (let i = p - 1; i >= 0; i--) {
    let s = b[i]!;
    for (let j = i + 1; j < p; j++) s -= A[i * p + j]! * coef[j]!;
    coef[i] = s / rdiag[i]!;
  }
  let rss = 0;
  for (let i = p; i < m; i++) rss += b[i]! ** 2;
  return { coef, rss, rank: p };
}

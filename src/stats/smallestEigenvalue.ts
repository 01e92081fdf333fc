/**
 * The smallest eigenvalue of a real symmetric matrix, with its eigenvector.
 *
 * Terms: a symmetric matrix A is *positive semi-definite* when xᵀAx ≥ 0 for every x, which holds
 * exactly when its smallest eigenvalue is ≥ 0. The *cyclic Jacobi method* applies plane rotations
 * that zero one off-diagonal element at a time, sweeping all pairs until the off-diagonal mass
 * vanishes; it is backward stable and finds small eigenvalues to high relative accuracy in
 * well-scaled matrices (Golub & Van Loan 2013, *Matrix Computations*, 4th ed., §8.5.2–8.5.3;
 * Demmel & Veselić 1992, SIAM J. Matrix Anal. Appl. 13:1204–1245).
 */

export interface SmallestEigen {
  /** The smallest eigenvalue. */
  value: number;
  /** A unit eigenvector of it. */
  vector: Float64Array;
}

/**
 * Smallest eigenvalue of the symmetric m × m matrix `a` (row-major; only symmetric input is
 * meaningful, the mean of a[i][j] and a[j][i] is used) by the cyclic Jacobi method, with its unit
 * eigenvector. Cost: O(m³) per sweep, usually 6–10 sweeps; O(m²) memory.
 * Source: Golub & Van Loan (2013), Matrix Computations, 4th ed., Alg. 8.5.2–8.5.3.
 * @throws RangeError when `a` does not hold m² finite numbers
 * @example smallestEigenvalue([2, 1, 1, 2], 2).value // 1
 */
export function smallestEigenvalue(a: ArrayLike<number>, m: number): SmallestEigen {
  if (!Number.isInteger(m) || m < 1 || a.length !== m * m) throw new RangeError(`smallestEigenvalue: expected ${m}×${m} = ${m * m} numbers, got ${a.length}; pass a square matrix row by row`);
  const A = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      const v = (a[i * m + j]! + a[j * m + i]!) / 2;
      if (!Number.isFinite(v)) throw new RangeError(`smallestEigenvalue: element (${i + 1}, ${j + 1}) is not a finite number; check the matrix`);
      A[i * m + j] = v;
    }
  }
  const V = new Float64Array(m * m);
  for (let i = 0; i < m; i++) V[i * m + i] = 1;
  let total = 0;
  for (let i = 0; i < m * m; i++) total += A[i]! * A[i]!;
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < m; p++) for (let q = p + 1; q < m; q++) off += 2 * A[p * m + q]! * A[p * m + q]!;
    if (off <= 1e-30 * total || off === 0) break;
    for (let p = 0; p < m - 1; p++) {
      for (let q = p + 1; q < m; q++) {
        const apq = A[p * m + q]!;
        if (apq === 0) continue;
        // Golub & Van Loan Alg. 8.5.1 (symmetric Schur decomposition of the 2 × 2 block)
        const tau = (A[q * m + q]! - A[p * m + p]!) / (2 * apq);
        const t = (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = t * c;
        for (let k = 0; k < m; k++) {
          const akp = A[k * m + p]!;
          const akq = A[k * m + q]!;
          A[k * m + p] = c * akp - s * akq;
          A[k * m + q] = s * akp + c * akq;
        }
        for (let k = 0; k < m; k++) {
          const apk = A[p * m + k]!;
          const aqk = A[q * m + k]!;
          A[p * m + k] = c * apk - s * aqk;
          A[q * m + k] = s * apk + c * aqk;
        }
        for (let k = 0; k < m; k++) {
          const vkp = V[k * m + p]!;
          const vkq = V[k * m + q]!;
          V[k * m + p] = c * vkp - s * vkq;
          V[k * m + q] = s * vkp + c * vkq;
        }
      }
    }
  }
  let best = 0;
  for (let i = 1; i < m; i++) if (A[i * m + i]! < A[best * m + best]!) best = i;
  const vector = new Float64Array(m);
  for (let k = 0; k < m; k++) vector[k] = V[k * m + best]!;
  return { value: A[best * m + best]!, vector };
}

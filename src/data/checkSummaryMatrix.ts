/**
 * Checking a published correlation or covariance matrix before it is audited.
 *
 * Terms (see `parseSummaryMatrix.ts` for the file and a cell's *rounding* h, half a unit in its
 * last printed digit). A matrix is accepted when, within the rounding of its printed digits plus
 * a floating-point slack of 1e-12 relative to the scale √(s_ii·s_jj):
 * - it is *symmetric*: |s_ij − s_ji| ≤ h_ij + h_ji (both printed values round the same number);
 * - a correlation matrix has a *unit diagonal*: |s_ii − 1| ≤ h_ii;
 * - a covariance matrix has no negative variance;
 * - every cell respects the Cauchy–Schwarz bound |s_ij| ≤ √(s_ii·s_jj) (|r| ≤ 1);
 * - it is *positive semi-definite*: the smallest eigenvalue of the matrix scaled to unit diagonal,
 *   D^−½ S D^−½ (variables of variance 0 left out), is ≥ −‖Ĥ‖_F, where Ĥ holds the roundings on
 *   the same scale (0 on a correlation matrix's diagonal, which is exactly 1 by definition). By Weyl's inequality rounding the cells by E moves every eigenvalue by at
 *   most ‖E‖₂ ≤ ‖E‖_F (Golub & Van Loan 2013, Matrix Computations, 4th ed., Thm 8.1.6), so a
 *   matrix that fails was not positive semi-definite before rounding either.
 * The accepted matrix is the mean of each printed pair (s_ij + s_ji)/2, with a correlation
 * matrix's diagonal set to 1.
 */
import { InputError } from "../errors.js";
import { smallestEigenvalue } from "../stats/smallestEigenvalue.js";
import type { SummaryMatrix } from "./parseSummaryMatrix.js";

/** Relative floating-point slack of every comparison (full-precision matrices written by numerical software). */
export const MATRIX_SLACK = 1e-12;

export interface CheckedMatrix {
  /** The symmetric matrix (m × m row-major) in the file's variable order. */
  values: Float64Array;
  /** Indices of variables whose variance is 0 (a covariance matrix only). */
  zeroVariance: number[];
  /** Smallest eigenvalue of the matrix scaled to unit diagonal, and the tolerance it was compared with. */
  smallestEigenvalue: number;
  tolerance: number;
}

const quote = (s: string) => JSON.stringify(s);

/**
 * Check a parsed matrix by the rules of the module comment and return its symmetric form.
 * Cost: O(m³) (the Jacobi eigenvalues of `smallestEigenvalue`).
 * Source: Weyl's inequality, Golub & Van Loan (2013), Thm 8.1.6.
 * @throws InputError naming the file, the cell's line and field, its row and column variables
 *   and what to do, or for a matrix that is not positive semi-definite its smallest eigenvalue,
 *   the tolerance and the variables its eigenvector weighs most on
 * @example checkSummaryMatrix(parseSummaryMatrix(",a,b\na,1\nb,0.3,1\n", { file: "r.csv", kind: "correlations" })).values // [1, 0.3, 0.3, 1]
 */
export function checkSummaryMatrix(matrix: SummaryMatrix): CheckedMatrix {
  const { file, names, values: s, rounding: h, kind } = matrix;
  const m = names.length;
  const at = (i: number, j: number) => ({ file, line: matrix.lineOf[i]!, column: matrix.fieldOf[j]! });
  const fail = (i: number, j: number, what: string): never => {
    const p = at(i, j);
    throw new InputError(`${file}:${p.line}:${p.column}: the cell of row ${quote(names[i]!)}, column ${quote(names[j]!)} ${what}`, p);
  };
  for (let i = 0; i < m; i++) {
    const d = s[i * m + i]!;
    if (kind === "correlations" && Math.abs(d - 1) > h[i * m + i]! + MATRIX_SLACK) {
      fail(i, i, `is ${d}, but a correlation matrix has 1 on its diagonal; check the cell, or give the file as --covariance if it holds variances`);
    }
    if (kind === "covariance" && d < 0) fail(i, i, `is the variance ${d}, which cannot be negative; check the cell`);
  }
  const diag = (i: number) => (kind === "correlations" ? 1 : s[i * m + i]!);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < i; j++) {
      const a = s[i * m + j]!;
      const b = s[j * m + i]!;
      const scale = Math.sqrt(diag(i)) * Math.sqrt(diag(j)); // square roots first: no product of two variances can overflow
      const tol = h[i * m + j]! + h[j * m + i]! + MATRIX_SLACK * Math.max(scale, Math.abs(a), Math.abs(b));
      if (Math.abs(a - b) > tol) {
        fail(i, j, `is ${a} but its mirror image (row ${quote(names[j]!)}, column ${quote(names[i]!)}) is ${b}; the matrix must be symmetric within the rounding of its printed digits (here ±${formatTol(tol)}); correct one of the two cells`);
      }
      const v = (a + b) / 2;
      const bound = Math.sqrt(diag(i) + (kind === "covariance" ? h[i * m + i]! : 0)) * Math.sqrt(diag(j) + (kind === "covariance" ? h[j * m + j]! : 0));
      if (Math.abs(v) > bound + h[i * m + j]! + MATRIX_SLACK * Math.max(scale, Math.abs(v))) {
        fail(
          i,
          j,
          kind === "correlations"
            ? `is ${a}, outside −1 … 1; a correlation cannot exceed 1 in size; check the cell`
            : `is ${a}, which implies a correlation of ${formatTol(v / scale)} between ${quote(names[i]!)} and ${quote(names[j]!)} (beyond ±1); check this cell and the two variances`,
        );
      }
    }
  }
  const values = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) values[i * m + j] = i === j ? diag(i) : (s[i * m + j]! + s[j * m + i]!) / 2;
  }
  const zeroVariance: number[] = [];
  for (let i = 0; i < m; i++) if (values[i * m + i] === 0) zeroVariance.push(i);
  const keep = names.map((_, i) => i).filter((i) => values[i * m + i]! > 0);
  const k = keep.length;
  if (k === 0) return { values, zeroVariance, smallestEigenvalue: NaN, tolerance: 0 };
  const scaled = new Float64Array(k * k);
  let frob = 0;
  for (let a = 0; a < k; a++) {
    for (let b = 0; b < k; b++) {
      const i = keep[a]!;
      const j = keep[b]!;
      const sc = Math.sqrt(values[i * m + i]!) * Math.sqrt(values[j * m + j]!);
      scaled[a * k + b] = values[i * m + j]! / sc;
      const hh = kind === "correlations" && i === j ? 0 : h[i * m + j]! / sc; // a correlation's diagonal is exactly 1, not a rounded number
      frob += hh * hh;
    }
  }
  const tolerance = Math.sqrt(frob) + MATRIX_SLACK * k;
  const eig = smallestEigenvalue(scaled, k);
  if (eig.value < -tolerance) {
    const weights = keep.map((i, a) => ({ i, w: eig.vector[a]! })).sort((x, y) => Math.abs(y.w) - Math.abs(x.w));
    const top = weights.slice(0, Math.min(3, weights.length));
    const heaviest = top[0]!.i;
    throw new InputError(
      `${file}:${matrix.lineOf[heaviest]!}: the ${kind === "correlations" ? "correlation" : "covariance"} matrix is not positive semi-definite: the smallest eigenvalue of the matrix scaled to unit diagonal is ${eig.value.toPrecision(4)}, beyond the −${formatTol(tolerance)} that rounding of the printed digits can explain; its eigenvector weighs most on ${top
        .map((t) => `${quote(names[t.i]!)} (${t.w.toFixed(2)})`)
        .join(", ")}; check those rows for a typing error, and use a matrix computed on one set of complete cases (pairwise-deleted matrices need not be positive semi-definite)`,
      { file, line: matrix.lineOf[heaviest]! },
    );
  }
  return { values, zeroVariance, smallestEigenvalue: eig.value, tolerance };
}

function formatTol(x: number): string {
  return Number(x.toPrecision(3)).toString();
}

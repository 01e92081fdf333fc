import { describe, expect, it } from "vitest";
import { smallestEigenvalue } from "../../src/stats/smallestEigenvalue.js";

/** Relative difference, for comparisons with reference values. */
const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);

describe("smallestEigenvalue", () => {
  it("smallestEigenvalue(a, m) runs its doc example", () => {
    expect(smallestEigenvalue([2, 1, 1, 2], 2).value).toBeCloseTo(1, 14); // eigenvalues 1 and 3, by hand
  });

  it("smallestEigenvalue(a, m) matches numpy.linalg.eigvalsh on an indefinite 'correlation' matrix, with its eigenvector", () => {
    const a = [1, 0.9, 0.9, 0.9, 1, -0.9, 0.9, -0.9, 1];
    const e = smallestEigenvalue(a, 3);
    expect(rel(e.value, -0.8000000000000003)).toBeLessThan(1e-12); // numpy.linalg.eigvalsh (numpy 2.4.6)
    // eigenvector ±(−1, 1, 1)/√3: numpy.linalg.eigh gives [-0.57735027, 0.57735027, 0.57735027]
    const sign = Math.sign(e.vector[1]!);
    expect(Array.from(e.vector, (v) => v * sign)).toEqual([expect.closeTo(-1 / Math.sqrt(3), 12), expect.closeTo(1 / Math.sqrt(3), 12), expect.closeTo(1 / Math.sqrt(3), 12)]);
  });

  it("smallestEigenvalue(a, m) matches numpy.linalg.eigvalsh on a positive definite covariance matrix", () => {
    const b = [4, 2, 0.6, 1, 2, 5, 1.5, 0.3, 0.6, 1.5, 3, 0.2, 1, 0.3, 0.2, 2];
    expect(rel(smallestEigenvalue(b, 4).value, 1.4411154254081144)).toBeLessThan(1e-12); // numpy.linalg.eigvalsh (numpy 2.4.6)
  });

  it("smallestEigenvalue(a, m) finds the tiny eigenvalue of the 5 × 5 Hilbert matrix to high relative accuracy", () => {
    const h = Array.from({ length: 25 }, (_, k) => 1 / (Math.floor(k / 5) + (k % 5) + 1));
    expect(rel(smallestEigenvalue(h, 5).value, 3.287928772175417e-6)).toBeLessThan(1e-9); // numpy.linalg.eigvalsh (numpy 2.4.6)
  });

  it("smallestEigenvalue(a, m) of a diagonal matrix, a 1 × 1 matrix and a singular matrix", () => {
    expect(smallestEigenvalue([3, 0, 0, 0, 1, 0, 0, 0, 2], 3).value).toBe(1); // diagonal: its entries, by definition
    expect(smallestEigenvalue([-2], 1).value).toBe(-2); // by definition
    expect(Math.abs(smallestEigenvalue([1, 1, 1, 1], 2).value)).toBeLessThan(1e-15); // rank 1: eigenvalues 0 and 2, by hand
  });

  it("smallestEigenvalue(a, m) refuses a wrong size or a non-finite element", () => {
    expect(() => smallestEigenvalue([1, 2, 3], 2)).toThrow(/2×2 = 4 numbers/);
    expect(() => smallestEigenvalue([1, NaN, NaN, 1], 2)).toThrow(/not a finite number/);
  });

  it("smallestEigenvalue(a, m) leaves its input unchanged", () => {
    const a = Object.freeze([2, 1, 1, 2]);
    smallestEigenvalue(a, 2);
    expect(a).toEqual([2, 1, 1, 2]);
  });
});

import { describe, expect, it } from "vitest";
import { symmetricEigenInto, symmetricEigenWork } from "../../lib/linalg/index.ts";
import reference from "../fixtures/analysis/analysis.json";

describe("symmetricEigenInto", () => {
  it("gives the eigenvalues 2 - 2 cos(k pi / (n + 1)) and eigenvectors sin(i k pi / (n + 1)) of the second-difference matrix", () => {
    // Closed form of tridiag(-1, 2, -1) (G. D. Smith, Numerical Solution of Partial Differential Equations, 3rd ed.,
    // section 2.11; also Golub and Van Loan, Matrix Computations, 4th ed., section 4.8.3).
    const n = 33;
    const matrix = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      matrix[i * n + i] = 2;
      if (i > 0) matrix[i * n + i - 1] = matrix[(i - 1) * n + i] = -1;
    }
    const work = symmetricEigenWork(n);
    symmetricEigenInto(matrix, work);
    for (let k = 1; k <= n; k++) {
      // Tolerance: backward-stable to about n eps ||S|| (||S|| <= 4).
      expect(Math.abs(work.values[k - 1] - (2 - 2 * Math.cos((k * Math.PI) / (n + 1))))).toBeLessThan(1e-13);
      const norm = Math.sqrt((n + 1) / 2);
      const row = work.vectors.subarray((k - 1) * n, k * n);
      const sign = Math.sign(row[0]);
      for (let i = 1; i <= n; i++) expect(Math.abs(sign * row[i - 1] - Math.sin((i * k * Math.PI) / (n + 1)) / norm)).toBeLessThan(1e-12);
    }
  });

  it("matches NumPy's eigh on a dense formula matrix, with orthonormal vectors", () => {
    // Reference: numpy.linalg.eigh (LAPACK dsyevd) in tests/fixtures/analysis/make_analysis.py, same formula.
    const n = 7;
    const matrix = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) matrix[i * n + j] = Math.sin(i + 2 * j) + Math.sin(2 * i + j) + (i === j ? i + 1 : 0);
    const work = symmetricEigenWork(n);
    symmetricEigenInto(matrix, work);
    reference.symmetric7.values.forEach((value, k) => expect(Math.abs(work.values[k] - value)).toBeLessThan(1e-13));
    reference.symmetric7.absVectors.forEach((row, k) => row.forEach((value, i) => expect(Math.abs(Math.abs(work.vectors[k * n + i]) - value)).toBeLessThan(1e-12)));
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) {
      let dot = 0;
      for (let i = 0; i < n; i++) dot += work.vectors[a * n + i] * work.vectors[b * n + i];
      expect(Math.abs(dot - (a === b ? 1 : 0))).toBeLessThan(1e-14);
    }
  });

  it("handles 1 x 1, zero and repeated eigenvalues, and refuses a wrong size", () => {
    const one = symmetricEigenWork(1);
    symmetricEigenInto([5], one);
    expect(one.values[0]).toBe(5);
    expect(one.vectors[0]).toBe(1);
    const work = symmetricEigenWork(3);
    symmetricEigenInto(new Float64Array(9), work);
    expect(Array.from(work.values)).toEqual([0, 0, 0]);
    // 2 I: every vector is an eigenvector; the decomposition must still be orthonormal with eigenvalue 2.
    symmetricEigenInto([2, 0, 0, 0, 2, 0, 0, 0, 2], work);
    expect(Array.from(work.values)).toEqual([2, 2, 2]);
    expect(() => symmetricEigenInto([1, 2], work)).toThrow(new RangeError("matrix must have n x n entries"));
    expect(() => symmetricEigenWork(0)).toThrow(new RangeError("n must be a positive integer"));
  });
});

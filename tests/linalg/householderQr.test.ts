import { describe, expect, it } from "vitest";
import {
  applyQTransposeInPlace, applyQTransposeInPlaceReference, householderQr, householderQrReference, rDiagonal,
  solveUpperTriangular, solveUpperTriangularReference,
} from "../../lib/linalg/householderQr.ts";
import { kernelFixture, lcg, matrix, xDesign, yDesign } from "../kernels/formulas.ts";

function maxAbs(values: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < values.length; i++) m = Math.max(m, Math.abs(values[i]));
  return m;
}

describe("householderQr, applyQTransposeInPlace and solveUpperTriangular through the float64 SIMD kernels", () => {
  it("solve least-squares problems as NumPy lstsq does, also wider than one block of 32 or 64 columns", () => {
    // Source: tests/fixtures/kernels/make_kernels.py (np.linalg.lstsq, np.linalg.qr). Householder QR is backward
    // stable, so the relative forward error of the solution is O(kappa u) (Golub and Van Loan, 4th ed.,
    // section 5.3.8); with kappa about 5 a tolerance of 1e-12 leaves a margin of over 100.
    for (const { rows, cols, rhs, solution, absDiagonalR } of kernelFixture.leastSquares) {
      const qr = householderQr(matrix(xDesign, rows, cols), rows, cols);
      const y = matrix(yDesign, rows, rhs);
      applyQTransposeInPlace(qr, y, rhs);
      const x = solveUpperTriangular(qr, y, rhs);
      const scale = maxAbs(solution);
      for (let i = 0; i < solution.length; i++) expect(Math.abs(x[i] - solution[i])).toBeLessThanOrEqual(1e-12 * scale);
      // R is unique up to the signs of its rows (for a full-rank matrix): compare |diag R|.
      const diagonal = rDiagonal(qr);
      for (let k = 0; k < cols; k++) expect(Math.abs(Math.abs(diagonal[k]) - absDiagonalR[k])).toBeLessThanOrEqual(1e-12 * absDiagonalR[0]);
    }
  });

  it("agree with the TypeScript reference on awkward sizes and right-hand-side counts", () => {
    // Both are the same backward-stable algorithm with sums in a different order: factors, Q^T B and X agree
    // to a small multiple of u times the data's scale for these well-conditioned random matrices (tolerance
    // 1e-12 relative: common practice, no source).
    const random = lcg(11);
    const shapes = [[1, 1], [2, 1], [5, 5], [33, 33], [40, 32], [64, 64], [97, 65], [130, 70]];
    for (const [rows, cols] of shapes) {
      const a = Float64Array.from({ length: rows * cols }, random);
      for (let k = 0; k < cols; k++) a[k * cols + k] += 2; // keep R well away from singular
      const ours = householderQr(a, rows, cols);
      const reference = householderQrReference(a, rows, cols);
      const scale = maxAbs(reference.factors);
      for (let i = 0; i < rows * cols; i++) expect(Math.abs(ours.factors[i] - reference.factors[i])).toBeLessThanOrEqual(1e-12 * scale);
      for (let k = 0; k < cols; k++) expect(Math.abs(ours.tau[k] - reference.tau[k])).toBeLessThanOrEqual(1e-12);
      for (const rhsCount of [0, 1, 3, 5]) {
        const b = Float64Array.from({ length: rows * rhsCount }, random);
        const qtOurs = b.slice();
        const qtReference = b.slice();
        applyQTransposeInPlace(ours, qtOurs, rhsCount);
        applyQTransposeInPlaceReference(reference, qtReference, rhsCount);
        const bScale = Math.max(1e-300, maxAbs(b));
        for (let i = 0; i < b.length; i++) expect(Math.abs(qtOurs[i] - qtReference[i])).toBeLessThanOrEqual(1e-12 * bScale * rows);
        const x = solveUpperTriangular(ours, qtOurs, rhsCount);
        const xReference = solveUpperTriangularReference(reference, qtReference, rhsCount);
        expect(x.length).toBe(cols * rhsCount);
        const xScale = Math.max(1e-300, maxAbs(xReference));
        for (let i = 0; i < x.length; i++) expect(Math.abs(x[i] - xReference[i])).toBeLessThanOrEqual(1e-11 * xScale);
      }
    }
  });

  it("keep the input untouched and the exact error messages", () => {
    const a = [2, 1, 1, 3];
    const copy = a.slice();
    const qr = householderQr(a, 2, 2);
    expect(a).toEqual(copy);
    expect(() => applyQTransposeInPlace(qr, new Float64Array(3), 2)).toThrow(new RangeError("right-hand side length must equal rows * rhsCount"));
    expect(() => solveUpperTriangular(householderQr([1, 0, 0, 0], 2, 2), new Float64Array(2), 1)).toThrow(new RangeError("R is singular"));
    expect(() => householderQr([1, NaN, 0, 1], 2, 2)).toThrow(new RangeError("matrix entries must be finite numbers"));
  });
});

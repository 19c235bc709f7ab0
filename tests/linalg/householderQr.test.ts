import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import {
  applyQTransposeInPlace, conditionNumber, householderQr, solveUpperTriangular,
} from "../../lib/linalg/index.ts";
import {
  applyQTransposeInPlaceReference, householderQrReference, rDiagonal, solveUpperTriangularReference,
} from "../../lib/linalg/householderQr.ts";
import { kernelFixture, lcg, matrix, xDesign, yDesign } from "../kernels/formulas.ts";

const reference = JSON.parse(readFileSync(new URL("../fixtures/surrogate/reference.json", import.meta.url), "utf8"));

function leastSquares(x: number[][], y: number[][]): Float64Array {
  const rows = x.length;
  const cols = x[0].length;
  const rhsCount = y[0].length;
  const qr = householderQr(x.flat(), rows, cols);
  const rhs = Float64Array.from(y.flat());
  applyQTransposeInPlace(qr, rhs, rhsCount);
  return solveUpperTriangular(qr, rhs, rhsCount);
}

describe("householderQr least squares", () => {
  it("solves a square system with a hand-checked answer", () => {
    // [[2, 1], [1, 3]] x = [3, 5]  ->  x = [4/5, 7/5] by Cramer's rule (det 5).
    const x = leastSquares([[2, 1], [1, 3]], [[3], [5]]);
    expect(x[0]).toBeCloseTo(0.8, 14);
    expect(x[1]).toBeCloseTo(1.4, 14);
  });

  it("fits a straight line with the closed-form slope and intercept", () => {
    // Points (0,1), (1,3), (2,4), (3,8): xbar = 1.5, ybar = 4, S_xy = 4.5 + 0.5 + 0 + 6 = 11, S_xx = 5,
    // slope = S_xy / S_xx = 2.2, intercept = ybar - slope xbar = 4 - 3.3 = 0.7 (ordinary least squares, closed form).
    const x = leastSquares([[1, 0], [1, 1], [1, 2], [1, 3]], [[1], [3], [4], [8]]);
    expect(x[0]).toBeCloseTo(0.7, 13);
    expect(x[1]).toBeCloseTo(2.2, 13);
  });

  it("matches NumPy lstsq on a 12 x 6 quadratic design with three right-hand sides", () => {
    // Source: independent NumPy reference (tests/fixtures/surrogate/make_reference.py, np.linalg.lstsq).
    const { coefficientsNm, outputs, solution } = reference.leastSquares;
    const design = coefficientsNm.map(([a, b]: number[]) => [1, a, b, a * a, a * b, b * b]);
    const x = leastSquares(design, outputs);
    const expected = (solution as number[][]).flat();
    for (let i = 0; i < expected.length; i++) expect(x[i]).toBeCloseTo(expected[i], 10);
  });

  it("reports the condition number NumPy gives for the column-equilibrated design", () => {
    // Source: np.linalg.cond of the same equilibrated matrix (make_reference.py); power iteration to 1e-10.
    const { coefficientsNm, conditionNumber: expected } = reference.leastSquares;
    const design = coefficientsNm.map(([a, b]: number[]) => [1, a, b, a * a, a * b, b * b]);
    const norms = design[0].map((_: number, j: number) => Math.hypot(...design.map((row: number[]) => row[j])));
    const scaled = design.map((row: number[]) => row.map((v, j) => v / norms[j]));
    expect(conditionNumber(householderQr(scaled.flat(), 12, 6))).toBeCloseTo(expected, 5);
  });

  it("gives sigma_max / sigma_min for a matrix with known singular values", () => {
    // diag(10, 2, 0.5) stacked on zeros has singular values 10, 2, 0.5: kappa = 20 (definition).
    const a = [10, 0, 0, 0, 2, 0, 0, 0, 0.5, 0, 0, 0];
    expect(conditionNumber(householderQr(a, 4, 3))).toBeCloseTo(20, 8);
  });

  it("returns Infinity for an exactly singular matrix and a huge value for a numerically singular one", () => {
    // A zero column leaves R_11 = 0 exactly; proportional columns leave R_11 at rounding level (~1e-16 of R_00),
    // so kappa must exceed 1e14 (1 / (a few eps)).
    expect(conditionNumber(householderQr([1, 0, 2, 0, 3, 0], 3, 2))).toBe(Infinity);
    expect(conditionNumber(householderQr([1, 2, 2, 4, 3, 6], 3, 2))).toBeGreaterThan(1e14);
  });

  it("handles huge and tiny entries without overflow (scaled Householder norm)", () => {
    // diag(1e200, 1e-200) x = (2e200, 3e-200) -> x = (2, 3), exact in closed form; a naive sum of squares of
    // 1e200 would overflow to Infinity (1e400 > 1.8e308).
    const x = leastSquares([[1e200, 0], [0, 1e-200]], [[2e200], [3e-200]]);
    expect(x[0]).toBeCloseTo(2, 14);
    expect(x[1]).toBeCloseTo(3, 14);
  });

  it("rejects bad shapes and non-finite entries with exact messages", () => {
    expect(() => householderQr([1, 2], 1, 2)).toThrow(new RangeError("matrix must have rows >= cols >= 1"));
    expect(() => householderQr([1, 2, 3], 2, 2)).toThrow(new RangeError("matrix length must equal rows * cols"));
    expect(() => householderQr([1, NaN], 2, 1)).toThrow(new RangeError("matrix entries must be finite numbers"));
    expect(() => householderQr([1, Infinity], 2, 1)).toThrow(new RangeError("matrix entries must be finite numbers"));
  });
});

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

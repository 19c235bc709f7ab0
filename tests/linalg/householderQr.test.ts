import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import {
  applyQTransposeInPlace, conditionNumber, householderQr, solveUpperTriangular,
} from "../../lib/linalg/index.ts";

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

import { describe, expect, it } from "vitest";
import { conditionNumber, conditionNumberReference } from "../../lib/linalg/conditionNumber.ts";
import { householderQr } from "../../lib/linalg/householderQr.ts";
import { kernelFixture, lcg, matrix, xDesign } from "../kernels/formulas.ts";

describe("conditionNumber through the float64 SIMD kernel", () => {
  it("equals NumPy's 2-norm condition number of designs wider than one block", () => {
    // Source: np.linalg.cond (tests/fixtures/kernels/make_kernels.py). The power iterations stop when the Rayleigh
    // quotient moves by less than 1e-10 relative; 1e-8 on kappa leaves room for slow convergence (common practice).
    for (const { rows, cols, conditionNumber: expected } of kernelFixture.leastSquares) {
      const kappa = conditionNumber(householderQr(matrix(xDesign, rows, cols), rows, cols));
      expect(Math.abs(kappa / expected - 1)).toBeLessThanOrEqual(1e-8);
    }
  });

  it("agrees with the TypeScript reference, including one column and exactly singular matrices", () => {
    const random = lcg(29);
    for (const [rows, cols] of [[1, 1], [3, 2], [9, 9], [70, 33], [130, 67]]) {
      const qr = householderQr(Float64Array.from({ length: rows * cols }, random), rows, cols);
      expect(Math.abs(conditionNumber(qr) / conditionNumberReference(qr) - 1)).toBeLessThanOrEqual(1e-8);
    }
    // A zero column leaves R_11 = 0 exactly: kappa is infinite by definition.
    expect(conditionNumber(householderQr([1, 0, 2, 0, 3, 0], 3, 2))).toBe(Infinity);
    expect(() => conditionNumber(householderQr([1, 2], 2, 1), 0)).toThrow(new RangeError("maxIterations must be a positive integer"));
  });
});

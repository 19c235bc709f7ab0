import { describe, expect, it } from "vitest";
import { kernelInstance } from "../../lib/kernels/instance.ts";
import { multiplyPackedInto, packColumns } from "../../lib/linalg/index.ts";
import { multiplyPackedIntoReference } from "../../lib/linalg/matrixProduct.ts";
import { aProduct, bProduct, gamma, kernelFixture, lcg, matrix, U64 } from "../kernels/formulas.ts";

describe("multiplyPackedInto", () => {
  it("equals the definition of the matrix product for ragged sizes", () => {
    // Reference: the triple loop out[i][j] = sum_k a[i][k] b[k][j] (definition), sizes not multiples of 4.
    const rows = 7, inner = 11, cols = 13;
    const a = Float64Array.from({ length: rows * inner }, (_, i) => Math.sin(i + 1));
    const b = Float64Array.from({ length: inner * cols }, (_, i) => Math.cos(2 * i + 1));
    const out = new Float64Array(rows * cols);
    multiplyPackedInto(a, rows, packColumns(b, inner, cols), out);
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < cols; j++) {
        let s = 0;
        for (let k = 0; k < inner; k++) s += a[i * inner + k] * b[k * cols + j];
        expect(out[i * cols + j]).toBeCloseTo(s, 13);
      }
    }
    const before = out.slice();
    multiplyPackedInto(a, rows, packColumns(b, inner, cols), out, 0, rows, true);
    for (let i = 0; i < out.length; i++) expect(out[i]).toBeCloseTo(0, 13 - Math.ceil(Math.log10(1 + Math.abs(before[i]))));
  });
});

/** sum_k |a_ik| |b_kj|: the scale of the rounding error of one inner product (Higham, section 3.1). */
function absoluteProduct(a: Float64Array, b: Float64Array, rows: number, inner: number, cols: number): Float64Array {
  const out = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) {
    let s = 0;
    for (let k = 0; k < inner; k++) s += Math.abs(a[i * inner + k] * b[k * cols + j]);
    out[i * cols + j] = s;
  }
  return out;
}

describe("multiplyPackedInto through the float64 SIMD kernel", () => {
  it("runs on WebAssembly with 128-bit SIMD here (else every comparison below would be the reference twice)", () => {
    expect(kernelInstance()).not.toBeNull();
  });

  it("matches NumPy's float64 product on shapes across the kernel's block edges", () => {
    // Source: tests/fixtures/kernels/make_kernels.py (A @ B with NumPy). Both sides round each inner product of
    // length n at most by gamma_n sum |a||b| (Higham, eq. 3.5), so they differ by at most twice that.
    for (const { rows, inner, cols, product } of kernelFixture.products) {
      const a = matrix(aProduct, rows, inner);
      const b = matrix(bProduct, inner, cols);
      const out = new Float64Array(rows * cols);
      multiplyPackedInto(a, rows, packColumns(b, inner, cols), out);
      const scale = absoluteProduct(a, b, rows, inner, cols);
      for (let i = 0; i < out.length; i++) expect(Math.abs(out[i] - product[i])).toBeLessThanOrEqual(2 * gamma(inner, U64) * scale[i]);
    }
  });

  it("agrees with the TypeScript reference on empty, one-row and ragged sizes, writing and subtracting", () => {
    const random = lcg(3);
    // rows: 0, 1, not a multiple of 4, one past a block of 64; inner: 0, 1, one past a slab of 256 and of 512;
    // cols: 1, not a multiple of the panel width 4.
    const shapes = [[0, 3, 5], [1, 1, 1], [1, 7, 3], [3, 0, 5], [5, 9, 2], [63, 17, 9], [65, 257, 7], [9, 513, 6], [70, 40, 13]];
    for (const [rows, inner, cols] of shapes) {
      const a = Float64Array.from({ length: rows * inner }, random);
      const b = Float64Array.from({ length: inner * cols }, random);
      const scale = absoluteProduct(a, b, rows, inner, cols);
      for (const subtract of [false, true]) {
        const start = Float64Array.from({ length: rows * cols }, random);
        const ours = start.slice();
        const reference = start.slice();
        multiplyPackedInto(a, rows, packColumns(b, inner, cols), ours, 0, rows, subtract);
        multiplyPackedIntoReference(a, rows, packColumns(b, inner, cols), reference, 0, rows, subtract);
        for (let i = 0; i < ours.length; i++) {
          // Same bound as above plus one rounding of the subtraction from |out|.
          const bound = 2 * gamma(inner + 1, U64) * (scale[i] + Math.abs(start[i]));
          expect(Math.abs(ours[i] - reference[i])).toBeLessThanOrEqual(bound);
        }
      }
    }
  });

  it("touches only the rows asked for", () => {
    const random = lcg(5);
    const rows = 11, inner = 6, cols = 5;
    const a = Float64Array.from({ length: rows * inner }, random);
    const b = packColumns(Float64Array.from({ length: inner * cols }, random), inner, cols);
    const out = new Float64Array(rows * cols).fill(7);
    multiplyPackedInto(a, rows, b, out, 3, 8);
    const full = new Float64Array(rows * cols);
    multiplyPackedIntoReference(a, rows, b, full);
    for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) {
      const v = out[i * cols + j];
      if (i < 3 || i >= 8) expect(v).toBe(7);
      else expect(v).toBeCloseTo(full[i * cols + j], 13);
    }
  });

  it("keeps its exact error messages", () => {
    const b = packColumns([1, 2, 3, 4], 2, 2);
    expect(() => multiplyPackedInto(new Float64Array(3), 2, b, new Float64Array(4))).toThrow(new RangeError("left length must equal rows * inner"));
    expect(() => multiplyPackedInto(new Float64Array(4), 2, b, new Float64Array(3))).toThrow(new RangeError("out length must equal rows * cols"));
  });
});

import { describe, expect, it } from "vitest";
import { multiplyPackedInto, packColumns } from "../../lib/linalg/index.ts";

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

import { describe, expect, it } from "vitest";
import { kernelInstance, MODE_SET } from "../../lib/kernels/instance.ts";
import { cSingle, fSingle, gamma, kernelFixture, matrix, U32, U64 } from "./formulas.ts";

/** Runs the float32 kernels directly on row-major float32 inputs: the batched product and the single map. */
function float32Kernels(f: Float64Array, rows: number, inner: number, c: Float64Array, cols: number) {
  const kernels = kernelInstance()!;
  const panels = Math.ceil(cols / 8);
  kernels.begin();
  const fp = kernels.scratch(rows * inner * 4);
  const source = kernels.scratch(inner * cols * 4);
  const packed = kernels.scratch(panels * 8 * inner * 4);
  const out = kernels.scratch(rows * cols * 4);
  const single = kernels.scratch(panels * 8 * 4);
  const work = kernels.scratch(kernels.exports.gemmWorkBytes());
  kernels.f32.set(f, fp >> 2);
  kernels.f32.set(c, source >> 2);
  kernels.exports.packPanelsF32(source, cols, 0, inner, cols, packed, inner * 8);
  kernels.exports.gemmF32(rows, cols, inner, fp, inner, 0, packed, inner * 8, out, cols, MODE_SET, work);
  const batched = Float64Array.from(kernels.f32.subarray(out >> 2, (out >> 2) + rows * cols));
  const firstRow = new Float64Array(cols);
  if (rows > 0) {
    kernels.exports.gemvF32(inner, cols, fp, packed, inner * 8, single);
    firstRow.set(kernels.f32.subarray(single >> 2, (single >> 2) + cols));
  }
  return { batched, firstRow };
}

describe("float32 kernels (stored-model evaluation)", () => {
  it("stay within the float32 inner-product error bound of NumPy's exact product", () => {
    // Source: tests/fixtures/kernels/make_kernels.py (float64 product of the float32-rounded inputs: exact to
    // gamma_n in float64, negligible here). Bound: a float32 inner product of length n is within
    // gamma_n(u32) sum |f||c| of the exact one (Higham, Accuracy and Stability, 2nd ed., eq. 3.5). Inner 600 crosses
    // the kernel's slab of 512 inner indices; 11, 19 and 9 columns are not multiples of the panel width 8.
    for (const { rows, inner, cols, exact } of kernelFixture.float32Products) {
      const f = matrix(fSingle, rows, inner).map(Math.fround);
      const c = matrix(cSingle, inner, cols).map(Math.fround);
      const { batched, firstRow } = float32Kernels(f, rows, inner, c, cols);
      for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) {
        let scale = 0;
        for (let k = 0; k < inner; k++) scale += Math.abs(f[i * inner + k] * c[k * cols + j]);
        const bound = (gamma(inner, U32) + gamma(inner, U64)) * scale;
        expect(Math.abs(batched[i * cols + j] - exact[i * cols + j])).toBeLessThanOrEqual(bound);
        if (i === 0) expect(Math.abs(firstRow[j] - exact[j])).toBeLessThanOrEqual(bound);
      }
    }
  });

  it("really computes in float32: the error is far above float64 rounding and far below the worst-case bound", () => {
    // Row 0, column 0 of the first fixture: sum |f||c| is about 1250, so float64 rounding stays below
    // gamma_600(u64) * 1250 ~ 1e-10 while float32 rounding of a 600-term sum is typically sqrt(600) u32 * 1250
    // ~ 2e-6 (rounding errors behave like random walks: Higham, section 3.6) against the bound of ~ 4e-2.
    const { rows, inner, cols, exact } = kernelFixture.float32Products[0];
    const f = matrix(fSingle, rows, inner).map(Math.fround);
    const c = matrix(cSingle, inner, cols).map(Math.fround);
    const { batched } = float32Kernels(f, rows, inner, c, cols);
    let worst = 0;
    let worstScale = 0;
    for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) {
      let scale = 0;
      for (let k = 0; k < inner; k++) scale += Math.abs(f[i * inner + k] * c[k * cols + j]);
      worst = Math.max(worst, Math.abs(batched[i * cols + j] - exact[i * cols + j]));
      worstScale = Math.max(worstScale, scale);
    }
    expect(worst).toBeGreaterThan(10 * gamma(inner, U64) * worstScale);
    expect(worst).toBeLessThan(gamma(inner, U32) * worstScale / 10);
  });
});

import { kernelInstance, MODE_SET, MODE_SUBTRACT } from "../kernels/instance.ts";

/** Width of the column panels of a packed right-hand matrix (the register block of the product kernel). */
export const PANEL_WIDTH = 4;

/** A `inner x cols` matrix rearranged into column panels of {@link PANEL_WIDTH}: `panel[p][k][c]`, zero padded. */
export interface PackedColumns {
  inner: number;
  cols: number;
  panels: number;
  data: Float64Array;
}

/**
 * Rearrange a row-major `inner x cols` matrix into contiguous column panels so that the product kernel
 * reads both operands sequentially (the packing step of a blocked matrix product).
 *
 * @throws {RangeError} "matrix length must equal inner * cols"
 * Source: K. Goto and R. A. van de Geijn, "Anatomy of high-performance matrix multiplication",
 * ACM Trans. Math. Softw. 34(3), 12 (2008), section 5 (packing).
 */
export function packColumns(matrix: ArrayLike<number>, inner: number, cols: number): PackedColumns {
  if (!Number.isInteger(inner) || !Number.isInteger(cols) || inner < 0 || cols < 0 || matrix.length !== inner * cols) {
    throw new RangeError("matrix length must equal inner * cols");
  }
  const panels = Math.ceil(cols / PANEL_WIDTH);
  const data = new Float64Array(panels * inner * PANEL_WIDTH);
  for (let p = 0; p < panels; p++) {
    const c0 = p * PANEL_WIDTH;
    const width = Math.min(PANEL_WIDTH, cols - c0);
    const base = p * inner * PANEL_WIDTH;
    for (let k = 0; k < inner; k++) {
      for (let c = 0; c < width; c++) data[base + k * PANEL_WIDTH + c] = matrix[k * cols + c0 + c];
    }
  }
  return { inner, cols, panels, data };
}

const ROW_BLOCK = 4;
const ROW_CHUNK = 64;

/**
 * `out[i][j] = sum_k left[i][k] right[k][j]` for rows `rowStart <= i < rowEnd` of the row-major `left`
 * (`rows x inner`), with `right` packed by {@link packColumns}; `out` is row-major `rows x right.cols`.
 * With `subtract` the product is subtracted from `out` instead of written to it (`out -= left right`).
 * Runs the float64 SIMD kernel of `lib/kernels` (blocked, 4 x 4 register tile) where WebAssembly is available,
 * else {@link multiplyPackedIntoReference}; the two agree to rounding (each output is one inner product,
 * summed in a different order).
 *
 * @throws {RangeError} "left length must equal rows * inner" / "out length must equal rows * cols"
 * Source: Goto and van de Geijn (2008), sections 4-6 (blocked product with a register micro-kernel).
 */
export function multiplyPackedInto(
  left: Float64Array,
  rows: number,
  right: PackedColumns,
  out: Float64Array,
  rowStart = 0,
  rowEnd = rows,
  subtract = false,
): void {
  const { inner, cols, data } = right;
  if (left.length !== rows * inner) throw new RangeError("left length must equal rows * inner");
  if (out.length !== rows * cols) throw new RangeError("out length must equal rows * cols");
  const kernels = kernelInstance();
  if (!kernels) {
    multiplyPackedIntoReference(left, rows, right, out, rowStart, rowEnd, subtract);
    return;
  }
  const count = rowEnd - rowStart;
  if (count <= 0 || cols === 0) return;
  kernels.begin();
  const a = kernels.scratch(count * inner * 8);
  const b = kernels.scratch(data.length * 8);
  const c = kernels.scratch(count * cols * 8);
  const work = kernels.scratch(kernels.exports.gemmWorkBytes());
  const heap = kernels.f64;
  heap.set(left.subarray(rowStart * inner, rowEnd * inner), a >> 3);
  heap.set(data, b >> 3);
  const outRows = out.subarray(rowStart * cols, rowEnd * cols);
  if (subtract) heap.set(outRows, c >> 3);
  kernels.exports.gemmF64(count, cols, inner, a, inner, 0, b, inner * PANEL_WIDTH, c, cols, subtract ? MODE_SUBTRACT : MODE_SET, work);
  outRows.set(kernels.f64.subarray(c >> 3, (c >> 3) + count * cols));
}

/**
 * The TypeScript reference of {@link multiplyPackedInto} (same arguments, same checks): rows in chunks of 64 that
 * stay in cache; each column panel is read once per chunk and reused by all its row blocks, and the innermost
 * kernel keeps a 4 x 4 block of the result in local variables. The WebAssembly kernel is tested against it.
 */
export function multiplyPackedIntoReference(
  left: Float64Array,
  rows: number,
  right: PackedColumns,
  out: Float64Array,
  rowStart = 0,
  rowEnd = rows,
  subtract = false,
): void {
  const { inner, cols, panels, data } = right;
  if (left.length !== rows * inner) throw new RangeError("left length must equal rows * inner");
  if (out.length !== rows * cols) throw new RangeError("out length must equal rows * cols");
  const blocksPerChunk = ROW_CHUNK / ROW_BLOCK;
  // The chunk's rows, interleaved by blocks of 4: leftPack[b][k * 4 + r].
  const leftPack = new Float64Array(ROW_CHUNK * inner);
  const block = new Float64Array(ROW_BLOCK * PANEL_WIDTH);
  for (let chunk0 = rowStart; chunk0 < rowEnd; chunk0 += ROW_CHUNK) {
    const chunkEnd = Math.min(rowEnd, chunk0 + ROW_CHUNK);
    const blockCount = Math.ceil((chunkEnd - chunk0) / ROW_BLOCK);
    leftPack.fill(0);
    for (let b = 0; b < blockCount; b++) {
      const r0 = chunk0 + b * ROW_BLOCK;
      const height = Math.min(ROW_BLOCK, chunkEnd - r0);
      const base = b * ROW_BLOCK * inner;
      for (let r = 0; r < height; r++) {
        const src = (r0 + r) * inner;
        for (let k = 0; k < inner; k++) leftPack[base + k * ROW_BLOCK + r] = left[src + k];
      }
    }
    // Each column panel is read from memory once per chunk and reused, from cache, by all its row blocks.
    for (let p = 0; p < panels; p++) {
      const c0 = p * PANEL_WIDTH;
      const width = Math.min(PANEL_WIDTH, cols - c0);
      for (let b = 0; b < blockCount && b < blocksPerChunk; b++) {
        const r0 = chunk0 + b * ROW_BLOCK;
        const height = Math.min(ROW_BLOCK, chunkEnd - r0);
        let c00 = 0, c01 = 0, c02 = 0, c03 = 0;
        let c10 = 0, c11 = 0, c12 = 0, c13 = 0;
        let c20 = 0, c21 = 0, c22 = 0, c23 = 0;
        let c30 = 0, c31 = 0, c32 = 0, c33 = 0;
        let bi = p * inner * PANEL_WIDTH;
        let ai = b * ROW_BLOCK * inner;
        for (let k = 0; k < inner; k++, ai += 4, bi += 4) {
          const a0 = leftPack[ai], a1 = leftPack[ai + 1], a2 = leftPack[ai + 2], a3 = leftPack[ai + 3];
          const b0 = data[bi], b1 = data[bi + 1], b2 = data[bi + 2], b3 = data[bi + 3];
          c00 += a0 * b0; c01 += a0 * b1; c02 += a0 * b2; c03 += a0 * b3;
          c10 += a1 * b0; c11 += a1 * b1; c12 += a1 * b2; c13 += a1 * b3;
          c20 += a2 * b0; c21 += a2 * b1; c22 += a2 * b2; c23 += a2 * b3;
          c30 += a3 * b0; c31 += a3 * b1; c32 += a3 * b2; c33 += a3 * b3;
        }
        const sign = subtract ? -1 : 1;
        block[0] = c00; block[1] = c01; block[2] = c02; block[3] = c03;
        block[4] = c10; block[5] = c11; block[6] = c12; block[7] = c13;
        block[8] = c20; block[9] = c21; block[10] = c22; block[11] = c23;
        block[12] = c30; block[13] = c31; block[14] = c32; block[15] = c33;
        for (let r = 0; r < height; r++) {
          const o = (r0 + r) * cols + c0;
          for (let c = 0; c < width; c++) out[o + c] = (subtract ? out[o + c] : 0) + sign * block[r * 4 + c];
        }
      }
    }
  }
}

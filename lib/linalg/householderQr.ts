import { kernelInstance } from "../kernels/instance.ts";
import { multiplyPackedIntoReference as multiplyPackedInto, packColumns } from "./matrixProduct.ts";

/** A Householder QR factorisation of a tall matrix, in LAPACK's compact form (column-major). */
export interface HouseholderQr {
  rows: number;
  cols: number;
  /** Column-major `rows x cols`: R on and above the diagonal, the reflector vectors below it (unit leading entry implied). */
  factors: Float64Array;
  /** Reflector scalars: `H_k = I - tau_k v_k v_k^T`. */
  tau: Float64Array;
}

/**
 * Householder QR of a tall matrix: `A = Q R` with `Q = H_0 H_1 ... H_{n-1}`, `H_k = I - tau_k v_k v_k^T`.
 * Each reflector is built as in LAPACK `dgeqr2`/`dlarfg` (beta = -sign(alpha) ||x||), so the diagonal of R
 * carries the signs that make `Q` a product of true reflections.
 *
 * @param matrix row-major `rows x cols` values (dimensionless; any consistent unit), not modified
 * @param rows number of rows m (m >= cols)
 * @param cols number of columns n (n >= 1)
 * @throws {RangeError} "matrix must have rows >= cols >= 1" or "matrix length must equal rows * cols"
 * @throws {RangeError} "matrix entries must be finite numbers"
 * Runs the float64 SIMD kernels of `lib/kernels` (same blocked algorithm, the trailing update by the blocked
 * product) where WebAssembly is available, else {@link householderQrReference}.
 * Source: G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., Algorithm 5.2.1 (Householder QR).
 */
export function householderQr(matrix: ArrayLike<number>, rows: number, cols: number): HouseholderQr {
  checkMatrix(matrix, rows, cols);
  const kernels = kernelInstance();
  if (!kernels) return householderQrReference(matrix, rows, cols);
  kernels.begin();
  const a = kernels.scratch(rows * cols * 8);
  const tau = kernels.scratch(cols * 8);
  const work = kernels.scratch(kernels.exports.qrWorkBytes(rows, cols, 0));
  const heap = kernels.f64;
  const base = a >> 3;
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < cols; j++) {
      const value = matrix[i * cols + j];
      if (!Number.isFinite(value)) throw new RangeError("matrix entries must be finite numbers");
      heap[base + j * rows + i] = value;
    }
  }
  kernels.exports.qrFactor(a, rows, cols, tau, work);
  const after = kernels.f64;
  return {
    rows,
    cols,
    factors: after.slice(base, base + rows * cols),
    tau: after.slice(tau >> 3, (tau >> 3) + cols),
  };
}

function checkMatrix(matrix: ArrayLike<number>, rows: number, cols: number): void {
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || cols < 1 || rows < cols) {
    throw new RangeError("matrix must have rows >= cols >= 1");
  }
  if (matrix.length !== rows * cols) throw new RangeError("matrix length must equal rows * cols");
}

/** The TypeScript reference of {@link householderQr}: same arguments, checks and algorithm. */
export function householderQrReference(matrix: ArrayLike<number>, rows: number, cols: number): HouseholderQr {
  checkMatrix(matrix, rows, cols);
  const a = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < cols; j++) {
      const value = matrix[i * cols + j];
      if (!Number.isFinite(value)) throw new RangeError("matrix entries must be finite numbers");
      a[j * rows + i] = value;
    }
  }
  const tau = new Float64Array(cols);
  const qr: HouseholderQr = { rows, cols, factors: a, tau };
  for (let k0 = 0; k0 < cols; k0 += BLOCK) {
    const kb = Math.min(BLOCK, cols - k0);
    // Factor the panel with the plain algorithm, then update the trailing columns at once (compact WY).
    for (let k = k0; k < k0 + kb; k++) reflectColumn(a, rows, tau, k, k0 + kb);
    if (k0 + kb < cols) applyBlockToTrailingColumns(qr, k0, kb);
  }
  return { rows, cols, factors: a, tau };
}

/** Reflectors per block of the blocked algorithms. */
const BLOCK = 32;

/**
 * Build reflector k from column k (LAPACK `dlarfg`) and apply it to columns k+1 .. end-1 (column-major, leading
 * dimension `rows`).
 */
function reflectColumn(a: Float64Array, rows: number, tau: Float64Array, k: number, end: number): void {
  const base = k * rows;
  // Scaled norm of x = A[k:, k] (avoids overflow for huge entries).
  let scale = 0;
  for (let i = k; i < rows; i++) scale = Math.max(scale, Math.abs(a[base + i]));
  if (scale === 0) {
    tau[k] = 0;
    return;
  }
  let sumSquares = 0;
  for (let i = k; i < rows; i++) {
    const x = a[base + i] / scale;
    sumSquares += x * x;
  }
  const alpha = a[base + k];
  const norm = scale * Math.sqrt(sumSquares);
  const beta = alpha >= 0 ? -norm : norm;
  const tauK = (beta - alpha) / beta;
  const inverse = 1 / (alpha - beta);
  for (let i = k + 1; i < rows; i++) a[base + i] *= inverse;
  a[base + k] = beta;
  tau[k] = tauK;
  for (let j = k + 1; j < end; j++) {
    const cj = j * rows;
    let dot = a[cj + k];
    for (let i = k + 1; i < rows; i++) dot += a[base + i] * a[cj + i];
    const s = tauK * dot;
    a[cj + k] -= s;
    for (let i = k + 1; i < rows; i++) a[cj + i] -= s * a[base + i];
  }
}

/** Compact WY form of reflectors k0 .. k0+kb-1: `H_k0 ... H_{k0+kb-1} = I - V T V^T` on rows k0 .. rows-1. */
interface CompactWy {
  /** Rows of V (rows - k0). */
  m: number;
  /** V, row-major `m x kb`, unit lower trapezoidal. */
  v: Float64Array;
  /** V^T, row-major `kb x m`. */
  vt: Float64Array;
  /** T, row-major `kb x kb`, upper triangular. */
  t: Float64Array;
}

/** LAPACK `dlarft` (forward, column-wise): T[j][j] = tau_j, T[0:j, j] = -tau_j T[0:j, 0:j] (V[:, 0:j]^T v_j). */
function compactWy(qr: HouseholderQr, k0: number, kb: number): CompactWy {
  const { rows, factors, tau } = qr;
  const m = rows - k0;
  const v = new Float64Array(m * kb);
  const vt = new Float64Array(kb * m);
  for (let j = 0; j < kb; j++) {
    const base = (k0 + j) * rows + k0;
    v[j * kb + j] = 1;
    vt[j * m + j] = 1;
    for (let i = j + 1; i < m; i++) {
      const value = factors[base + i];
      v[i * kb + j] = value;
      vt[j * m + i] = value;
    }
  }
  const t = new Float64Array(kb * kb);
  const z = new Float64Array(kb);
  for (let j = 0; j < kb; j++) {
    const tauJ = tau[k0 + j];
    for (let i = 0; i < j; i++) {
      let s = 0;
      for (let r = j; r < m; r++) s += vt[i * m + r] * vt[j * m + r];
      z[i] = s;
    }
    for (let i = 0; i < j; i++) {
      let s = 0;
      for (let l = i; l < j; l++) s += t[i * kb + l] * z[l];
      t[i * kb + j] = -tauJ * s;
    }
    t[j * kb + j] = tauJ;
  }
  return { m, v, vt, t };
}

/**
 * Apply `Q_block^T = I - V T^T V^T` to the columns after the block. Column-major storage makes those columns a
 * row-major `A^T`, updated as `A^T -= (A^T V T) V^T` with two matrix products.
 */
function applyBlockToTrailingColumns(qr: HouseholderQr, k0: number, kb: number): void {
  const { rows, cols, factors } = qr;
  const { m, v, vt, t } = compactWy(qr, k0, kb);
  const first = k0 + kb;
  const n = cols - first;
  const at = new Float64Array(n * m);
  for (let j = 0; j < n; j++) at.set(factors.subarray((first + j) * rows + k0, (first + j + 1) * rows), j * m);
  const w = new Float64Array(n * kb);
  multiplyPackedInto(at, n, packColumns(v, m, kb), w);
  // W <- W T (T upper triangular), right to left so that columns not yet updated are still the originals.
  for (let r = 0; r < n; r++) {
    const row = r * kb;
    for (let j = kb - 1; j >= 0; j--) {
      let s = 0;
      for (let l = 0; l <= j; l++) s += w[row + l] * t[l * kb + j];
      w[row + j] = s;
    }
  }
  multiplyPackedInto(w, n, packColumns(vt, kb, m), at, 0, n, true);
  for (let j = 0; j < n; j++) factors.set(at.subarray(j * m, (j + 1) * m), (first + j) * rows + k0);
}

/**
 * Overwrite `B` (row-major `rows x rhsCount`) with `Q^T B`. The reflectors are applied in blocks of 32 in
 * compact WY form, `H_k ... H_{k+b-1} = I - V T V^T`, so that the work is two matrix products per block
 * (`W = T^T V^T B`, `B -= V W`) done by the register-blocked kernel of `matrixProduct.ts`.
 *
 * @param qr the factorisation from {@link householderQr}
 * @param rhs row-major `qr.rows x rhsCount`, overwritten
 * @throws {RangeError} "right-hand side length must equal rows * rhsCount"
 * Runs the float64 SIMD kernels of `lib/kernels` where WebAssembly is available, else
 * {@link applyQTransposeInPlaceReference}.
 * Source: R. Schreiber and C. Van Loan, "A storage-efficient WY representation for products of Householder
 * transformations", SIAM J. Sci. Stat. Comput. 10(1), 53-57 (1989); LAPACK `dlarft`/`dlarfb`.
 */
export function applyQTransposeInPlace(qr: HouseholderQr, rhs: Float64Array, rhsCount: number): void {
  checkRhs(qr, rhs, rhsCount);
  if (rhsCount === 0) return;
  const kernels = kernelInstance();
  if (!kernels) return applyQTransposeInPlaceReference(qr, rhs, rhsCount);
  const { rows, cols, factors, tau } = qr;
  kernels.begin();
  const a = kernels.scratch(rows * cols * 8);
  const t = kernels.scratch(cols * 8);
  const b = kernels.scratch(rows * rhsCount * 8);
  const work = kernels.scratch(kernels.exports.qrWorkBytes(rows, cols, rhsCount));
  const heap = kernels.f64;
  heap.set(factors, a >> 3);
  heap.set(tau, t >> 3);
  heap.set(rhs, b >> 3);
  kernels.exports.applyQTranspose(a, rows, cols, t, b, rhsCount, work);
  rhs.set(kernels.f64.subarray(b >> 3, (b >> 3) + rows * rhsCount));
}

function checkRhs(qr: HouseholderQr, rhs: Float64Array, rhsCount: number): void {
  if (!Number.isInteger(rhsCount) || rhsCount < 0 || rhs.length !== qr.rows * rhsCount) {
    throw new RangeError("right-hand side length must equal rows * rhsCount");
  }
}

/** The TypeScript reference of {@link applyQTransposeInPlace}. */
export function applyQTransposeInPlaceReference(qr: HouseholderQr, rhs: Float64Array, rhsCount: number): void {
  const { cols } = qr;
  checkRhs(qr, rhs, rhsCount);
  if (rhsCount === 0) return;
  for (let k0 = 0; k0 < cols; k0 += BLOCK) {
    const kb = Math.min(BLOCK, cols - k0);
    const { m, v, vt, t } = compactWy(qr, k0, kb);
    const sub = rhs.subarray(k0 * rhsCount);
    const w = new Float64Array(kb * rhsCount);
    multiplyPackedInto(vt, kb, packColumns(sub, m, rhsCount), w);
    // W <- T^T W, bottom row first so that rows not yet updated are still the originals.
    for (let i = kb - 1; i >= 0; i--) {
      const ri = i * rhsCount;
      const tii = t[i * kb + i];
      for (let c = 0; c < rhsCount; c++) w[ri + c] *= tii;
      for (let l = 0; l < i; l++) {
        const tli = t[l * kb + i];
        if (tli === 0) continue;
        const rl = l * rhsCount;
        for (let c = 0; c < rhsCount; c++) w[ri + c] += tli * w[rl + c];
      }
    }
    multiplyPackedInto(v, m, packColumns(w, kb, rhsCount), sub, 0, m, true);
  }
}

/**
 * Solve `R X = Y` for the upper-triangular `R` of a factorisation, where `Y` is the first `cols` rows of
 * `Q^T B` (row-major, `rhsCount` columns). Blocked back substitution: from the bottom, each block of 64 rows
 * first subtracts `R[block, below] X[below]` with one matrix product, then solves its own small triangle row by row.
 *
 * @returns `X`, row-major `cols x rhsCount`
 * @throws {RangeError} "R is singular" when a diagonal entry is zero
 * Runs the float64 SIMD kernels of `lib/kernels` where WebAssembly is available, else
 * {@link solveUpperTriangularReference}.
 * Source: Golub and Van Loan, Matrix Computations, 4th ed., Algorithm 3.1.2 (row-oriented back substitution)
 * and section 3.1.4 (block triangular solves).
 */
export function solveUpperTriangular(qr: HouseholderQr, qtRhs: Float64Array, rhsCount: number): Float64Array {
  checkTriangular(qr, qtRhs, rhsCount);
  const kernels = kernelInstance();
  if (!kernels) return solveUpperTriangularReference(qr, qtRhs, rhsCount);
  const { rows, cols, factors } = qr;
  if (rhsCount === 0) return new Float64Array(0);
  kernels.begin();
  const a = kernels.scratch(rows * cols * 8);
  const x = kernels.scratch(cols * rhsCount * 8);
  const work = kernels.scratch(kernels.exports.qrWorkBytes(rows, cols, rhsCount));
  const heap = kernels.f64;
  heap.set(factors, a >> 3);
  heap.set(qtRhs.subarray(0, cols * rhsCount), x >> 3);
  kernels.exports.solveUpper(a, rows, cols, x, rhsCount, work);
  return kernels.f64.slice(x >> 3, (x >> 3) + cols * rhsCount);
}

function checkTriangular(qr: HouseholderQr, qtRhs: Float64Array, rhsCount: number): void {
  const { rows, cols, factors } = qr;
  if (qtRhs.length < cols * rhsCount) throw new RangeError("right-hand side length must equal rows * rhsCount");
  for (let k = 0; k < cols; k++) if (factors[k * rows + k] === 0) throw new RangeError("R is singular");
}

/** The TypeScript reference of {@link solveUpperTriangular}. */
export function solveUpperTriangularReference(qr: HouseholderQr, qtRhs: Float64Array, rhsCount: number): Float64Array {
  const { rows, cols, factors } = qr;
  checkTriangular(qr, qtRhs, rhsCount);
  const x = qtRhs.slice(0, cols * rhsCount);
  const blockRows = 64;
  for (let end = cols; end > 0; end -= blockRows) {
    const start = Math.max(0, end - blockRows);
    const height = end - start;
    const below = cols - end;
    if (below > 0) {
      const r = new Float64Array(height * below);
      for (let i = 0; i < height; i++) for (let j = 0; j < below; j++) r[i * below + j] = factors[(end + j) * rows + start + i];
      const known = packColumns(x.subarray(end * rhsCount), below, rhsCount);
      multiplyPackedInto(r, height, known, x.subarray(start * rhsCount, end * rhsCount), 0, height, true);
    }
    for (let k = end - 1; k >= start; k--) {
      const rk = k * rhsCount;
      for (let j = k + 1; j < end; j++) {
        const rkj = factors[j * rows + k];
        if (rkj === 0) continue;
        const rj = j * rhsCount;
        for (let c = 0; c < rhsCount; c++) x[rk + c] -= rkj * x[rj + c];
      }
      const inverse = 1 / factors[k * rows + k];
      for (let c = 0; c < rhsCount; c++) x[rk + c] *= inverse;
    }
  }
  return x;
}

/** The diagonal of R (signed), length `cols`. */
export function rDiagonal(qr: HouseholderQr): Float64Array {
  const d = new Float64Array(qr.cols);
  for (let k = 0; k < qr.cols; k++) d[k] = qr.factors[k * qr.rows + k];
  return d;
}

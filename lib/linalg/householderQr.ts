import { multiplyPackedInto, packColumns } from "./matrixProduct.ts";

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
 * Source: G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., Algorithm 5.2.1 (Householder QR).
 */
export function householderQr(matrix: ArrayLike<number>, rows: number, cols: number): HouseholderQr {
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || cols < 1 || rows < cols) {
    throw new RangeError("matrix must have rows >= cols >= 1");
  }
  if (matrix.length !== rows * cols) throw new RangeError("matrix length must equal rows * cols");
  const a = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < cols; j++) {
      const value = matrix[i * cols + j];
      if (!Number.isFinite(value)) throw new RangeError("matrix entries must be finite numbers");
      a[j * rows + i] = value;
    }
  }
  const tau = new Float64Array(cols);
  for (let k = 0; k < cols; k++) {
    const base = k * rows;
    // Scaled norm of x = A[k:, k] (avoids overflow for huge entries).
    let scale = 0;
    for (let i = k; i < rows; i++) scale = Math.max(scale, Math.abs(a[base + i]));
    if (scale === 0) {
      tau[k] = 0;
      continue;
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
    // Apply H_k to the trailing columns: A[k:, j] -= tau (v^T A[k:, j]) v.
    for (let j = k + 1; j < cols; j++) {
      const cj = j * rows;
      let dot = a[cj + k];
      for (let i = k + 1; i < rows; i++) dot += a[base + i] * a[cj + i];
      const s = tauK * dot;
      a[cj + k] -= s;
      for (let i = k + 1; i < rows; i++) a[cj + i] -= s * a[base + i];
    }
  }
  return { rows, cols, factors: a, tau };
}

/**
 * Overwrite `B` (row-major `rows x rhsCount`) with `Q^T B`. The reflectors are applied in blocks of 32 in
 * compact WY form, `H_k ... H_{k+b-1} = I - V T V^T`, so that the work is two matrix products per block
 * (`W = T^T V^T B`, `B -= V W`) done by the register-blocked kernel of `matrixProduct.ts`.
 *
 * @param qr the factorisation from {@link householderQr}
 * @param rhs row-major `qr.rows x rhsCount`, overwritten
 * @throws {RangeError} "right-hand side length must equal rows * rhsCount"
 * Source: R. Schreiber and C. Van Loan, "A storage-efficient WY representation for products of Householder
 * transformations", SIAM J. Sci. Stat. Comput. 10(1), 53-57 (1989); LAPACK `dlarft`/`dlarfb`.
 */
export function applyQTransposeInPlace(qr: HouseholderQr, rhs: Float64Array, rhsCount: number): void {
  const { rows, cols, factors, tau } = qr;
  if (!Number.isInteger(rhsCount) || rhsCount < 0 || rhs.length !== rows * rhsCount) {
    throw new RangeError("right-hand side length must equal rows * rhsCount");
  }
  if (rhsCount === 0) return;
  const blockSize = 32;
  for (let k0 = 0; k0 < cols; k0 += blockSize) {
    const kb = Math.min(blockSize, cols - k0);
    const m = rows - k0;
    // V (m x kb, row-major) and its transpose, unit lower trapezoidal.
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
    // T upper triangular: T[j][j] = tau_j, T[0:j, j] = -tau_j T[0:j, 0:j] (V[:, 0:j]^T v_j).
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
 * Solve `R X = Y` for the upper-triangular `R` of a factorisation, row by row (back substitution),
 * where `Y` is the first `cols` rows of `Q^T B` (row-major, `rhsCount` columns).
 *
 * @returns `X`, row-major `cols x rhsCount`
 * @throws {RangeError} "R is singular" when a diagonal entry is zero
 * Source: Golub and Van Loan, Matrix Computations, 4th ed., Algorithm 3.1.2 (row-oriented back substitution).
 */
export function solveUpperTriangular(qr: HouseholderQr, qtRhs: Float64Array, rhsCount: number): Float64Array {
  const { rows, cols, factors } = qr;
  if (qtRhs.length < cols * rhsCount) throw new RangeError("right-hand side length must equal rows * rhsCount");
  const x = new Float64Array(cols * rhsCount);
  for (let k = cols - 1; k >= 0; k--) {
    const rk = k * rhsCount;
    for (let c = 0; c < rhsCount; c++) x[rk + c] = qtRhs[rk + c];
    for (let j = k + 1; j < cols; j++) {
      const rkj = factors[j * rows + k];
      if (rkj === 0) continue;
      const rj = j * rhsCount;
      for (let c = 0; c < rhsCount; c++) x[rk + c] -= rkj * x[rj + c];
    }
    const diagonal = factors[k * rows + k];
    if (diagonal === 0) throw new RangeError("R is singular");
    const inverse = 1 / diagonal;
    for (let c = 0; c < rhsCount; c++) x[rk + c] *= inverse;
  }
  return x;
}

/** The diagonal of R (signed), length `cols`. */
export function rDiagonal(qr: HouseholderQr): Float64Array {
  const d = new Float64Array(qr.cols);
  for (let k = 0; k < qr.cols; k++) d[k] = qr.factors[k * qr.rows + k];
  return d;
}

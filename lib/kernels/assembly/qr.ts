// Blocked Householder QR, Q^T B and the blocked back substitution in float64, on matrices held in linear memory.
// The same algorithms as lib/linalg/householderQr.ts (the TypeScript reference), with the products done by
// gemmF64 and the level-2 loops vectorised over f64x2:
//   G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., Algorithm 5.2.1, sections 5.2.3 and 3.1.4;
//   R. Schreiber and C. Van Loan, SIAM J. Sci. Stat. Comput. 10(1), 53-57 (1989) (compact WY); LAPACK
//   dgeqr2 / dlarfg / dlarft / dlarfb.
// The factors are column-major `rows x cols` (R on and above the diagonal, reflectors below), as in LAPACK.
import { gemmF64, gemmWorkBytes, MODE_SET, MODE_SUBTRACT, packPanelsF64 } from "./product";

/** Reflectors per panel of the factorisation. */
const BLOCK: i32 = 32;
/** Reflectors per block when applying Q^T to many right-hand sides (longer inner products, fewer passes over B). */
const APPLY_BLOCK: i32 = 64;
/** The larger of the two: scratch is sized for it. */
const WIDEST: i32 = APPLY_BLOCK > BLOCK ? APPLY_BLOCK : BLOCK;
const SOLVE_BLOCK: i32 = 64;

@inline function minI(a: i32, b: i32): i32 {
  return a < b ? a : b;
}

@inline function align(bytes: i32): i32 {
  return (bytes + 63) & ~63;
}

@inline function sum2(v: v128): f64 {
  return f64x2.extract_lane(v, 0) + f64x2.extract_lane(v, 1);
}

/**
 * Scratch bytes that qrFactor, applyQTranspose and solveUpper need at `work` for these sizes. The layout:
 * V^T (BLOCK x rows), T (BLOCK x BLOCK), V packed (BLOCK x rows), V^T packed, W (max(cols, rhs) x BLOCK),
 * W packed, X packed (cols x rhs), then the product kernel's own scratch.
 */
export function qrWorkBytes(rows: i32, cols: i32, rhsCount: i32): i32 {
  const wide = cols > rhsCount ? cols : rhsCount;
  const panelsRhs = (rhsCount + 3) >> 2;
  return (
    align(WIDEST * rows * 8) + align(WIDEST * WIDEST * 8) + align(WIDEST * rows * 8) + align((rows + 4) * WIDEST * 8) +
    align(wide * WIDEST * 8) + align((wide + 4) * WIDEST * 8) + align(wide * WIDEST * 8) + align(WIDEST * WIDEST * 8) +
    align(panelsRhs * 4 * cols * 8) + gemmWorkBytes()
  );
}

/** Build reflector k from column k (dlarfg) and apply it to columns k+1 .. end-1. */
function reflectColumn(a: usize, rows: i32, tau: usize, k: i32, end: i32): void {
  const base = a + <usize>(k * rows * 8);
  let scale: f64 = 0;
  for (let i = k; i < rows; i++) scale = max(scale, abs(load<f64>(base + <usize>(i * 8))));
  if (scale == 0) {
    store<f64>(tau + <usize>(k * 8), 0);
    return;
  }
  let sumSquares: f64 = 0;
  for (let i = k; i < rows; i++) {
    const x = load<f64>(base + <usize>(i * 8)) / scale;
    sumSquares += x * x;
  }
  const alpha = load<f64>(base + <usize>(k * 8));
  const norm = scale * sqrt(sumSquares);
  const beta = alpha >= 0 ? -norm : norm;
  const tauK = (beta - alpha) / beta;
  const inverse = 1 / (alpha - beta);
  for (let i = k + 1; i < rows; i++) store<f64>(base + <usize>(i * 8), load<f64>(base + <usize>(i * 8)) * inverse);
  store<f64>(base + <usize>(k * 8), beta);
  store<f64>(tau + <usize>(k * 8), tauK);
  const first = k + 1;
  const length = rows - first;
  const v = base + <usize>(first * 8);
  for (let j = k + 1; j < end; j++) {
    const cj = a + <usize>(j * rows * 8);
    const col = cj + <usize>(first * 8);
    let acc = f64x2.splat(0);
    let i = 0;
    for (; i + 2 <= length; i += 2) acc = f64x2.add(acc, f64x2.mul(v128.load(v + <usize>(i * 8)), v128.load(col + <usize>(i * 8))));
    let dot = load<f64>(cj + <usize>(k * 8)) + sum2(acc);
    for (; i < length; i++) dot += load<f64>(v + <usize>(i * 8)) * load<f64>(col + <usize>(i * 8));
    const s = tauK * dot;
    store<f64>(cj + <usize>(k * 8), load<f64>(cj + <usize>(k * 8)) - s);
    const sv = f64x2.splat(s);
    i = 0;
    for (; i + 2 <= length; i += 2) {
      const p = col + <usize>(i * 8);
      v128.store(p, f64x2.sub(v128.load(p), f64x2.mul(sv, v128.load(v + <usize>(i * 8)))));
    }
    for (; i < length; i++) {
      const p = col + <usize>(i * 8);
      store<f64>(p, load<f64>(p) - s * load<f64>(v + <usize>(i * 8)));
    }
  }
}

/** V^T (kb x m, unit diagonal, zeros to its left) of reflectors k0 .. k0+kb-1, and T (kb x kb) as in dlarft. */
function compactWy(a: usize, rows: i32, tau: usize, k0: i32, kb: i32, vt: usize, t: usize): void {
  const m = rows - k0;
  for (let j = 0; j < kb; j++) {
    const row = vt + <usize>(j * m * 8);
    memory.fill(row, 0, <usize>(j * 8));
    store<f64>(row + <usize>(j * 8), 1);
    const src = a + <usize>(((k0 + j) * rows + k0) * 8);
    memory.copy(row + <usize>((j + 1) * 8), src + <usize>((j + 1) * 8), <usize>((m - j - 1) * 8));
  }
  memory.fill(t, 0, <usize>(kb * kb * 8));
  for (let j = 0; j < kb; j++) {
    const tauJ = load<f64>(tau + <usize>((k0 + j) * 8));
    const vj = vt + <usize>((j * m + j) * 8);
    const length = m - j;
    // z_i = V[:, i]^T v_j over rows j .. m-1, kept in T's column j, then T[0:j, j] = -tau_j T[0:j, 0:j] z.
    for (let i = 0; i < j; i++) {
      const vi = vt + <usize>((i * m + j) * 8);
      let acc = f64x2.splat(0);
      let r = 0;
      for (; r + 2 <= length; r += 2) acc = f64x2.add(acc, f64x2.mul(v128.load(vi + <usize>(r * 8)), v128.load(vj + <usize>(r * 8))));
      let s = sum2(acc);
      for (; r < length; r++) s += load<f64>(vi + <usize>(r * 8)) * load<f64>(vj + <usize>(r * 8));
      store<f64>(t + <usize>((i * kb + j) * 8), s);
    }
    // Row i reads z_l for l >= i only, so overwriting T[i][j] top-down keeps the z it still needs.
    for (let i = 0; i < j; i++) {
      let s: f64 = 0;
      for (let l = i; l < j; l++) s += load<f64>(t + <usize>((i * kb + l) * 8)) * load<f64>(t + <usize>((l * kb + j) * 8));
      store<f64>(t + <usize>((i * kb + j) * 8), -tauJ * s);
    }
    store<f64>(t + <usize>((j * kb + j) * 8), tauJ);
  }
}

/** W2 (count x kb) = W T with T upper triangular (kb x kb): one product with T packed (its zeros included). */
function multiplyByT(w: usize, count: i32, kb: i32, t: usize, w2: usize): void {
  packPanelsF64(t, kb, 0, kb, kb, tPackedPtr, kb * 4);
  gemmF64(count, kb, kb, w, kb, 0, tPackedPtr, kb * 4, w2, kb, MODE_SET, gemmPtr);
}

// Scratch partition (module globals: no allocator is linked, and the module runs one call at a time).
let vtPtr: usize = 0;
let tPtr: usize = 0;
let vPackedPtr: usize = 0;
let vtPackedPtr: usize = 0;
let wPtr: usize = 0;
let wPackedPtr: usize = 0;
let w2Ptr: usize = 0;
let tPackedPtr: usize = 0;
let xPackedPtr: usize = 0;
let gemmPtr: usize = 0;

function partition(work: usize, rows: i32, cols: i32, rhsCount: i32): void {
  const wide = cols > rhsCount ? cols : rhsCount;
  const panelsRhs = (rhsCount + 3) >> 2;
  let p = work;
  vtPtr = p; p += <usize>align(WIDEST * rows * 8);
  tPtr = p; p += <usize>align(WIDEST * WIDEST * 8);
  vPackedPtr = p; p += <usize>align(WIDEST * rows * 8);
  vtPackedPtr = p; p += <usize>align((rows + 4) * WIDEST * 8);
  wPtr = p; p += <usize>align(wide * WIDEST * 8);
  wPackedPtr = p; p += <usize>align((wide + 4) * WIDEST * 8);
  w2Ptr = p; p += <usize>align(wide * WIDEST * 8);
  tPackedPtr = p; p += <usize>align(WIDEST * WIDEST * 8);
  xPackedPtr = p; p += <usize>align(panelsRhs * 4 * cols * 8);
  gemmPtr = p;
}

/** Householder QR in place of the column-major `rows x cols` matrix at `a`; tau (cols doubles) at `tau`. */
export function qrFactor(a: usize, rows: i32, cols: i32, tau: usize, work: usize): void {
  partition(work, rows, cols, 0);
  for (let k0 = 0; k0 < cols; k0 += BLOCK) {
    const kb = minI(BLOCK, cols - k0);
    for (let k = k0; k < k0 + kb; k++) reflectColumn(a, rows, tau, k, k0 + kb);
    const first = k0 + kb;
    if (first >= cols) continue;
    const m = rows - k0;
    const n = cols - first;
    compactWy(a, rows, tau, k0, kb, vtPtr, tPtr);
    // Trailing columns form a row-major A^T (n x m, leading dimension rows): A^T -= (A^T V T) V^T.
    const at = a + <usize>((first * rows + k0) * 8);
    packPanelsF64(vtPtr, m, 1, m, kb, vPackedPtr, m * 4);
    gemmF64(n, kb, m, at, rows, 0, vPackedPtr, m * 4, wPtr, kb, MODE_SET, gemmPtr);
    multiplyByT(wPtr, n, kb, tPtr, w2Ptr);
    packPanelsF64(vtPtr, m, 0, kb, m, vtPackedPtr, kb * 4);
    gemmF64(n, m, kb, w2Ptr, kb, 0, vtPackedPtr, kb * 4, at, rows, MODE_SUBTRACT, gemmPtr);
  }
}

/** B (row-major rows x rhsCount at `rhs`) <- Q^T B, block by block: B -= V (T^T (V^T B)). */
export function applyQTranspose(a: usize, rows: i32, cols: i32, tau: usize, rhs: usize, rhsCount: i32, work: usize): void {
  if (rhsCount <= 0) return;
  partition(work, rows, cols, rhsCount);
  for (let k0 = 0; k0 < cols; k0 += APPLY_BLOCK) {
    const kb = minI(APPLY_BLOCK, cols - k0);
    const m = rows - k0;
    compactWy(a, rows, tau, k0, kb, vtPtr, tPtr);
    const sub = rhs + <usize>(k0 * rhsCount * 8);
    // W^T (rhsCount x kb) = B_sub^T V, read B_sub as a transposed left operand; then W^T <- W^T T.
    packPanelsF64(vtPtr, m, 1, m, kb, vPackedPtr, m * 4);
    gemmF64(rhsCount, kb, m, sub, rhsCount, 1, vPackedPtr, m * 4, wPtr, kb, MODE_SET, gemmPtr);
    multiplyByT(wPtr, rhsCount, kb, tPtr, w2Ptr);
    // B_sub -= V W with V read from V^T (transposed left operand) and W packed from W^T.
    packPanelsF64(w2Ptr, kb, 1, kb, rhsCount, wPackedPtr, kb * 4);
    gemmF64(m, rhsCount, kb, vtPtr, m, 1, wPackedPtr, kb * 4, sub, rhsCount, MODE_SUBTRACT, gemmPtr);
  }
}

/**
 * Solve R X = Y in place (X, Y row-major cols x rhsCount at `x`), R the upper triangle of the factors.
 * From the bottom, each block of 64 rows subtracts R[block, below] X[below] with one product (X below kept
 * packed as it is solved), then solves its own triangle row by row. Diagonal entries must be non-zero.
 */
export function solveUpper(a: usize, rows: i32, cols: i32, x: usize, rhsCount: i32, work: usize): void {
  if (rhsCount <= 0) return;
  partition(work, rows, cols, rhsCount);
  const stride = <usize>(rhsCount * 8);
  for (let end = cols; end > 0; end -= SOLVE_BLOCK) {
    const start = end - SOLVE_BLOCK > 0 ? end - SOLVE_BLOCK : 0;
    const height = end - start;
    const below = cols - end;
    const block = x + <usize>(start) * stride;
    if (below > 0) {
      gemmF64(height, rhsCount, below, a + <usize>((end * rows + start) * 8), rows, 1,
        xPackedPtr + <usize>(end * 4 * 8), cols * 4, block, rhsCount, MODE_SUBTRACT, gemmPtr);
    }
    for (let k = end - 1; k >= start; k--) {
      const rk = x + <usize>(k) * stride;
      for (let j = k + 1; j < end; j++) {
        const rkj = load<f64>(a + <usize>((j * rows + k) * 8));
        if (rkj == 0) continue;
        const rj = x + <usize>(j) * stride;
        const sv = f64x2.splat(rkj);
        let c = 0;
        for (; c + 2 <= rhsCount; c += 2) {
          const p = rk + <usize>(c * 8);
          v128.store(p, f64x2.sub(v128.load(p), f64x2.mul(sv, v128.load(rj + <usize>(c * 8)))));
        }
        for (; c < rhsCount; c++) {
          const p = rk + <usize>(c * 8);
          store<f64>(p, load<f64>(p) - rkj * load<f64>(rj + <usize>(c * 8)));
        }
      }
      const inverse = 1 / load<f64>(a + <usize>((k * rows + k) * 8));
      const iv = f64x2.splat(inverse);
      let c = 0;
      for (; c + 2 <= rhsCount; c += 2) {
        const p = rk + <usize>(c * 8);
        v128.store(p, f64x2.mul(v128.load(p), iv));
      }
      for (; c < rhsCount; c++) {
        const p = rk + <usize>(c * 8);
        store<f64>(p, load<f64>(p) * inverse);
      }
    }
    if (start > 0) packPanelsF64(block, rhsCount, 0, height, rhsCount, xPackedPtr + <usize>(start * 4 * 8), cols * 4);
  }
}

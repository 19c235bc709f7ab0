// Matrix products with 128-bit SIMD (AssemblyScript, compiled to WebAssembly by scripts/build-kernels.mjs).
//
// All operands live in the module's linear memory; the caller (lib/kernels/*.ts) passes byte offsets.
// The right-hand operand B is always packed in column panels: element (p, j) of a `k x n` matrix sits at
// `b + ((j / W) * bPanelStride + p * W + j % W) * size`, zero padded to whole panels, with W = 8 for float32
// (two f32x4 vectors) and W = 4 for float64 (two f64x2 vectors, the layout of lib/linalg `packColumns`).
// The left operand A is row-major with leading dimension lda, or transposed (element (i, p) at a[p * lda + i]).
// Blocked as in K. Goto and R. A. van de Geijn, "Anatomy of high-performance matrix multiplication",
// ACM Trans. Math. Softw. 34(3), 12 (2008): slabs of KC inner indices, blocks of MC rows of A packed four rows
// interleaved, a register micro-kernel of 4 rows x one panel.
//
// Store modes: 0 C = AB, 1 C += AB, 2 C -= AB.

export const MODE_SET: i32 = 0;
export const MODE_ADD: i32 = 1;
export const MODE_SUBTRACT: i32 = 2;

const KC_F32: i32 = 512;
const KC_F64: i32 = 512;
const MC: i32 = 64;

/** Bytes of scratch that gemmF32 / gemmF64 need at `work`. */
export function gemmWorkBytes(): i32 {
  return MC * KC_F64 * 8 + 4096;
}

@inline function minI(a: i32, b: i32): i32 {
  return a < b ? a : b;
}

// ---------------------------------------------------------------------------------------------------------------
// float32

/** Pack rows [i0, i0 + mc) x inner [p0, p0 + kc) of A into `dst`: blocks of 4 rows, [block][p][4], zero padded. */
function packAF32(a: usize, lda: i32, transA: i32, i0: i32, mc: i32, p0: i32, kc: i32, dst: usize): void {
  const blocks = (mc + 3) >> 2;
  if (transA) {
    // Row p of the source holds rows i0 .. i0 + mc of A side by side: read it once, left to right.
    const full = mc >> 2;
    const blockBytes = <usize>(kc * 16);
    for (let p = 0; p < kc; p++) {
      const src = a + <usize>(((p0 + p) * lda + i0) * 4);
      let d = dst + <usize>(p * 16);
      for (let rb = 0; rb < full; rb++, d += blockBytes) v128.store(d, v128.load(src + <usize>(rb * 16)));
      if (full < blocks) {
        for (let r = 0; r < 4; r++) {
          const row = full * 4 + r;
          store<f32>(d + <usize>(r * 4), row < mc ? load<f32>(src + <usize>(row * 4)) : 0);
        }
      }
    }
    return;
  }
  for (let rb = 0; rb < blocks; rb++) {
    const height = minI(4, mc - rb * 4);
    const base = dst + <usize>(rb * kc * 16);
    const row0 = i0 + rb * 4;
    for (let r = 0; r < 4; r++) {
      if (r < height) {
        const src = a + <usize>(((row0 + r) * lda + p0) * 4);
        for (let p = 0; p < kc; p++) store<f32>(base + <usize>(p * 16 + r * 4), load<f32>(src + <usize>(p * 4)));
      } else {
        for (let p = 0; p < kc; p++) store<f32>(base + <usize>(p * 16 + r * 4), 0);
      }
    }
  }
}

@inline function storeF32(ptr: usize, value: v128, mode: i32): void {
  if (mode == MODE_SET) v128.store(ptr, value);
  else if (mode == MODE_ADD) v128.store(ptr, f32x4.add(v128.load(ptr), value));
  else v128.store(ptr, f32x4.sub(v128.load(ptr), value));
}

/** 4 x 8 register block over kc inner indices; writes to C (full tile) or to `tile` (partial tile). */
function microF32(kc: i32, ap: usize, bp: usize, c: usize, ldc: i32, height: i32, width: i32, mode: i32, tile: usize): void {
  let c00 = f32x4.splat(0), c01 = f32x4.splat(0);
  let c10 = f32x4.splat(0), c11 = f32x4.splat(0);
  let c20 = f32x4.splat(0), c21 = f32x4.splat(0);
  let c30 = f32x4.splat(0), c31 = f32x4.splat(0);
  for (let p = 0; p < kc; p++) {
    const b0 = v128.load(bp);
    const b1 = v128.load(bp, 16);
    // The four rows' values in one load, each broadcast by a lane shuffle (fewer loads than four splats).
    const a4 = v128.load(ap);
    let a = v128.shuffle<f32>(a4, a4, 0, 0, 0, 0);
    c00 = f32x4.add(c00, f32x4.mul(a, b0));
    c01 = f32x4.add(c01, f32x4.mul(a, b1));
    a = v128.shuffle<f32>(a4, a4, 1, 1, 1, 1);
    c10 = f32x4.add(c10, f32x4.mul(a, b0));
    c11 = f32x4.add(c11, f32x4.mul(a, b1));
    a = v128.shuffle<f32>(a4, a4, 2, 2, 2, 2);
    c20 = f32x4.add(c20, f32x4.mul(a, b0));
    c21 = f32x4.add(c21, f32x4.mul(a, b1));
    a = v128.shuffle<f32>(a4, a4, 3, 3, 3, 3);
    c30 = f32x4.add(c30, f32x4.mul(a, b0));
    c31 = f32x4.add(c31, f32x4.mul(a, b1));
    ap += 16;
    bp += 32;
  }
  if (height == 4 && width == 8) {
    const r1 = <usize>(ldc * 4);
    storeF32(c, c00, mode);
    storeF32(c + 16, c01, mode);
    storeF32(c + r1, c10, mode);
    storeF32(c + r1 + 16, c11, mode);
    storeF32(c + 2 * r1, c20, mode);
    storeF32(c + 2 * r1 + 16, c21, mode);
    storeF32(c + 3 * r1, c30, mode);
    storeF32(c + 3 * r1 + 16, c31, mode);
    return;
  }
  v128.store(tile, c00);
  v128.store(tile, c01, 16);
  v128.store(tile, c10, 32);
  v128.store(tile, c11, 48);
  v128.store(tile, c20, 64);
  v128.store(tile, c21, 80);
  v128.store(tile, c30, 96);
  v128.store(tile, c31, 112);
  for (let r = 0; r < height; r++) {
    for (let j = 0; j < width; j++) {
      const dst = c + <usize>((r * ldc + j) * 4);
      const v = load<f32>(tile + <usize>((r * 8 + j) * 4));
      if (mode == MODE_SET) store<f32>(dst, v);
      else if (mode == MODE_ADD) store<f32>(dst, load<f32>(dst) + v);
      else store<f32>(dst, load<f32>(dst) - v);
    }
  }
}

/**
 * C (m x n, row-major, ldc) op= A (m x k) B (k x n, packed panels of 8 floats, panel stride in elements).
 * Float32 throughout; each output is a float32 inner product of length k.
 */
export function gemmF32(
  m: i32, n: i32, k: i32,
  a: usize, lda: i32, transA: i32,
  b: usize, bPanelStride: i32,
  c: usize, ldc: i32, mode: i32, work: usize,
): void {
  if (m <= 0 || n <= 0) return;
  if (k <= 0) {
    if (mode == MODE_SET) for (let i = 0; i < m; i++) memory.fill(c + <usize>(i * ldc * 4), 0, <usize>(n * 4));
    return;
  }
  const panels = (n + 7) >> 3;
  const tile = work + <usize>(MC * KC_F32 * 4);
  for (let p0 = 0; p0 < k; p0 += KC_F32) {
    const kc = minI(KC_F32, k - p0);
    const md = p0 == 0 ? mode : (mode == MODE_SET ? MODE_ADD : mode);
    for (let i0 = 0; i0 < m; i0 += MC) {
      const mc = minI(MC, m - i0);
      packAF32(a, lda, transA, i0, mc, p0, kc, work);
      const blocks = (mc + 3) >> 2;
      for (let jp = 0; jp < panels; jp++) {
        const bp = b + <usize>((jp * bPanelStride + p0 * 8) * 4);
        const width = minI(8, n - jp * 8);
        for (let rb = 0; rb < blocks; rb++) {
          const row = i0 + rb * 4;
          microF32(kc, work + <usize>(rb * kc * 16), bp, c + <usize>((row * ldc + jp * 8) * 4), ldc, minI(4, m - row), width, md, tile);
        }
      }
    }
  }
}

/**
 * out (n, padded to whole panels of 8) = f (k) B (k x n, packed panels of 8): the matrix-vector product of one
 * surrogate map. Four panels at a time (eight f32x4 accumulators), each panel one sequential stream.
 */
export function gemvF32(k: i32, n: i32, f: usize, b: usize, bPanelStride: i32, out: usize): void {
  const panels = (n + 7) >> 3;
  const stride = <usize>(bPanelStride * 4);
  let jp = 0;
  for (; jp + 4 <= panels; jp += 4) {
    let b0 = b + <usize>(jp) * stride;
    let b1 = b0 + stride;
    let b2 = b1 + stride;
    let b3 = b2 + stride;
    let s00 = f32x4.splat(0), s01 = f32x4.splat(0), s10 = f32x4.splat(0), s11 = f32x4.splat(0);
    let s20 = f32x4.splat(0), s21 = f32x4.splat(0), s30 = f32x4.splat(0), s31 = f32x4.splat(0);
    let fp = f;
    for (let p = 0; p < k; p++) {
      const x = v128.load32_splat(fp);
      s00 = f32x4.add(s00, f32x4.mul(x, v128.load(b0)));
      s01 = f32x4.add(s01, f32x4.mul(x, v128.load(b0, 16)));
      s10 = f32x4.add(s10, f32x4.mul(x, v128.load(b1)));
      s11 = f32x4.add(s11, f32x4.mul(x, v128.load(b1, 16)));
      s20 = f32x4.add(s20, f32x4.mul(x, v128.load(b2)));
      s21 = f32x4.add(s21, f32x4.mul(x, v128.load(b2, 16)));
      s30 = f32x4.add(s30, f32x4.mul(x, v128.load(b3)));
      s31 = f32x4.add(s31, f32x4.mul(x, v128.load(b3, 16)));
      fp += 4;
      b0 += 32;
      b1 += 32;
      b2 += 32;
      b3 += 32;
    }
    const o = out + <usize>(jp * 32);
    v128.store(o, s00);
    v128.store(o, s01, 16);
    v128.store(o, s10, 32);
    v128.store(o, s11, 48);
    v128.store(o, s20, 64);
    v128.store(o, s21, 80);
    v128.store(o, s30, 96);
    v128.store(o, s31, 112);
  }
  for (; jp < panels; jp++) {
    let b0 = b + <usize>(jp) * stride;
    let s0 = f32x4.splat(0), s1 = f32x4.splat(0);
    let fp = f;
    for (let p = 0; p < k; p++) {
      const x = v128.load32_splat(fp);
      s0 = f32x4.add(s0, f32x4.mul(x, v128.load(b0)));
      s1 = f32x4.add(s1, f32x4.mul(x, v128.load(b0, 16)));
      fp += 4;
      b0 += 32;
    }
    const o = out + <usize>(jp * 32);
    v128.store(o, s0);
    v128.store(o, s1, 16);
  }
}

/** Pack a row-major (or, with transSrc, column-major) k x n float32 matrix into panels of 8 (zero padded). */
export function packPanelsF32(src: usize, ld: i32, transSrc: i32, k: i32, n: i32, dst: usize, panelStride: i32): void {
  const panels = (n + 7) >> 3;
  for (let jp = 0; jp < panels; jp++) {
    const width = minI(8, n - jp * 8);
    const base = dst + <usize>(jp * panelStride * 4);
    for (let p = 0; p < k; p++) {
      const d = base + <usize>(p * 32);
      for (let j = 0; j < 8; j++) {
        const col = jp * 8 + j;
        const value: f32 = j < width ? load<f32>(src + <usize>((transSrc ? col * ld + p : p * ld + col) * 4)) : 0;
        store<f32>(d + <usize>(j * 4), value);
      }
    }
  }
}

// ---------------------------------------------------------------------------------------------------------------
// float64

/** As packAF32 for float64: blocks of 4 rows, [block][p][4]. */
function packAF64(a: usize, lda: i32, transA: i32, i0: i32, mc: i32, p0: i32, kc: i32, dst: usize): void {
  const blocks = (mc + 3) >> 2;
  if (transA) {
    const full = mc >> 2;
    const blockBytes = <usize>(kc * 32);
    for (let p = 0; p < kc; p++) {
      const src = a + <usize>(((p0 + p) * lda + i0) * 8);
      let d = dst + <usize>(p * 32);
      for (let rb = 0; rb < full; rb++, d += blockBytes) {
        const s = src + <usize>(rb * 32);
        v128.store(d, v128.load(s));
        v128.store(d, v128.load(s, 16), 16);
      }
      if (full < blocks) {
        for (let r = 0; r < 4; r++) {
          const row = full * 4 + r;
          store<f64>(d + <usize>(r * 8), row < mc ? load<f64>(src + <usize>(row * 8)) : 0);
        }
      }
    }
    return;
  }
  for (let rb = 0; rb < blocks; rb++) {
    const height = minI(4, mc - rb * 4);
    const base = dst + <usize>(rb * kc * 32);
    const row0 = i0 + rb * 4;
    for (let r = 0; r < 4; r++) {
      if (r < height) {
        const src = a + <usize>(((row0 + r) * lda + p0) * 8);
        for (let p = 0; p < kc; p++) store<f64>(base + <usize>(p * 32 + r * 8), load<f64>(src + <usize>(p * 8)));
      } else {
        for (let p = 0; p < kc; p++) store<f64>(base + <usize>(p * 32 + r * 8), 0);
      }
    }
  }
}

@inline function storeF64(ptr: usize, value: v128, mode: i32): void {
  if (mode == MODE_SET) v128.store(ptr, value);
  else if (mode == MODE_ADD) v128.store(ptr, f64x2.add(v128.load(ptr), value));
  else v128.store(ptr, f64x2.sub(v128.load(ptr), value));
}

/** 4 x 4 register block of float64 (eight f64x2 accumulators). */
function microF64(kc: i32, ap: usize, bp: usize, c: usize, ldc: i32, height: i32, width: i32, mode: i32, tile: usize): void {
  let c00 = f64x2.splat(0), c01 = f64x2.splat(0);
  let c10 = f64x2.splat(0), c11 = f64x2.splat(0);
  let c20 = f64x2.splat(0), c21 = f64x2.splat(0);
  let c30 = f64x2.splat(0), c31 = f64x2.splat(0);
  for (let p = 0; p < kc; p++) {
    const b0 = v128.load(bp);
    const b1 = v128.load(bp, 16);
    let a = v128.load64_splat(ap);
    c00 = f64x2.add(c00, f64x2.mul(a, b0));
    c01 = f64x2.add(c01, f64x2.mul(a, b1));
    a = v128.load64_splat(ap, 8);
    c10 = f64x2.add(c10, f64x2.mul(a, b0));
    c11 = f64x2.add(c11, f64x2.mul(a, b1));
    a = v128.load64_splat(ap, 16);
    c20 = f64x2.add(c20, f64x2.mul(a, b0));
    c21 = f64x2.add(c21, f64x2.mul(a, b1));
    a = v128.load64_splat(ap, 24);
    c30 = f64x2.add(c30, f64x2.mul(a, b0));
    c31 = f64x2.add(c31, f64x2.mul(a, b1));
    ap += 32;
    bp += 32;
  }
  if (height == 4 && width == 4) {
    const r1 = <usize>(ldc * 8);
    storeF64(c, c00, mode);
    storeF64(c + 16, c01, mode);
    storeF64(c + r1, c10, mode);
    storeF64(c + r1 + 16, c11, mode);
    storeF64(c + 2 * r1, c20, mode);
    storeF64(c + 2 * r1 + 16, c21, mode);
    storeF64(c + 3 * r1, c30, mode);
    storeF64(c + 3 * r1 + 16, c31, mode);
    return;
  }
  v128.store(tile, c00);
  v128.store(tile, c01, 16);
  v128.store(tile, c10, 32);
  v128.store(tile, c11, 48);
  v128.store(tile, c20, 64);
  v128.store(tile, c21, 80);
  v128.store(tile, c30, 96);
  v128.store(tile, c31, 112);
  for (let r = 0; r < height; r++) {
    for (let j = 0; j < width; j++) {
      const dst = c + <usize>((r * ldc + j) * 8);
      const v = load<f64>(tile + <usize>((r * 4 + j) * 8));
      if (mode == MODE_SET) store<f64>(dst, v);
      else if (mode == MODE_ADD) store<f64>(dst, load<f64>(dst) + v);
      else store<f64>(dst, load<f64>(dst) - v);
    }
  }
}

/** C (m x n, row-major, ldc) op= A (m x k) B (k x n, packed panels of 4 doubles). */
export function gemmF64(
  m: i32, n: i32, k: i32,
  a: usize, lda: i32, transA: i32,
  b: usize, bPanelStride: i32,
  c: usize, ldc: i32, mode: i32, work: usize,
): void {
  if (m <= 0 || n <= 0) return;
  if (k <= 0) {
    if (mode == MODE_SET) for (let i = 0; i < m; i++) memory.fill(c + <usize>(i * ldc * 8), 0, <usize>(n * 8));
    return;
  }
  const panels = (n + 3) >> 2;
  const tile = work + <usize>(MC * KC_F64 * 8);
  for (let p0 = 0; p0 < k; p0 += KC_F64) {
    const kc = minI(KC_F64, k - p0);
    const md = p0 == 0 ? mode : (mode == MODE_SET ? MODE_ADD : mode);
    for (let i0 = 0; i0 < m; i0 += MC) {
      const mc = minI(MC, m - i0);
      packAF64(a, lda, transA, i0, mc, p0, kc, work);
      const blocks = (mc + 3) >> 2;
      for (let jp = 0; jp < panels; jp++) {
        const bp = b + <usize>((jp * bPanelStride + p0 * 4) * 8);
        const width = minI(4, n - jp * 4);
        for (let rb = 0; rb < blocks; rb++) {
          const row = i0 + rb * 4;
          microF64(kc, work + <usize>(rb * kc * 32), bp, c + <usize>((row * ldc + jp * 4) * 8), ldc, minI(4, m - row), width, md, tile);
        }
      }
    }
  }
}

/** out (n, padded to whole panels of 4) = f (k) B (k x n, packed panels of 4 doubles). */
export function gemvF64(k: i32, n: i32, f: usize, b: usize, bPanelStride: i32, out: usize): void {
  const panels = (n + 3) >> 2;
  const stride = <usize>(bPanelStride * 8);
  let jp = 0;
  for (; jp + 4 <= panels; jp += 4) {
    let b0 = b + <usize>(jp) * stride;
    let b1 = b0 + stride;
    let b2 = b1 + stride;
    let b3 = b2 + stride;
    let s00 = f64x2.splat(0), s01 = f64x2.splat(0), s10 = f64x2.splat(0), s11 = f64x2.splat(0);
    let s20 = f64x2.splat(0), s21 = f64x2.splat(0), s30 = f64x2.splat(0), s31 = f64x2.splat(0);
    let fp = f;
    for (let p = 0; p < k; p++) {
      const x = v128.load64_splat(fp);
      s00 = f64x2.add(s00, f64x2.mul(x, v128.load(b0)));
      s01 = f64x2.add(s01, f64x2.mul(x, v128.load(b0, 16)));
      s10 = f64x2.add(s10, f64x2.mul(x, v128.load(b1)));
      s11 = f64x2.add(s11, f64x2.mul(x, v128.load(b1, 16)));
      s20 = f64x2.add(s20, f64x2.mul(x, v128.load(b2)));
      s21 = f64x2.add(s21, f64x2.mul(x, v128.load(b2, 16)));
      s30 = f64x2.add(s30, f64x2.mul(x, v128.load(b3)));
      s31 = f64x2.add(s31, f64x2.mul(x, v128.load(b3, 16)));
      fp += 8;
      b0 += 32;
      b1 += 32;
      b2 += 32;
      b3 += 32;
    }
    const o = out + <usize>(jp * 32);
    v128.store(o, s00);
    v128.store(o, s01, 16);
    v128.store(o, s10, 32);
    v128.store(o, s11, 48);
    v128.store(o, s20, 64);
    v128.store(o, s21, 80);
    v128.store(o, s30, 96);
    v128.store(o, s31, 112);
  }
  for (; jp < panels; jp++) {
    let b0 = b + <usize>(jp) * stride;
    let s0 = f64x2.splat(0), s1 = f64x2.splat(0);
    let fp = f;
    for (let p = 0; p < k; p++) {
      const x = v128.load64_splat(fp);
      s0 = f64x2.add(s0, f64x2.mul(x, v128.load(b0)));
      s1 = f64x2.add(s1, f64x2.mul(x, v128.load(b0, 16)));
      fp += 8;
      b0 += 32;
    }
    const o = out + <usize>(jp * 32);
    v128.store(o, s0);
    v128.store(o, s1, 16);
  }
}

/** Pack a row-major (or, with transSrc, column-major) k x n float64 matrix into panels of 4 (zero padded). */
export function packPanelsF64(src: usize, ld: i32, transSrc: i32, k: i32, n: i32, dst: usize, panelStride: i32): void {
  const panels = (n + 3) >> 2;
  for (let jp = 0; jp < panels; jp++) {
    const width = minI(4, n - jp * 4);
    const base = dst + <usize>(jp * panelStride * 8);
    if (!transSrc && width == 4) {
      for (let p = 0; p < k; p++) {
        const s = src + <usize>((p * ld + jp * 4) * 8);
        const d = base + <usize>(p * 32);
        v128.store(d, v128.load(s));
        v128.store(d, v128.load(s, 16), 16);
      }
      continue;
    }
    for (let p = 0; p < k; p++) {
      const d = base + <usize>(p * 32);
      for (let j = 0; j < 4; j++) {
        const col = jp * 4 + j;
        const value: f64 = j < width ? load<f64>(src + <usize>((transSrc ? col * ld + p : p * ld + col) * 8)) : 0;
        store<f64>(d + <usize>(j * 8), value);
      }
    }
  }
}

// ---------------------------------------------------------------------------------------------------------------
// reductions

/** out[i] = max_j |c[i][j]| for a row-major float32 `rows x cols` matrix (leading dimension ldc); out is float32. */
export function rowMaxAbsF32(c: usize, rows: i32, cols: i32, ldc: i32, out: usize): void {
  for (let i = 0; i < rows; i++) {
    const row = c + <usize>(i * ldc * 4);
    let m0 = f32x4.splat(0), m1 = f32x4.splat(0);
    let j = 0;
    for (; j + 8 <= cols; j += 8) {
      m0 = f32x4.max(m0, f32x4.abs(v128.load(row + <usize>(j * 4))));
      m1 = f32x4.max(m1, f32x4.abs(v128.load(row + <usize>(j * 4), 16)));
    }
    m0 = f32x4.max(m0, m1);
    let m = max(max(f32x4.extract_lane(m0, 0), f32x4.extract_lane(m0, 1)), max(f32x4.extract_lane(m0, 2), f32x4.extract_lane(m0, 3)));
    for (; j < cols; j++) m = max(m, abs(load<f32>(row + <usize>(j * 4))));
    store<f32>(out + <usize>(i * 4), m);
  }
}

/** out[i] = max_j |c[i][j]| for a row-major float64 matrix; out is float64. */
export function rowMaxAbsF64(c: usize, rows: i32, cols: i32, ldc: i32, out: usize): void {
  for (let i = 0; i < rows; i++) {
    const row = c + <usize>(i * ldc * 8);
    let m0 = f64x2.splat(0), m1 = f64x2.splat(0);
    let j = 0;
    for (; j + 4 <= cols; j += 4) {
      m0 = f64x2.max(m0, f64x2.abs(v128.load(row + <usize>(j * 8))));
      m1 = f64x2.max(m1, f64x2.abs(v128.load(row + <usize>(j * 8), 16)));
    }
    m0 = f64x2.max(m0, m1);
    let m = max(f64x2.extract_lane(m0, 0), f64x2.extract_lane(m0, 1));
    for (; j < cols; j++) m = max(m, abs(load<f64>(row + <usize>(j * 8))));
    store<f64>(out + <usize>(i * 8), m);
  }
}

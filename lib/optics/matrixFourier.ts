/**
 * Matrix Fourier transform kernels that exploit the symmetry of both grids.
 *
 * The pupil grid is symmetric (x_{N-1-n} = -x_n) and so is the far-field grid
 * (theta_{M-1-p} = -theta_p). With K[p][n] = exp(-i k theta_p x_n) = c - i s, a sum
 * over a pair of mirrored samples u(+x), u(-x) folds into even and odd parts
 * P = u(+x) + u(-x), Q = u(+x) - u(-x):
 *
 *   u(+x) K + u(-x) conj(K) = (c Pr + s Qi) + i (c Pi - s Qr),
 *   x [u(+x) K - u(-x) conj(K)] = x [(c Qr + s Pi) + i (c Qi - s Pr)],
 *
 * and the mirrored angle -theta_p only flips the sign of s. Four real products
 * per pair then give the transform at two angles for two samples, a quarter of
 * the work of the plain matrix product. Source: the folding is the standard
 * even/odd decomposition of a DFT of a real-symmetric grid (e.g. W. H. Press et al.,
 * Numerical Recipes, 3rd ed., section 12.3); the matrix (non-FFT) form of the
 * transform follows R. Soummer et al., Opt. Express 15, 15935 (2007).
 */
import { kernelInstance } from "../kernels/instance.ts";

export interface FoldedKernels {
  /** Far-field nodes per axis, M (odd). */
  readonly nodes: number;
  /** Angles folded onto the half grid p = 0 .. (M-1)/2 (the last one is theta = 0). */
  readonly halfNodes: number;
  /** Sample pairs per axis, ceil(N / 2). */
  readonly pairs: number;
  /** cos(k theta_p x_q), row-major [p][q] over the half grid. */
  readonly c: Float64Array;
  /** sin(k theta_p x_q). */
  readonly s: Float64Array;
  /** x_q cos(k theta_p x_q) (metres). */
  readonly cx: Float64Array;
  /** x_q sin(k theta_p x_q) (metres). */
  readonly sx: Float64Array;
}

/**
 * Folded kernels for angles `thetaRad` (antisymmetric grid of odd length M) and
 * non-negative pair positions `xPairM` (x of the +x member of each pair, metres).
 */
export function foldedKernels(waveNumberPerM: number, thetaRad: ArrayLike<number>, xPairM: ArrayLike<number>): FoldedKernels {
  const nodes = thetaRad.length;
  const halfNodes = (nodes + 1) / 2;
  const pairs = xPairM.length;
  const c = new Float64Array(halfNodes * pairs);
  const s = new Float64Array(halfNodes * pairs);
  const cx = new Float64Array(halfNodes * pairs);
  const sx = new Float64Array(halfNodes * pairs);
  for (let p = 0; p < halfNodes; p++) {
    for (let q = 0; q < pairs; q++) {
      const angle = waveNumberPerM * thetaRad[p] * xPairM[q];
      const i = p * pairs + q;
      c[i] = Math.cos(angle);
      s[i] = Math.sin(angle);
      cx[i] = c[i] * xPairM[q];
      sx[i] = s[i] * xPairM[q];
    }
  }
  return { nodes, halfNodes, pairs, c, s, cx, sx };
}

/**
 * Folded transform of one line of samples given as even/odd parts over `count` pairs:
 * `out[p] = sum_n u_n K[p][n]` and, when `momentRe` is given, `moment[p] = sum_n u_n x_n K[p][n]`,
 * for every p of the full far-field grid. Outputs go to `out[p * stride + offset]`.
 */
export function foldedTransform(
  k: FoldedKernels,
  count: number,
  pRe: Float64Array, pIm: Float64Array, qRe: Float64Array, qIm: Float64Array,
  outRe: Float64Array, outIm: Float64Array,
  momentRe: Float64Array | null, momentIm: Float64Array | null,
  stride: number, offset: number,
): void {
  const kernels = kernelInstance();
  if (!kernels) {
    foldedTransformReference(k, count, pRe, pIm, qRe, qIm, outRe, outIm, momentRe, momentIm, stride, offset);
    return;
  }
  const { pairs, nodes, halfNodes } = k;
  const plane = halfNodes * pairs;
  // The four kernels stay in the module's memory (one resident block per FoldedKernels object).
  const kp = kernels.resident(k, 4 * plane * 8, (ptr) => {
    const heap = kernels.f64;
    const base = ptr >> 3;
    heap.set(k.c, base);
    heap.set(k.s, base + plane);
    heap.set(k.cx, base + 2 * plane);
    heap.set(k.sx, base + 3 * plane);
  });
  const withMoment = momentRe !== null && momentIm !== null;
  const input = kernels.scratch(4 * pairs * 8);
  const sums = kernels.scratch(halfNodes * 8 * 8);
  const heap = kernels.f64;
  const i0 = input >> 3, i1 = i0 + pairs, i2 = i1 + pairs, i3 = i2 + pairs;
  for (let q = 0; q < count; q++) {
    heap[i0 + q] = pRe[q];
    heap[i1 + q] = pIm[q];
    heap[i2 + q] = qRe[q];
    heap[i3 + q] = qIm[q];
  }
  kernels.exports.foldedSums(halfNodes, pairs, count, kp, input, input + pairs * 8, input + 2 * pairs * 8, input + 3 * pairs * 8, withMoment ? 1 : 0, sums);
  let o = sums >> 3;
  for (let p = 0; p < halfNodes; p++, o += 8) {
    const mirror = nodes - 1 - p;
    const a1 = heap[o], a2 = heap[o + 1], a3 = heap[o + 2], a4 = heap[o + 3];
    if (withMoment) {
      const b1 = heap[o + 4], b2 = heap[o + 5], b3 = heap[o + 6], b4 = heap[o + 7];
      momentRe![p * stride + offset] = b1 + b2;
      momentIm![p * stride + offset] = b3 - b4;
      momentRe![mirror * stride + offset] = b1 - b2;
      momentIm![mirror * stride + offset] = b3 + b4;
    }
    outRe[p * stride + offset] = a1 + a2;
    outIm[p * stride + offset] = a3 - a4;
    outRe[mirror * stride + offset] = a1 - a2;
    outIm[mirror * stride + offset] = a3 + a4;
  }
}

/**
 * The TypeScript reference of {@link foldedTransform} (same arguments and results to rounding: the WebAssembly
 * kernel sums pairs of samples in two f64x2 lanes, so its additions come in another order).
 */
export function foldedTransformReference(
  k: FoldedKernels,
  count: number,
  pRe: Float64Array, pIm: Float64Array, qRe: Float64Array, qIm: Float64Array,
  outRe: Float64Array, outIm: Float64Array,
  momentRe: Float64Array | null, momentIm: Float64Array | null,
  stride: number, offset: number,
): void {
  const { c, s, cx, sx, pairs, nodes, halfNodes } = k;
  for (let p = 0; p < halfNodes; p++) {
    const row = p * pairs;
    const mirror = nodes - 1 - p;
    let a1 = 0, a2 = 0, a3 = 0, a4 = 0;
    if (momentRe === null || momentIm === null) {
      for (let q = 0; q < count; q++) {
        const cq = c[row + q], sq = s[row + q];
        a1 += cq * pRe[q];
        a2 += sq * qIm[q];
        a3 += cq * pIm[q];
        a4 += sq * qRe[q];
      }
    } else {
      let b1 = 0, b2 = 0, b3 = 0, b4 = 0;
      for (let q = 0; q < count; q++) {
        const cq = c[row + q], sq = s[row + q], cxq = cx[row + q], sxq = sx[row + q];
        const pr = pRe[q], pi = pIm[q], qr = qRe[q], qi = qIm[q];
        a1 += cq * pr;
        a2 += sq * qi;
        a3 += cq * pi;
        a4 += sq * qr;
        b1 += cxq * qr;
        b2 += sxq * pi;
        b3 += cxq * qi;
        b4 += sxq * pr;
      }
      momentRe[p * stride + offset] = b1 + b2;
      momentIm[p * stride + offset] = b3 - b4;
      momentRe[mirror * stride + offset] = b1 - b2;
      momentIm[mirror * stride + offset] = b3 + b4;
    }
    outRe[p * stride + offset] = a1 + a2;
    outIm[p * stride + offset] = a3 - a4;
    outRe[mirror * stride + offset] = a1 - a2;
    outIm[mirror * stride + offset] = a3 + a4;
  }
}

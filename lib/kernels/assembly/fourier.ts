// Inner products of the folded matrix Fourier transform (lib/optics/matrixFourier.ts), float64 with f64x2.
// For each half-grid angle p, over the sample pairs q < count (row p of the kernels, `pairs` long):
//   a1 = sum c P_re, a2 = sum s Q_im, a3 = sum c P_im, a4 = sum s Q_re,
//   b1 = sum cx Q_re, b2 = sum sx P_im, b3 = sum cx Q_im, b4 = sum sx P_re   (with the moment only),
// written to out[p * 8 + 0 .. 7]. The caller combines them into the transform at +theta_p and -theta_p.

@inline function sum2(v: v128): f64 {
  return f64x2.extract_lane(v, 0) + f64x2.extract_lane(v, 1);
}

/** Kernels c, s, cx, sx are consecutive `halfNodes x pairs` row-major arrays at `kernels`. */
export function foldedSums(
  halfNodes: i32, pairs: i32, count: i32, kernels: usize,
  pRe: usize, pIm: usize, qRe: usize, qIm: usize, moment: i32, out: usize,
): void {
  const plane = <usize>(halfNodes * pairs * 8);
  for (let p = 0; p < halfNodes; p++) {
    const c = kernels + <usize>(p * pairs * 8);
    const s = c + plane;
    const o = out + <usize>(p * 64);
    let a1 = f64x2.splat(0), a2 = f64x2.splat(0), a3 = f64x2.splat(0), a4 = f64x2.splat(0);
    let q = 0;
    if (!moment) {
      for (; q + 2 <= count; q += 2) {
        const i = <usize>(q * 8);
        const cq = v128.load(c + i), sq = v128.load(s + i);
        a1 = f64x2.add(a1, f64x2.mul(cq, v128.load(pRe + i)));
        a2 = f64x2.add(a2, f64x2.mul(sq, v128.load(qIm + i)));
        a3 = f64x2.add(a3, f64x2.mul(cq, v128.load(pIm + i)));
        a4 = f64x2.add(a4, f64x2.mul(sq, v128.load(qRe + i)));
      }
      let r1 = sum2(a1), r2 = sum2(a2), r3 = sum2(a3), r4 = sum2(a4);
      for (; q < count; q++) {
        const i = <usize>(q * 8);
        const cq = load<f64>(c + i), sq = load<f64>(s + i);
        r1 += cq * load<f64>(pRe + i);
        r2 += sq * load<f64>(qIm + i);
        r3 += cq * load<f64>(pIm + i);
        r4 += sq * load<f64>(qRe + i);
      }
      store<f64>(o, r1);
      store<f64>(o, r2, 8);
      store<f64>(o, r3, 16);
      store<f64>(o, r4, 24);
      continue;
    }
    const cx = s + plane;
    const sx = cx + plane;
    let b1 = f64x2.splat(0), b2 = f64x2.splat(0), b3 = f64x2.splat(0), b4 = f64x2.splat(0);
    for (; q + 2 <= count; q += 2) {
      const i = <usize>(q * 8);
      const cq = v128.load(c + i), sq = v128.load(s + i), cxq = v128.load(cx + i), sxq = v128.load(sx + i);
      const pr = v128.load(pRe + i), pi = v128.load(pIm + i), qr = v128.load(qRe + i), qi = v128.load(qIm + i);
      a1 = f64x2.add(a1, f64x2.mul(cq, pr));
      a2 = f64x2.add(a2, f64x2.mul(sq, qi));
      a3 = f64x2.add(a3, f64x2.mul(cq, pi));
      a4 = f64x2.add(a4, f64x2.mul(sq, qr));
      b1 = f64x2.add(b1, f64x2.mul(cxq, qr));
      b2 = f64x2.add(b2, f64x2.mul(sxq, pi));
      b3 = f64x2.add(b3, f64x2.mul(cxq, qi));
      b4 = f64x2.add(b4, f64x2.mul(sxq, pr));
    }
    let r1 = sum2(a1), r2 = sum2(a2), r3 = sum2(a3), r4 = sum2(a4);
    let t1 = sum2(b1), t2 = sum2(b2), t3 = sum2(b3), t4 = sum2(b4);
    for (; q < count; q++) {
      const i = <usize>(q * 8);
      const cq = load<f64>(c + i), sq = load<f64>(s + i), cxq = load<f64>(cx + i), sxq = load<f64>(sx + i);
      const pr = load<f64>(pRe + i), pi = load<f64>(pIm + i), qr = load<f64>(qRe + i), qi = load<f64>(qIm + i);
      r1 += cq * pr;
      r2 += sq * qi;
      r3 += cq * pi;
      r4 += sq * qr;
      t1 += cxq * qr;
      t2 += sxq * pi;
      t3 += cxq * qi;
      t4 += sxq * pr;
    }
    store<f64>(o, r1);
    store<f64>(o, r2, 8);
    store<f64>(o, r3, 16);
    store<f64>(o, r4, 24);
    store<f64>(o, t1, 32);
    store<f64>(o, t2, 40);
    store<f64>(o, t3, 48);
    store<f64>(o, t4, 56);
  }
}

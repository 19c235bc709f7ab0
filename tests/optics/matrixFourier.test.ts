import { describe, expect, it } from "vitest";
import { setKernelsEnabled } from "../../lib/kernels/instance.ts";
import { foldedKernels, foldedTransform, foldedTransformReference } from "../../lib/optics/matrixFourier.ts";
import { TtlPropagator } from "../../lib/optics/index.ts";
import { randomDesign } from "../../lib/surrogate/index.ts";
import { kernelFixture, lcg, uSample } from "../kernels/formulas.ts";
import { smallSetup } from "../surrogate/helpers.ts";

/** Even/odd parts over mirrored pairs of a symmetric grid of n samples (an odd grid's centre pairs with zero). */
function fold(re: ArrayLike<number>, im: ArrayLike<number>, n: number) {
  const pairs = Math.ceil(n / 2);
  const p = { re: new Float64Array(pairs), im: new Float64Array(pairs) };
  const q = { re: new Float64Array(pairs), im: new Float64Array(pairs) };
  for (let k = 0; k < pairs; k++) {
    const plus = n - pairs + k;
    const minus = pairs - 1 - k;
    const lRe = plus === minus ? 0 : re[minus];
    const lIm = plus === minus ? 0 : im[minus];
    p.re[k] = re[plus] + lRe;
    p.im[k] = im[plus] + lIm;
    q.re[k] = re[plus] - lRe;
    q.im[k] = im[plus] - lIm;
  }
  return { p, q, pairs };
}

describe("foldedTransform through the SIMD kernel", () => {
  it("equals the plain sums E = sum u exp(-i k theta x) and the x moment computed by NumPy", () => {
    // Source: tests/fixtures/kernels/make_kernels.py (direct complex sums with NumPy, 9 and 10 samples, 5 angles).
    // |E| <= sum |u| ~ 10; the folded sums use the same cos/sin to rounding, so 1e-12 of sum |u| is ample
    // (common practice, no source).
    for (const t of kernelFixture.foldedTransform) {
      const n = t.samples;
      const x = Float64Array.from({ length: n }, (_, i) => (i - (n - 1) / 2) * t.sampleSpacingM);
      const theta = Float64Array.from({ length: 5 }, (_, i) => (i - 2) * t.angleStepRad);
      const u = Array.from({ length: n }, (_, i) => uSample(i));
      const { p, q, pairs } = fold(u.map((v) => v.re), u.map((v) => v.im), n);
      const xPair = Float64Array.from({ length: pairs }, (_, k) => x[n - pairs + k]);
      const kernels = foldedKernels((2 * Math.PI) / t.wavelengthM, theta, xPair);
      const out = { re: new Float64Array(5), im: new Float64Array(5), mRe: new Float64Array(5), mIm: new Float64Array(5) };
      foldedTransform(kernels, pairs, p.re, p.im, q.re, q.im, out.re, out.im, out.mRe, out.mIm, 1, 0);
      const scale = u.reduce((s, v) => s + Math.hypot(v.re, v.im), 0);
      for (let i = 0; i < 5; i++) {
        expect(Math.abs(out.re[i] - t.re[i])).toBeLessThanOrEqual(1e-12 * scale);
        expect(Math.abs(out.im[i] - t.im[i])).toBeLessThanOrEqual(1e-12 * scale);
        expect(Math.abs(out.mRe[i] - t.momentRe[i])).toBeLessThanOrEqual(1e-12 * scale * t.sampleSpacingM * n);
        expect(Math.abs(out.mIm[i] - t.momentIm[i])).toBeLessThanOrEqual(1e-12 * scale * t.sampleSpacingM * n);
      }
    }
  });

  it("agrees with the TypeScript reference for 0, 1, odd and even pair counts, with and without the moment", () => {
    const random = lcg(19);
    const pairs = 11;
    const theta = Float64Array.from({ length: 7 }, (_, i) => (i - 3) * 1e-7);
    const xPair = Float64Array.from({ length: pairs }, (_, k) => (k + 0.5) * 0.003);
    const kernels = foldedKernels(2 * Math.PI / 1.064e-6, theta, xPair);
    for (const count of [0, 1, 2, 5, 11]) {
      const input = Array.from({ length: 4 }, () => Float64Array.from({ length: pairs }, random));
      for (const moment of [false, true]) {
        const ours = Array.from({ length: 4 }, () => new Float64Array(3 * 7));
        const reference = Array.from({ length: 4 }, () => new Float64Array(3 * 7));
        const call = (f: typeof foldedTransform, o: Float64Array[]) =>
          f(kernels, count, input[0], input[1], input[2], input[3], o[0], o[1], moment ? o[2] : null, moment ? o[3] : null, 3, 1);
        call(foldedTransform, ours);
        call(foldedTransformReference, reference);
        // Sums of at most 11 products of size <= 0.5 in another order: 1e-15 absolute is a few units of rounding.
        for (let a = 0; a < 4; a++) for (let i = 0; i < 21; i++) expect(Math.abs(ours[a][i] - reference[a][i])).toBeLessThanOrEqual(1e-15);
      }
    }
  });

  it("leaves the exact TTL maps of the propagator as they were, to rounding", () => {
    // Same sums in another order: 1e-12 of the peak |TTL| (rounding is about 1e-16 relative per sum; the
    // division by |E|^2 amplifies it near the edges of the map; common practice, no source).
    const propagator = new TtlPropagator(smallSetup, [4, 5, 6, 7, 8]);
    const wavefronts = randomDesign(5, { size: 3, maxRmsNm: 30, seed: 31 });
    for (let s = 0; s < 3; s++) {
      const a = wavefronts.subarray(5 * s, 5 * s + 5);
      const ours = propagator.ttl(a);
      const previous = setKernelsEnabled(false);
      const reference = propagator.ttl(a);
      setKernelsEnabled(previous);
      const peak = Math.max(...reference.x.map(Math.abs), ...reference.y.map(Math.abs));
      for (let i = 0; i < ours.x.length; i++) {
        expect(Math.abs(ours.x[i] - reference.x[i])).toBeLessThanOrEqual(1e-12 * peak);
        expect(Math.abs(ours.y[i] - reference.y[i])).toBeLessThanOrEqual(1e-12 * peak);
      }
    }
  });
});

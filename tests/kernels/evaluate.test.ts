import { describe, expect, it } from "vitest";
import { setKernelsEnabled } from "../../lib/kernels/instance.ts";
import { createComputePool } from "../../lib/parallel/index.ts";
import { evaluateBatchPeaksInto } from "../../lib/surrogate/evaluate.ts";
import {
  compileTerms, evaluateBatch, evaluateBatchInto, evaluateInto, evaluateMap, featureMatrix, randomDesign, roundToStored,
  secondOrderTerms,
} from "../../lib/surrogate/index.ts";
import { chosenCoefficients, syntheticModel } from "../surrogate/helpers.ts";
import { gamma, U32, U64 } from "./formulas.ts";

// Six Zernike terms, second order: 28 terms; 5 x 5 nodes, so 50 outputs (not a multiple of the panel widths 8 and 4).
const noll = [4, 5, 6, 7, 8, 11];
const J = noll.length;
const terms = secondOrderTerms(noll);
const T = terms.length;
const M = 5;
const P = 2 * M * M;
const generating = randomDesign(J, { size: 60, maxRmsNm: 20, seed: 2 });
const float64Model = syntheticModel(terms, noll, chosenCoefficients(T * P, 0.01), generating);
// A stored model: coefficients rounded to float32 as the model file keeps them.
const storedModel = { ...float64Model, coefficients: roundToStored(float64Model.coefficients) };

/**
 * The polynomial written out term by term in float64 (PHYSICS.md section 5), and the error scale
 * sum_t |f_t| |C[t][p]| of each output.
 */
function direct(model: typeof float64Model, wavefronts: Float64Array) {
  const f = featureMatrix(compileTerms(terms, noll), wavefronts, J);
  const S = wavefronts.length / J;
  const value = new Float64Array(S * P);
  const scale = new Float64Array(S * P);
  for (let s = 0; s < S; s++) for (let p = 0; p < P; p++) {
    let v = 0;
    let a = 0;
    for (let t = 0; t < T; t++) {
      const term = f[s * T + t] * model.coefficients[t * P + p];
      v += term;
      a += Math.abs(term);
    }
    value[s * P + p] = v;
    scale[s * P + p] = a;
  }
  return { value, scale };
}

/**
 * Float32 evaluation: features rounded to float32 (one rounding each), then a float32 inner product of length T:
 * within gamma_(T+1)(u32) sum |f||C| of the exact value (Higham, Accuracy and Stability, 2nd ed., eq. 3.5);
 * the float64 reference adds at most gamma_T(u64) sum |f||C| of its own.
 */
const float32Bound = (scale: number) => (gamma(T + 1, U32) + gamma(T, U64)) * scale;

describe("surrogate evaluation through the kernels", () => {
  it("evaluates a stored model in float32 within the stated bound, one map or many, on awkward batch sizes", () => {
    // 0 and 1 wavefronts, a batch not a multiple of the 4-row block, and 1025 (one past a chunk of 1024).
    let worstRelative = 0;
    for (const S of [1, 5, 1025]) {
      const wavefronts = randomDesign(J, { size: S, maxRmsNm: 30, seed: 40 + S });
      const { value, scale } = direct(storedModel, wavefronts);
      const batch = evaluateBatch(storedModel, wavefronts);
      for (let i = 0; i < batch.length; i++) {
        expect(Math.abs(batch[i] - value[i])).toBeLessThanOrEqual(float32Bound(scale[i]));
        worstRelative = Math.max(worstRelative, Math.abs(batch[i] - value[i]) / scale[i]);
      }
      const one = new Float64Array(P);
      evaluateInto(storedModel, wavefronts.subarray(0, J), one);
      for (let p = 0; p < P; p++) expect(Math.abs(one[p] - value[p])).toBeLessThanOrEqual(float32Bound(scale[p]));
    }
    expect(evaluateBatch(storedModel, new Float64Array(0))).toHaveLength(0);
    // The float32 path really ran: its rounding (order u32 = 6e-8 relative) is far above float64's (1e-16).
    expect(worstRelative).toBeGreaterThan(1e-10);
  });

  it("evaluates a float64 model in float64 (the same answers as the reference to rounding)", () => {
    const wavefronts = randomDesign(J, { size: 9, maxRmsNm: 30, seed: 9 });
    const { value, scale } = direct(float64Model, wavefronts);
    const batch = evaluateBatch(float64Model, wavefronts);
    const map = evaluateMap(float64Model, wavefronts.subarray(0, J));
    // Two float64 sums of T terms in different orders: within 2 gamma_T(u64) sum |f||C| of each other.
    for (let i = 0; i < batch.length; i++) expect(Math.abs(batch[i] - value[i])).toBeLessThanOrEqual(2 * gamma(T, U64) * scale[i]);
    for (let p = 0; p < P; p++) expect(Math.abs((p < M * M ? map.x[p] : map.y[p - M * M]) - value[p])).toBeLessThanOrEqual(2 * gamma(T, U64) * scale[p]);
  });

  it("gives the TypeScript reference's answers to the bound, with the kernels switched off for comparison", () => {
    const wavefronts = randomDesign(J, { size: 7, maxRmsNm: 30, seed: 17 });
    const ours = evaluateBatch(storedModel, wavefronts);
    const previous = setKernelsEnabled(false);
    const reference = evaluateBatch(storedModel, wavefronts);
    setKernelsEnabled(previous);
    const { scale } = direct(storedModel, wavefronts);
    for (let i = 0; i < ours.length; i++) expect(Math.abs(ours[i] - reference[i])).toBeLessThanOrEqual(float32Bound(scale[i]));
  });

  it("leaves huge wavefronts to float64, so they overflow (or not) exactly as before", () => {
    // 1e30^2 = 1e60 is far beyond float32 (max ~3.4e38) but an ordinary float64: the answer must be finite.
    const huge = [1e30, 0, 0, 0, 0, 0];
    const { value } = direct(storedModel, Float64Array.from(huge));
    const map = evaluateMap(storedModel, huge);
    for (let p = 0; p < M * M; p++) expect(Math.abs(map.x[p] - value[p])).toBeLessThanOrEqual(1e-12 * Math.abs(value[p]));
    expect(() => evaluateMap(storedModel, [1e200, 0, 0, 0, 0, 0])).toThrow(
      new RangeError("wavefront coefficients are too large: the surrogate TTL is not finite"),
    );
  });

  it("writes only the rows asked for in a batch", () => {
    const wavefronts = randomDesign(J, { size: 6, maxRmsNm: 30, seed: 3 });
    const out = new Float64Array(6 * P).fill(-1);
    evaluateBatchInto(storedModel, wavefronts, out, 2, 5);
    const all = evaluateBatch(storedModel, wavefronts);
    for (let s = 0; s < 6; s++) for (let p = 0; p < P; p++) {
      if (s < 2 || s >= 5) expect(out[s * P + p]).toBe(-1);
      else expect(out[s * P + p]).toBe(all[s * P + p]); // each row's sum does not depend on the rows around it
    }
  });

  it("gives bit-for-bit the single-thread answer on worker threads, each with its own kernel instance", async () => {
    const wavefronts = randomDesign(J, { size: 23, maxRmsNm: 30, seed: 23 });
    const pool = createComputePool({ threads: 2 });
    try {
      expect(Array.from(await pool.evaluateBatch(storedModel, wavefronts))).toEqual(Array.from(evaluateBatch(storedModel, wavefronts)));
    } finally {
      await pool.close();
    }
  });

  it("gives each wavefront's peak |TTL| without its maps, the same numbers as the largest |value| of each map", () => {
    // Definition: peak = max over both axes and all nodes of |c|; the peaks come from the same sums as the maps.
    for (const model of [storedModel, float64Model]) {
      for (const S of [1, 6, 300]) {
        const wavefronts = randomDesign(J, { size: S, maxRmsNm: 30, seed: 70 + S });
        const maps = evaluateBatch(model, wavefronts);
        const expected = Array.from({ length: S }, (_, s) => Math.max(...Array.from(maps.subarray(s * P, (s + 1) * P), Math.abs)));
        // Without the kernels the TypeScript reference sums term by term in order, exactly as direct() does.
        const { value } = direct(model, wavefronts);
        const expectedReference = Array.from({ length: S }, (_, s) => Math.max(...Array.from(value.subarray(s * P, (s + 1) * P), Math.abs)));
        for (const kernels of [true, false]) {
          const previous = setKernelsEnabled(kernels);
          const peaks = new Float64Array(S).fill(-1);
          evaluateBatchPeaksInto(model, wavefronts, peaks);
          setKernelsEnabled(previous);
          expect(Array.from(peaks)).toEqual(kernels ? expected : expectedReference);
        }
      }
    }
    const peaks = new Float64Array(3).fill(-1);
    evaluateBatchPeaksInto(storedModel, randomDesign(J, { size: 3, maxRmsNm: 30, seed: 1 }), peaks, 1, 2);
    expect(peaks[0]).toBe(-1);
    expect(peaks[1]).toBeGreaterThan(0);
    expect(peaks[2]).toBe(-1);
    expect(() => evaluateBatchPeaksInto(storedModel, new Float64Array(2 * J), new Float64Array(3))).toThrow(new RangeError("peaks must have S entries"));
    expect(() => evaluateBatchPeaksInto(storedModel, [0, 0, 0, 0, 0, 1e200], new Float64Array(1))).toThrow(
      new RangeError("wavefront coefficients are too large: the surrogate TTL is not finite"),
    );
  });
});

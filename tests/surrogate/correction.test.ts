import { describe, expect, it } from "vitest";
import { correctWavefront, evaluateBatch, firstOrderTerms, randomDesign, secondOrderTerms } from "../../lib/surrogate/index.ts";
import { chosenCoefficients, smallSetup, syntheticModel } from "./helpers.ts";

const M = smallSetup.farField.pointsPerAxis;
const P = 2 * M * M;

describe("correctWavefront", () => {
  // Linear model c_p = A_p (a_4 + 2 a_5) + G_p a_6: term 5 acts exactly like twice term 4 (closed form).
  const noll = [4, 5, 6];
  const coefficients = new Float64Array(4 * P);
  for (let p = 0; p < P; p++) {
    const A = Math.sin(0.3 * p + 0.2);
    coefficients[P + p] = A;
    coefficients[2 * P + p] = 2 * A;
    coefficients[3 * P + p] = Math.cos(0.7 * p);
  }
  const model = syntheticModel(firstOrderTerms(noll), noll, coefficients, randomDesign(3, { size: 10, maxRmsNm: 10, seed: 1 }), 1);
  const maxA = Math.max(...Array.from({ length: P }, (_, p) => Math.abs(Math.sin(0.3 * p + 0.2))));

  it("cancels a wavefront that an adjustable term can reproduce: a_4 = 3 needs a_5 = -1.5", () => {
    const result = correctWavefront(model, [3, 0, 0], [1], 10);
    expect(result.beforePeakPmPerNrad).toBeCloseTo(3 * maxA, 12);
    expect(result.adjustmentNm[1]).toBeCloseTo(-1.5, 6);
    expect(result.afterPeakPmPerNrad).toBeLessThan(1e-6 * result.beforePeakPmPerNrad);
    expect(result.correctedNm[0]).toBe(3);
  });

  it("stays inside the per-term limit: with |d| <= 1 the minimax answer is d = -1, peak (3 - 2) max|A|", () => {
    const result = correctWavefront(model, [3, 0, 0], [1], 1);
    expect(result.adjustmentNm[1]).toBeCloseTo(-1, 12);
    expect(result.afterPeakPmPerNrad).toBeCloseTo(maxA, 10);
  });

  it("returns no adjustment when the adjustable terms cannot help", () => {
    // Term 6 alone is present; adjusting term 4 only adds TTL.
    const result = correctWavefront(model, [0, 0, 2], [0], 5);
    expect(Array.from(result.adjustmentNm)).toEqual([0, 0, 0]);
    expect(result.afterPeakPmPerNrad).toBe(result.beforePeakPmPerNrad);
  });

  it("never increases the model's worst TTL on a second-order model (30 wavefronts, several term choices)", () => {
    const terms = secondOrderTerms([4, 5, 6, 7, 8, 9]);
    const quadratic = syntheticModel(terms, [4, 5, 6, 7, 8, 9], chosenCoefficients(terms.length * P, 0.01), randomDesign(6, { size: 40, maxRmsNm: 30, seed: 2 }));
    const wavefronts = randomDesign(6, { size: 30, maxRmsNm: 25, seed: 9 });
    const choices = [[0], [1, 4], [0, 2, 5], [3]];
    for (let s = 0; s < 30; s++) {
      const a = wavefronts.subarray(s * 6, (s + 1) * 6);
      const result = correctWavefront(quadratic, a, choices[s % choices.length], 5 + s);
      expect(result.afterPeakPmPerNrad).toBeLessThanOrEqual(result.beforePeakPmPerNrad);
      // The reported peaks are the model's: check both against a fresh evaluation.
      const [before, after] = [a, result.correctedNm].map((w) => Math.max(...Array.from(evaluateBatch(quadratic, w), Math.abs)));
      expect(result.beforePeakPmPerNrad).toBeCloseTo(before, 12);
      expect(result.afterPeakPmPerNrad).toBeCloseTo(after, 12);
      for (const k of choices[s % choices.length]) expect(Math.abs(result.adjustmentNm[k])).toBeLessThanOrEqual(5 + s);
    }
    expect(() => correctWavefront(quadratic, wavefronts.subarray(0, 6), [0, 0], 5)).toThrow(
      new RangeError("adjustable terms must be distinct positions among the model's J variables"),
    );
    expect(() => correctWavefront(quadratic, wavefronts.subarray(0, 6), [0], 0)).toThrow(new RangeError("limitNm must be a finite number > 0"));
  });
});

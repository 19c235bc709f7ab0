import { describe, expect, it } from "vitest";
import {
  axisWeights, evaluateAtOffsets, evaluateBatch, evaluateMap, interpolateMap, randomDesign, residualStatistics,
  secondOrderTerms, validityFromSamples, validityWarnings, featureMatrix, compileTerms, checkSampleSet,
} from "../../lib/surrogate/index.ts";
import { chosenCoefficients, smallSetup, syntheticModel } from "./helpers.ts";

const noll = [4, 5, 6, 11];
const M = 5;
const nodes = M * M;
const terms = secondOrderTerms(noll);
const generating = randomDesign(4, { size: 60, maxRmsNm: 20, seed: 2 });
const model = syntheticModel(terms, noll, chosenCoefficients(terms.length * 2 * nodes, 0.01), generating);

/** Reference: the polynomial written out directly, out[p] = sum_t f_t C[t][p] (PHYSICS.md section 5). */
function direct(a: number[]): Float64Array {
  const f = featureMatrix(compileTerms(terms, noll), a, 4);
  const out = new Float64Array(2 * nodes);
  for (let p = 0; p < out.length; p++) for (let t = 0; t < terms.length; t++) out[p] += f[t] * model.coefficients[t * 2 * nodes + p];
  return out;
}

describe("evaluateMap and evaluateBatch", () => {
  it("evaluate the polynomial term by term, one map or many", () => {
    const a = [3, -2, 1.5, 0.5];
    const map = evaluateMap(model, a);
    const expected = direct(a);
    for (let n = 0; n < nodes; n++) {
      expect(map.x[n]).toBeCloseTo(expected[n], 12);
      expect(map.y[n]).toBeCloseTo(expected[nodes + n], 12);
    }
    expect(map.warnings).toEqual([]);
    const many = randomDesign(4, { size: 9, maxRmsNm: 10, seed: 4 });
    const batch = evaluateBatch(model, many);
    for (let s = 0; s < 9; s++) {
      const one = direct(Array.from(many.subarray(4 * s, 4 * s + 4)));
      for (let p = 0; p < 2 * nodes; p++) expect(batch[s * 2 * nodes + p]).toBeCloseTo(one[p], 12);
    }
  });

  it("evaluates outside the validity range but names what is outside", () => {
    const far = [40, 0, 0, 0];
    const { x, warnings } = evaluateMap(model, far);
    expect(x[0]).toBeCloseTo(direct(far)[0], 10);
    expect(warnings[0]).toMatch(/^total RMS 40 nm is above the model's validity limit of [\d.]+ nm$/);
    expect(warnings[1]).toMatch(/^Z4 = 40 nm is outside the fitted range \[-[\d.]+ nm, [\d.]+ nm\]$/);
    expect(warnings).toHaveLength(2);
  });

  it("rejects NaN, infinity and wrong lengths with exact messages", () => {
    expect(() => evaluateMap(model, [1, NaN, 0, 0])).toThrow(new RangeError("coefficient of Noll term 5 must be a finite number"));
    expect(() => evaluateMap(model, [1, 0, Infinity, 0])).toThrow(new RangeError("coefficient of Noll term 6 must be a finite number"));
    expect(() => evaluateMap(model, [1, 0, 0])).toThrow(
      new RangeError("expected 4 coefficients (one per term), got 3"),
    );
    expect(() => evaluateBatch(model, [0, 0, 0, 0, 0, 0, 0, -Infinity])).toThrow(
      new RangeError("coefficient of Noll term 11 must be a finite number (wavefront 1)"),
    );
    expect(evaluateBatch(model, [])).toHaveLength(0);
  });

  it("refuses huge coefficients whose products overflow instead of returning infinities", () => {
    // 1e200^2 = 1e400 is beyond the IEEE 754 double range (max ~1.8e308).
    expect(() => evaluateMap(model, [1e200, 0, 0, 0])).toThrow(
      new RangeError("wavefront coefficients are too large: the surrogate TTL is not finite"),
    );
    expect(() => evaluateBatch(model, [0, 0, 0, 1e200])).toThrow(
      new RangeError("wavefront coefficients are too large: the surrogate TTL is not finite"),
    );
  });
});

describe("bicubic interpolation between nodes", () => {
  const h = smallSetup.farField.halfAngleNrad;
  const theta = Array.from({ length: M }, (_, i) => -h + (2 * h * i) / (M - 1));
  const quadratic = (tx: number, ty: number) => 0.3 + 0.01 * tx - 0.02 * ty + 1e-4 * tx * ty + 2e-4 * tx * tx - 3e-4 * ty * ty;
  const grid = theta.flatMap((ty) => theta.map((tx) => quadratic(tx, ty)));

  it("reproduces quadratics exactly, also in the edge intervals", () => {
    // Source: Keys (1981), section III: the a = -1/2 kernel with the boundary rule f(-1) = 3f(0) - 3f(1) + f(2)
    // reproduces polynomials of degree <= 2 exactly; the tensor product does so for products of them.
    for (const [tx, ty] of [[0, 0], [-50, -50], [12.3, -47.9], [49.99, 3.3], [-37.5, 25], [50, 50]]) {
      expect(interpolateMap(grid, h, M, tx, ty)).toBeCloseTo(quadratic(tx, ty), 12);
    }
  });

  it("returns node values at the nodes and weights that sum to one", () => {
    for (let i = 0; i < M; i++) expect(interpolateMap(grid, h, M, theta[i], theta[M - 1 - i])).toBeCloseTo(grid[(M - 1 - i) * M + i], 13);
    const { weights } = axisWeights(7.7, h, M);
    expect(weights.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 14);
  });

  it("refuses offsets outside the map", () => {
    expect(() => interpolateMap(grid, h, M, 50.5, 0)).toThrow(new RangeError("DC offset 50.5 nrad is outside the map (|theta| <= 50 nrad)"));
    expect(() => interpolateMap(grid, h, M, 0, NaN)).toThrow(new RangeError("DC offset NaN nrad is outside the map (|theta| <= 50 nrad)"));
    expect(() => evaluateAtOffsets(model, [1, 0, 0, 0], [0, -60], [0, 0])).toThrow(
      new RangeError("DC offset -60 nrad is outside the map (|theta| <= 50 nrad)"),
    );
  });

  it("evaluates a model at arbitrary offsets as the interpolated full map", () => {
    const a = [2, 1, -1, 0.5];
    const map = evaluateMap(model, a);
    const at = evaluateAtOffsets(model, a, [0, 13.7, -50], [0, -22.1, 50]);
    expect(at.x[0]).toBeCloseTo(map.x[12], 13); // centre node
    expect(at.y[2]).toBeCloseTo(map.y[20], 13); // node (ix 0, iy 4)
    expect(at.x[1]).toBeCloseTo(interpolateMap(map.x, 50, M, 13.7, -22.1), 13);
  });
});

describe("checkSampleSet (uploaded generating sets)", () => {
  const good = () => ({ coefficientsNm: new Float64Array(2 * 4), x: new Float64Array(2 * nodes), y: new Float64Array(2 * nodes), count: 2, pointsPerAxis: M });
  it("accepts a well-formed set and names what is wrong with a bad one", () => {
    expect(() => checkSampleSet(good(), 4, M)).not.toThrow();
    expect(() => checkSampleSet({ ...good(), count: 0 }, 4, M)).toThrow(new RangeError("sample set must not be empty"));
    expect(() => checkSampleSet({ ...good(), coefficientsNm: new Float64Array(7) }, 4, M)).toThrow(
      new RangeError("coefficient matrix must have count x J = 2 x 4 entries"),
    );
    expect(() => checkSampleSet({ ...good(), y: new Float64Array(nodes) }, 4, M)).toThrow(
      new RangeError("maps must have count x M x M = 2 x 5 x 5 entries per axis"),
    );
    const nan = good();
    nan.coefficientsNm[5] = NaN;
    expect(() => checkSampleSet(nan, 4, M)).toThrow(new RangeError("sample set contains a non-finite coefficient (sample 1)"));
    const inf = good();
    inf.y[nodes + 3] = -Infinity;
    expect(() => checkSampleSet(inf, 4, M)).toThrow(new RangeError("sample set contains a non-finite TTL value (sample 1)"));
  });
});

describe("validity and residual statistics", () => {
  it("records the largest total RMS and per-term bounds of the generating set", () => {
    const v = validityFromSamples([4, 5], [3, 4, -1, 0, 0, 2]);
    expect(v.maxTotalRmsNm).toBe(5); // sqrt(3^2 + 4^2), hand computed
    expect(v.termBoundsNm).toEqual([{ noll: 4, minNm: -1, maxNm: 3 }, { noll: 5, minNm: 0, maxNm: 4 }]);
    expect(validityWarnings(v, [3, 4])).toEqual([]);
    expect(validityWarnings(v, [-2, 1])).toEqual(["Z4 = -2 nm is outside the fitted range [-1 nm, 3 nm]"]);
    expect(() => validityFromSamples([4], [])).toThrow(new RangeError("sample set must not be empty"));
  });

  it("computes hand-checkable overall, per-bin and per-node figures", () => {
    // Two samples (RMS 1 and 4 nm), 3 x 3 nodes; only node 0 of x is wrong: by 0.1 in sample 0, by 0.4 in sample 1.
    // Hand computation: max |err| 0.4; RMS over 2 samples x 18 values = sqrt((0.01 + 0.16) / 36);
    // peaks 1 and 2 -> relative 0.4 / 2 = 0.2 overall, worst sample 0.1 / 1 vs 0.4 / 2 -> 0.2.
    const set = {
      coefficientsNm: Float64Array.from([1, 0, 0, 4]),
      x: Float64Array.from([1, 0, 0, 0, 0, 0, 0, 0, 0, 2, 0, 0, 0, 0, 0, 0, 0, 0]),
      y: new Float64Array(18),
      count: 2,
      pointsPerAxis: 3,
    };
    const predicted = { x: set.x.slice(), y: set.y.slice() };
    predicted.x[0] += 0.1;
    predicted.x[9] -= 0.4;
    const stats = residualStatistics(set, 2, predicted, 2);
    expect(stats.overall.maxAbsErrorPmPerNrad).toBeCloseTo(0.4, 14);
    expect(stats.overall.rmsErrorPmPerNrad).toBeCloseTo(Math.sqrt(0.17 / 36), 14);
    expect(stats.overall.peakAbsTtlPmPerNrad).toBe(2);
    expect(stats.overall.maxErrorRelativeToPeak).toBeCloseTo(0.2, 14);
    expect(stats.overall.worstSampleRelativeError).toBeCloseTo(0.2, 14);
    expect(stats.perRmsBin.map((b) => [b.loNm, b.hiNm, b.samples])).toEqual([[0, 2, 1], [2, 4, 1]]);
    expect(stats.perRmsBin[0].worstSampleRelativeError).toBeCloseTo(0.1, 14);
    expect(stats.perNode.maxAbsErrorXPmPerNrad[0]).toBeCloseTo(0.4, 14);
    expect(stats.perNode.rmsErrorXPmPerNrad[0]).toBeCloseTo(Math.sqrt(0.17 / 2), 14);
    expect(stats.perNode.maxAbsErrorYPmPerNrad.every((v) => v === 0)).toBe(true);
  });
});

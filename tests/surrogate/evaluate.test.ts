import { describe, expect, it } from "vitest";
import {
  axisWeights, evaluateAtOffsets, evaluateBatch, evaluateMap, interpolateMap, randomDesign, residualStatistics,
  secondOrderTerms, validityWarnings,
} from "../../lib/surrogate/index.ts";
import { chosenCoefficients, smallSetup, syntheticModel } from "./helpers.ts";

const noll = [4, 5, 6, 11];
const M = 5;
const nodes = M * M;
const terms = secondOrderTerms(noll);
const generating = randomDesign(4, { size: 60, maxRmsNm: 20, seed: 2 });
const model = syntheticModel(terms, noll, chosenCoefficients(terms.length * 2 * nodes, 0.01), generating);

/**
 * Reference: the polynomial written out from its definition (PHYSICS.md section 5), out[p] = sum_t C[t][p] times
 * the product of the coefficients of the Noll indices term t names (none for c0); not the product's feature code.
 */
function direct(a: number[]): Float64Array {
  const f = terms.map((term) => term.reduce((product, j) => product * a[noll.indexOf(j)], 1));
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

import { describe, expect, it } from "vitest";
import {
  axesAndPairsDesign, axesAndPairsSize, fitCoefficients, compileTerms, firstOrderTerms, randomDesign, secondOrderTerms,
} from "../../lib/surrogate/index.ts";
import { chosenCoefficients, synthesizeSet } from "./helpers.ts";

const noll = [4, 5, 6, 11];
const M = 5;
const nodes = M * M;

function maxRelativeError(actual: Float64Array, expected: Float64Array): number {
  let worst = 0;
  let scale = 0;
  for (let i = 0; i < expected.length; i++) scale = Math.max(scale, Math.abs(expected[i]));
  for (let i = 0; i < expected.length; i++) worst = Math.max(worst, Math.abs(actual[i] - expected[i]));
  return worst / scale;
}

describe("fitCoefficients", () => {
  it("recovers a known second-order polynomial exactly from a random design", () => {
    // Source: a known polynomial. The maps are the chosen C evaluated term by term from the definition
    // (helpers.ts synthesizeSet, not the product's feature code); any full-rank design fits them exactly, so the
    // fit must return C itself. 1e-10 relative allows for rounding in a QR of condition ~1e2 (Golub and
    // Van Loan, Matrix Computations, section 5.3.8).
    const terms = secondOrderTerms(noll);
    const truth = chosenCoefficients(terms.length * 2 * nodes, 0.01);
    const design = randomDesign(noll.length, { size: 60, maxRmsNm: 30, seed: 5 });
    const set = synthesizeSet(terms, noll, truth, design, M);
    const fit = fitCoefficients(compileTerms(terms, noll), terms, set.coefficientsNm, noll.length, set.x, set.y, nodes);
    expect(maxRelativeError(fit.coefficients, truth)).toBeLessThan(1e-10);
    expect(fit.trainingResidualRmsPmPerNrad).toBeLessThan(1e-12);
    expect(fit.conditionNumber).toBeGreaterThanOrEqual(1);
  });

  it("recovers it exactly from the square axes-and-pairs design", () => {
    const terms = secondOrderTerms(noll);
    const truth = chosenCoefficients(terms.length * 2 * nodes, 0.01);
    const design = axesAndPairsDesign(noll.length, 10);
    expect(design.length / noll.length).toBe(terms.length); // 1 + 2J + J(J-1)/2 = 15 = 1 + J + J(J+1)/2
    const set = synthesizeSet(terms, noll, truth, design, M);
    const fit = fitCoefficients(compileTerms(terms, noll), terms, set.coefficientsNm, noll.length, set.x, set.y, nodes);
    expect(maxRelativeError(fit.coefficients, truth)).toBeLessThan(1e-10);
    expect(fit.trainingResidualRmsPmPerNrad).toBe(0); // square: no rows below T in Q^T Y
  });

  it("recovers a first-order polynomial and reports the residual of what it cannot represent", () => {
    const terms = firstOrderTerms(noll);
    const truth = chosenCoefficients(terms.length * 2 * nodes);
    const design = randomDesign(noll.length, { size: 40, maxRmsNm: 5, seed: 9 });
    const set = synthesizeSet(terms, noll, truth, design, M);
    const fit = fitCoefficients(compileTerms(terms, noll), terms, set.coefficientsNm, noll.length, set.x, set.y, nodes);
    expect(maxRelativeError(fit.coefficients, truth)).toBeLessThan(1e-10);
    // The same first-order fit of second-order data leaves a residual (the products it cannot represent).
    const second = secondOrderTerms(noll);
    const curved = synthesizeSet(second, noll, chosenCoefficients(second.length * 2 * nodes), design, M);
    const rough = fitCoefficients(compileTerms(terms, noll), terms, curved.coefficientsNm, noll.length, curved.x, curved.y, nodes);
    expect(rough.trainingResidualRmsPmPerNrad).toBeGreaterThan(0.1);
  });

  it("refuses too few samples with a clear message", () => {
    const terms = secondOrderTerms(noll);
    const design = randomDesign(noll.length, { size: 14, maxRmsNm: 30, seed: 5 });
    const set = synthesizeSet(terms, noll, chosenCoefficients(terms.length * 2 * nodes), design, M);
    expect(() => fitCoefficients(compileTerms(terms, noll), terms, set.coefficientsNm, 4, set.x, set.y, nodes)).toThrow(
      new RangeError("generating set has 14 samples but the model has 15 terms; at least 15 are needed"),
    );
  });

  it("refuses duplicated samples that leave too few distinct ones", () => {
    const terms = secondOrderTerms(noll);
    const design = axesAndPairsDesign(noll.length, 10);
    design.copyWithin(4 * noll.length, 3 * noll.length, 4 * noll.length); // sample 4 := sample 3
    const set = synthesizeSet(terms, noll, chosenCoefficients(terms.length * 2 * nodes), design, M);
    expect(() => fitCoefficients(compileTerms(terms, noll), terms, set.coefficientsNm, 4, set.x, set.y, nodes)).toThrow(
      new RangeError("generating set has only 14 distinct samples (1 duplicated) for 15 terms; at least 15 are needed"),
    );
  });

  it("refuses a design that cannot separate terms (rank deficient)", () => {
    // Only the axes (no pairs) plus enough copies scaled differently: cross terms B_ij are zero in every sample.
    const terms = secondOrderTerms([4, 5]);
    const design = Float64Array.from([0, 0, 1, 0, -1, 0, 0, 1, 0, -1, 2, 0, 0, 2]);
    const set = synthesizeSet(terms, [4, 5], chosenCoefficients(terms.length * 2 * nodes), design, M);
    expect(() => fitCoefficients(compileTerms(terms, [4, 5]), terms, set.coefficientsNm, 2, set.x, set.y, nodes)).toThrow(
      new RangeError("design matrix is rank deficient: term Z4*Z5 is zero in every sample"),
    );
    // Samples on a line a_5 = a_4: the features Z4*Z4, Z4*Z5, Z5*Z5 coincide.
    const line = Float64Array.from({ length: 20 }, (_, i) => ((i >> 1) + 1) * (i % 2 === 0 ? 1 : 1) * (i < 10 ? 1 : -0.5));
    const lineSet = synthesizeSet(terms, [4, 5], chosenCoefficients(terms.length * 2 * nodes), line, M);
    expect(() => fitCoefficients(compileTerms(terms, [4, 5]), terms, lineSet.coefficientsNm, 2, lineSet.x, lineSet.y, nodes)).toThrow(
      /^design matrix is rank deficient: term Z5 is not determined by the samples/,
    );
  });

  it("axes-and-pairs size formula matches the design it builds", () => {
    for (const J of [1, 2, 5, 33]) expect(axesAndPairsDesign(J, 1).length / J).toBe(axesAndPairsSize(J));
  });
});

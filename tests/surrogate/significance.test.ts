import { describe, expect, it } from "vitest";
import {
  compileTerms, evaluateBatch, pruneModel, randomDesign, secondOrderTerms, termSignificance, splitAxes,
} from "../../lib/surrogate/index.ts";
import reference from "../fixtures/analysis/analysis.json";
import { smallSetup, synthesizeSet, syntheticModel } from "./helpers.ts";

const noll = [4, 5, 6];
const terms = secondOrderTerms(noll); // [], [4], [5], [6], [4,4], [4,5], [4,6], [5,5], [5,6], [6,6]
const M = smallSetup.farField.pointsPerAxis;
const P = 2 * M * M;
/** Each term's map is constant with one chosen peak value: easy to reason about by hand. */
const peaks = [0.001, 0.02, 0.0005, 0.01, 0.0004, 0.00002, 0.0001, 0.00001, 0.00003, 0.0002];
const coefficients = new Float64Array(terms.length * P);
peaks.forEach((peak, t) => {
  for (let p = 0; p < P; p++) coefficients[t * P + p] = p % 2 === 0 ? peak : -peak / 2;
});
const generating = randomDesign(3, { size: 40, maxRmsNm: 30, seed: 3 });
const model = syntheticModel(terms, noll, coefficients, generating);

describe("termSignificance", () => {
  it("ranks terms by max|C_t| r^degree times the jitter", () => {
    // Hand computation for r = 10 nm, jitter 8 nrad: [4] 0.02 * 10 * 8 = 1.6 pm; [4,4] 0.0004 * 100 * 8 = 0.32 pm;
    // [6] 0.01 * 10 * 8 = 0.8 pm; [6,6] 0.0002 * 100 * 8 = 0.16 pm; constant 0.001 * 8 = 0.008 pm.
    const ranking = termSignificance(model, { budgetRmsNm: 10, jitterNrad: 8 });
    expect(ranking.slice(0, 4).map((e) => e.label)).toEqual(["Z4", "Z6", "Z4*Z4", "Z6*Z6"]);
    expect(ranking[0].noiseBoundPm).toBeCloseTo(1.6, 12);
    expect(ranking[2].noiseBoundPm).toBeCloseTo(0.32, 12);
    expect(ranking.find((e) => e.degree === 0)!.noiseBoundPm).toBeCloseTo(0.008, 12);
    expect(() => termSignificance(model, { budgetRmsNm: 0, jitterNrad: 8 })).toThrow(new RangeError("budgetRmsNm must be a finite number > 0"));
    expect(() => termSignificance(model, { budgetRmsNm: 1, jitterNrad: NaN })).toThrow(new RangeError("jitterNrad must be a finite number > 0"));
  });

  it("prunes below a threshold, keeps the constant, and bounds what the dropped terms can add", () => {
    // Keep >= 0.1 pm: Z4 (1.6), Z6 (0.8), Z4*Z4 (0.32), Z6*Z6 (0.16), Z5 (0.04 dropped), ... plus the constant.
    const validationCoefficients = randomDesign(3, { size: 50, maxRmsNm: 12, seed: 21 });
    const validation = synthesizeSet(terms, noll, coefficients, validationCoefficients, M);
    const { model: pruned, kept, dropped } = pruneModel(model, { budgetRmsNm: 10, jitterNrad: 8, thresholdPm: 0.1 }, validation);
    expect(pruned.terms).toEqual([[], [4], [6], [4, 4], [6, 6]]);
    expect(kept).toHaveLength(5);
    expect(dropped.map((e) => e.label).sort()).toEqual(["Z4*Z5", "Z4*Z6", "Z5", "Z5*Z5", "Z5*Z6"].sort());
    // Per-node simple bound of the dropped terms (PHYSICS.md section 6), at an even output (the larger half):
    // ||A_d|| r + |lambda|_max(B_d) r^2 with A_d = (0, 0.0005, 0) and B_d = 1e-5 [[0, 1, 5], [1, 1, 1.5], [5, 1.5, 0]]
    // (B_45 = 0.00002 / 2, B_46 = 0.0001 / 2, B_55 = 0.00001, B_56 = 0.00003 / 2), whose spectral radius NumPy
    // gives (numpy.linalg.eigvalsh in tests/fixtures/analysis/make_analysis.py). The sum of per-term maxima,
    // 0.021 pm/nrad, is looser.
    const bound = 0.0005 * 10 + reference.pruneDroppedSpectralRadius * 100;
    expect(pruned.pruning!.droppedTtlBoundPmPerNrad).toBeCloseTo(bound, 12);
    expect(pruned.pruning!.droppedTtlBoundPmPerNrad).toBeLessThan(0.021);
    // Noise: jitter times sqrt(bound_x^2 + bound_y^2); at a node one axis has an even output, the other (25 later)
    // an odd one, where every coefficient is -1/2 of the even value: 8 sqrt(1 + 1/4) bound.
    expect(pruned.pruning!.droppedNoiseBoundPm).toBeCloseTo(8 * Math.sqrt(1.25) * bound, 12);
    const seen = pruned.pruning!.droppedTtlSeenPmPerNrad!;
    expect(seen).toBeGreaterThan(0);
    expect(seen).toBeLessThanOrEqual(pruned.pruning!.droppedTtlBoundPmPerNrad);
    // The pruned model evaluates only its own terms: compare with the parent minus the dropped ones.
    compileTerms(pruned.terms, noll);
    const a = [3, -4, 2];
    const full = evaluateBatch(model, a);
    const part = evaluateBatch(pruned, a);
    // Dropped contribution at output 0 (even p, value +peak): Z5, Z4*Z5, Z4*Z6, Z5*Z5, Z5*Z6 terms.
    const droppedAt0 = 0.0005 * -4 + 0.00002 * 3 * -4 + 0.0001 * 3 * 2 + 0.00001 * 16 + 0.00003 * -4 * 2;
    expect(full[0] - part[0]).toBeCloseTo(droppedAt0, 14);
    // Statistics of the pruned model are against the exact (here: synthetic) maps.
    const split = splitAxes(evaluateBatch(pruned, validationCoefficients), 50, M * M);
    let worst = 0;
    for (let i = 0; i < split.x.length; i++) worst = Math.max(worst, Math.abs(split.x[i] - validation.x[i]), Math.abs(split.y[i] - validation.y[i]));
    expect(pruned.statistics!.overall.maxAbsErrorPmPerNrad).toBeCloseTo(worst, 14);
    expect(() => pruneModel(model, { budgetRmsNm: 10, jitterNrad: 8, thresholdPm: -1 })).toThrow(
      new RangeError("thresholdPm must be a finite number >= 0"),
    );
  });
});

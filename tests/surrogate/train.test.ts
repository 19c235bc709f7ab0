import { beforeAll, describe, expect, it } from "vitest";
import { smallSetup } from "./helpers.ts";
import { VELORA_SETUP, VELORA_ZERNIKE } from "../../lib/demo/velora.ts";
import { propagateMany } from "../../lib/parallel/index.ts";
import {
  evaluateBatch, pruneModel, randomDesign, regenerateValidationSet, residualStatistics, splitAxes, termSignificance, trainSurrogate,
  type ExactPropagator, type TrainingResult,
} from "../../lib/surrogate/index.ts";

// The default demo spec of DESIGN.md / the issue: Velora setup, Noll 4-36, 1300 random + 200 validation samples
// up to 35 nm RMS, 128 x 128 pupil, 25 x 25 nodes. Trained once for the whole file (about 10-20 s on 2 cores).
const setup = VELORA_SETUP;
const noll = VELORA_ZERNIKE.indices;
const J = noll.length;
const nodes = 25 * 25;
const zernike = { ordering: "noll" as const, indices: noll };
const exact: ExactPropagator = (indices, coefficientsNm, onProgress) =>
  propagateMany(setup, indices, coefficientsNm, { onProgress });

/** max |predicted - exact| over a set, divided by the largest |exact TTL| in the set (PHYSICS.md section 5). */
function errorRelativeToPeak(predicted: { x: Float64Array; y: Float64Array }, truth: { x: Float64Array; y: Float64Array }) {
  let peak = 0;
  let error = 0;
  for (let i = 0; i < truth.x.length; i++) {
    peak = Math.max(peak, Math.abs(truth.x[i]), Math.abs(truth.y[i]));
    error = Math.max(error, Math.abs(predicted.x[i] - truth.x[i]), Math.abs(predicted.y[i] - truth.y[i]));
  }
  return error / peak;
}

let second: TrainingResult;
let firstOnMixtures: TrainingResult;

beforeAll(async () => {
  second = await trainSurrogate(
    {
      setup, zernike, order: 2,
      generatingSet: { design: "random", size: 1300, maxRmsNm: 35, seed: 7 },
      validationSet: { size: 200, maxRmsNm: 35, seed: 8 },
      softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    },
    exact,
  );
  // A first-order model of the same mixed random generating set (reused as an uploaded set).
  firstOnMixtures = await trainSurrogate(
    {
      setup, zernike, order: 1,
      generatingSet: { design: "uploaded", set: second.generatingSet },
      validationSet: { size: 200, maxRmsNm: 35, seed: 8 },
      softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    },
    exact,
  );
});

describe("second-order surrogate of the demo spec", () => {
  it("predicts fresh random wavefronts up to 35 nm RMS within 5 % of their exact peak |TTL|", async () => {
    // Acceptance figure of the issue (5 %); PHYSICS.md section 5 reports about 3 % for a similar setup from an
    // independent reference calculation. Truth: the exact propagator on 40 wavefronts the model never saw.
    const fresh = randomDesign(J, { size: 40, maxRmsNm: 35, seed: 2026 });
    const truth = await propagateMany(setup, noll, fresh);
    const predicted = splitAxes(evaluateBatch(second.model, fresh), 40, nodes);
    const relative = errorRelativeToPeak(predicted, truth);
    expect(relative).toBeLessThan(0.05);
    expect(relative).toBeGreaterThan(0); // a real comparison, not the training data
  });

  it("reports validation statistics that agree with a fresh check and stay within 5 %", () => {
    const stats = second.model.statistics!;
    expect(stats.overall.samples).toBe(200);
    expect(stats.overall.maxErrorRelativeToPeak).toBeLessThan(0.05);
    expect(stats.perNode.maxAbsErrorXPmPerNrad).toHaveLength(nodes);
    expect(stats.perRmsBin.reduce((n, b) => n + b.samples, 0)).toBe(200);
    // Validation amplitudes are uniform in [0, 35] nm: every one of the 5 bins holds about 40 samples, and the
    // error grows with amplitude (the top bin is worse than the bottom one).
    for (const bin of stats.perRmsBin) expect(bin.samples).toBeGreaterThan(15);
    expect(stats.perRmsBin[4].maxAbsErrorPmPerNrad).toBeGreaterThan(stats.perRmsBin[0].maxAbsErrorPmPerNrad);
    expect(second.model.fit.conditionNumber).toBeGreaterThan(1);
    expect(second.model.fit.conditionNumber).toBeLessThan(1e4);
    expect(second.model.terms).toHaveLength(595);
  });
});

describe("validation set and pruning of the demo model", () => {
  it("regenerates the same validation set from the model's provenance, with the same statistics", async () => {
    // Reproducibility: SplitMix64 seeds and the exact propagator give the same wavefronts and maps again.
    const again = (await regenerateValidationSet(second.model, exact))!;
    expect(Array.from(again.coefficientsNm)).toEqual(Array.from(second.validationSet!.coefficientsNm));
    const predicted = splitAxes(evaluateBatch(second.model, again.coefficientsNm), again.count, nodes);
    expect(residualStatistics(again, J, predicted)).toEqual(second.model.statistics);
  });

  it("prunes for the demo budget with a dropped-term bound that holds on the validation wavefronts", () => {
    // Budget 30 nm RMS and jitter 8 nrad (DESIGN.md demo scenario); threshold 0.1 pm of length noise.
    const { model, dropped } = pruneModel(second.model, { budgetRmsNm: 30, jitterNrad: 8, thresholdPm: 0.1 }, second.validationSet!);
    expect(model.terms.length).toBeLessThan(595 / 3);
    expect(dropped.length + model.terms.length).toBe(595);
    expect(model.pruning!.droppedTtlSeenPmPerNrad!).toBeLessThanOrEqual(model.pruning!.droppedTtlBoundPmPerNrad);
    // The pruned model is still within the 5 % on the validation set (its statistics are recomputed).
    expect(model.statistics!.overall.maxErrorRelativeToPeak).toBeLessThan(0.05);
  });
});

describe("first-order surrogates", () => {
  it("predict single-term wavefronts up to 5 nm within 1 % of their exact peak |TTL|", async () => {
    // Single-term wavefronts stay linear (PHYSICS.md section 5, from an independent reference calculation).
    // A first-order model of single terms is fitted to single-term samples: zero and each term at +-5 nm
    // (an uploaded set, since the built-in designs mix terms), then tested at 5, -5, 2.5 and -1 nm.
    const axes = new Float64Array((1 + 2 * J) * J);
    for (let k = 0; k < J; k++) {
      axes[(1 + 2 * k) * J + k] = 5;
      axes[(2 + 2 * k) * J + k] = -5;
    }
    const axesMaps = await propagateMany(setup, noll, axes);
    const { model } = await trainSurrogate(
      {
        setup, zernike, order: 1,
        generatingSet: { design: "uploaded", set: { coefficientsNm: axes, x: axesMaps.x, y: axesMaps.y, count: 1 + 2 * J, pointsPerAxis: 25 } },
        validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
      },
      exact,
    );
    const amplitudes = [5, -5, 2.5, -1];
    const tests = new Float64Array(amplitudes.length * J * J);
    amplitudes.forEach((a, r) => {
      for (let k = 0; k < J; k++) tests[(r * J + k) * J + k] = a;
    });
    const truth = await propagateMany(setup, noll, tests);
    const predicted = splitAxes(evaluateBatch(model, tests), amplitudes.length * J, nodes);
    expect(errorRelativeToPeak(predicted, truth)).toBeLessThan(0.01);

    // The linear coupling is carried by the m = 0 and m = 2 terms: Noll 4, 5, 6, 11, 12, 13, 22, 23, 24 for 4-36
    // (PHYSICS.md section 4 item 6: common practice, no source). The significance ranking must find those nine.
    const ranking = termSignificance(model, { budgetRmsNm: 30, jitterNrad: 8 }).filter((e) => e.degree === 1);
    expect(ranking.slice(0, 9).map((e) => e.term[0]).sort((a, b) => a - b)).toEqual([4, 5, 6, 11, 12, 13, 22, 23, 24]);
    expect(ranking[9].noiseBoundPm).toBeLessThan(0.01 * ranking[8].noiseBoundPm);
  });

  it("are honestly much worse on random wavefronts that mix many terms, and the statistics say so", () => {
    // The cross products a_i a_j dominate even at a few nm (PHYSICS.md section 5): the first-order model's own
    // validation statistics must show an error many times that of the second-order model of the same set.
    const first = firstOnMixtures.model.statistics!.overall;
    const secondOverall = second.model.statistics!.overall;
    expect(first.maxErrorRelativeToPeak).toBeGreaterThan(0.3);
    expect(first.maxErrorRelativeToPeak).toBeGreaterThan(5 * secondOverall.maxErrorRelativeToPeak);
    expect(firstOnMixtures.model.fit.trainingResidualRmsPmPerNrad).toBeGreaterThan(10 * second.model.fit.trainingResidualRmsPmPerNrad);
  });
});

describe("zero wavefront error", () => {
  it("has an exact map that is zero apart from the Fresnel-curvature term, equal to the axes-and-pairs constant", async () => {
    // Closed form (PHYSICS.md section 4 item 3 with a = 0, unclipped Gaussian): c = 1/(2L) and
    // c_x = -k^2 c theta_x / (2 (1/w^4 + k^2 c^2)); k = 5.905e6 /m, w = 0.115 m, theta_x = -60 nrad:
    // 3.487e13 * 2.273e-10 * 60e-9 / (2 * 5717) = 4.2e-8 m/rad = 4.2e-5 pm/nrad. The clipped beam's term is of
    // that order or smaller; it is the Fresnel term because it scales as 1/L. For comparison a 1 nm defocus gives
    // about 5e-3 pm/nrad (PHYSICS.md section 7 reference: 0.05 pm/nrad for 10 nm of Z5).
    // That the nominal beam has no other TTL is common practice, no source.
    const zero = await propagateMany(setup, noll, new Float64Array(J));
    const farther = await propagateMany({ ...setup, distanceM: 10 * setup.distanceM }, noll, new Float64Array(J));
    let peak = 0;
    for (let n = 0; n < nodes; n++) peak = Math.max(peak, Math.abs(zero.x[n]), Math.abs(zero.y[n]));
    expect(peak).toBeLessThan(4.2e-5);
    expect(peak).toBeGreaterThan(0);
    expect(Math.abs(zero.x[(nodes - 1) / 2])).toBeLessThan(1e-12); // boresight, rounding level (PHYSICS.md 4.5)
    for (let n = 0; n < nodes; n++) expect(farther.x[n] * 10).toBeCloseTo(zero.x[n], 9); // ~1/L: 1e-9 of 5e-6
    for (let iy = 0; iy < 25; iy++) {
      for (let ix = 0; ix < 25; ix++) expect(zero.x[iy * 25 + (24 - ix)]).toBeCloseTo(-zero.x[iy * 25 + ix], 12); // PHYSICS.md 4.5
    }

    const { model } = await trainSurrogate(
      {
        setup, zernike, order: 2, generatingSet: { design: "axes-and-pairs", stepNm: 35 / Math.SQRT2 },
        validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
      },
      exact,
    );
    expect(model.fit.samples).toBe(595);
    expect(model.fit.trainingResidualRmsPmPerNrad).toBe(0);
    // The square system reproduces its zero sample exactly: c0 = exact zero map (QR rounding ~ kappa eps |Y|
    // ~ 1e-14 pm/nrad, Float32 storage 6e-8 relative of ~1e-8).
    for (let n = 0; n < nodes; n++) {
      expect(Math.abs(model.coefficients[n] - zero.x[n])).toBeLessThan(1e-11);
      expect(Math.abs(model.coefficients[nodes + n] - zero.y[n])).toBeLessThan(1e-11);
    }
  });
});

describe("trainSurrogate and undefined TTL nodes (PHYSICS.md section 2)", () => {
  it("refuses a generating set whose exact maps hold an exact far-field null, before fitting", async () => {
    // A propagator that reports node (ix 3, iy 0) of sample 2 as undefined (|E| = 0): the maps hold 0 there,
    // which a fit would take as a measured value. PHYSICS.md: report such a node as undefined, never a number.
    const nodes = 25;
    const withNull: ExactPropagator = async (_noll, coefficientsNm) => {
      const count = coefficientsNm.length / 2;
      return { x: new Float64Array(count * nodes), y: new Float64Array(count * nodes), undefinedNodes: [2 * nodes + 3] };
    };
    const request = {
      setup: smallSetup, zernike: { ordering: "noll" as const, indices: [4, 5] }, order: 1 as const,
      generatingSet: { design: "random" as const, size: 10, maxRmsNm: 10, seed: 1 },
      validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    };
    await expect(trainSurrogate(request, withNull, () => {})).rejects.toThrow(
      "generating set: TTL undefined at 1 far-field node (exact nulls of the far field, reported as null); " +
        "first: map 2, ix 3, iy 0; a surrogate cannot be trained on them",
    );
  });
});

import { describe, expect, it } from "vitest";
import { residualStatistics } from "../../lib/surrogate/index.ts";

describe("residual statistics", () => {
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
    // Per sample: total RMS sqrt(1^2 + 0^2) = 1 and sqrt(0^2 + 4^2) = 4 nm; largest |error| 0.1 and 0.4 (as set above).
    expect(stats.perSample!.rmsNm).toEqual([1, 4]);
    expect(stats.perSample!.maxAbsErrorPmPerNrad[0]).toBeCloseTo(0.1, 14);
    expect(stats.perSample!.maxAbsErrorPmPerNrad[1]).toBeCloseTo(0.4, 14);
  });

  it("records one (total RMS, largest |error|) point per sample, in the set's order", () => {
    // Three samples of J = 2 with coefficients (3, 4), (0, 0), (1, 0): total RMS 5 (the 3-4-5 triangle), 0 and 1 nm.
    // A 3 x 3 grid whose exact maps are zero; the prediction is wrong by 0.25 on node 4 of y in sample 0 only,
    // and by -0.5 on node 8 of x in sample 2: largest |error| 0.25, 0 and 0.5 pm/nrad (closed form: the errors set).
    const set = { coefficientsNm: Float64Array.from([3, 4, 0, 0, 1, 0]), x: new Float64Array(27), y: new Float64Array(27), count: 3, pointsPerAxis: 3 };
    const predicted = { x: new Float64Array(27), y: new Float64Array(27) };
    predicted.y[4] = 0.25;
    predicted.x[18 + 8] = -0.5;
    const { perSample, overall } = residualStatistics(set, 2, predicted, 3);
    expect(perSample!.rmsNm).toEqual([5, 0, 1]);
    expect(perSample!.maxAbsErrorPmPerNrad).toEqual([0.25, 0, 0.5]);
    expect(Math.max(...perSample!.maxAbsErrorPmPerNrad)).toBe(overall.maxAbsErrorPmPerNrad);
  });
});

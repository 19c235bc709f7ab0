import { describe, expect, it } from "vitest";
import { interpolateLogLog, noiseBudget, worstNoiseNode } from "../../lib/surrogate/index.ts";

describe("noiseBudget", () => {
  it("is sqrt(c_x^2 + c_y^2) times the jitter ASD at every frequency, with the margin 20 log10(allocation / ASD)", () => {
    // PHYSICS.md section 6: ds = c_x dtheta_x + c_y dtheta_y with independent axes of equal density gives
    // ASD_s = sqrt(c_x^2 + c_y^2) ASD_theta; c = (3, 4) pm/nrad -> 5 pm/nrad (Pythagoras).
    const jitter: [number, number][] = [[1e-3, 2], [0.1, 1], [1, 0.4], [10, 0.05]];
    // Allocation 10 f^-1/2 pm/sqrt(Hz), given at its ends only: a power law is a straight line on log-log axes, so
    // log-log interpolation reproduces it exactly in between (closed form).
    const allocation: [number, number][] = [[1e-4, 10 * 1e-4 ** -0.5], [100, 10 * 100 ** -0.5]];
    const budget = noiseBudget(3, 4, jitter, allocation);
    expect(budget.couplingPmPerNrad).toBe(5);
    jitter.forEach(([f, asd], k) => {
      expect(budget.frequencyHz[k]).toBe(f);
      expect(budget.ttlNoisePmPerRtHz[k]).toBeCloseTo(5 * asd, 14);
      expect(budget.allocationPmPerRtHz[k] / (10 * f ** -0.5)).toBeCloseTo(1, 12);
      expect(budget.marginDb[k]).toBeCloseTo(20 * Math.log10((10 * f ** -0.5) / (5 * asd)), 10);
    });
    // 1e-3 Hz: allocation 316.2, noise 10 -> +30 dB; 1 Hz: 10 vs 2 -> +14 dB; all pass.
    expect(budget.failingHz).toEqual([]);
    const tight = noiseBudget(300, 400, jitter, allocation);
    // 500 pm/nrad: at 1e-3 Hz 1000 > 316.2 fails, at 10 Hz 25 > 3.16 fails.
    expect(tight.failingHz).toEqual([1e-3, 0.1, 1, 10]);
  });

  it("interpolates on log-log axes, exact at the points, and refuses what it cannot read", () => {
    expect(interpolateLogLog([[1, 4], [100, 0.04]], 10)).toBeCloseTo(0.4, 14); // f^-1 through both points
    expect(interpolateLogLog([[1, 4], [100, 0.04]], 100)).toBe(0.04);
    expect(() => interpolateLogLog([[1, 4], [100, 0.04]], 200, "allocation")).toThrow(
      new RangeError("frequency 200 Hz lies outside the allocation (1 to 100 Hz)"),
    );
    expect(() => noiseBudget(1, 1, [[1, 1]], [[1, 1], [2, 1]])).toThrow(new RangeError("jitter ASD needs at least 2 points"));
    expect(() => noiseBudget(1, 1, [[1, 1], [1, 2]], [[1, 1], [2, 1]])).toThrow(new RangeError("jitter ASD frequencies must increase strictly (point 1)"));
    expect(() => noiseBudget(1, 1, [[1, 1], [2, 1]], [[0, 1], [2, 1]])).toThrow(new RangeError("allocation frequency at point 0 must be a finite number > 0"));
    expect(() => noiseBudget(1, 1, [[1, 1], [2, -1]], [[1, 1], [2, 1]])).toThrow(new RangeError("jitter ASD density at point 1 must be a finite number > 0"));
  });

  it("finds the node where sqrt(c_x^2 + c_y^2) is largest", () => {
    // Magnitudes 1, sqrt(10) = 3.162, sqrt(10.25) = 3.2016, 3.2: the third node.
    expect(worstNoiseNode([1, -3, 2, 0], [0, 1, -2.5, 3.2])).toBe(2);
  });
});

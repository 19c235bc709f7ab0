import { describe, expect, it } from "vitest";
import { TtlPropagator, type OpticalSetup } from "@/lib/optics/index.ts";
import { propagateMany } from "@/lib/parallel/index.ts";
import { randomDesign } from "@/lib/surrogate/designs.ts";

const SETUP: OpticalSetup = {
  wavelengthNm: 1550, apertureDiameterM: 0.2, beamRadiusM: 0.08, distanceM: 1e9,
  farField: { halfAngleNrad: 80, pointsPerAxis: 11 }, pupilSamples: 64,
};
const TERMS = [4, 5, 6, 7, 8, 11];

describe("propagateMany", () => {
  it("gives bit-for-bit the single-thread maps on two worker threads, with progress", async () => {
    const count = 24;
    const coefficients = randomDesign(TERMS.length, { size: count, maxRmsNm: 25, seed: 11 });
    const progress: number[] = [];
    const parallel = await propagateMany(SETUP, TERMS, coefficients, {
      threads: 2, chunkSize: 5, onProgress: (done) => progress.push(done),
    });
    const propagator = new TtlPropagator(SETUP, TERMS);
    const nodes = 11 * 11;
    for (let s = 0; s < count; s++) {
      const { x, y } = propagator.ttl(coefficients.subarray(s * TERMS.length, (s + 1) * TERMS.length));
      expect(Array.from(parallel.x.subarray(s * nodes, (s + 1) * nodes))).toEqual(Array.from(x));
      expect(Array.from(parallel.y.subarray(s * nodes, (s + 1) * nodes))).toEqual(Array.from(y));
    }
    expect(progress.at(-1)).toBe(count);
    expect(progress.length).toBe(5);
  });

  it("refuses bad input before starting any work", async () => {
    await expect(propagateMany(SETUP, TERMS, new Float64Array(7))).rejects.toThrow(
      "coefficient array length 7 is not a multiple of 6 terms",
    );
    const withNaN = new Float64Array(12);
    withNaN[8] = Number.NaN;
    await expect(propagateMany(SETUP, TERMS, withNaN)).rejects.toThrow("coefficient of Noll term 6 must be a finite number (wavefront 1)");
  });

  it("stops when cancelled", async () => {
    const controller = new AbortController();
    const coefficients = randomDesign(TERMS.length, { size: 40, maxRmsNm: 25, seed: 3 });
    const run = propagateMany(SETUP, TERMS, coefficients, {
      threads: 1, chunkSize: 1, signal: controller.signal, onProgress: (done) => done === 3 && controller.abort(),
    });
    await expect(run).rejects.toThrow(/abort/i);
  });
});

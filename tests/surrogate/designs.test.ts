import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { checkSampleSet, randomAmplitudeDesign, randomDesign, sampleRmsNm } from "../../lib/surrogate/index.ts";

const reference = JSON.parse(readFileSync(new URL("../fixtures/surrogate/reference.json", import.meta.url), "utf8"));
const M = 5;
const nodes = M * M;

describe("randomDesign", () => {
  it("gives the same samples as an independent Python implementation of the same recipe", () => {
    // Source: make_reference.py (Python math.log/cos; agreement to 1e-12 relative allows libm last-bit differences).
    const { j, size, maxRmsNm, seed, rows } = reference.randomDesign;
    const design = randomDesign(j, { size, maxRmsNm, seed });
    const expected = (rows as number[][]).flat();
    for (let i = 0; i < expected.length; i++) expect(design[i]).toBeCloseTo(expected[i], 10);
  });

  it("is uniform in the RMS ball: E[(r/R)^J] = 1/2 and E[a_j^2 / r^2] = 1/J", () => {
    // Closed form: for a uniform ball in J dimensions P(r <= t R) = t^J, so (r/R)^J is uniform on [0, 1];
    // by symmetry each coordinate carries 1/J of r^2. 4000 samples: standard error 1/sqrt(12 * 4000) = 0.0046,
    // tolerance 0.02 (more than 4 standard errors).
    const J = 6;
    const design = randomDesign(J, { size: 4000, maxRmsNm: 10, seed: 11 });
    const rms = sampleRmsNm(design, J);
    let meanPower = 0;
    const share = new Float64Array(J);
    for (let s = 0; s < 4000; s++) {
      expect(rms[s]).toBeLessThanOrEqual(10 + 1e-12);
      meanPower += (rms[s] / 10) ** J / 4000;
      for (let k = 0; k < J; k++) share[k] += design[s * J + k] ** 2 / rms[s] ** 2 / 4000;
    }
    expect(Math.abs(meanPower - 0.5)).toBeLessThan(0.02);
    for (const value of share) expect(Math.abs(value - 1 / J)).toBeLessThan(0.02);
  });

  it("spreads validation samples uniformly in amplitude: E[r/R] = 1/2, E[(r/R)^2] = 1/3", () => {
    // Closed form for r/R uniform on [0, 1]; 4000 samples: standard errors 0.0046 and 0.0047, tolerance 0.02.
    const J = 33;
    const rms = sampleRmsNm(randomAmplitudeDesign(J, { size: 4000, maxRmsNm: 35, seed: 8 }), J);
    const mean = rms.reduce((a, r) => a + r / 35, 0) / 4000;
    const meanSquare = rms.reduce((a, r) => a + (r / 35) ** 2, 0) / 4000;
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.02);
    expect(Math.abs(meanSquare - 1 / 3)).toBeLessThan(0.02);
    expect(() => randomAmplitudeDesign(J, { size: 1, maxRmsNm: -1, seed: 1 })).toThrow(new RangeError("maxRmsNm must be a finite number > 0"));
  });

  it("rejects empty and non-finite requests with exact messages", () => {
    expect(() => randomDesign(3, { size: 0, maxRmsNm: 1, seed: 1 })).toThrow(new RangeError("size must be a positive integer"));
    expect(() => randomDesign(3, { size: 2, maxRmsNm: Infinity, seed: 1 })).toThrow(
      new RangeError("maxRmsNm must be a finite number > 0"),
    );
    expect(() => randomDesign(3, { size: 2, maxRmsNm: NaN, seed: 1 })).toThrow(new RangeError("maxRmsNm must be a finite number > 0"));
    expect(() => randomDesign(0, { size: 2, maxRmsNm: 1, seed: 1 })).toThrow(new RangeError("J must be a positive integer"));
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


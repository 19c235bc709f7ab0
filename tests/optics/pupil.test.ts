import { describe, expect, it } from "vitest";
import { apertureTransmission, cellFractionInsideCircle, phasorsInto, pupilCoordinates } from "@/lib/optics/index.ts";

describe("aperture transmission", () => {
  it("sums to the exact disc area pi R^2 (area-weighted edge)", () => {
    for (const samples of [32, 127, 128]) {
      const radius = 0.13;
      const t = apertureTransmission(radius, samples);
      const cell = (2 * radius) / samples;
      const area = t.reduce((sum, v) => sum + v, 0) * cell * cell;
      // Closed form pi R^2; the per-cell areas are exact, so only rounding remains (1e-12 relative).
      expect(Math.abs(area / (Math.PI * radius * radius) - 1)).toBeLessThan(1e-12);
    }
  });

  it("gives the quarter-disc, inner and outer cells their exact fractions", () => {
    expect(cellFractionInsideCircle(0, 1, 0, 1, 1)).toBeCloseTo(Math.PI / 4, 15); // quarter disc in a unit square
    expect(cellFractionInsideCircle(-0.1, 0.1, -0.1, 0.1, 1)).toBe(1);
    expect(cellFractionInsideCircle(0.9, 1, 0.9, 1, 1)).toBe(0);
    // Half-plane cut: the cell [-1, 1] x [0, 1] holds a half disc of area pi/2 out of 2.
    expect(cellFractionInsideCircle(-1, 1, 0, 1, 1)).toBeCloseTo(Math.PI / 4, 15);
  });

  it("places samples at cell centres symmetric about the axis", () => {
    const x = pupilCoordinates(1, 4);
    expect(Array.from(x)).toEqual([-0.75, -0.25, 0.25, 0.75]);
  });
});

describe("phasorsInto", () => {
  it("agrees with Math.cos and Math.sin to 1e-13 up to |phase| = 1000 rad", () => {
    const count = 20001;
    const phase = Float64Array.from({ length: count }, (_, i) => -1000 + (2000 * i) / (count - 1) + 1e-3 * Math.sin(i));
    const amplitude = Float64Array.from({ length: count }, (_, i) => 0.5 + (i % 7));
    const re = new Float64Array(count), im = new Float64Array(count);
    phasorsInto(amplitude, phase, re, im, count);
    for (let i = 0; i < count; i++) {
      // Reference: the platform's libm; 1e-13 absolute per unit amplitude allows the pi/2 reduction error n * 1e-16.
      expect(Math.abs(re[i] - amplitude[i] * Math.cos(phase[i]))).toBeLessThan(1e-13 * amplitude[i]);
      expect(Math.abs(im[i] - amplitude[i] * Math.sin(phase[i]))).toBeLessThan(1e-13 * amplitude[i]);
    }
  });
});

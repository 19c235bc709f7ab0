import { describe, expect, it } from "vitest";
import { fitZernike } from "../../lib/optics/index.ts";

// Noll's Table I written out (R. J. Noll, J. Opt. Soc. Am. 66, 207-211 (1976)), unit RMS over the disc:
const TABLE: Record<number, (rho: number, phi: number) => number> = {
  1: () => 1,
  2: (r, p) => 2 * r * Math.cos(p),
  3: (r, p) => 2 * r * Math.sin(p),
  4: (r) => Math.sqrt(3) * (2 * r * r - 1),
  5: (r, p) => Math.sqrt(6) * r * r * Math.sin(2 * p),
  6: (r, p) => Math.sqrt(6) * r * r * Math.cos(2 * p),
  7: (r, p) => Math.sqrt(8) * (3 * r ** 3 - 2 * r) * Math.sin(p),
  8: (r, p) => Math.sqrt(8) * (3 * r ** 3 - 2 * r) * Math.cos(p),
  9: (r, p) => Math.sqrt(8) * r ** 3 * Math.sin(3 * p),
  10: (r, p) => Math.sqrt(8) * r ** 3 * Math.cos(3 * p),
  11: (r) => Math.sqrt(5) * (6 * r ** 4 - 6 * r * r + 1),
};
const KNOWN: Record<number, number> = { 1: 40, 2: -12, 3: 7, 4: 3.5, 5: -2.25, 6: 1.75, 7: 0.8, 8: -1.1, 9: 0.4, 10: 0.6, 11: -0.9 };

/** A height map of the known coefficients (nm) on a rows x cols grid, NaN on a sparse pattern, in the given unit. */
function synthesise(rows: number, cols: number, pixelM: number, diameterM: number, scale: number): Float64Array {
  const values = new Float64Array(rows * cols);
  for (let iy = 0; iy < rows; iy++) for (let ix = 0; ix < cols; ix++) {
    const x = (ix - (cols - 1) / 2) * pixelM;
    const y = (iy - (rows - 1) / 2) * pixelM;
    const rho = Math.hypot(x, y) / (diameterM / 2);
    const phi = Math.atan2(y, x);
    let h = 0;
    for (const [j, a] of Object.entries(KNOWN)) h += a * TABLE[Number(j)](rho, phi);
    values[iy * cols + ix] = (iy * 7 + ix * 3) % 23 === 0 ? Number.NaN : h * scale; // about 4 % without data
  }
  return values;
}

describe("fitZernike", () => {
  it("returns the coefficients of a synthesised map with missing pixels, piston and tilt reported apart", () => {
    // The map lies in the span of the fitted terms, so least squares recovers it to rounding (no sampling error).
    const values = synthesise(181, 161, 0.26 / 150, 0.26, 1);
    const fit = fitZernike({ values, rows: 181, cols: 161, pixelSizeM: 0.26 / 150, apertureDiameterM: 0.26, units: "nm" }, [4, 5, 6, 7, 8, 9, 10, 11]);
    [4, 5, 6, 7, 8, 9, 10, 11].forEach((j, k) => expect(Math.abs(fit.coefficientsNm[k] - KNOWN[j])).toBeLessThan(1e-9));
    for (const j of [1, 2, 3]) expect(Math.abs(fit.removedNm[j] - KNOWN[j])).toBeLessThan(1e-9);
    expect(fit.residualRmsNm).toBeLessThan(1e-9);
    expect(fit.samplesInAperture).toBeGreaterThan(15000);
    expect(Number.isNaN(fit.fitNm[0])).toBe(true); // a corner lies outside the aperture
  });

  it("gives the same fit for the map in metres and in nanometres", () => {
    const nm = synthesise(101, 101, 0.26 / 100, 0.26, 1);
    const m = synthesise(101, 101, 0.26 / 100, 0.26, 1e-9);
    const a = fitZernike({ values: nm, rows: 101, cols: 101, pixelSizeM: 0.0026, apertureDiameterM: 0.26, units: "nm" }, [4, 5, 6, 11]);
    const b = fitZernike({ values: m, rows: 101, cols: 101, pixelSizeM: 0.0026, apertureDiameterM: 0.26, units: "m" }, [4, 5, 6, 11]);
    // A term left out (7-10) leaks into the residual, the same in both units; agreement to relative 1e-12.
    a.coefficientsNm.forEach((v, k) => expect(Math.abs(v - b.coefficientsNm[k])).toBeLessThan(1e-12 * Math.max(1, Math.abs(v))));
    expect(Math.abs(a.residualRmsNm - b.residualRmsNm)).toBeLessThan(1e-12 * a.residualRmsNm);
    expect(a.residualRmsNm).toBeGreaterThan(0.5);
  });

  it("refuses maps it cannot fit, with the reason", () => {
    const base = { rows: 4, cols: 4, pixelSizeM: 0.01, apertureDiameterM: 0.04, units: "nm" as const };
    expect(() => fitZernike({ ...base, values: new Float64Array(16).fill(Number.NaN) }, [4])).toThrow(
      new RangeError("the map has only 0 pixels with data inside the aperture; at least 4 are needed for 4 terms"),
    );
    expect(() => fitZernike({ ...base, values: new Float64Array(15) }, [4])).toThrow(new RangeError("values must have rows x cols entries"));
    expect(() => fitZernike({ ...base, values: new Float64Array(16), pixelSizeM: 0 }, [4])).toThrow(new RangeError("pixelSizeM must be a positive finite number"));
    expect(() => fitZernike({ ...base, values: new Float64Array(16).fill(Infinity) }, [4])).toThrow(new RangeError("heights must be finite numbers or NaN (pixel 0, 0)"));
    expect(() => fitZernike({ ...base, rows: 4096, cols: 4096, values: new Float64Array(1) }, [4])).toThrow(
      new RangeError("the map has 4096 x 4096 = 16777216 pixels; the limit is 4194304"),
    );
  });
});

import { describe, expect, it } from "vitest";
import { pupilMap, resampleToPupil, wavefrontPupilMap } from "../../lib/optics/index.ts";

describe("pupilMap", () => {
  it("draws W = sum a_j Z_j on cell centres of the disc, NaN outside, y growing with the row", () => {
    // Noll 1976, Table I: Z4 = sqrt(3)(2 rho^2 - 1), Z3 = 2 rho sin(phi) (tilt towards +y).
    const samples = 16;
    const map = pupilMap([3, 4], [2, -1], samples);
    for (let iy = 0; iy < samples; iy++) for (let ix = 0; ix < samples; ix++) {
      const x = (2 * ix + 1) / samples - 1;
      const y = (2 * iy + 1) / samples - 1;
      const rho2 = x * x + y * y;
      const value = map[iy * samples + ix];
      if (rho2 > 1) expect(Number.isNaN(value)).toBe(true);
      else expect(value).toBeCloseTo(2 * 2 * y - Math.sqrt(3) * (2 * rho2 - 1), 12);
    }
    expect(() => pupilMap([4], [1], 4)).toThrow(new RangeError("samples must be an integer from 8 to 512"));
    expect(() => pupilMap([4], [Number.NaN])).toThrow(RangeError);
  });
});

describe("wavefrontPupilMap", () => {
  it("reads a wavefront in either ordering: ANSI 3 is Noll 5, sqrt(6) rho^2 sin(2 phi)", () => {
    // ANSI Z80.28 single index j = (n(n+2) + m)/2: j = 3 is (n, m) = (2, -2); Noll 1976, Table I: Z5 = sqrt(6) rho^2 sin 2phi.
    const samples = 12;
    const ansi = wavefrontPupilMap({ ordering: "ansi", coefficientsNm: { "3": 2 } }, samples);
    for (let iy = 0; iy < samples; iy++) for (let ix = 0; ix < samples; ix++) {
      const x = (2 * ix + 1) / samples - 1;
      const y = (2 * iy + 1) / samples - 1;
      const value = ansi[iy * samples + ix];
      // sqrt(6) rho^2 sin(2 phi) = sqrt(6) 2 x y.
      if (x * x + y * y > 1) expect(Number.isNaN(value)).toBe(true);
      else expect(value).toBeCloseTo(2 * Math.sqrt(6) * 2 * x * y, 12);
    }
  });
});

describe("resampleToPupil", () => {
  it("takes the nearest pixel at each cell centre, NaN outside the disc, off the map and where the pixel has none", () => {
    // A 21 x 31 map whose pixel (px, py) holds 1000 py + px; pixel 1 mm, aperture 16 mm: R = 8 pixels, and the
    // pixel grid of fitZernike puts pixel (15, 10) at the centre.
    const rows = 21;
    const cols = 31;
    const values = Float64Array.from({ length: rows * cols }, (_, i) => 1000 * Math.floor(i / cols) + (i % cols));
    values[10 * cols + 15] = Number.NaN;
    const { samples, values: picture } = resampleToPupil(values, rows, cols, 1e-3, 16e-3, 20);
    expect(samples).toBe(20);
    for (let iy = 0; iy < samples; iy++) for (let ix = 0; ix < samples; ix++) {
      const x = (2 * ix + 1) / samples - 1;
      const y = (2 * iy + 1) / samples - 1;
      const value = picture[iy * samples + ix];
      // Cell centres sit at +-0.4, +-1.2, ... pixels from the centre (never half-way between two pixels).
      const px = Math.round(8 * x + 15);
      const py = Math.round(8 * y + 10);
      if (x * x + y * y > 1 || (px === 15 && py === 10)) expect(Number.isNaN(value)).toBe(true);
      else expect(value).toBe(1000 * py + px);
    }
    // With no size given: the pixels across the aperture (16), clamped to 16..96.
    expect(resampleToPupil(values, rows, cols, 1e-3, 16e-3).samples).toBe(16);
    expect(resampleToPupil(values, rows, cols, 1e-4, 16e-3).samples).toBe(96);
    // An aperture larger than the map: the cells off the map are NaN.
    const wide = resampleToPupil(values, rows, cols, 1e-3, 60e-3, 20).values;
    expect(Number.isNaN(wide[10 * 20 + 0])).toBe(true);
    expect(() => resampleToPupil(values, rows, cols + 1, 1e-3, 16e-3)).toThrow(new RangeError("values must have rows x cols entries"));
  });
});

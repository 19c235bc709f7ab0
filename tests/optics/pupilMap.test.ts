import { describe, expect, it } from "vitest";
import { pupilMap } from "../../lib/optics/index.ts";

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

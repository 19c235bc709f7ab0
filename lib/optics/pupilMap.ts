import { requireFiniteCoefficients } from "./checks.ts";
import { requireNollIndices, ZernikeTerm } from "./zernike.ts";

/** Largest pupil picture (samples per side). */
export const MAX_PUPIL_MAP_SAMPLES = 512;

/**
 * The wavefront error over the pupil, `W(x, y) = sum_j a_j Z_j(rho, phi)` (nm), on `samples x samples` cell centres
 * spanning the unit disc's bounding square, row-major `[iy][ix]` with y increasing with iy (the orientation of the
 * TTL maps); NaN outside the disc. For pictures of a wavefront (a worst-case maximiser, a coupling mode, a fit).
 *
 * @param nollIndices the terms, Noll indices
 * @param coefficientsNm one per term, nm RMS
 * @throws {RangeError} "samples must be an integer from 8 to 512" and the core's index and coefficient checks
 * Source: PHYSICS.md section 1 (unit-RMS Zernike terms of Noll 1976).
 */
export function pupilMap(nollIndices: readonly number[], coefficientsNm: ArrayLike<number>, samples = 64): Float64Array {
  if (!Number.isInteger(samples) || samples < 8 || samples > MAX_PUPIL_MAP_SAMPLES) throw new RangeError(`samples must be an integer from 8 to ${MAX_PUPIL_MAP_SAMPLES}`);
  const indices = requireNollIndices(nollIndices, "nollIndices");
  requireFiniteCoefficients(coefficientsNm, indices);
  const terms = indices.map((j) => new ZernikeTerm(j));
  const out = new Float64Array(samples * samples);
  for (let iy = 0; iy < samples; iy++) {
    const y = (2 * iy + 1) / samples - 1;
    for (let ix = 0; ix < samples; ix++) {
      const x = (2 * ix + 1) / samples - 1;
      const rho = Math.hypot(x, y);
      if (rho > 1) {
        out[iy * samples + ix] = Number.NaN;
        continue;
      }
      const phi = Math.atan2(y, x);
      let w = 0;
      for (let k = 0; k < terms.length; k++) if (coefficientsNm[k] !== 0) w += coefficientsNm[k] * terms[k].at(rho, phi);
      out[iy * samples + ix] = w;
    }
  }
  return out;
}

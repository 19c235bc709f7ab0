import { requireFiniteCoefficients, requirePositiveFinite } from "./checks.ts";
import type { Wavefront } from "./types.ts";
import { nollCoefficients } from "./wavefront.ts";
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

/**
 * The pupil picture of a wavefront given in either ordering: {@link pupilMap} of its terms (nm).
 * @throws as {@link nollCoefficients} and {@link pupilMap}
 */
export function wavefrontPupilMap(wavefront: Wavefront, samples = 64): Float64Array {
  const coefficients = nollCoefficients(wavefront);
  return pupilMap([...coefficients.keys()], [...coefficients.values()], samples);
}

/** Largest side of the pupil pictures of a measured map (a picture, not the fit: the fit uses every pixel). */
export const MEASURED_PICTURE_SAMPLES = 96;

/**
 * A measured map's pixels on the cell centres of a pupil picture: cell `(ix, iy)` at
 * `x = ((2 ix + 1) / samples - 1) R`, `y` likewise, takes the value of the pixel whose centre is nearest (the pixel
 * grid of `fitZernike`: pixel `(px, py)` at `((px - (cols - 1)/2) p, (py - (rows - 1)/2) p)`); NaN outside the
 * disc, off the map, or where the pixel holds NaN. `samples` defaults to the pixels across the aperture, clamped to
 * 16..{@link MEASURED_PICTURE_SAMPLES}.
 * @param values row-major `rows x cols`, any unit (returned as given)
 * @param pixelSizeM pixel pitch, m; apertureDiameterM the aperture's diameter 2R, m
 * @throws {RangeError} "values must have rows x cols entries" and the positive-number checks
 */
export function resampleToPupil(
  values: ArrayLike<number>,
  rows: number,
  cols: number,
  pixelSizeM: number,
  apertureDiameterM: number,
  samples?: number,
): { samples: number; values: Float64Array } {
  if (values.length !== rows * cols) throw new RangeError("values must have rows x cols entries");
  const pixel = requirePositiveFinite(pixelSizeM, "pixelSizeM");
  const radius = requirePositiveFinite(apertureDiameterM, "apertureDiameterM") / 2;
  const n = samples ?? Math.min(MEASURED_PICTURE_SAMPLES, Math.max(16, Math.round((2 * radius) / pixel)));
  const out = new Float64Array(n * n).fill(Number.NaN);
  for (let iy = 0; iy < n; iy++) {
    const y = (2 * iy + 1) / n - 1;
    const py = Math.round((y * radius) / pixel + (rows - 1) / 2);
    if (py < 0 || py >= rows) continue;
    for (let ix = 0; ix < n; ix++) {
      const x = (2 * ix + 1) / n - 1;
      if (Math.hypot(x, y) > 1) continue;
      const px = Math.round((x * radius) / pixel + (cols - 1) / 2);
      if (px < 0 || px >= cols) continue;
      out[iy * n + ix] = values[py * cols + px];
    }
  }
  return { samples: n, values: out };
}

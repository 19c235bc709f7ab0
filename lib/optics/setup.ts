import type { FarFieldGrid, OpticalSetup } from "./types.ts";

export const MIN_PUPIL_SAMPLES = 32;
export const MAX_PUPIL_SAMPLES = 1024;

function positiveFinite(value: unknown, name: string): number {
  if (typeof value !== "number") throw new TypeError(`${name} must be a number`);
  if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive finite number`);
  return value;
}

/**
 * Check an optical setup and return a clean copy holding only its known fields.
 * @throws TypeError when a field is missing or not a number; RangeError when a
 *   value is out of range ("farField.pointsPerAxis must be an odd integer >= 3",
 *   "pupilSamples must be an integer between 32 and 1024", ...).
 */
export function validateSetup(setup: unknown): OpticalSetup {
  if (typeof setup !== "object" || setup === null) throw new TypeError("setup must be an object");
  const s = setup as Record<string, unknown>;
  const farField = s.farField as Record<string, unknown> | undefined;
  if (typeof farField !== "object" || farField === null) throw new TypeError("farField must be an object");
  const pointsPerAxis = farField.pointsPerAxis;
  if (typeof pointsPerAxis !== "number") throw new TypeError("farField.pointsPerAxis must be a number");
  if (!Number.isInteger(pointsPerAxis) || pointsPerAxis < 3 || pointsPerAxis % 2 !== 1) {
    throw new RangeError("farField.pointsPerAxis must be an odd integer >= 3");
  }
  const pupilSamples = s.pupilSamples;
  if (typeof pupilSamples !== "number") throw new TypeError("pupilSamples must be a number");
  if (!Number.isInteger(pupilSamples) || pupilSamples < MIN_PUPIL_SAMPLES || pupilSamples > MAX_PUPIL_SAMPLES) {
    throw new RangeError(`pupilSamples must be an integer between ${MIN_PUPIL_SAMPLES} and ${MAX_PUPIL_SAMPLES}`);
  }
  return {
    wavelengthNm: positiveFinite(s.wavelengthNm, "wavelengthNm"),
    apertureDiameterM: positiveFinite(s.apertureDiameterM, "apertureDiameterM"),
    beamRadiusM: positiveFinite(s.beamRadiusM, "beamRadiusM"),
    distanceM: positiveFinite(s.distanceM, "distanceM"),
    farField: { halfAngleNrad: positiveFinite(farField.halfAngleNrad, "farField.halfAngleNrad"), pointsPerAxis },
    pupilSamples,
  };
}

/**
 * Far-field node angles `theta_i = -h + 2 h i / (M - 1)`, i = 0 .. M-1, in nrad.
 * The grid is made exactly antisymmetric (theta_{M-1-i} = -theta_i, centre 0).
 */
export function thetaGridNrad(farField: FarFieldGrid): Float64Array {
  const { halfAngleNrad: h, pointsPerAxis: m } = farField;
  const theta = new Float64Array(m);
  const centre = (m - 1) / 2;
  for (let i = 0; i < m; i++) theta[i] = (h * (i - centre)) / centre;
  return theta;
}

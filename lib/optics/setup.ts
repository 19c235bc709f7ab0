import { CHECK_MESSAGES, requirePositiveFinite } from "./checks.ts";
import type { FarFieldGrid, OpticalSetup } from "./types.ts";

/** Pupil grid size limits (samples per axis). */
export const MIN_PUPIL_SAMPLES = 32;
export const MAX_PUPIL_SAMPLES = 1024;
/** Far-field grid size limits (nodes per axis; the count must also be odd so that 0 is a node). */
export const MIN_POINTS_PER_AXIS = 3;
export const MAX_POINTS_PER_AXIS = 401;

/**
 * The positive, finite numeric fields of a setup and the upper bound of each (none where any
 * finite value is meaningful). Paths as they appear in messages.
 */
export const POSITIVE_SETUP_FIELDS = {
  wavelengthNm: { max: 100_000 },
  apertureDiameterM: { max: 100 },
  // No upper bound: a beam much wider than the aperture is the uniformly filled limit (Airy check).
  beamRadiusM: { max: undefined },
  distanceM: { max: undefined },
  "farField.halfAngleNrad": { max: undefined },
} as const satisfies Record<string, { max: number | undefined }>;
export type PositiveSetupField = keyof typeof POSITIVE_SETUP_FIELDS;

/** Every message `validateSetup` throws; the zod schema in lib/validation/setup.ts uses the same. */
export const SETUP_MESSAGES = {
  notObject: (path: string) => `${path} must be an object`,
  ...CHECK_MESSAGES,
  tooLarge: (path: string, max: number) => `${path} must be <= ${max}`,
  pointsPerAxis: `farField.pointsPerAxis must be an odd integer >= ${MIN_POINTS_PER_AXIS}`,
  pointsPerAxisTooLarge: `farField.pointsPerAxis must be <= ${MAX_POINTS_PER_AXIS}`,
  pupilSamples: `pupilSamples must be an integer between ${MIN_PUPIL_SAMPLES} and ${MAX_PUPIL_SAMPLES}`,
} as const;

function positiveFinite(value: unknown, path: PositiveSetupField): number {
  const checked = requirePositiveFinite(value, path);
  const max: number | undefined = POSITIVE_SETUP_FIELDS[path].max;
  if (max !== undefined && checked > max) throw new RangeError(SETUP_MESSAGES.tooLarge(path, max));
  return checked;
}

/**
 * Check an optical setup and return a clean copy holding only its known fields.
 * @throws TypeError when a field is missing or not a number; RangeError when a
 *   value is out of range ("farField.pointsPerAxis must be an odd integer >= 3",
 *   "pupilSamples must be an integer between 32 and 1024", ...: SETUP_MESSAGES), with the limits
 *   exported above.
 */
export function validateSetup(setup: unknown): OpticalSetup {
  if (typeof setup !== "object" || setup === null) throw new TypeError(SETUP_MESSAGES.notObject("setup"));
  const s = setup as Record<string, unknown>;
  const farField = s.farField as Record<string, unknown> | undefined;
  if (typeof farField !== "object" || farField === null) throw new TypeError(SETUP_MESSAGES.notObject("farField"));
  const pointsPerAxis = farField.pointsPerAxis;
  if (typeof pointsPerAxis !== "number") throw new TypeError(SETUP_MESSAGES.notNumber("farField.pointsPerAxis"));
  if (!Number.isInteger(pointsPerAxis) || pointsPerAxis < MIN_POINTS_PER_AXIS || pointsPerAxis % 2 !== 1) {
    throw new RangeError(SETUP_MESSAGES.pointsPerAxis);
  }
  if (pointsPerAxis > MAX_POINTS_PER_AXIS) throw new RangeError(SETUP_MESSAGES.pointsPerAxisTooLarge);
  const pupilSamples = s.pupilSamples;
  if (typeof pupilSamples !== "number") throw new TypeError(SETUP_MESSAGES.notNumber("pupilSamples"));
  if (!Number.isInteger(pupilSamples) || pupilSamples < MIN_PUPIL_SAMPLES || pupilSamples > MAX_PUPIL_SAMPLES) {
    throw new RangeError(SETUP_MESSAGES.pupilSamples);
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

import { z } from "zod";
import {
  MAX_POINTS_PER_AXIS, MAX_PUPIL_SAMPLES, MIN_POINTS_PER_AXIS, MIN_PUPIL_SAMPLES, POSITIVE_SETUP_FIELDS, SETUP_MESSAGES,
  type PositiveSetupField,
} from "../optics/setup.ts";

/** A positive finite number with the core's bound and messages for `path` (lib/optics/setup.ts). */
const positive = (path: PositiveSetupField) => {
  const max: number | undefined = POSITIVE_SETUP_FIELDS[path].max;
  const schema = z
    .number({
      error: (issue) =>
        typeof issue.input === "number" ? SETUP_MESSAGES.notPositiveFinite(path) : SETUP_MESSAGES.notNumber(path),
    })
    .positive(SETUP_MESSAGES.notPositiveFinite(path));
  return max === undefined ? schema : schema.max(max, SETUP_MESSAGES.tooLarge(path, max));
};

/**
 * An optical setup as the API, the CLI and the files exchange it (DESIGN.md, "JSON shapes"). Every
 * limit and message comes from the core's `validateSetup` (lib/optics/setup.ts); this schema adds
 * only what a request format needs on top (no unknown fields).
 */
export const setupSchema = z.strictObject({
  wavelengthNm: positive("wavelengthNm"),
  apertureDiameterM: positive("apertureDiameterM"),
  beamRadiusM: positive("beamRadiusM"),
  distanceM: positive("distanceM"),
  farField: z.strictObject(
    {
      halfAngleNrad: positive("farField.halfAngleNrad"),
      pointsPerAxis: z
        .number({ error: SETUP_MESSAGES.notNumber("farField.pointsPerAxis") })
        .int(SETUP_MESSAGES.pointsPerAxis)
        .min(MIN_POINTS_PER_AXIS, SETUP_MESSAGES.pointsPerAxis)
        .max(MAX_POINTS_PER_AXIS, SETUP_MESSAGES.pointsPerAxisTooLarge)
        .refine((n) => n % 2 === 1, SETUP_MESSAGES.pointsPerAxis),
    },
    { error: SETUP_MESSAGES.notObject("farField") },
  ),
  pupilSamples: z
    .number({ error: SETUP_MESSAGES.notNumber("pupilSamples") })
    .int(SETUP_MESSAGES.pupilSamples)
    .min(MIN_PUPIL_SAMPLES, SETUP_MESSAGES.pupilSamples)
    .max(MAX_PUPIL_SAMPLES, SETUP_MESSAGES.pupilSamples),
});
export type SetupInput = z.infer<typeof setupSchema>;

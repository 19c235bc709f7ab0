import { z } from "zod";

const positive = (what: string) => z.number({ error: `${what} must be a number` }).positive(`${what} must be > 0`);

/** An optical setup as the API, the CLI and the files exchange it (DESIGN.md, "JSON shapes"). */
export const setupSchema = z.strictObject({
  wavelengthNm: positive("wavelengthNm").max(100_000, "wavelengthNm must be <= 100000"),
  apertureDiameterM: positive("apertureDiameterM").max(100, "apertureDiameterM must be <= 100"),
  beamRadiusM: positive("beamRadiusM").max(100, "beamRadiusM must be <= 100"),
  distanceM: positive("distanceM"),
  farField: z.strictObject({
    halfAngleNrad: positive("farField.halfAngleNrad"),
    pointsPerAxis: z
      .number()
      .int("farField.pointsPerAxis must be an odd integer >= 3")
      .min(3, "farField.pointsPerAxis must be an odd integer >= 3")
      .max(401, "farField.pointsPerAxis must be <= 401")
      .refine((n) => n % 2 === 1, "farField.pointsPerAxis must be an odd integer >= 3"),
  }),
  pupilSamples: z
    .number()
    .int("pupilSamples must be an integer")
    .min(16, "pupilSamples must be >= 16")
    .max(2048, "pupilSamples must be <= 2048"),
});
export type SetupInput = z.infer<typeof setupSchema>;

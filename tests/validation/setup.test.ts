import { describe, expect, it } from "vitest";
import { VELORA_SETUP } from "@/lib/demo/velora.ts";
import { MAX_POINTS_PER_AXIS, MAX_PUPIL_SAMPLES, MIN_PUPIL_SAMPLES, validateSetup } from "@/lib/optics/setup.ts";
import { setupSchema } from "@/lib/validation/setup.ts";

/** The core's message for a setup, or "ok". */
function coreVerdict(setup: unknown): string {
  try {
    validateSetup(setup);
    return "ok";
  } catch (error) {
    return (error as Error).message;
  }
}

/** The zod schema's first message for a setup, or "ok". */
function schemaVerdict(setup: unknown): string {
  const parsed = setupSchema.safeParse(setup);
  return parsed.success ? "ok" : parsed.error.issues[0].message;
}

describe("setupSchema agrees with the core's validateSetup", () => {
  const cases: [string, unknown][] = [
    ["the Velora setup", VELORA_SETUP],
    ["pupilSamples at the lower limit", { ...VELORA_SETUP, pupilSamples: MIN_PUPIL_SAMPLES }],
    ["pupilSamples below it", { ...VELORA_SETUP, pupilSamples: MIN_PUPIL_SAMPLES - 1 }],
    ["pupilSamples at the upper limit", { ...VELORA_SETUP, pupilSamples: MAX_PUPIL_SAMPLES }],
    ["pupilSamples above it (the old schema allowed 2048)", { ...VELORA_SETUP, pupilSamples: 2048 }],
    ["pupilSamples not an integer", { ...VELORA_SETUP, pupilSamples: 100.5 }],
    ["pupilSamples a string", { ...VELORA_SETUP, pupilSamples: "128" }],
    ["an even node count", { ...VELORA_SETUP, farField: { halfAngleNrad: 60, pointsPerAxis: 24 } }],
    ["one node", { ...VELORA_SETUP, farField: { halfAngleNrad: 60, pointsPerAxis: 1 } }],
    ["the largest node count", { ...VELORA_SETUP, farField: { halfAngleNrad: 60, pointsPerAxis: MAX_POINTS_PER_AXIS } }],
    ["too many nodes", { ...VELORA_SETUP, farField: { halfAngleNrad: 60, pointsPerAxis: MAX_POINTS_PER_AXIS + 2 } }],
    ["a negative half angle", { ...VELORA_SETUP, farField: { halfAngleNrad: -5, pointsPerAxis: 25 } }],
    ["a zero wavelength", { ...VELORA_SETUP, wavelengthNm: 0 }],
    ["a huge wavelength", { ...VELORA_SETUP, wavelengthNm: 200_000 }],
    ["a huge aperture", { ...VELORA_SETUP, apertureDiameterM: 101 }],
    ["a beam far wider than the aperture (uniform illumination)", { ...VELORA_SETUP, beamRadiusM: 1e6 }],
    ["a negative beam radius", { ...VELORA_SETUP, beamRadiusM: -0.1 }],
    ["a string wavelength", { ...VELORA_SETUP, wavelengthNm: "1064" }],
    ["no far field", { ...VELORA_SETUP, farField: undefined }],
  ];
  it.each(cases)("gives the same verdict and message for %s", (_name, setup) => {
    expect(schemaVerdict(setup)).toBe(coreVerdict(setup));
  });

  it("refuses what the core would silently drop: unknown fields", () => {
    expect(setupSchema.safeParse({ ...VELORA_SETUP, colour: "red" }).success).toBe(false);
  });

  it("refuses NaN and infinity with the core's message", () => {
    // JSON cannot carry them, but a direct caller can.
    expect(schemaVerdict({ ...VELORA_SETUP, distanceM: Number.POSITIVE_INFINITY })).toBe(
      "distanceM must be a positive finite number",
    );
    expect(schemaVerdict({ ...VELORA_SETUP, wavelengthNm: Number.NaN })).toBe("wavelengthNm must be a positive finite number");
  });
});

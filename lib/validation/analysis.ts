import { z } from "zod";
import { checkSpectrum, type Spectrum } from "../surrogate/noise.ts";
import { coreCheck } from "./core.ts";
import { wavefrontSchema } from "./wavefront.ts";
import { zernikeSetSchema } from "./zernike.ts";

/** Limits of the analysis routes (API.md "Analysis"). */
export const ANALYSIS_LIMITS = {
  maxBudgetRmsNm: 10_000,
  maxJitterNrad: 1e6,
  maxTtlBudgetPmPerNrad: 1e6,
  maxMonteCarloSamples: 1_000_000,
  maxSpectrumPoints: 10_000,
  maxLimitNm: 10_000,
  /** Largest height-map upload, bytes (a 2048 x 2048 float64 .npy is 32 MiB). */
  maxFitUploadBytes: 40 * 1024 * 1024,
} as const;

const positive = (name: string, max: number) =>
  z
    .number({ error: `${name} must be a number` })
    .refine(Number.isFinite, `${name} must be finite`)
    .refine((v) => v > 0, `${name} must be > 0`)
    .refine((v) => v <= max, `${name} must be <= ${max}`);

const nonNegative = (name: string, max: number) =>
  z
    .number({ error: `${name} must be a number` })
    .refine(Number.isFinite, `${name} must be finite`)
    .refine((v) => v >= 0, `${name} must be >= 0`)
    .refine((v) => v <= max, `${name} must be <= ${max}`);

const budgetRmsNm = positive("budgetRmsNm", ANALYSIS_LIMITS.maxBudgetRmsNm);
const jitterNrad = positive("jitterNrad", ANALYSIS_LIMITS.maxJitterNrad);

/** Body of `POST .../versions/{v}/worst-case`. */
export const worstCaseBodySchema = z.strictObject({ budgetRmsNm, jitterNrad: jitterNrad.optional() });
export type WorstCaseBody = z.output<typeof worstCaseBodySchema>;

/** Body of `POST .../versions/{v}/prune` (modeller / train). */
export const pruneBodySchema = z.strictObject({ budgetRmsNm, jitterNrad, thresholdPm: nonNegative("thresholdPm", 1e9) });
export type PruneBody = z.output<typeof pruneBodySchema>;

/** Body of `POST .../versions/{v}/requirements`: limits for a TTL budget, verified by a seeded Monte Carlo. */
export const requirementsBodySchema = z.strictObject({
  ttlBudgetPmPerNrad: positive("ttlBudgetPmPerNrad", ANALYSIS_LIMITS.maxTtlBudgetPmPerNrad),
  budgetRmsNm,
  samples: z
    .number({ error: "samples must be an integer" })
    .int("samples must be an integer")
    .min(1024, "samples must be >= 1024")
    .max(ANALYSIS_LIMITS.maxMonteCarloSamples, `samples must be <= ${ANALYSIS_LIMITS.maxMonteCarloSamples}`)
    .default(ANALYSIS_LIMITS.maxMonteCarloSamples),
  seed: z.number({ error: "seed must be an integer" }).int("seed must be an integer").min(0, "seed must be >= 0").max(2 ** 31 - 1, "seed must be < 2^31").default(1),
  limits: z.enum(["uniform", "per-term"], { error: 'limits must be "uniform" or "per-term"' }).default("uniform"),
});
export type RequirementsBody = z.output<typeof requirementsBodySchema>;

/** Body of `POST .../versions/{v}/modes`: optionally a wavefront to split by mode. */
export const modesBodySchema = z.strictObject({ wavefront: wavefrontSchema.optional() });
export type ModesBody = z.output<typeof modesBodySchema>;

/** Body of `POST .../versions/{v}/correction`. */
export const correctionBodySchema = z.strictObject({
  wavefront: wavefrontSchema,
  adjustable: zernikeSetSchema,
  limitNm: positive("limitNm", ANALYSIS_LIMITS.maxLimitNm),
});
export type CorrectionBody = z.output<typeof correctionBodySchema>;

const spectrumSchema = (name: string) =>
  z
    .array(z.tuple([z.number({ error: "frequencies must be numbers" }), z.number({ error: "densities must be numbers" })], { error: `each ${name} point is [frequency Hz, density]` }), {
      error: `${name} must be an array of [frequency Hz, density] pairs`,
    })
    .max(ANALYSIS_LIMITS.maxSpectrumPoints, `${name} may hold at most ${ANALYSIS_LIMITS.maxSpectrumPoints} points`)
    .superRefine(coreCheck((spectrum) => checkSpectrum(spectrum as Spectrum, name)));

/** Body of `POST .../versions/{v}/noise`. */
export const noiseBodySchema = z.strictObject({
  wavefront: wavefrontSchema,
  offsetNrad: z.tuple([z.number().refine(Number.isFinite, "offset must be finite"), z.number().refine(Number.isFinite, "offset must be finite")], { error: "offsetNrad is [thetaXNrad, thetaYNrad] or null" }).nullable(),
  jitterAsd: spectrumSchema("jitter ASD"),
  allocation: spectrumSchema("allocation"),
});
export type NoiseBody = z.output<typeof noiseBodySchema>;

/** The text fields of `POST /wavefronts/fit` (multipart), after the file. */
export const fitFieldsSchema = z.strictObject({
  pixelSizeM: z.coerce.number({ error: "pixelSizeM must be a number" }).refine((v) => Number.isFinite(v) && v > 0, "pixelSizeM must be a positive finite number"),
  apertureDiameterM: z.coerce.number({ error: "apertureDiameterM must be a number" }).refine((v) => Number.isFinite(v) && v > 0, "apertureDiameterM must be a positive finite number"),
  units: z.enum(["nm", "m"], { error: 'units must be "nm" or "m"' }),
  zernike: z
    .string({ error: "zernike must be a JSON Zernike set" })
    .transform((text, context) => {
      try {
        return JSON.parse(text) as unknown;
      } catch {
        context.addIssue({ code: "custom", message: "zernike must be a JSON Zernike set such as {\"ordering\":\"noll\",\"indices\":[4,5,6]}" });
        return z.NEVER;
      }
    })
    .pipe(zernikeSetSchema),
});
export type FitFields = z.output<typeof fitFieldsSchema>;

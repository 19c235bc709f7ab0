import { z } from "zod";
import { setupSchema } from "./setup.ts";
import { zernikeSetSchema } from "./zernike.ts";

/** Limits on what one training request may ask for (a bigger set is computed elsewhere and uploaded). */
export const TRAINING_LIMITS = {
  maxSamples: 20_000,
  maxRmsNm: 1_000,
  maxStepNm: 1_000,
} as const;

const positiveFinite = (name: string, max: number) =>
  z
    .number({ error: `${name} must be a number` })
    .refine(Number.isFinite, `${name} must be finite`)
    .refine((v) => v > 0, `${name} must be > 0`)
    .refine((v) => v <= max, `${name} must be <= ${max}`);

const sampleCount = z
  .number({ error: "size must be an integer" })
  .int("size must be an integer")
  .min(1, "size must be >= 1")
  .max(TRAINING_LIMITS.maxSamples, `size must be <= ${TRAINING_LIMITS.maxSamples}`);

const seed = z
  .number({ error: "seed must be an integer" })
  .int("seed must be an integer")
  .refine(Number.isSafeInteger, "seed must be a safe integer");

/** A seeded random set: `size` samples up to `maxRmsNm` total RMS. */
export const randomSetSchema = z.strictObject({
  size: sampleCount,
  maxRmsNm: positiveFinite("maxRmsNm", TRAINING_LIMITS.maxRmsNm),
  seed,
});

/** The axes-and-pairs design with step d (PHYSICS.md section 5). */
export const axesAndPairsSchema = z.strictObject({
  design: z.literal("axes-and-pairs"),
  stepNm: positiveFinite("stepNm", TRAINING_LIMITS.maxStepNm),
});

/** How an uploaded set is named: by its id on the server, by a file path in the CLI's spec. */
const uploadedById = z.strictObject({
  design: z.literal("uploaded"),
  generatingSetId: z.number({ error: "generatingSetId must be an integer" }).int().positive(),
});
const uploadedByFile = z.strictObject({
  design: z.literal("uploaded"),
  /** A JSON file of `{ "samples": [{ "wfe": wavefront, "map": TTL map }] }`, relative to the spec file. */
  file: z.string().min(1, "file must name a file"),
});

function trainingBody<U extends z.ZodObject>(uploaded: U) {
  return z.strictObject({
    order: z.union([z.literal(1), z.literal(2)], { error: "order must be 1 or 2" }),
    generatingSet: z.discriminatedUnion(
      "design",
      [randomSetSchema.extend({ design: z.literal("random") }), axesAndPairsSchema, uploaded],
      { error: 'generatingSet.design must be "random", "axes-and-pairs" or "uploaded"' },
    ),
    validationSet: z.union([randomSetSchema, uploaded]).nullable().optional(),
  });
}

/** Body of `POST /models/{slug}/versions` (API.md "Versions"). */
export const versionTrainingSchema = trainingBody(uploadedById);
export type VersionTrainingInput = z.infer<typeof versionTrainingSchema>;

/** The CLI's `spec.json` (DESIGN.md "Command-line contract"): the same request plus its setup and Zernike set. */
export const trainingSpecSchema = trainingBody(uploadedByFile).extend({
  setup: setupSchema,
  zernike: zernikeSetSchema,
});
export type TrainingSpecInput = z.infer<typeof trainingSpecSchema>;

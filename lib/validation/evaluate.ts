import { z } from "zod";
import { wavefrontSchema } from "./wavefront.ts";

export const EVALUATE_LIMITS = { maxWavefronts: 10_000, maxOffsets: 1_000, maxJitterNrad: 1e6 } as const;

const finite = (name: string) =>
  z.number({ error: `${name} must be a number` }).refine(Number.isFinite, `${name} must be finite`);

const wavefrontList = <T extends z.ZodType>(item: T) =>
  z
    .array(item, { error: "wavefronts must be an array of wavefronts" })
    .min(1, "wavefronts must hold at least one wavefront")
    .max(EVALUATE_LIMITS.maxWavefronts, `wavefronts may hold at most ${EVALUATE_LIMITS.maxWavefronts} wavefronts`);

const bodyFields = {
  output: z.enum(["map", "offsets", "summary"], { error: 'output must be "map", "offsets" or "summary"' }).default("map"),
  offsetsNrad: z
    .array(z.tuple([finite("thetaXNrad"), finite("thetaYNrad")], { error: "each offset is [thetaXNrad, thetaYNrad]" }))
    .min(1, "offsetsNrad must hold at least one offset")
    .max(EVALUATE_LIMITS.maxOffsets, `offsetsNrad may hold at most ${EVALUATE_LIMITS.maxOffsets} offsets`)
    .optional(),
  jitterNrad: finite("jitterNrad")
    .refine((v) => v >= 0, "jitterNrad must be >= 0")
    .refine((v) => v <= EVALUATE_LIMITS.maxJitterNrad, `jitterNrad must be <= ${EVALUATE_LIMITS.maxJitterNrad}`)
    .optional(),
  strict: z.boolean({ error: "strict must be true or false" }).default(false),
};

function outputRules(body: { output: string; offsetsNrad?: unknown }, context: z.RefinementCtx): void {
  if (body.output === "offsets" && !body.offsetsNrad) {
    context.addIssue({ code: "custom", path: ["offsetsNrad"], message: 'offsetsNrad is required with output "offsets"' });
  }
  if (body.output !== "offsets" && body.offsetsNrad) {
    context.addIssue({ code: "custom", path: ["offsetsNrad"], message: 'offsetsNrad goes with output "offsets" only' });
  }
}

/** Body of `POST /models/{slug}/versions/{v}/evaluate` (API.md "Evaluate"). */
export const evaluateBodySchema = z.strictObject({ wavefronts: wavefrontList(wavefrontSchema), ...bodyFields }).superRefine(outputRules);
export type EvaluateBody = z.output<typeof evaluateBodySchema>;

/** The same body with the wavefronts left unchecked, for {@link parseEvaluateBody}. */
const evaluateEnvelopeSchema = z.strictObject({ wavefronts: wavefrontList(z.unknown()), ...bodyFields }).superRefine(outputRules);

/** Wavefronts checked between two yields to the event loop (about 3 ms of work). */
const WAVEFRONT_SLICE = 256;

/**
 * {@link evaluateBodySchema} applied in slices of wavefronts with a yield to the event loop between them, so that
 * checking 10,000 wavefronts (over 100 ms) never holds up another request by more than one slice. Same rules, same
 * issues and paths as `evaluateBodySchema.parse`.
 * @throws {z.ZodError} with every issue found
 */
export async function parseEvaluateBody(value: unknown): Promise<EvaluateBody> {
  const envelope = evaluateEnvelopeSchema.parse(value);
  const wavefronts: EvaluateBody["wavefronts"] = new Array(envelope.wavefronts.length);
  const issues: z.core.$ZodIssue[] = [];
  for (let start = 0; start < wavefronts.length; start += WAVEFRONT_SLICE) {
    if (start > 0) await new Promise<void>((resolve) => setImmediate(resolve));
    const end = Math.min(wavefronts.length, start + WAVEFRONT_SLICE);
    for (let i = start; i < end; i++) {
      const result = wavefrontSchema.safeParse(envelope.wavefronts[i]);
      if (result.success) wavefronts[i] = result.data;
      else for (const issue of result.error.issues) issues.push({ ...issue, path: ["wavefronts", i, ...issue.path] });
    }
  }
  if (issues.length > 0) throw new z.ZodError(issues);
  return { ...envelope, wavefronts };
}

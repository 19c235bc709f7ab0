import { z } from "zod";
import { wavefrontSchema } from "./wavefront.ts";

export const EVALUATE_LIMITS = { maxWavefronts: 10_000, maxOffsets: 1_000, maxJitterNrad: 1e6 } as const;

const finite = (name: string) =>
  z.number({ error: `${name} must be a number` }).refine(Number.isFinite, `${name} must be finite`);

/** Body of `POST /models/{slug}/versions/{v}/evaluate` (API.md "Evaluate"). */
export const evaluateBodySchema = z
  .strictObject({
    wavefronts: z
      .array(wavefrontSchema, { error: "wavefronts must be an array of wavefronts" })
      .min(1, "wavefronts must hold at least one wavefront")
      .max(EVALUATE_LIMITS.maxWavefronts, `wavefronts may hold at most ${EVALUATE_LIMITS.maxWavefronts} wavefronts`),
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
  })
  .superRefine((body, context) => {
    if (body.output === "offsets" && !body.offsetsNrad) {
      context.addIssue({ code: "custom", path: ["offsetsNrad"], message: 'offsetsNrad is required with output "offsets"' });
    }
    if (body.output !== "offsets" && body.offsetsNrad) {
      context.addIssue({ code: "custom", path: ["offsetsNrad"], message: 'offsetsNrad goes with output "offsets" only' });
    }
  });
export type EvaluateBody = z.output<typeof evaluateBodySchema>;

import { z } from "zod";
import { TOKEN_SCOPES } from "../access/actor.ts";
import { pageQuerySchema } from "./list.ts";
import { setupSchema } from "./setup.ts";
import { zernikeSetSchema } from "./zernike.ts";

/** Model slugs: lower-case words joined by hyphens, as they appear in URLs and token model lists. */
export const SLUG_PATTERN = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
export const slugSchema = z
  .string({ error: "slug must be a string" })
  .min(3, "slug needs at least 3 characters")
  .max(80, "slug may have at most 80 characters")
  .regex(SLUG_PATTERN, "slug may hold lower-case letters, digits and single hyphens between them");

const nameSchema = (what: string, max: number) =>
  z
    .string({ error: `${what} must be a string` })
    .trim()
    .min(1, `${what} must not be empty`)
    .max(max, `${what} may have at most ${max} characters`);

/** Body of `POST /setups`. */
export const createSetupSchema = z.strictObject({ name: nameSchema("name", 120), setup: setupSchema });
export type CreateSetupInput = z.infer<typeof createSetupSchema>;

/** Body of `POST /models`. */
export const createModelSchema = z.strictObject({
  slug: slugSchema,
  name: nameSchema("name", 160),
  description: z.string().max(4000, "description may have at most 4000 characters").nullable().optional(),
  setupId: z.number({ error: "setupId must be an integer" }).int("setupId must be an integer").positive("setupId must be > 0"),
  zernike: zernikeSetSchema,
});
export type CreateModelInput = z.infer<typeof createModelSchema>;

export const VERSION_STATES = ["draft", "in-review", "released", "retired"] as const;
export type VersionState = (typeof VERSION_STATES)[number];

/** `GET /models?q=&state=&setupId=` plus the list parameters. */
export const modelListQuerySchema = pageQuerySchema.extend({
  q: z.string().max(200, "q may have at most 200 characters").optional(),
  state: z.enum(VERSION_STATES, { error: `state must be one of ${VERSION_STATES.join(", ")}` }).optional(),
  setupId: z.coerce.number({ error: "setupId must be an integer" }).int().positive().optional(),
});

/** A version number in a path: an explicit positive integer (there is no "latest" alias). */
export const versionNumberSchema = z
  .string()
  .regex(/^[1-9]\d{0,8}$/, "version must be an explicit positive integer")
  .transform(Number);

/** Body of `POST /tokens` (API.md "Tokens"). */
export const createTokenSchema = z.strictObject({
  name: nameSchema("name", 80),
  scopes: z
    .array(z.enum(TOKEN_SCOPES, { error: `scopes may be ${TOKEN_SCOPES.join(", ")}` }))
    .min(1, "a token needs at least one scope")
    .refine((s) => new Set(s).size === s.length, "a scope is listed twice"),
  expiresAt: z.iso
    .datetime({ offset: true, error: "expiresAt must be an ISO 8601 time such as 2027-06-30T00:00:00Z" })
    .nullable()
    .refine((v) => v === null || Date.parse(v) > Date.now(), "expiresAt must lie in the future"),
  models: z.array(slugSchema).min(1, "models is null (every model) or lists at least one").max(100).nullable(),
});
export type CreateTokenInput = z.infer<typeof createTokenSchema>;

export const RUN_KINDS = ["training", "pruning", "monte-carlo"] as const;
export const RUN_STATES = ["queued", "running", "succeeded", "failed", "cancelled"] as const;
export type RunKind = (typeof RUN_KINDS)[number];
export type RunState = (typeof RUN_STATES)[number];

/** `GET /runs?model=slug`. */
export const runListQuerySchema = pageQuerySchema.extend({ model: slugSchema.optional() });

/** Body of `POST .../versions/{v}/review` (a comment is required to return a version). */
export const reviewBodySchema = z
  .strictObject({
    decision: z.enum(["approve", "return"], { error: 'decision must be "approve" or "return"' }),
    comment: z.string({ error: "comment must be a string" }).max(4000, "comment may have at most 4000 characters").nullable().optional(),
  })
  .superRefine((body, context) => {
    if (body.decision === "return" && !body.comment?.trim()) {
      context.addIssue({ code: "custom", path: ["comment"], message: "Returning a version needs a comment that says what to change." });
    }
  });

/** The last instant a MariaDB TIMESTAMP column holds (2^31 - 1 s after the Unix epoch). */
export const LATEST_STORED_TIME_MS = (2 ** 31 - 1) * 1000;

/** Body of `POST .../versions/{v}/retire`. */
export const retireBodySchema = z.strictObject({
  reason: z.string({ error: "reason must be a string" }).trim().min(1, "reason must not be empty").max(2000, "reason may have at most 2000 characters"),
  sunsetAt: z.iso
    .datetime({ offset: true, error: "sunsetAt must be an ISO 8601 time such as 2027-03-01T00:00:00Z" })
    .refine((v) => Date.parse(v) <= LATEST_STORED_TIME_MS, "sunsetAt must lie before 2038-01-19T03:14:07Z, the last time the registry stores"),
  successorVersion: z.number({ error: "successorVersion must be an integer or null" }).int().positive().nullable(),
});

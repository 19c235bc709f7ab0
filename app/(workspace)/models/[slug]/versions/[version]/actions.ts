"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { reviewVersion } from "@/lib/db/reviews";
import { submitVersion } from "@/lib/db/versions";
import { reviewBodySchema, slugSchema } from "@/lib/validation/registry";

const versionSchema = z.number({ error: "version must be an integer" }).int().positive();

/** `draft` -> `in-review`, by the modeller who made the version (submitVersion checks the author and the state). */
export async function submitForReviewAction(slug: unknown, version: unknown): Promise<ActionResult<{ state: string }>> {
  try {
    const model = slugSchema.parse(slug);
    const actor = await actionActor("train", model);
    const detail = await submitVersion(actor, model, versionSchema.parse(version));
    revalidatePath(`/models/${model}`, "layout");
    return { ok: true, data: { state: detail.state } };
  } catch (error) {
    return actionFailure(error);
  }
}

/**
 * A reviewer's decision from the version page: the same schema and the same `reviewVersion` as
 * `POST .../review` (which refuses the author, a return without a comment and a version not in review).
 */
export async function reviewVersionAction(slug: unknown, version: unknown, input: unknown): Promise<ActionResult<{ state: string }>> {
  try {
    const model = slugSchema.parse(slug);
    const actor = await actionActor("review", model);
    const number = versionSchema.parse(version);
    const body = reviewBodySchema.parse(input);
    const detail = await reviewVersion(actor, model, number, { decision: body.decision, comment: body.comment ?? null });
    revalidatePath(`/models/${model}`, "layout");
    revalidatePath("/reviews");
    return { ok: true, data: { state: detail.state } };
  } catch (error) {
    return actionFailure(error);
  }
}

"use server";

import { revalidatePath } from "next/cache";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { createModel } from "@/lib/db/models";
import { createModelSchema } from "@/lib/validation/registry";

/** Register a model (a slug bound to one setup and one Zernike set) for modellers. */
export async function createModelAction(input: unknown): Promise<ActionResult<{ slug: string; next: string }>> {
  try {
    const actor = await actionActor("train");
    const model = await createModel(actor, createModelSchema.parse(input));
    revalidatePath("/");
    return { ok: true, data: { slug: model.slug, next: `/models/${model.slug}/versions/new` } };
  } catch (error) {
    return actionFailure(error, { conflictField: "slug" });
  }
}

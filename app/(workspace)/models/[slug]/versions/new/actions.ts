"use server";

import { revalidatePath } from "next/cache";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { slugSchema } from "@/lib/validation/registry";
import { createTrainingRun } from "@/lib/registry/training";
import { versionTrainingSchema } from "@/lib/validation/training";

/** Queue a training run for a model (modellers); the version appears when the run succeeds. */
export async function queueTrainingAction(slug: unknown, input: unknown): Promise<ActionResult<{ runId: number; next: string }>> {
  try {
    const model = slugSchema.parse(slug);
    const actor = await actionActor("train", model);
    const run = await createTrainingRun(actor, model, versionTrainingSchema.parse(input));
    revalidatePath(`/models/${model}`);
    return { ok: true, data: { runId: run.id, next: `/runs/${run.id}` } };
  } catch (error) {
    return actionFailure(error);
  }
}

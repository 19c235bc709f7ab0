"use server";

import { revalidatePath } from "next/cache";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { createSetup } from "@/lib/db/setups";
import { createSetupSchema } from "@/lib/validation/registry";

/** Store a new optical setup (modellers). Answers the new setup's id and where the form goes next. */
export async function createSetupAction(input: unknown): Promise<ActionResult<{ id: number; next: string }>> {
  try {
    const actor = await actionActor("train");
    const created = await createSetup(actor, createSetupSchema.parse(input));
    revalidatePath("/setups");
    return { ok: true, data: { id: created.id, next: `/models/new?setupId=${created.id}` } };
  } catch (error) {
    return actionFailure(error, { conflictField: "name" });
  }
}

"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { retireWithNotices } from "@/lib/registry/retirement";
import { retireBodySchema, slugSchema } from "@/lib/validation/registry";

const versionSchema = z.number({ error: "version must be an integer" }).int().positive();

/**
 * Retire a released version (admins): reason, sunset and optional successor; every owner of a token that evaluated it
 * in the notice window is told by e-mail (queued, never holding up the retirement).
 */
export async function retireVersionAction(slug: unknown, version: unknown, input: unknown): Promise<ActionResult<{ notices: number }>> {
  try {
    const actor = await actionActor("admin");
    const model = slugSchema.parse(slug);
    const number = versionSchema.parse(version);
    const { notices } = await retireWithNotices(actor, model, number, retireBodySchema.parse(input));
    revalidatePath("/versions");
    revalidatePath(`/models/${model}/versions/${number}`);
    return { ok: true, data: { notices } };
  } catch (error) {
    return actionFailure(error);
  }
}

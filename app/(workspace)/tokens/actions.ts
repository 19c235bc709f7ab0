"use server";

import { revalidatePath } from "next/cache";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { createToken } from "@/lib/db/tokens";
import { createTokenSchema } from "@/lib/validation/registry";

/** Create an API token for the signed-in person; the secret is in this answer only (only its hash is stored). */
export async function createTokenAction(input: unknown): Promise<ActionResult<{ id: number; name: string; token: string }>> {
  try {
    const actor = await actionActor("tokens");
    const created = await createToken(actor, createTokenSchema.parse(input));
    revalidatePath("/tokens");
    return { ok: true, data: { id: created.id, name: created.name, token: created.token } };
  } catch (error) {
    return actionFailure(error);
  }
}

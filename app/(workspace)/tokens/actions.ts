"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { createToken, revokeToken } from "@/lib/db/tokens";
import { createTokenSchema } from "@/lib/validation/registry";

const tokenIdSchema = z.number({ error: "token id must be an integer" }).int().positive();

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

/** Revoke one of one's own tokens (an admin: anybody's); it fails from the next request on. */
export async function revokeTokenAction(id: unknown): Promise<ActionResult<{ id: number }>> {
  try {
    const actor = await actionActor("tokens");
    const tokenId = tokenIdSchema.parse(id);
    await revokeToken(actor, tokenId);
    revalidatePath("/tokens");
    return { ok: true, data: { id: tokenId } };
  } catch (error) {
    return actionFailure(error);
  }
}

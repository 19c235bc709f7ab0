"use server";

import { z } from "zod";
import type { ActionResult } from "@/components/forms/action-result";
import { actionFailure, currentRequestAddress } from "@/components/server/action";
import { hashPassword } from "@/lib/auth/password";
import { acceptInvitation, INVITATION_REFUSALS, openInvitation } from "@/lib/db/invitations";
import { UnprocessableError } from "@/lib/errors";
import { acceptInvitationSchema } from "@/lib/validation/user";

const secretSchema = z.string().max(100);

/**
 * The invited person sets a name and password. No session is needed: the link's secret is the credential, checked
 * against its stored hash, and used once (acceptInvitation locks the invitation row).
 */
export async function acceptInvitationAction(secret: unknown, input: unknown): Promise<ActionResult<{ email: string }>> {
  try {
    const link = secretSchema.parse(secret);
    const values = acceptInvitationSchema.parse(input);
    // Refuse a dead link before spending a slow hash on it; acceptInvitation checks again under the row lock.
    const open = await openInvitation(link);
    if (!open.ok) throw new UnprocessableError(INVITATION_REFUSALS[open.reason]);
    const passwordHash = await hashPassword(values.password);
    const { email } = await acceptInvitation(link, { name: values.name, passwordHash }, await currentRequestAddress());
    return { ok: true, data: { email } };
  } catch (error) {
    return actionFailure(error);
  }
}

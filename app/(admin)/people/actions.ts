"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { withdrawInvitation } from "@/lib/db/invitations";
import { setUserRoles } from "@/lib/db/roles";
import { disableUser, enableUser } from "@/lib/db/users";
import { inviteByMail } from "@/lib/registry/invitations";
import { inviteSchema, setRolesSchema } from "@/lib/validation/user";

const idSchema = z.number({ error: "id must be an integer" }).int().positive();

/** Invite a person by e-mail (admins): a one-time link, sent through the mail queue. */
export async function inviteAction(input: unknown): Promise<ActionResult<{ email: string; expiresAt: string }>> {
  try {
    const actor = await actionActor("admin");
    const invitation = await inviteByMail(actor, inviteSchema.parse(input));
    revalidatePath("/people");
    return { ok: true, data: { email: invitation.email, expiresAt: invitation.expiresAt } };
  } catch (error) {
    return actionFailure(error, { conflictField: "email" });
  }
}

/** Withdraw a pending invitation (admins): its link stops working. */
export async function withdrawInvitationAction(id: unknown): Promise<ActionResult<{ id: number }>> {
  try {
    const actor = await actionActor("admin");
    const invitationId = idSchema.parse(id);
    await withdrawInvitation(actor, invitationId);
    revalidatePath("/people");
    return { ok: true, data: { id: invitationId } };
  } catch (error) {
    return actionFailure(error);
  }
}

/** Set a person's roles (admins); the last admin keeps the admin role. */
export async function setRolesAction(input: unknown): Promise<ActionResult<{ userId: number; roles: string[] }>> {
  try {
    const actor = await actionActor("admin");
    const { userId, roles } = setRolesSchema.parse(input);
    const user = await setUserRoles(actor, userId, roles);
    revalidatePath("/people");
    return { ok: true, data: { userId: user.id, roles: user.roles } };
  } catch (error) {
    return actionFailure(error);
  }
}

/** Disable an account (admins): at once its sessions end and its tokens are refused; nobody disables themselves. */
export async function disableAccountAction(userId: unknown): Promise<ActionResult<{ userId: number; disabledAt: string | null }>> {
  try {
    const actor = await actionActor("admin");
    const user = await disableUser(actor, idSchema.parse(userId));
    revalidatePath("/people");
    return { ok: true, data: { userId: user.id, disabledAt: user.disabledAt } };
  } catch (error) {
    return actionFailure(error);
  }
}

/** Enable a disabled account again (admins): its tokens work again; it signs in afresh. */
export async function enableAccountAction(userId: unknown): Promise<ActionResult<{ userId: number; disabledAt: string | null }>> {
  try {
    const actor = await actionActor("admin");
    const user = await enableUser(actor, idSchema.parse(userId));
    revalidatePath("/people");
    return { ok: true, data: { userId: user.id, disabledAt: user.disabledAt } };
  } catch (error) {
    return actionFailure(error);
  }
}

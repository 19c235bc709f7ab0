import type { Actor } from "../access/actor.ts";
import { createInvitation, type InvitationItem } from "../db/invitations.ts";
import { invitationMail } from "../mail/admin.ts";
import { dispatchMail, recordMail } from "../mail/index.ts";
import type { InviteInput } from "../validation/user.ts";

/**
 * Invite a person by e-mail (admins): the invitation and its e-mail are written in one transaction and the e-mail is
 * handed to the mail queue after the commit (the mail workers send and retry it).
 */
export async function inviteByMail(actor: Actor, input: InviteInput, now = new Date()): Promise<InvitationItem> {
  let mailIds: number[] = [];
  const { invitation } = await createInvitation(actor, input, now, undefined, async (trx, created, secret) => {
    mailIds = await recordMail(trx, [invitationMail({ email: created.email, roles: created.roles, secret, expiresAt: created.expiresAt, invitedBy: actor.email })]);
  });
  await dispatchMail(mailIds);
  return invitation;
}

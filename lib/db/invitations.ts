import { createHash, randomBytes } from "node:crypto";
import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { isRole, type Role } from "../access/roles.ts";
import { ConflictError, NotFoundError, UnprocessableError } from "../errors.ts";
import type { InviteInput } from "../validation/user.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { fromJson, toIso } from "./rows.ts";
import { createUser, normaliseEmail } from "./users.ts";

/** How long an invitation link works. */
export const INVITATION_HOURS = 72;
const SECRET_BYTES = 32; // 256 bits: the link is the credential, so only its SHA-256 is stored
const SECRET_PATTERN = /^[A-Za-z0-9_-]{43}$/;

interface InvitationRow {
  id: number;
  email: string;
  roles: string | Role[];
  secret_sha256: string;
  invited_by: number | null;
  created_at: Date;
  expires_at: Date;
  accepted_at: Date | null;
  accepted_user_id: number | null;
  withdrawn_at: Date | null;
}

export type InvitationState = "pending" | "accepted" | "expired" | "withdrawn";

export interface InvitationItem {
  id: number;
  email: string;
  roles: Role[];
  invitedBy: string | null;
  createdAt: string;
  expiresAt: string;
  acceptedAt: string | null;
  state: InvitationState;
}

/** Why an invitation link does not open (the accept page says it). */
export const INVITATION_REFUSALS = {
  unknown: "This invitation link is not known. Check that the whole link was copied, or ask an admin for a new one.",
  accepted: "This invitation has been used already. Sign in with the e-mail address and password chosen then.",
  expired: "This invitation link has expired. Ask an admin to invite you again.",
  withdrawn: "This invitation was withdrawn. Ask an admin for a new one.",
} as const;
export type InvitationRefusal = keyof typeof INVITATION_REFUSALS;

function hashSecret(secret: string): string {
  return createHash("sha256").update(secret).digest("hex");
}

function stateOf(row: InvitationRow, now: Date): InvitationState {
  if (row.accepted_at !== null) return "accepted";
  if (row.withdrawn_at !== null) return "withdrawn";
  return new Date(row.expires_at).getTime() <= now.getTime() ? "expired" : "pending";
}

function toItem(row: InvitationRow, invitedBy: string | null, now: Date): InvitationItem {
  return {
    id: row.id,
    email: row.email,
    roles: fromJson<string[]>(row.roles).filter(isRole),
    invitedBy,
    createdAt: toIso(row.created_at)!,
    expiresAt: toIso(row.expires_at)!,
    acceptedAt: toIso(row.accepted_at),
    state: stateOf(row, now),
  };
}

/**
 * An admin invites a person: a one-time secret for the link (returned here only; its SHA-256 is stored), expiring
 * after INVITATION_HOURS. An earlier pending invitation to the same address is withdrawn: only the newest link works.
 * @throws {ConflictError} when the address already has an account
 */
export async function createInvitation(
  actor: Actor,
  input: InviteInput,
  now = new Date(),
  conn: Knex = db(),
  /** Runs inside the invitation's transaction once it is written (the e-mail is recorded there). */
  onCreated?: (trx: Knex.Transaction, invitation: { id: number; email: string; roles: Role[]; expiresAt: string }, secret: string) => Promise<void>,
): Promise<{ invitation: InvitationItem; secret: string }> {
  assertCan(actor, "admin");
  const email = normaliseEmail(input.email);
  const secret = randomBytes(SECRET_BYTES).toString("base64url");
  const expiresAt = new Date(now.getTime() + INVITATION_HOURS * 3600_000);
  const id = await conn.transaction(async (trx) => {
    if (await trx("users").where({ email }).first()) throw new ConflictError(`There is already an account for ${email}.`);
    await trx("invitations").where({ email }).whereNull("accepted_at").whereNull("withdrawn_at").update({ withdrawn_at: now });
    const [inserted] = await trx("invitations").insert({
      email,
      roles: JSON.stringify(input.roles),
      secret_sha256: hashSecret(secret),
      invited_by: actor.userId,
      created_at: now,
      expires_at: expiresAt,
    });
    await recordAuditEvent({ ...auditedBy(actor), action: "invitation.create", subjectType: "invitation", subjectId: inserted, detail: { email, roles: input.roles } }, trx);
    await onCreated?.(trx, { id: Number(inserted), email, roles: [...input.roles], expiresAt: expiresAt.toISOString() }, secret);
    return Number(inserted);
  });
  const row: InvitationRow = await conn("invitations").where({ id }).first();
  return { invitation: toItem(row, actor.email, now), secret };
}

/** Invitations, newest first (admins). */
export async function listInvitations(actor: Actor, now = new Date(), conn: Knex = db()): Promise<InvitationItem[]> {
  assertCan(actor, "admin");
  const rows: (InvitationRow & { inviter: string | null })[] = await conn("invitations")
    .leftJoin("users", "users.id", "invitations.invited_by")
    .select("invitations.*", "users.email as inviter")
    .orderBy("invitations.id", "desc")
    .limit(200);
  return rows.map((row) => toItem(row, row.inviter, now));
}

/** An admin withdraws a pending invitation: its link stops working. */
export async function withdrawInvitation(actor: Actor, id: number, now = new Date(), conn: Knex = db()): Promise<void> {
  assertCan(actor, "admin");
  await conn.transaction(async (trx) => {
    const row: InvitationRow | undefined = await trx("invitations").where({ id }).forUpdate().first();
    if (!row) throw new NotFoundError(`There is no invitation ${id}.`);
    const state = stateOf(row, now);
    if (state !== "pending") throw new ConflictError(`The invitation to ${row.email} is ${state}; only a pending one can be withdrawn.`);
    await trx("invitations").where({ id }).update({ withdrawn_at: now });
    await recordAuditEvent({ ...auditedBy(actor), action: "invitation.withdraw", subjectType: "invitation", subjectId: id, detail: { email: row.email } }, trx);
  });
}

async function rowBySecret(secret: string, conn: Knex, forUpdate = false): Promise<InvitationRow | undefined> {
  if (!SECRET_PATTERN.test(secret)) return undefined;
  const query = conn("invitations").where({ secret_sha256: hashSecret(secret) }).first();
  return forUpdate ? query.forUpdate() : query;
}

/** What the accept page shows for a link: the pending invitation, or why it does not open. */
export async function openInvitation(
  secret: string,
  now = new Date(),
  conn: Knex = db(),
): Promise<{ ok: true; email: string; roles: Role[]; expiresAt: string } | { ok: false; reason: InvitationRefusal }> {
  const row = await rowBySecret(secret, conn);
  if (!row) return { ok: false, reason: "unknown" };
  const state = stateOf(row, now);
  if (state !== "pending") return { ok: false, reason: state };
  return { ok: true, email: row.email, roles: fromJson<string[]>(row.roles).filter(isRole), expiresAt: toIso(row.expires_at)! };
}

/**
 * The invited person accepts: the account is created with the invitation's address and roles, and the invitation is
 * marked used, in one transaction with the invitation row locked (so a link opens one account, once).
 * @param passwordHash the chosen password, already hashed (lib/auth/password)
 * @throws {UnprocessableError} naming why the link does not open; {ConflictError} when the address has an account
 */
export async function acceptInvitation(
  secret: string,
  input: { name: string; passwordHash: string },
  clientAddress: string | null,
  now = new Date(),
  conn: Knex = db(),
): Promise<{ userId: number; email: string }> {
  return conn.transaction(async (trx) => {
    const row = await rowBySecret(secret, trx, true);
    if (!row) throw new UnprocessableError(INVITATION_REFUSALS.unknown);
    const state = stateOf(row, now);
    if (state !== "pending") throw new UnprocessableError(INVITATION_REFUSALS[state]);
    if (await trx("users").where({ email: row.email }).first()) throw new ConflictError(`There is already an account for ${row.email}.`);
    const roles = fromJson<string[]>(row.roles).filter(isRole);
    const userId = await createUser({ email: row.email, name: input.name, passwordHash: input.passwordHash, roles }, trx);
    await trx("invitations").where({ id: row.id }).update({ accepted_at: now, accepted_user_id: userId });
    await recordAuditEvent(
      { actorUserId: userId, clientAddress, action: "invitation.accept", subjectType: "invitation", subjectId: row.id, detail: { email: row.email, roles } },
      trx,
    );
    return { userId, email: row.email };
  });
}

import type { Knex } from "knex";
import { db } from "./knex";
import { isRole, ROLES, type Role } from "../access/roles";
import { assertCan, type Actor } from "../access/actor";
import { ConflictError, NotFoundError } from "../errors";
import { auditedBy, recordAuditEvent } from "./audit";
import { forgetCachedTokens } from "./tokens";

interface UserRow {
  id: number;
  email: string;
  name: string;
  password_hash: string;
  disabled_at: Date | null;
  session_epoch: number;
  password_changed_at: Date | null;
  created_at: Date;
  updated_at: Date;
}

/** A person as the rest of the app sees them: never carries the password hash. */
export interface UserSummary {
  id: number;
  email: string;
  name: string;
  roles: Role[];
  createdAt: string;
  /** When the account was disabled (it signs nobody in, its sessions and tokens are refused), or null. */
  disabledAt: string | null;
}

/** Only for checking a password at sign-in. */
export interface UserCredentials {
  id: number;
  email: string;
  passwordHash: string;
  disabled: boolean;
  sessionEpoch: number;
}

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

function sortRoles(roles: Role[]): Role[] {
  return [...roles].sort((a, b) => ROLES.indexOf(a) - ROLES.indexOf(b));
}

async function rolesByUser(userIds: number[], conn: Knex): Promise<Map<number, Role[]>> {
  const map = new Map<number, Role[]>();
  if (userIds.length === 0) return map;
  const rows: { user_id: number; role: string }[] = await conn("user_roles")
    .select("user_id", "role")
    .whereIn("user_id", userIds);
  for (const row of rows) {
    if (!isRole(row.role)) continue;
    const list = map.get(row.user_id) ?? [];
    list.push(row.role);
    map.set(row.user_id, list);
  }
  return map;
}

function toSummary(row: UserRow, roles: Role[]): UserSummary {
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    roles: sortRoles(roles),
    createdAt: new Date(row.created_at).toISOString(),
    disabledAt: row.disabled_at === null ? null : new Date(row.disabled_at).toISOString(),
  };
}

export async function findCredentialsByEmail(email: string, conn: Knex = db()): Promise<UserCredentials | null> {
  const row: UserRow | undefined = await conn<UserRow>("users").where({ email: normaliseEmail(email) }).first();
  return row
    ? { id: row.id, email: row.email, passwordHash: row.password_hash, disabled: row.disabled_at !== null, sessionEpoch: Number(row.session_epoch) }
    : null;
}

export async function getUser(id: number, conn: Knex = db()): Promise<UserSummary | null> {
  const row: UserRow | undefined = await conn<UserRow>("users").where({ id }).first();
  if (!row) return null;
  const roles = await rolesByUser([id], conn);
  return toSummary(row, roles.get(id) ?? []);
}

/**
 * The person behind a session, with what the session is checked against, in one read: the epoch the session must
 * carry and whether the account is disabled (lib/auth/session.ts).
 */
export async function getUserForSession(id: number, conn: Knex = db()): Promise<{ user: UserSummary; standing: SessionStanding } | null> {
  const row: UserRow | undefined = await conn<UserRow>("users").where({ id }).first();
  if (!row) return null;
  const roles = await rolesByUser([id], conn);
  return { user: toSummary(row, roles.get(id) ?? []), standing: { sessionEpoch: Number(row.session_epoch), disabled: row.disabled_at !== null } };
}

export async function listUsers(conn: Knex = db()): Promise<UserSummary[]> {
  const rows: UserRow[] = await conn<UserRow>("users").select("*").orderBy("email");
  const roles = await rolesByUser(
    rows.map((r) => r.id),
    conn,
  );
  return rows.map((row) => toSummary(row, roles.get(row.id) ?? []));
}

export async function countUsers(conn: Knex = db()): Promise<number> {
  const result = await conn("users").count<{ n: number | string }[]>({ n: "*" });
  return Number(result[0]?.n ?? 0);
}

export interface NewUser {
  email: string;
  name: string;
  passwordHash: string;
  roles: Role[];
}

export async function createUser(user: NewUser, conn: Knex = db()): Promise<number> {
  return conn.transaction(async (trx) => {
    const [id] = await trx("users").insert({
      email: normaliseEmail(user.email),
      name: user.name,
      password_hash: user.passwordHash,
    });
    if (user.roles.length > 0) {
      await trx("user_roles").insert([...new Set(user.roles)].map((role) => ({ user_id: id, role })));
    }
    return Number(id);
  });
}

export async function updateUserName(userId: number, name: string, conn: Knex = db()): Promise<void> {
  await conn("users").where({ id: userId }).update({ name, updated_at: conn.fn.now(3) });
}

/** Everyone holding a role, by e-mail (the recipients of the mails meant for that role). */
export async function usersWithRole(role: Role, conn: Knex = db()): Promise<{ id: number; email: string }[]> {
  return conn("users")
    .join("user_roles", "user_roles.user_id", "users.id")
    .where("user_roles.role", role)
    .whereNull("users.disabled_at")
    .select("users.id", "users.email")
    .orderBy("users.email");
}

// ---- account safety: the data layer the sign-in, the session check, the account page and the admin pages share ----

/** What a session token is checked against on every request: the epoch it must carry and whether the account is on. */
export interface SessionStanding {
  sessionEpoch: number;
  disabled: boolean;
}

/** The person's standing, by primary key (one indexed read per request); null when the account no longer exists. */
export async function sessionStanding(userId: number, conn: Knex = db()): Promise<SessionStanding | null> {
  const row: Pick<UserRow, "session_epoch" | "disabled_at"> | undefined = await conn<UserRow>("users")
    .select("session_epoch", "disabled_at")
    .where({ id: userId })
    .first();
  return row ? { sessionEpoch: Number(row.session_epoch), disabled: row.disabled_at !== null } : null;
}

/**
 * Store a new password hash and raise the session epoch: every session issued before ends at its next request.
 * Returns the new epoch, which the caller writes into the session it keeps (see lib/auth/reissue.ts).
 */
export async function setPasswordHash(userId: number, passwordHash: string, conn: Knex = db()): Promise<number> {
  return conn.transaction(async (trx) => {
    const updated = await trx("users")
      .where({ id: userId })
      .update({ password_hash: passwordHash, password_changed_at: trx.fn.now(3), updated_at: trx.fn.now(3), session_epoch: trx.raw("session_epoch + 1") });
    if (updated === 0) throw new NotFoundError(`There is no person ${userId}.`);
    const row: { session_epoch: number } = await trx("users").select("session_epoch").where({ id: userId }).first();
    return Number(row.session_epoch);
  });
}

/** End every session of a person at its next request (raises the epoch); tokens are untouched. */
export async function endSessions(userId: number, conn: Knex = db()): Promise<void> {
  await conn("users").where({ id: userId }).update({ session_epoch: conn.raw("session_epoch + 1"), updated_at: conn.fn.now(3) });
}

/**
 * Disable or re-enable an account, without permission checks or audit (disableUser/enableUser add those). Disabling
 * ends the person's sessions (epoch raised) and makes their tokens fail from the next request on (the token check
 * reads disabled_at; this process's cached checks are forgotten here). Returns whether anything changed.
 */
export async function setUserDisabled(userId: number, disabled: boolean, conn: Knex = db()): Promise<boolean> {
  const updated = disabled
    ? await conn("users")
        .where({ id: userId })
        .whereNull("disabled_at")
        .update({ disabled_at: conn.fn.now(3), session_epoch: conn.raw("session_epoch + 1"), updated_at: conn.fn.now(3) })
    : await conn("users").where({ id: userId }).whereNotNull("disabled_at").update({ disabled_at: null, updated_at: conn.fn.now(3) });
  forgetCachedTokens({ userId });
  return updated > 0;
}

/**
 * An admin disables an account: at once its sessions end and its tokens are refused; audited as `user.disable`.
 * @throws {ForbiddenError} unless the actor is an admin in a session
 * @throws {NotFoundError} for an unknown person
 * @throws {ConflictError} when admins try to disable themselves
 */
export async function disableUser(actor: Actor, userId: number, conn: Knex = db()): Promise<UserSummary> {
  assertCan(actor, "admin");
  if (userId === actor.userId) throw new ConflictError("You cannot disable your own account.");
  const user = await conn.transaction(async (trx) => {
    const target = await getUser(userId, trx);
    if (!target) throw new NotFoundError(`There is no person ${userId}.`);
    if (await setUserDisabled(userId, true, trx)) {
      await recordAuditEvent({ ...auditedBy(actor), action: "user.disable", subjectType: "user", subjectId: userId, detail: { email: target.email } }, trx);
    }
    return (await getUser(userId, trx))!;
  });
  // Again once committed: a request between the update and the commit may have cached the token as still good.
  forgetCachedTokens({ userId });
  return user;
}

/** An admin re-enables an account (sessions ended by disabling stay ended; tokens work again); `user.enable`. */
export async function enableUser(actor: Actor, userId: number, conn: Knex = db()): Promise<UserSummary> {
  assertCan(actor, "admin");
  return conn.transaction(async (trx) => {
    const target = await getUser(userId, trx);
    if (!target) throw new NotFoundError(`There is no person ${userId}.`);
    if (await setUserDisabled(userId, false, trx)) {
      await recordAuditEvent({ ...auditedBy(actor), action: "user.enable", subjectType: "user", subjectId: userId, detail: { email: target.email } }, trx);
    }
    return (await getUser(userId, trx))!;
  });
}

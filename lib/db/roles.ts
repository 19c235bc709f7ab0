import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { ROLES, type Role } from "../access/roles.ts";
import { ConflictError, NotFoundError } from "../errors.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { forgetCachedTokens } from "./tokens.ts";
import { getUser, type UserSummary } from "./users.ts";

/**
 * An admin sets a person's roles (audited as `user.roles` with the roles before and after). Sessions read roles
 * fresh on every request and this process's cached token checks are forgotten, so the change holds from the next
 * request on. The admin rows are locked for the transaction, so two admins demoting each other at once cannot
 * leave the registry without one.
 * @throws {ConflictError} when the change would take the admin role from the last admin
 */
export async function setUserRoles(actor: Actor, userId: number, roles: readonly Role[], conn: Knex = db()): Promise<UserSummary> {
  assertCan(actor, "admin");
  const wanted = ROLES.filter((role) => roles.includes(role));
  const user = await conn.transaction(async (trx) => {
    // Admins whose account is enabled: a disabled admin cannot act, so does not count.
    const admins: { user_id: number }[] = await trx("user_roles")
      .join("users", "users.id", "user_roles.user_id")
      .select("user_roles.user_id")
      .where("user_roles.role", "admin")
      .whereNull("users.disabled_at")
      .forUpdate();
    const before = await getUser(userId, trx);
    if (!before) throw new NotFoundError(`There is no person ${userId}.`);
    const losesAdmin = before.roles.includes("admin") && !wanted.includes("admin");
    if (losesAdmin && admins.every((a) => a.user_id === userId)) {
      throw new ConflictError(
        userId === actor.userId
          ? "You are the last admin: give another person the admin role before you give it up."
          : `${before.email} is the last admin; the registry needs one.`,
      );
    }
    await trx("user_roles").where({ user_id: userId }).whereNotIn("role", wanted).delete();
    const missing = wanted.filter((role) => !before.roles.includes(role));
    if (missing.length > 0) await trx("user_roles").insert(missing.map((role) => ({ user_id: userId, role })));
    if (missing.length > 0 || before.roles.length !== wanted.length) {
      await recordAuditEvent(
        { ...auditedBy(actor), action: "user.roles", subjectType: "user", subjectId: userId, detail: { email: before.email, from: before.roles, to: wanted } },
        trx,
      );
    }
    return (await getUser(userId, trx))!;
  });
  forgetCachedTokens({ userId });
  return user;
}

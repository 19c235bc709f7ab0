import { getServerSession } from "next-auth";
import { cache } from "react";
import { getUserForSession, type UserSummary } from "../db/users";
import { ForbiddenError, UnauthenticatedError } from "../errors";
import { authOptions } from "./options";
import { hasAnyRole, type Role } from "../access/roles";

/**
 * The signed-in person, read fresh from the database so that removed accounts and changed
 * roles take effect at once, not when the session token expires. One lookup per request, which also ends the
 * session of a disabled account and one whose epoch is behind the row's (a password changed since, the account
 * disabled since). With the database down the lookup throws, and the request answers 503.
 */
export const getSessionUser = cache(async (): Promise<UserSummary | null> => {
  const session = await getServerSession(authOptions());
  const id = session?.user?.id;
  if (typeof id !== "number" || !Number.isInteger(id)) return null;
  const found = await getUserForSession(id);
  if (!found || found.standing.disabled || found.standing.sessionEpoch !== (session?.sessionEpoch ?? 0)) return null;
  return found.user;
});

/** For route handlers, server actions and the data-access layer: throws 401 when signed out. */
export async function requireUser(): Promise<UserSummary> {
  const user = await getSessionUser();
  if (!user) throw new UnauthenticatedError();
  return user;
}

/** Throws 403 unless the signed-in person holds at least one of the roles. */
export async function requireRole(...roles: Role[]): Promise<UserSummary> {
  const user = await requireUser();
  if (!hasAnyRole(user.roles, roles)) {
    throw new ForbiddenError(`This needs the ${roles.join(" or ")} role.`);
  }
  return user;
}

import { sessionActor, type Actor } from "../access/actor.ts";
import { authenticateToken } from "../db/tokens.ts";
import { UnauthenticatedError } from "../errors.ts";
import { requestAddress } from "./address.ts";
import { getSessionUser } from "./session.ts";

const REFUSALS = {
  malformed: "The Authorization header must be 'Bearer <token>' with a token this server issued.",
  unknown: "The token is not known.",
  revoked: "The token has been revoked.",
  expired: "The token has expired.",
  "no-role": "The token's owner no longer holds a role.",
  disabled: "The token's owner has been disabled.",
} as const;

/**
 * Who makes a REST request: `Authorization: Bearer <token>` when the header is present (a bad token is refused, never
 * silently replaced by a session), otherwise the browser's session.
 * @throws {UnauthenticatedError} with no credentials or bad ones
 */
export async function requireActor(request: Request): Promise<Actor> {
  const header = request.headers.get("authorization");
  if (header !== null) return bearerActor(header, requestAddress(request.headers));
  const user = await getSessionUser();
  if (!user) throw new UnauthenticatedError("Sign in, or send 'Authorization: Bearer <token>'.");
  return sessionActor(user, requestAddress(request.headers));
}

/**
 * Who an `Authorization` header names: the token's owner within its scopes and models.
 * @throws {UnauthenticatedError} for a header that is not `Bearer <token>` or a token that fails
 */
export async function bearerActor(header: string, clientAddress: string | null): Promise<Actor> {
  const match = /^Bearer\s+(\S+)\s*$/i.exec(header);
  if (!match) throw new UnauthenticatedError(REFUSALS.malformed);
  const result = await authenticateToken(match[1]);
  if (typeof result === "string") throw new UnauthenticatedError(REFUSALS[result]);
  return { ...result, clientAddress };
}

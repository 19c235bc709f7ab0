import { ForbiddenError } from "../errors.ts";
import { hasAnyRole, type Role } from "./roles.ts";

/** What an API token may be used for (API.md "Tokens"). */
export const TOKEN_SCOPES = ["read", "evaluate", "train"] as const;
export type TokenScope = (typeof TOKEN_SCOPES)[number];

/**
 * Who is acting: a signed-in person (browser session) or a tool holding one of that person's tokens. A token acts
 * for its owner, never beyond the owner's roles, and only within its scopes and models.
 */
export interface Actor {
  userId: number;
  email: string;
  roles: readonly Role[];
  via: "session" | "token";
  /** The token's scopes; null for a session (a session is limited by roles alone). */
  scopes: readonly TokenScope[] | null;
  /** Model slugs the token is limited to; null for every model. */
  models: readonly string[] | null;
  tokenId: number | null;
  /** Where the request came from (lib/auth/address.ts), written into the audit events it causes; absent outside a request. */
  clientAddress?: string | null;
}

/** The things the data-access layer asks permission for. */
export type Permission =
  /** Read setups, models, versions, runs and coefficients. */
  | "read"
  /** Evaluate a version. */
  | "evaluate"
  /** Create setups and models, upload generating sets, train, submit, prune, push. */
  | "train"
  /** Approve or return a version (session only). */
  | "review"
  /** Manage people, retire versions, revoke any token (session only). */
  | "admin"
  /** Create, list and revoke one's own tokens (session only: tokens cannot create tokens). */
  | "tokens";

const RULES: Record<Permission, { roles: readonly Role[] | "any"; scope: TokenScope | null }> = {
  read: { roles: "any", scope: "read" },
  evaluate: { roles: "any", scope: "evaluate" },
  train: { roles: ["modeller"], scope: "train" },
  review: { roles: ["reviewer"], scope: null },
  admin: { roles: ["admin"], scope: null },
  tokens: { roles: "any", scope: null },
};

/** Why an actor may not do something, or null when it may. */
export function refusal(actor: Actor, permission: Permission, modelSlug?: string): string | null {
  const rule = RULES[permission];
  if (rule.roles !== "any" && !hasAnyRole(actor.roles, rule.roles)) {
    return `This needs the ${rule.roles.join(" or ")} role.`;
  }
  if (rule.roles === "any" && actor.roles.length === 0) return "This account holds no role.";
  if (actor.via === "token") {
    if (rule.scope === null) return "This needs a signed-in session; API tokens cannot do it.";
    if (!actor.scopes?.includes(rule.scope)) return `This token lacks the "${rule.scope}" scope.`;
    if (modelSlug !== undefined && actor.models !== null && !actor.models.includes(modelSlug)) {
      return `This token is not valid for the model "${modelSlug}".`;
    }
  }
  return null;
}

export function can(actor: Actor, permission: Permission, modelSlug?: string): boolean {
  return refusal(actor, permission, modelSlug) === null;
}

/** @throws {ForbiddenError} naming what is missing */
export function assertCan(actor: Actor, permission: Permission, modelSlug?: string): void {
  const reason = refusal(actor, permission, modelSlug);
  if (reason) throw new ForbiddenError(reason);
}

/**
 * Whether a token limited to some models may see this one in a list. Lists filter silently rather than refuse.
 */
export function seesModel(actor: Actor, modelSlug: string): boolean {
  return actor.via === "session" || actor.models === null || actor.models.includes(modelSlug);
}

/** A session actor for a signed-in person (also used by seeds and tests acting as a person). */
export function sessionActor(user: { id: number; email: string; roles: readonly Role[] }, clientAddress: string | null = null): Actor {
  return { userId: user.id, email: user.email, roles: user.roles, via: "session", scopes: null, models: null, tokenId: null, clientAddress };
}

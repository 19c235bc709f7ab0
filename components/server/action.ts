import { headers } from "next/headers";
import { ZodError } from "zod";
import { assertCan, sessionActor, type Actor, type Permission } from "@/lib/access/actor";
import { requestAddress } from "@/lib/auth/address";
import { requireUser } from "@/lib/auth/session";
import { DomainError } from "@/lib/errors";
import type { ActionFailure } from "@/components/forms/action-result";

/** The address of the request being served, or null when the code runs outside one (a test calling an action). */
export async function currentRequestAddress(): Promise<string | null> {
  try {
    return requestAddress(await headers());
  } catch {
    return null;
  }
}

/**
 * The actor behind a server action. A server action is a public POST endpoint: every action calls this first, with
 * the permission it needs, before it reads its input; the data-access function it then calls checks again.
 * @throws {UnauthenticatedError} when nobody is signed in; {ForbiddenError} without the permission
 */
export async function actionActor(permission: Permission, modelSlug?: string): Promise<Actor> {
  const actor = sessionActor(await requireUser(), await currentRequestAddress());
  assertCan(actor, permission, modelSlug);
  return actor;
}

/**
 * What a form shows for an error: zod issues beside their fields (by dotted path), domain errors (refusals,
 * conflicts, unusable requests) as the form's message, or beside `conflictField` for a conflict on a unique name.
 * Anything else is a fault of the server and is rethrown for the error boundary.
 */
export function actionFailure(error: unknown, options: { conflictField?: string } = {}): ActionFailure {
  if (error instanceof ZodError) {
    const fieldErrors: Record<string, string> = {};
    let formError: string | null = null;
    for (const issue of error.issues) {
      const path = issue.path.map(String).join(".");
      if (path === "") formError ??= issue.message;
      else fieldErrors[path] ??= issue.message;
    }
    return { ok: false, formError: formError ?? "Some fields need attention.", fieldErrors };
  }
  if (error instanceof DomainError) {
    if (error.status === 409 && options.conflictField) {
      return { ok: false, formError: null, fieldErrors: { [options.conflictField]: error.message } };
    }
    return { ok: false, formError: error.message, fieldErrors: {} };
  }
  throw error;
}

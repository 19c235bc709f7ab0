import { forbidden, redirect } from "next/navigation";
import type { UserSummary } from "../db/users";
import { ForbiddenError, UnauthenticatedError } from "../errors";
import type { Role } from "../access/roles";
import { requireRole, requireUser } from "./session";

/** Pages turn the helpers' errors into the framework's answers: sign-in redirect, or the forbidden page. */
async function forPage(check: () => Promise<UserSummary>): Promise<UserSummary> {
  try {
    return await check();
  } catch (error) {
    if (error instanceof UnauthenticatedError) redirect("/sign-in");
    if (error instanceof ForbiddenError) forbidden();
    throw error;
  }
}

export function requirePageUser(): Promise<UserSummary> {
  return forPage(requireUser);
}

export function requirePageRole(...roles: Role[]): Promise<UserSummary> {
  return forPage(() => requireRole(...roles));
}

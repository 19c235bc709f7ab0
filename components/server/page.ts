import { notFound } from "next/navigation";
import { sessionActor, type Actor } from "@/lib/access/actor";
import type { Role } from "@/lib/access/roles";
import { requirePageRole, requirePageUser } from "@/lib/auth/page";
import type { UserSummary } from "@/lib/db/users";
import { NotFoundError } from "@/lib/errors";

/** The signed-in person of a page and the actor the data-access functions take (sign-in redirect when missing). */
export async function requirePageActor(...roles: Role[]): Promise<{ user: UserSummary; actor: Actor }> {
  const user = roles.length > 0 ? await requirePageRole(...roles) : await requirePageUser();
  return { user, actor: sessionActor(user) };
}

/** A read whose NotFoundError becomes the not-found page. */
export async function orNotFound<T>(read: Promise<T>): Promise<T> {
  try {
    return await read;
  } catch (error) {
    if (error instanceof NotFoundError) notFound();
    throw error;
  }
}

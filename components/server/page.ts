import { notFound } from "next/navigation";
import { sessionActor, type Actor } from "@/lib/access/actor";
import type { Role } from "@/lib/access/roles";
import { requirePageRole, requirePageUser } from "@/lib/auth/page";
import type { UserSummary } from "@/lib/db/users";
import { getVersion, type VersionDetail } from "@/lib/db/versions";
import { NotFoundError } from "@/lib/errors";
import { versionNumberSchema } from "@/lib/validation/registry";

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

/**
 * The version a page under /models/[slug]/versions/[version] shows, read as the signed-in person: the not-found page
 * for a segment that is not a version number (API.md: no "latest" alias) or a version they may not see.
 */
export async function requirePageVersion(slug: string, rawVersion: string): Promise<{ user: UserSummary; actor: Actor; version: VersionDetail }> {
  const number = versionNumberSchema.safeParse(rawVersion);
  if (!number.success) notFound();
  const { user, actor } = await requirePageActor();
  return { user, actor, version: await orNotFound(getVersion(actor, slug, number.data)) };
}

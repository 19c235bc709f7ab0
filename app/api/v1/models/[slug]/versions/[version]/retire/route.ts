import { withProblems } from "@/lib/api/problem";
import { readJson, versionParam } from "@/lib/api/request";
import { assertCan } from "@/lib/access/actor";
import { requireActor } from "@/lib/auth/request";
import { retireWithNotices } from "@/lib/registry/retirement";
import { retireBodySchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

/**
 * Retire a released version (admins, session only) with a reason, a sunset and an optional successor; the owners of
 * tokens that evaluated it lately are e-mailed (lib/registry/retirement.ts).
 */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  // Refused before the body is read: a non-admin learns nothing about what a valid retirement looks like.
  assertCan(actor, "admin", slug);
  const number = versionParam(version);
  const body = await readJson(request, retireBodySchema);
  const { version: retired } = await retireWithNotices(actor, slug, number, body);
  return Response.json(retired);
});

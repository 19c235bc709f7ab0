import { withProblems } from "@/lib/api/problem";
import { versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { submitVersion } from "@/lib/db/versions";

export const dynamic = "force-dynamic";

/** `draft` -> `in-review`, by the modeller who made it; 409 from any other state. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  return Response.json(await submitVersion(actor, slug, versionParam(version)));
});

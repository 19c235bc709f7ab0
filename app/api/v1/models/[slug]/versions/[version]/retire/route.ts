import { withProblems } from "@/lib/api/problem";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { retireVersion } from "@/lib/db/versions";
import { retireBodySchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

/** Retire a released version (admins, session only) with a reason, a sunset and an optional successor. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, retireBodySchema);
  return Response.json(await retireVersion(actor, slug, number, body));
});

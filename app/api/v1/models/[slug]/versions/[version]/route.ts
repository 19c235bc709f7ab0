import { withProblems } from "@/lib/api/problem";
import { versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { getVersion } from "@/lib/db/versions";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";

export const dynamic = "force-dynamic";

export const GET = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  return Response.json({ ...(await getVersion(actor, slug, versionParam(version))), notice: SURROGATE_NOTICE });
});

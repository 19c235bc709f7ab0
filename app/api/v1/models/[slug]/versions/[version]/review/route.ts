import { withProblems } from "@/lib/api/problem";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { reviewVersion } from "@/lib/db/reviews";
import { reviewBodySchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

/** A reviewer's decision (session only, never on one's own version): approve -> released, return -> draft. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, reviewBodySchema);
  return Response.json(await reviewVersion(actor, slug, number, { decision: body.decision, comment: body.comment ?? null }));
});

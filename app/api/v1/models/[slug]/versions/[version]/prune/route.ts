import { withProblems } from "@/lib/api/problem";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { createPruningRun } from "@/lib/registry/pruning";
import { pruneBodySchema } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** Prune a version on the queue: 202 with the run, which creates a derived draft with its parent recorded. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, pruneBodySchema);
  const run = await createPruningRun(actor, slug, number, body);
  return Response.json({ run }, { status: 202, headers: { location: `/api/v1/runs/${run.id}` } });
});

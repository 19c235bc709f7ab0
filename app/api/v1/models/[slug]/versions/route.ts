import { withProblems } from "@/lib/api/problem";
import { readJson } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { listVersions } from "@/lib/db/versions";
import { createTrainingRun } from "@/lib/registry/training";
import { versionTrainingSchema } from "@/lib/validation/training";

export const dynamic = "force-dynamic";

/** Train a new version: 202 with the queued run; the version appears when the run succeeds. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string }> }) => {
  const actor = await requireActor(request);
  const input = await readJson(request, versionTrainingSchema);
  const run = await createTrainingRun(actor, (await params).slug, input);
  return Response.json({ run }, { status: 202, headers: { location: `/api/v1/runs/${run.id}` } });
});

/** Every version of the model the caller may see, oldest first. */
export const GET = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string }> }) => {
  const actor = await requireActor(request);
  return Response.json({ items: await listVersions(actor, (await params).slug), nextCursor: null });
});

import { withProblems } from "@/lib/api/problem";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { createRequirementsRun } from "@/lib/registry/requirements";
import { serverComputePool } from "@/lib/registry/serverPool";
import { requirementsBodySchema } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** Limits that guarantee a TTL budget, verified by a Monte Carlo run on the queue: 202 with the run. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, requirementsBodySchema);
  const run = await createRequirementsRun(actor, slug, number, body, { pool: serverComputePool });
  return Response.json({ run }, { status: 202, headers: { location: `/api/v1/runs/${run.id}` } });
});

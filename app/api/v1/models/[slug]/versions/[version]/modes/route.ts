import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { modesAnalysis } from "@/lib/registry/analysis";
import { serverComputePool } from "@/lib/registry/serverPool";
import { modesBodySchema } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** Coupling modes (SVD of the linear maps), strongest first; with a wavefront, its linear TTL split by mode. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, modesBodySchema);
  await limitEvaluation(actor, 1000);
  return Response.json(await modesAnalysis(actor, slug, number, body, { pool: serverComputePool }), { headers: { "cache-control": "no-store" } });
});

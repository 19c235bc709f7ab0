import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { worstCaseAnalysis } from "@/lib/registry/analysis";
import { serverComputePool } from "@/lib/registry/serverPool";
import { worstCaseBodySchema } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** Simple bound and exact worst case of the model on a WFE ball, per node and axis, with the maximising wavefront. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, worstCaseBodySchema);
  // One eigen-decomposition per node and axis: about as much work as a thousand evaluations.
  await limitEvaluation(actor, 1000);
  return Response.json(await worstCaseAnalysis(actor, slug, number, body, { pool: serverComputePool }), { headers: { "cache-control": "no-store" } });
});

import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { correctionAnalysis } from "@/lib/registry/analysis";
import { serverComputePool } from "@/lib/registry/serverPool";
import { correctionBodySchema } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** The adjustment of some terms, within a per-term limit, that minimises the worst TTL over the map on the model. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, correctionBodySchema);
  await limitEvaluation(actor, 1000);
  return Response.json(await correctionAnalysis(actor, slug, number, body, { pool: serverComputePool }), { headers: { "cache-control": "no-store" } });
});

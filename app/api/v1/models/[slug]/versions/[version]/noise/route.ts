import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { noiseAnalysis } from "@/lib/registry/analysis";
import { noiseBodySchema } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** TTL noise ASD of a wavefront at a DC offset (or the worst one) against a length-noise allocation, margin in dB. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, noiseBodySchema);
  await limitEvaluation(actor, 1);
  return Response.json(await noiseAnalysis(actor, slug, number, body), { headers: { "cache-control": "no-store" } });
});

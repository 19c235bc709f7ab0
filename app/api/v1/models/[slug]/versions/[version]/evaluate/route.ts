import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { readJsonValue, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { answerBody, evaluateWavefronts } from "@/lib/registry/evaluate";
import { serverComputePool } from "@/lib/registry/serverPool";
import { parseEvaluateBody } from "@/lib/validation/evaluate";

export const dynamic = "force-dynamic";

/** Evaluate wavefronts against a pinned version: maps, offsets or peaks, with validity and the notice. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await parseEvaluateBody(await readJsonValue(request));
  await limitEvaluation(actor, body.wavefronts.length);
  const answer = await evaluateWavefronts(actor, slug, number, body, { pool: serverComputePool });
  return new Response(answerBody(answer), {
    headers: { "content-type": "application/json", "cache-control": "no-store", ...answer.headers },
  });
});

import { evaluateAnswer } from "@/lib/api/evaluate";
import { withProblems } from "@/lib/api/problem";
import { readJsonValue } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";

export const dynamic = "force-dynamic";

/** Evaluate wavefronts against a pinned version: maps, offsets or peaks, with validity and the notice. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const answer = await evaluateAnswer(actor, await params, () => readJsonValue(request));
  return new Response(answer.body, { headers: answer.headers });
});

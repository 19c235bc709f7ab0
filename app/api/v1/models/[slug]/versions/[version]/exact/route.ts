import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { readJson, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { exactComparison } from "@/lib/registry/exact";
import { serverComputePool } from "@/lib/registry/serverPool";
import { exactBodySchema } from "@/lib/validation/exact";

export const dynamic = "force-dynamic";

/** Exact far-field maps of one wavefront on the version's setup, beside the surrogate's and their difference. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const number = versionParam(version);
  const body = await readJson(request, exactBodySchema);
  // One exact map costs about as much as a hundred surrogate evaluations.
  await limitEvaluation(actor, 101);
  const { headers, ...answer } = await exactComparison(actor, slug, number, body, { pool: serverComputePool });
  return Response.json(answer, { headers: { "cache-control": "no-store", ...headers } });
});

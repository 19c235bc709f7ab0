import { withProblems } from "@/lib/api/problem";
import { readQuery } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { listRuns } from "@/lib/db/runs";
import { runListQuerySchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

export const GET = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const { model, ...page } = readQuery(request, runListQuerySchema);
  return Response.json(await listRuns(actor, { model }, page));
});

import { withProblems } from "@/lib/api/problem";
import { idParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { getRun } from "@/lib/db/runs";

export const dynamic = "force-dynamic";

/** A run with its progress (samples done, per second, ETA) and its log. */
export const GET = withProblems(async (request: Request, { params }: { params: Promise<{ id: string }> }) => {
  const actor = await requireActor(request);
  return Response.json(await getRun(actor, idParam((await params).id, "run")), { headers: { "cache-control": "no-store" } });
});

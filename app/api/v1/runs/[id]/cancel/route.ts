import { withProblems } from "@/lib/api/problem";
import { idParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { cancelRun } from "@/lib/db/runs";

export const dynamic = "force-dynamic";

/** Cancel a queued or running run (its creator or an admin); no version is written. */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ id: string }> }) => {
  const actor = await requireActor(request);
  return Response.json(await cancelRun(actor, idParam((await params).id, "run")));
});

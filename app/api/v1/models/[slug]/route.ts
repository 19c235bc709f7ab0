import { withProblems } from "@/lib/api/problem";
import { requireActor } from "@/lib/auth/request";
import { getModel } from "@/lib/db/models";

export const dynamic = "force-dynamic";

export const GET = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string }> }) => {
  const actor = await requireActor(request);
  return Response.json(await getModel(actor, (await params).slug));
});

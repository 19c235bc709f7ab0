import { withProblems } from "@/lib/api/problem";
import { idParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { revokeToken } from "@/lib/db/tokens";

export const dynamic = "force-dynamic";

/** Revoke a token (its owner or an admin): it fails from the next request on. */
export const DELETE = withProblems(async (request: Request, { params }: { params: Promise<{ id: string }> }) => {
  const actor = await requireActor(request);
  await revokeToken(actor, idParam((await params).id, "token"));
  return new Response(null, { status: 204 });
});

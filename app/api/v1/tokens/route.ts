import { withProblems } from "@/lib/api/problem";
import { readJson } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { createToken, listTokens } from "@/lib/db/tokens";
import { createTokenSchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

/** Create a token for one's own use (browser session only); the secret is in this answer and nowhere else. */
export const POST = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const input = await readJson(request, createTokenSchema);
  return Response.json(await createToken(actor, input), { status: 201, headers: { "cache-control": "no-store" } });
});

/** One's own tokens; an admin sees everybody's with `?all=true`. */
export const GET = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const all = new URL(request.url).searchParams.get("all") === "true";
  return Response.json({ items: await listTokens(actor, { all }), nextCursor: null });
});

import { assertCan } from "@/lib/access/actor";
import { withProblems } from "@/lib/api/problem";
import { readJson } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { setupSchema } from "@/lib/validation/setup";

export const dynamic = "force-dynamic";

/**
 * Checks an optical setup before a modeller saves or trains against it: 200 with the setup as the
 * server will store it, or 422 with every problem. Only modellers (or their train tokens) define setups.
 */
export const POST = withProblems(async (request: Request) => {
  assertCan(await requireActor(request), "train");
  const setup = await readJson(request, setupSchema);
  return Response.json({ setup });
});

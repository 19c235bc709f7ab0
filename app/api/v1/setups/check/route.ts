import { withProblems } from "@/lib/api/problem";
import { requireRole } from "@/lib/auth/session";
import { setupSchema } from "@/lib/validation/setup";

export const dynamic = "force-dynamic";

/**
 * Checks an optical setup before a modeller saves or trains against it: 200 with the setup as the
 * server will store it, or 422 with every problem. Only modellers define setups.
 */
export const POST = withProblems(async (request: Request) => {
  await requireRole("modeller");
  const setup = setupSchema.parse(await request.json());
  return Response.json({ setup });
});

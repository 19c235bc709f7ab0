import { withProblems } from "@/lib/api/problem";
import { readJson, readQuery } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { createSetup, listSetups } from "@/lib/db/setups";
import { pageQuerySchema } from "@/lib/validation/list";
import { createSetupSchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

export const GET = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  return Response.json(await listSetups(actor, readQuery(request, pageQuerySchema)));
});

export const POST = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const input = await readJson(request, createSetupSchema);
  return Response.json(await createSetup(actor, input), { status: 201 });
});

import { withProblems } from "@/lib/api/problem";
import { readJson, readQuery } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { createModel, listModels } from "@/lib/db/models";
import { createModelSchema, modelListQuerySchema } from "@/lib/validation/registry";

export const dynamic = "force-dynamic";

/** `?q=&state=&setupId=`: models whose slug, name or description contain q, with a version in that state. */
export const GET = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const { q, state, setupId, ...page } = readQuery(request, modelListQuerySchema);
  return Response.json(await listModels(actor, { q, state, setupId }, page));
});

export const POST = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  const input = await readJson(request, createModelSchema);
  return Response.json(await createModel(actor, input), { status: 201 });
});

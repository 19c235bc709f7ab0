import { withProblems } from "@/lib/api/problem";
import { readBytes } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { MAX_MODEL_FILE_BYTES, uploadVersion } from "@/lib/db/versions";
import { UnprocessableError } from "@/lib/errors";

export const dynamic = "force-dynamic";

/** Register a `.stpm` trained elsewhere as a new draft (the body is the file, application/octet-stream). */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string }> }) => {
  const actor = await requireActor(request);
  const type = request.headers.get("content-type") ?? "";
  if (!type.startsWith("application/octet-stream")) {
    throw new UnprocessableError("Send the .stpm file itself as the body, with Content-Type: application/octet-stream.");
  }
  const slug = (await params).slug;
  const version = await uploadVersion(actor, slug, await readBytes(request, MAX_MODEL_FILE_BYTES));
  return Response.json(version, { status: 201, headers: { location: `/api/v1/models/${slug}/versions/${version.version}` } });
});

import { createHash } from "node:crypto";
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
  const bytes = await readBytes(request, MAX_MODEL_FILE_BYTES);
  // A client that names the body's SHA-256 (RFC 9530) has it checked on arrival.
  const digest = /sha-256=:([A-Za-z0-9+/=]+):/.exec(request.headers.get("repr-digest") ?? "")?.[1];
  if (digest !== undefined && digest !== createHash("sha256").update(bytes).digest("base64")) {
    throw new UnprocessableError("The body does not match the SHA-256 in its Repr-Digest header; it was damaged on the way.");
  }
  const version = await uploadVersion(actor, slug, bytes);
  return Response.json(version, { status: 201, headers: { location: `/api/v1/models/${slug}/versions/${version.version}` } });
});

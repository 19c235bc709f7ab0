import { z } from "zod";
import { withProblems } from "@/lib/api/problem";
import { readQuery, versionParam } from "@/lib/api/request";
import { requireActor } from "@/lib/auth/request";
import { exportCoefficients } from "@/lib/registry/exports";

export const dynamic = "force-dynamic";

const querySchema = z.object({ format: z.enum(["stpm", "npz"], { error: 'format must be "stpm" or "npz"' }).default("stpm") });

/** The coefficient file: `?format=stpm` (default) or `?format=npz` (numpy.load opens it). */
export const GET = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string; version: string }> }) => {
  const actor = await requireActor(request);
  const { slug, version } = await params;
  const { format } = readQuery(request, querySchema);
  const file = await exportCoefficients(actor, slug, versionParam(version), format);
  const etag = `"${file.coefficientsSha256}.${format}"`;
  if (request.headers.get("if-none-match") === etag) return new Response(null, { status: 304, headers: { etag } });
  return new Response(file.bytes as BodyInit, {
    headers: {
      "content-type": file.contentType,
      "content-length": String(file.bytes.byteLength),
      "content-disposition": `attachment; filename="${file.fileName}"`,
      etag,
      digest: `sha-256=${file.digestBase64}`,
      "repr-digest": `sha-256=:${file.digestBase64}:`,
      "cache-control": "private, no-cache",
    },
  });
});

import { withProblems } from "@/lib/api/problem";
import { requireActor } from "@/lib/auth/request";
import { createGeneratingSet, DEFAULT_MAX_UPLOAD_BYTES, listGeneratingSets } from "@/lib/db/generatingSets";
import { BadRequestError, PayloadTooLargeError, UnprocessableError } from "@/lib/errors";

export const dynamic = "force-dynamic";

/** Upload a generating set: multipart/form-data with one field `file`, a .npz from numpy.savez(_compressed). */
export const POST = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string }> }) => {
  const actor = await requireActor(request);
  const slug = (await params).slug;
  const length = Number(request.headers.get("content-length") ?? "0");
  // The multipart envelope adds a little to the file itself.
  if (length > DEFAULT_MAX_UPLOAD_BYTES + 64 * 1024) {
    throw new PayloadTooLargeError(`The upload is ${length} bytes; a generating set may have at most ${DEFAULT_MAX_UPLOAD_BYTES}.`);
  }
  if (!(request.headers.get("content-type") ?? "").startsWith("multipart/form-data")) {
    throw new BadRequestError("Send the set as multipart/form-data with one field named file.");
  }
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    throw new BadRequestError("The multipart body cannot be read.");
  }
  const file = form.get("file");
  if (!(file instanceof Blob)) throw new UnprocessableError("The form has no file field holding the .npz.");
  const item = await createGeneratingSet(actor, slug, {
    fileName: file instanceof File ? file.name : null,
    bytes: new Uint8Array(await file.arrayBuffer()),
  });
  return Response.json(item, { status: 201 });
});

export const GET = withProblems(async (request: Request, { params }: { params: Promise<{ slug: string }> }) => {
  const actor = await requireActor(request);
  return Response.json({ items: await listGeneratingSets(actor, (await params).slug), nextCursor: null });
});

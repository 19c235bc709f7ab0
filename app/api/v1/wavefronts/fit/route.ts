import { withProblems } from "@/lib/api/problem";
import { limitEvaluation } from "@/lib/api/rateLimit";
import { requireActor } from "@/lib/auth/request";
import { BadRequestError, PayloadTooLargeError, UnprocessableError } from "@/lib/errors";
import { fitHeightMap } from "@/lib/registry/analysis";
import { serverComputePool } from "@/lib/registry/serverPool";
import { ANALYSIS_LIMITS, fitFieldsSchema, type FitFields } from "@/lib/validation/analysis";

export const dynamic = "force-dynamic";

/** Fit a measured height map (multipart: file .npy or CSV grid, pixelSizeM, apertureDiameterM, units, zernike). */
export const POST = withProblems(async (request: Request) => {
  const actor = await requireActor(request);
  // A fit of a large map costs about as much as a hundred evaluations.
  const answer = await fitHeightMap(actor, async () => (await limitEvaluation(actor, 100), readFitForm(request)), { pool: serverComputePool });
  return Response.json(answer, { headers: { "cache-control": "no-store" } });
});

/** The multipart form: the file (within the size limit) and the text fields, parsed with the shared schema. */
async function readFitForm(request: Request): Promise<{ bytes: Uint8Array; fields: FitFields }> {
  const length = Number(request.headers.get("content-length") ?? "0");
  if (length > ANALYSIS_LIMITS.maxFitUploadBytes + 64 * 1024) {
    throw new PayloadTooLargeError(`The upload is ${length} bytes; a height map may have at most ${ANALYSIS_LIMITS.maxFitUploadBytes}.`);
  }
  if (!(request.headers.get("content-type") ?? "").startsWith("multipart/form-data")) {
    throw new BadRequestError("Send the map as multipart/form-data with the fields file, pixelSizeM, apertureDiameterM, units and zernike.");
  }
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    throw new BadRequestError("The multipart body cannot be read.");
  }
  const file = form.get("file");
  if (!(file instanceof Blob)) throw new UnprocessableError("The form has no file field holding the height map.", [{ path: "file", message: "file is required" }]);
  if (file.size > ANALYSIS_LIMITS.maxFitUploadBytes) throw new PayloadTooLargeError(`The file is ${file.size} bytes; a height map may have at most ${ANALYSIS_LIMITS.maxFitUploadBytes}.`);
  const fields = fitFieldsSchema.parse(Object.fromEntries(["pixelSizeM", "apertureDiameterM", "units", "zernike"].map((name) => [name, form.get(name) ?? undefined])));
  return { bytes: new Uint8Array(await file.arrayBuffer()), fields };
}

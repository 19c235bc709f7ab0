import { createHash } from "node:crypto";
import type { Actor } from "../access/actor.ts";
import { loadSurrogate, getCoefficientFile } from "../db/versions.ts";
import { coefficientsNpz } from "../formats/coefficientsNpz.ts";
import { SURROGATE_NOTICE } from "../surrogate/model.ts";

export type CoefficientFormat = "stpm" | "npz";

export interface ExportedFile {
  fileName: string;
  contentType: string;
  bytes: Uint8Array;
  /** The version's coefficient checksum (the `.stpm` grids), the same for both formats. */
  coefficientsSha256: string;
  /** SHA-256 of these exact bytes, base64, for the `Digest` header. */
  digestBase64: string;
}

/**
 * A version's coefficients as a file: the stored `.stpm` (checked against its checksum on the way out), or NumPy's
 * `.npz` of API.md built from it, with the notice in its metadata.
 */
export async function exportCoefficients(actor: Actor, slug: string, version: number, format: CoefficientFormat): Promise<ExportedFile> {
  let bytes: Uint8Array;
  let sha: string;
  if (format === "stpm") {
    const file = await getCoefficientFile(actor, slug, version);
    bytes = file.bytes;
    sha = file.coefficientsSha256;
  } else {
    const { file, surrogate } = await loadSurrogate(actor, slug, version);
    sha = file.coefficientsSha256;
    const d = file.detail;
    bytes = coefficientsNpz(surrogate, {
      model: slug,
      version,
      state: d.state,
      setup: d.setup,
      zernike: d.zernike,
      order: d.order,
      validity: d.validity,
      coefficientsSha256: sha,
      notice: SURROGATE_NOTICE,
    });
  }
  return {
    fileName: `${slug}-v${version}.${format}`,
    contentType: format === "stpm" ? "application/octet-stream" : "application/zip",
    bytes,
    coefficientsSha256: sha,
    digestBase64: createHash("sha256").update(bytes).digest("base64"),
  };
}

import type { Knex } from "knex";
import { sha256Hex } from "../surrogate/checksum.ts";
import { coefficientsSha256, decodeModel } from "../surrogate/modelFile.ts";

/** One version as its checksums were stored. */
export interface StoredChecksum {
  model: string;
  version: number;
  state: string;
  /** model_versions.coefficients_sha256: SHA-256 of the Float32 coefficients (lib/surrogate coefficientsSha256). */
  coefficientsSha256: string;
  /** version_blobs.sha256: SHA-256 of the stored .stpm bytes; null when the version has no blob row. */
  blobSha256: string | null;
}

export interface IntegrityFailure {
  model: string;
  version: number;
  state: string;
  reason: string;
}

export interface IntegrityReport {
  checked: number;
  byState: Record<string, number>;
  failures: IntegrityFailure[];
}

/** Every version's stored checksums, in (model, version) order. */
export async function storedChecksums(conn: Knex): Promise<StoredChecksum[]> {
  const rows: { slug: string; version: number; state: string; coefficients_sha256: string; blob_sha256: string | null }[] = await conn("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .leftJoin("version_blobs", "version_blobs.version_id", "model_versions.id")
    .select("models.slug", "model_versions.version", "model_versions.state", "model_versions.coefficients_sha256", "version_blobs.sha256 as blob_sha256")
    .orderBy([{ column: "models.slug" }, { column: "model_versions.version" }]);
  return rows.map((r) => ({ model: r.slug, version: Number(r.version), state: r.state, coefficientsSha256: r.coefficients_sha256, blobSha256: r.blob_sha256 }));
}

/**
 * Read every version's blob (one at a time, so memory holds one file) and check it three ways: the bytes against the
 * blob's SHA-256, the file's own checksums (decodeModel refuses a damaged .stpm), and the decoded coefficients
 * against the version's coefficients_sha256. A version without a blob is a failure too.
 */
export async function verifyStoredVersions(conn: Knex): Promise<IntegrityReport> {
  const versions: { id: number; slug: string; version: number; state: string; coefficients_sha256: string }[] = await conn("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .select("model_versions.id", "models.slug", "model_versions.version", "model_versions.state", "model_versions.coefficients_sha256")
    .orderBy([{ column: "models.slug" }, { column: "model_versions.version" }]);
  const report: IntegrityReport = { checked: 0, byState: {}, failures: [] };
  for (const v of versions) {
    report.checked++;
    report.byState[v.state] = (report.byState[v.state] ?? 0) + 1;
    const fail = (reason: string) => report.failures.push({ model: v.slug, version: Number(v.version), state: v.state, reason });
    const blob: { bytes: Buffer; sha256: string; size_bytes: number | string } | undefined = await conn("version_blobs").where({ version_id: v.id }).first();
    if (!blob) {
      fail("no coefficient blob");
      continue;
    }
    const bytes = new Uint8Array(blob.bytes.buffer, blob.bytes.byteOffset, blob.bytes.byteLength);
    if (bytes.byteLength !== Number(blob.size_bytes)) fail(`blob holds ${bytes.byteLength} bytes, ${blob.size_bytes} were stored`);
    const actual = sha256Hex(bytes);
    if (actual !== blob.sha256) {
      fail(`blob SHA-256 ${actual} differs from the stored ${blob.sha256}`);
      continue;
    }
    try {
      const model = decodeModel(bytes);
      const coefficients = coefficientsSha256(model);
      if (coefficients !== v.coefficients_sha256) fail(`coefficients SHA-256 ${coefficients} differs from the stored ${v.coefficients_sha256}`);
    } catch (error) {
      fail(`the file does not decode: ${error instanceof Error ? error.message : String(error)}`);
    }
  }
  return report;
}

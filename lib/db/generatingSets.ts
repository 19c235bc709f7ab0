import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { NotFoundError, PayloadTooLargeError, UnprocessableError } from "../errors.ts";
import { readGeneratingSetNpz } from "../formats/generatingSetNpz.ts";
import { NpzError } from "../formats/npz.ts";
import { packFloat64, unpackFloat64 } from "../formats/packed.ts";
import { thetaGridNrad } from "../optics/setup.ts";
import { sha256Hex } from "../surrogate/checksum.ts";
import type { SampleSet } from "../surrogate/designs.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { requireModel, type ModelRecord } from "./models.ts";
import { toIso } from "./rows.ts";

/** Default limit on an uploaded generating set (API.md "Generating sets"). */
export const DEFAULT_MAX_UPLOAD_BYTES = 200 * 1024 * 1024;

interface GeneratingSetRow {
  id: number;
  model_id: number;
  samples: number;
  sha256: string;
  file_name: string | null;
  file_size_bytes: number | string;
  data: Buffer;
  data_sha256: string;
  created_at: Date;
}

export interface GeneratingSetItem {
  id: number;
  samples: number;
  sha256: string;
  fileName: string | null;
  sizeBytes: number;
  createdAt: string;
}

function toItem(row: Omit<GeneratingSetRow, "data">): GeneratingSetItem {
  return { id: row.id, samples: row.samples, sha256: row.sha256, fileName: row.file_name, sizeBytes: Number(row.file_size_bytes), createdAt: toIso(row.created_at)! };
}

/**
 * Store an uploaded generating set after checking it against the model. Nothing is stored unless every check passes.
 * @throws {PayloadTooLargeError} over the size limit; {UnprocessableError} naming what is wrong with the file
 */
export async function createGeneratingSet(
  actor: Actor,
  slug: string,
  upload: { fileName: string | null; bytes: Uint8Array },
  maxBytes = DEFAULT_MAX_UPLOAD_BYTES,
  conn: Knex = db(),
): Promise<GeneratingSetItem> {
  assertCan(actor, "train", slug);
  const model = await requireModel(actor, slug, conn);
  if (upload.bytes.byteLength > maxBytes) {
    throw new PayloadTooLargeError(`The file is ${upload.bytes.byteLength} bytes; the limit is ${maxBytes}.`);
  }
  let set: SampleSet;
  try {
    set = readGeneratingSetNpz(upload.bytes, { nollIndices: model.nollIndices, thetaNrad: thetaGridNrad(model.setup.farField) }, maxBytes);
  } catch (error) {
    if (error instanceof NpzError) throw new UnprocessableError(`The generating set cannot be used: ${error.message}.`);
    throw error;
  }
  const data = packFloat64([set.coefficientsNm, set.x, set.y]);
  const sha256 = sha256Hex(upload.bytes);
  const id = await conn.transaction(async (trx) => {
    const [id] = await trx("generating_sets").insert({
      model_id: model.id,
      samples: set.count,
      sha256,
      file_name: upload.fileName?.slice(0, 255) ?? null,
      file_size_bytes: upload.bytes.byteLength,
      data: Buffer.from(data.buffer, data.byteOffset, data.byteLength),
      data_sha256: sha256Hex(data),
      created_by: actor.userId,
    });
    await recordAuditEvent({ ...auditedBy(actor), action: "generating-set.upload", subjectType: "generating_set", subjectId: id, detail: { model: slug, samples: set.count, sha256 } }, trx);
    return Number(id);
  });
  const row = await conn("generating_sets").select("id", "model_id", "samples", "sha256", "file_name", "file_size_bytes", "created_at").where({ id }).first();
  return toItem(row);
}

export async function listGeneratingSets(actor: Actor, slug: string, conn: Knex = db()): Promise<GeneratingSetItem[]> {
  assertCan(actor, "read", slug);
  const model = await requireModel(actor, slug, conn);
  const rows = await conn("generating_sets").select("id", "model_id", "samples", "sha256", "file_name", "file_size_bytes", "created_at").where({ model_id: model.id }).orderBy("id");
  return rows.map(toItem);
}

/** The registry's own check that a set exists for this model (no permission check). */
export async function generatingSetSamples(model: ModelRecord, id: number, conn: Knex = db()): Promise<number> {
  const row: { samples: number } | undefined = await conn("generating_sets").select("samples").where({ id, model_id: model.id }).first();
  if (!row) throw new NotFoundError(`Model "${model.slug}" has no generating set ${id}.`);
  return row.samples;
}

/**
 * A stored set, in the model's Noll order, its stored bytes checked against their checksum (no permission check:
 * for the training worker).
 */
export async function loadSampleSet(modelId: number, id: number, pointsPerAxis: number, conn: Knex = db()): Promise<SampleSet> {
  const row: GeneratingSetRow | undefined = await conn("generating_sets").where({ id, model_id: modelId }).first();
  if (!row) throw new Error(`generating set ${id} of model ${modelId} is missing`);
  const bytes = new Uint8Array(row.data.buffer, row.data.byteOffset, row.data.byteLength);
  if (sha256Hex(bytes) !== row.data_sha256) throw new Error(`generating set ${id} is damaged in storage (checksum mismatch)`);
  const [coefficientsNm, x, y] = unpackFloat64(bytes);
  return { coefficientsNm, x, y, count: row.samples, pointsPerAxis };
}

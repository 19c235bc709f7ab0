import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { ConflictError, ForbiddenError, NotFoundError, UnprocessableError } from "../errors.ts";
import type { OpticalSetup, ZernikeSet } from "../optics/types.ts";
import { sha256Hex } from "../surrogate/checksum.ts";
import type { FitReport, Provenance, PruningReport, SurrogateModel } from "../surrogate/model.ts";
import { coefficientsSha256, decodeModel, ModelFileError } from "../surrogate/modelFile.ts";
import type { ResidualStatistics } from "../surrogate/statistics.ts";
import type { Term } from "../surrogate/terms.ts";
import type { ValidityRange } from "../surrogate/validity.ts";
import type { VersionState } from "../validation/registry.ts";
import { dispatchMail, recordMail } from "../mail/index.ts";
import { versionSubmittedMail } from "../mail/review.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { loadModel, requireModel, type ModelRecord } from "./models.ts";
import { fromJson, toIso } from "./rows.ts";
import { usersWithRole } from "./users.ts";

/** Largest `.stpm` blob the registry stores (a 595-term, 101 x 101 model is about 50 MB). */
export const MAX_MODEL_FILE_BYTES = 100 * 1024 * 1024;

interface VersionRow {
  id: number;
  model_id: number;
  version: number;
  state: VersionState;
  order: number;
  term_count: number;
  terms: string | number[][];
  validity: string | ValidityRange;
  statistics: string | ResidualStatistics | null;
  provenance: string | Provenance;
  fit: string | FitReport;
  pruning: string | PruningReport | null;
  coefficients_sha256: string;
  software_version: string;
  parent_version_id: number | null;
  run_id: number | string | null;
  created_by: number | null;
  created_at: Date;
  retired_reason: string | null;
  retired_at: Date | null;
  sunset_at: Date | null;
  successor_version_id: number | null;
}

export interface StateEvent {
  state: VersionState;
  at: string;
  by: string | null;
  comment: string | null;
}

export interface Retirement {
  reason: string;
  retiredAt: string;
  sunsetAt: string;
  successorVersion: number | null;
}

/** A version as `GET /models/{slug}/versions/{version}` answers it (API.md "Versions"). */
export interface VersionDetail {
  model: string;
  version: number;
  state: VersionState;
  order: 1 | 2;
  setup: OpticalSetup;
  zernike: ZernikeSet;
  terms: Term[];
  termCount: number;
  validity: ValidityRange;
  statistics: ResidualStatistics | null;
  provenance: Provenance;
  fit: FitReport;
  pruning: PruningReport | null;
  coefficientsSha256: string;
  softwareVersion: string;
  parentVersion: number | null;
  runId: number | null;
  history: StateEvent[];
  retirement: Retirement | null;
  createdBy: string | null;
  createdAt: string;
}

async function emailsOf(ids: (number | null)[], conn: Knex): Promise<Map<number, string>> {
  const wanted = [...new Set(ids.filter((id): id is number => id !== null))];
  if (wanted.length === 0) return new Map();
  const rows: { id: number; email: string }[] = await conn("users").select("id", "email").whereIn("id", wanted);
  return new Map(rows.map((r) => [r.id, r.email]));
}

async function versionNumbers(ids: (number | null)[], conn: Knex): Promise<Map<number, number>> {
  const wanted = [...new Set(ids.filter((id): id is number => id !== null))];
  if (wanted.length === 0) return new Map();
  const rows: { id: number; version: number }[] = await conn("model_versions").select("id", "version").whereIn("id", wanted);
  return new Map(rows.map((r) => [r.id, r.version]));
}

async function toDetail(row: VersionRow, model: ModelRecord, conn: Knex): Promise<VersionDetail> {
  const events: { state: VersionState; at: Date; by_user_id: number | null; comment: string | null }[] = await conn("version_state_events")
    .where({ version_id: row.id })
    .orderBy("id");
  const emails = await emailsOf([row.created_by, ...events.map((e) => e.by_user_id)], conn);
  const numbers = await versionNumbers([row.parent_version_id, row.successor_version_id], conn);
  return {
    model: model.slug,
    version: row.version,
    state: row.state,
    order: row.order as 1 | 2,
    setup: model.setup,
    zernike: model.zernike,
    terms: fromJson<Term[]>(row.terms),
    termCount: row.term_count,
    validity: fromJson<ValidityRange>(row.validity),
    statistics: row.statistics === null ? null : fromJson<ResidualStatistics>(row.statistics),
    provenance: fromJson<Provenance>(row.provenance),
    fit: fromJson<FitReport>(row.fit),
    pruning: row.pruning === null ? null : fromJson<PruningReport>(row.pruning),
    coefficientsSha256: row.coefficients_sha256,
    softwareVersion: row.software_version,
    parentVersion: row.parent_version_id === null ? null : (numbers.get(row.parent_version_id) ?? null),
    runId: row.run_id === null ? null : Number(row.run_id),
    history: events.map((e) => ({
      state: e.state,
      at: toIso(e.at)!,
      by: e.by_user_id === null ? null : (emails.get(e.by_user_id) ?? null),
      comment: e.comment,
    })),
    retirement:
      row.state === "retired" && row.retired_at && row.sunset_at
        ? {
            reason: row.retired_reason ?? "",
            retiredAt: toIso(row.retired_at)!,
            sunsetAt: toIso(row.sunset_at)!,
            successorVersion: row.successor_version_id === null ? null : (numbers.get(row.successor_version_id) ?? null),
          }
        : null,
    createdBy: row.created_by === null ? null : (emails.get(row.created_by) ?? null),
    createdAt: toIso(row.created_at)!,
  };
}

async function versionRow(model: ModelRecord, version: number, conn: Knex, forUpdate = false): Promise<VersionRow> {
  const query = conn("model_versions").where({ model_id: model.id, version }).first();
  const row: VersionRow | undefined = forUpdate ? await query.forUpdate() : await query;
  if (!row) throw new NotFoundError(`Model "${model.slug}" has no version ${version}.`);
  return row;
}

/**
 * Whether the actor may evaluate a version in this state (API.md "Evaluate"): tokens only released and retired
 * versions; drafts and versions in review only signed-in modellers and reviewers. Reading a version's record is open
 * to every reader.
 */
export function evaluatesVersionState(actor: Actor, state: VersionState): boolean {
  if (state === "released" || state === "retired") return true;
  return actor.via === "session" && (actor.roles.includes("modeller") || actor.roles.includes("reviewer"));
}

export async function getVersion(actor: Actor, slug: string, version: number, conn: Knex = db()): Promise<VersionDetail> {
  assertCan(actor, "read", slug);
  const model = await requireModel(actor, slug, conn);
  const row = await versionRow(model, version, conn);
  return toDetail(row, model, conn);
}

export async function listVersions(actor: Actor, slug: string, conn: Knex = db()): Promise<VersionDetail[]> {
  assertCan(actor, "read", slug);
  const model = await requireModel(actor, slug, conn);
  const rows: VersionRow[] = await conn("model_versions").where({ model_id: model.id }).orderBy("version");
  const out: VersionDetail[] = [];
  for (const row of rows) out.push(await toDetail(row, model, conn));
  return out;
}

export interface NewVersion {
  model: ModelRecord;
  surrogate: SurrogateModel;
  /** The `.stpm` bytes of `surrogate` (encodeModel). */
  file: Uint8Array;
  createdBy: number | null;
  parentVersionId?: number | null;
  runId?: number | null;
}

/**
 * Store a new `draft` version with its blob and first history entry, numbered next within its model. The model row
 * is locked for the transaction, so two versions created at once never share a number (the unique key on
 * (model_id, version) would refuse it in any case). Runs inside the caller's transaction.
 * @returns the version number and row id
 */
export async function insertVersion(trx: Knex.Transaction, input: NewVersion): Promise<{ id: number; version: number }> {
  if (input.file.byteLength > MAX_MODEL_FILE_BYTES) {
    throw new UnprocessableError(`The model file is ${input.file.byteLength} bytes; the registry stores at most ${MAX_MODEL_FILE_BYTES}.`);
  }
  await trx("models").where({ id: input.model.id }).forUpdate().first();
  const last = (await trx("model_versions").where({ model_id: input.model.id }).max({ n: "version" }).first()) as { n: number | null } | undefined;
  const version = Number(last?.n ?? 0) + 1;
  const s = input.surrogate;
  const [id] = await trx("model_versions").insert({
    model_id: input.model.id,
    version,
    state: "draft",
    order: s.order,
    term_count: s.terms.length,
    terms: JSON.stringify(s.terms),
    validity: JSON.stringify(s.validity),
    statistics: s.statistics === null ? null : JSON.stringify(s.statistics),
    provenance: JSON.stringify(s.provenance),
    fit: JSON.stringify(s.fit),
    pruning: s.pruning === null ? null : JSON.stringify(s.pruning),
    coefficients_sha256: coefficientsSha256(s),
    software_version: s.provenance.softwareVersion.slice(0, 80),
    parent_version_id: input.parentVersionId ?? null,
    run_id: input.runId ?? null,
    created_by: input.createdBy,
  });
  await trx("version_blobs").insert({
    version_id: id,
    bytes: Buffer.from(input.file.buffer, input.file.byteOffset, input.file.byteLength),
    size_bytes: input.file.byteLength,
    sha256: sha256Hex(input.file),
  });
  await trx("version_state_events").insert({ version_id: id, state: "draft", by_user_id: input.createdBy, comment: null });
  await recordAuditEvent(
    { actorUserId: input.createdBy, action: "version.create", subjectType: "model_version", subjectId: id, detail: { model: input.model.slug, version } },
    trx,
  );
  return { id: Number(id), version };
}

/** Change a version's state and record it in its history, inside the caller's transaction. */
export async function changeVersionState(
  trx: Knex.Transaction,
  versionId: number,
  state: VersionState,
  byUserId: number | null,
  comment: string | null,
  extra: Record<string, unknown> = {},
): Promise<void> {
  await trx("model_versions").where({ id: versionId }).update({ state, ...extra });
  await trx("version_state_events").insert({ version_id: versionId, state, by_user_id: byUserId, comment });
  forgetEvaluationTargets();
}

/** `draft` -> `in-review`, by the modeller who made the version (session, or a token with the train scope). */
export async function submitVersion(actor: Actor, slug: string, version: number, conn: Knex = db()): Promise<VersionDetail> {
  assertCan(actor, "train", slug);
  const model = await requireModel(actor, slug, conn);
  const mailIds = await conn.transaction(async (trx) => {
    const row = await versionRow(model, version, trx, true);
    if (row.created_by !== actor.userId) throw new ForbiddenError("Only the modeller who made this version may submit it for review.");
    if (row.state !== "draft") throw new ConflictError(`Version ${version} is ${row.state}; only a draft can be submitted for review.`);
    await changeVersionState(trx, row.id, "in-review", actor.userId, null);
    await recordAuditEvent({ ...auditedBy(actor), action: "version.submit", subjectType: "model_version", subjectId: row.id, detail: { model: slug, version } }, trx);
    // Every reviewer but the author hears of it; the mail rows commit with the submission.
    const reviewers = (await usersWithRole("reviewer", trx)).filter((r) => r.id !== actor.userId);
    if (reviewers.length === 0) return [];
    const overall = row.statistics === null ? null : fromJson<ResidualStatistics>(row.statistics).overall;
    const facts = {
      versionId: row.id,
      slug,
      modelName: model.name,
      version,
      order: row.order,
      termCount: row.term_count,
      maxAbsErrorPmPerNrad: overall?.maxAbsErrorPmPerNrad ?? null,
      maxErrorRelativeToPeak: overall?.maxErrorRelativeToPeak ?? null,
      maxTotalRmsNm: fromJson<ValidityRange>(row.validity).maxTotalRmsNm,
      author: actor.email,
    };
    return recordMail(trx, [versionSubmittedMail(facts, reviewers.map((r) => ({ email: r.email, userId: r.id })))]);
  });
  await dispatchMail(mailIds);
  return getVersion(actor, slug, version, conn);
}

export interface CoefficientFile {
  model: string;
  version: number;
  state: VersionState;
  coefficientsSha256: string;
  /** The stored `.stpm` bytes, checked against their SHA-256 on the way out. */
  bytes: Uint8Array;
  detail: VersionDetail;
}

/**
 * The stored `.stpm` file of a version. The blob is checked against its stored SHA-256 on every load.
 * @throws {Error} when the stored bytes do not match their checksum (a corrupt store is never served)
 */
export async function getCoefficientFile(actor: Actor, slug: string, version: number, conn: Knex = db()): Promise<CoefficientFile> {
  const detail = await getVersion(actor, slug, version, conn);
  const model = (await loadModel(slug, conn))!;
  const row = await versionRow(model, version, conn);
  const blob: { bytes: Buffer; sha256: string } | undefined = await conn("version_blobs").where({ version_id: row.id }).first();
  if (!blob) throw new Error(`version ${slug} v${version} has no coefficient blob`);
  const bytes = new Uint8Array(blob.bytes.buffer, blob.bytes.byteOffset, blob.bytes.byteLength);
  if (sha256Hex(bytes) !== blob.sha256) throw new Error(`the stored coefficients of ${slug} v${version} do not match their checksum`);
  return { model: slug, version, state: row.state, coefficientsSha256: row.coefficients_sha256, bytes, detail };
}

/** The decoded surrogate of a version (its checksums verified by `decodeModel`). */
export async function loadSurrogate(actor: Actor, slug: string, version: number, conn: Knex = db()): Promise<{ file: CoefficientFile; surrogate: SurrogateModel }> {
  const file = await getCoefficientFile(actor, slug, version, conn);
  return { file, surrogate: decodeModel(file.bytes) };
}

function sameSetup(a: OpticalSetup, b: OpticalSetup): boolean {
  const close = (x: number, y: number) => Math.abs(x - y) <= 1e-12 * Math.max(Math.abs(x), Math.abs(y));
  return (
    close(a.wavelengthNm, b.wavelengthNm) &&
    close(a.apertureDiameterM, b.apertureDiameterM) &&
    close(a.beamRadiusM, b.beamRadiusM) &&
    close(a.distanceM, b.distanceM) &&
    close(a.farField.halfAngleNrad, b.farField.halfAngleNrad) &&
    a.farField.pointsPerAxis === b.farField.pointsPerAxis &&
    a.pupilSamples === b.pupilSamples
  );
}

/**
 * Register a `.stpm` file trained elsewhere as a new draft (API.md `POST .../versions/upload`, `stillpoint push`).
 * The file's checksums are verified, and its setup and Zernike set must equal the model's.
 * @throws {UnprocessableError} for a damaged file or one made for another setup or Zernike set
 */
export async function uploadVersion(actor: Actor, slug: string, file: Uint8Array, conn: Knex = db()): Promise<VersionDetail> {
  assertCan(actor, "train", slug);
  const model = await requireModel(actor, slug, conn);
  if (file.byteLength > MAX_MODEL_FILE_BYTES) {
    throw new UnprocessableError(`The model file is ${file.byteLength} bytes; the registry stores at most ${MAX_MODEL_FILE_BYTES}.`);
  }
  let surrogate: SurrogateModel;
  try {
    surrogate = decodeModel(file);
  } catch (error) {
    if (error instanceof ModelFileError || error instanceof RangeError || error instanceof TypeError) {
      throw new UnprocessableError(`The body is not a usable .stpm model file: ${error.message}`);
    }
    throw error;
  }
  if (!sameSetup(surrogate.setup, model.setup)) {
    throw new UnprocessableError(`The model file was trained for another optical setup than the one of "${slug}".`);
  }
  if (surrogate.nollIndices.length !== model.nollIndices.length || surrogate.nollIndices.some((j, i) => j !== model.nollIndices[i])) {
    throw new UnprocessableError(
      `The model file's Zernike set (Noll ${surrogate.nollIndices.join(", ")}) differs from the model's (Noll ${model.nollIndices.join(", ")}).`,
    );
  }
  const { version } = await conn.transaction((trx) => insertVersion(trx, { model, surrogate, file, createdBy: actor.userId }));
  return getVersion(actor, slug, version, conn);
}

/**
 * Retire a released version (admins): it stays readable and, until its sunset, evaluable with deprecation headers.
 * The state change and its audit event are one transaction (with whatever `onRetired` writes, such as the notices).
 * @throws {ConflictError} unless the version is released; {UnprocessableError} for a sunset in the past or an unusable successor
 */
export async function retireVersion(
  actor: Actor,
  slug: string,
  version: number,
  input: { reason: string; sunsetAt: string; successorVersion: number | null },
  now = new Date(),
  conn: Knex = db(),
  /** Runs inside the retirement's transaction once the state change and its audit event are written. */
  onRetired?: (trx: Knex.Transaction, versionId: number) => Promise<void>,
): Promise<VersionDetail> {
  assertCan(actor, "admin", slug);
  const model = await requireModel(actor, slug, conn);
  if (Date.parse(input.sunsetAt) <= now.getTime()) throw new UnprocessableError("sunsetAt must lie in the future.");
  await conn.transaction(async (trx) => {
    const row = await versionRow(model, version, trx, true);
    if (row.state !== "released") throw new ConflictError(`Version ${version} is ${row.state}; only a released version can be retired.`);
    let successorId: number | null = null;
    if (input.successorVersion !== null) {
      if (input.successorVersion === version) throw new UnprocessableError("A version cannot be its own successor.");
      const successor: { id: number; state: VersionState } | undefined = await trx("model_versions").where({ model_id: model.id, version: input.successorVersion }).first();
      if (!successor || successor.state === "retired") {
        throw new UnprocessableError(`successorVersion ${input.successorVersion} is not a live version of "${slug}".`);
      }
      successorId = successor.id;
    }
    await changeVersionState(trx, row.id, "retired", actor.userId, input.reason, {
      retired_reason: input.reason,
      retired_at: now,
      sunset_at: new Date(input.sunsetAt),
      successor_version_id: successorId,
    });
    await recordAuditEvent(
      { ...auditedBy(actor), action: "version.retire", subjectType: "model_version", subjectId: row.id, detail: { model: slug, version, ...input } },
      trx,
    );
    await onRetired?.(trx, row.id);
  });
  return getVersion(actor, slug, version, conn);
}

/** What evaluation needs to know of a version before it computes anything (one indexed query). */
export interface EvaluationTarget {
  versionId: number;
  model: string;
  version: number;
  state: VersionState;
  coefficientsSha256: string;
  retiredAt: string | null;
  sunsetAt: string | null;
  successorVersion: number | null;
}

/**
 * How long a version's evaluation record is trusted without asking the database again. A state change made through
 * this module (submit, review, retire) forgets it at once; the cache only saves the query on repeated evaluations.
 */
export const EVALUATION_TARGET_CACHE_MS = 1_000;
const targetHolder = globalThis as typeof globalThis & { __stillpointTargets?: Map<string, { target: EvaluationTarget | null; at: number }> };
function targetCache(): Map<string, { target: EvaluationTarget | null; at: number }> {
  targetHolder.__stillpointTargets ??= new Map();
  return targetHolder.__stillpointTargets;
}

/** Forget cached evaluation records (after a state change). */
export function forgetEvaluationTargets(): void {
  targetCache().clear();
}

export async function evaluationTarget(slug: string, version: number, conn: Knex = db()): Promise<EvaluationTarget | null> {
  const key = `${slug}/${version}`;
  const cached = targetCache().get(key);
  const now = Date.now();
  if (cached && now - cached.at < EVALUATION_TARGET_CACHE_MS) return cached.target;
  const target = await queryEvaluationTarget(slug, version, conn);
  if (targetCache().size > 10_000) targetCache().clear();
  targetCache().set(key, { target, at: now });
  return target;
}

async function queryEvaluationTarget(slug: string, version: number, conn: Knex): Promise<EvaluationTarget | null> {
  const row:
    | { id: number; version: number; state: VersionState; coefficients_sha256: string; retired_at: Date | null; sunset_at: Date | null; successor: number | null }
    | undefined = await conn("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .leftJoin("model_versions as successor", "successor.id", "model_versions.successor_version_id")
    .select("model_versions.id", "model_versions.version", "model_versions.state", "model_versions.coefficients_sha256", "model_versions.retired_at", "model_versions.sunset_at", "successor.version as successor")
    .where("models.slug", slug)
    .where("model_versions.version", version)
    .first();
  if (!row) return null;
  return {
    versionId: row.id,
    model: slug,
    version: row.version,
    state: row.state,
    coefficientsSha256: row.coefficients_sha256,
    retiredAt: toIso(row.retired_at),
    sunsetAt: toIso(row.sunset_at),
    successorVersion: row.successor,
  };
}

/**
 * The decoded surrogate of a version by id, its blob checked against the stored SHA-256 and decoded (which checks
 * the file's own checksums). No permission check: for the evaluation cache, after the caller was checked.
 */
export async function loadSurrogateById(versionId: number, conn: Knex = db()): Promise<SurrogateModel> {
  const blob: { bytes: Buffer; sha256: string } | undefined = await conn("version_blobs").where({ version_id: versionId }).first();
  if (!blob) throw new Error(`version ${versionId} has no coefficient blob`);
  const bytes = new Uint8Array(blob.bytes.buffer, blob.bytes.byteOffset, blob.bytes.byteLength);
  if (sha256Hex(bytes) !== blob.sha256) throw new Error(`the stored coefficients of version ${versionId} do not match their checksum`);
  return decodeModel(bytes);
}

/** Evaluation records of every released version, newest first (for warming the model cache). */
export async function releasedEvaluationTargets(conn: Knex = db()): Promise<EvaluationTarget[]> {
  const rows: { slug: string; version: number }[] = await conn("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .select("models.slug", "model_versions.version")
    .where("model_versions.state", "released")
    .orderBy("model_versions.created_at", "desc");
  const out: EvaluationTarget[] = [];
  for (const row of rows) {
    const target = await evaluationTarget(row.slug, row.version, conn);
    if (target) out.push(target);
  }
  return out;
}

/** A version as the admins' overview of every model lists it. */
export interface VersionOverview {
  versionId: number;
  model: string;
  modelName: string;
  version: number;
  state: VersionState;
  order: number;
  termCount: number;
  createdAt: string;
  createdBy: string | null;
  retirement: Retirement | null;
}

/** Every version of every model, by model and number, optionally of one state (admins). */
export async function listAllVersions(actor: Actor, options: { state?: VersionState; model?: string } = {}, conn: Knex = db()): Promise<VersionOverview[]> {
  assertCan(actor, "admin");
  const query = conn("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .leftJoin("users", "users.id", "model_versions.created_by")
    .leftJoin("model_versions as successor", "successor.id", "model_versions.successor_version_id")
    .select(
      "model_versions.*",
      "models.slug as model_slug",
      "models.name as model_name",
      "users.email as creator_email",
      "successor.version as successor_number",
    )
    .orderBy([{ column: "models.slug" }, { column: "model_versions.version" }]);
  if (options.state) query.where("model_versions.state", options.state);
  if (options.model) query.where("models.slug", options.model);
  const rows: (VersionRow & { model_slug: string; model_name: string; creator_email: string | null; successor_number: number | null })[] = await query;
  return rows.map((row) => ({
    versionId: row.id,
    model: row.model_slug,
    modelName: row.model_name,
    version: row.version,
    state: row.state,
    order: row.order,
    termCount: row.term_count,
    createdAt: toIso(row.created_at)!,
    createdBy: row.creator_email,
    retirement:
      row.state === "retired" && row.retired_at && row.sunset_at
        ? { reason: row.retired_reason ?? "", retiredAt: toIso(row.retired_at)!, sunsetAt: toIso(row.sunset_at)!, successorVersion: row.successor_number }
        : null,
  }));
}

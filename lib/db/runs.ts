import type { Knex } from "knex";
import { assertCan, can, type Actor } from "../access/actor.ts";
import { ConflictError, ForbiddenError, NotFoundError } from "../errors.ts";
import type { RunKind, RunState } from "../validation/registry.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { fromJson, pageOf, toIso, type Page, type PageRequest } from "./rows.ts";

interface RunRow {
  id: number | string;
  kind: RunKind;
  model_id: number;
  source_version_id: number | null;
  state: RunState;
  spec: string | Record<string, unknown>;
  progress_done: number;
  progress_total: number;
  version_id: number | null;
  result: string | Record<string, unknown> | null;
  error: string | null;
  worker: string | null;
  created_by: number | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
}

export interface RunProgress {
  done: number;
  total: number;
  fraction: number;
  /** Samples per second since the run started; null before the first chunk. */
  perSecond: number | null;
  etaSeconds: number | null;
}

/** `<run>` of API.md "Training runs". */
export interface RunItem {
  id: number;
  kind: RunKind;
  model: string;
  state: RunState;
  progress: RunProgress;
  version: number | null;
  result: Record<string, unknown> | null;
  error: string | null;
  worker: string | null;
  createdBy: string | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

/** What a stored chunk holds: exact maps of a training or validation set, or what a Monte Carlo share found. */
export type ChunkSet = "generating" | "validation" | "monte-carlo";

export interface RunLogLine {
  at: string;
  level: "info" | "warning" | "error";
  message: string;
  worker: string | null;
}

export interface RunDetail extends RunItem {
  log: RunLogLine[];
}

/** What a worker needs of a run (no permission check). */
export interface RunRecord {
  id: number;
  kind: RunKind;
  modelId: number;
  modelSlug: string;
  sourceVersionId: number | null;
  state: RunState;
  spec: Record<string, unknown>;
  createdBy: number | null;
  startedAt: string | null;
}

const ACTIVE: RunState[] = ["queued", "running"];

export function runProgress(done: number, total: number, state: RunState, startedAt: Date | null, finishedAt: Date | null, now = Date.now()): RunProgress {
  const fraction = state === "succeeded" ? 1 : total > 0 ? Math.min(1, done / total) : 0;
  let perSecond: number | null = null;
  let etaSeconds: number | null = null;
  if (startedAt && done > 0) {
    const seconds = ((finishedAt ? new Date(finishedAt).getTime() : now) - new Date(startedAt).getTime()) / 1000;
    if (seconds > 0) {
      perSecond = done / seconds;
      etaSeconds = ACTIVE.includes(state) ? Math.max(0, (total - done) / perSecond) : 0;
    }
  }
  return { done, total, fraction, perSecond, etaSeconds };
}

const runColumns = ["runs.*", "models.slug as model_slug", "users.email as creator_email", "model_versions.version as version_number"];

function runQuery(conn: Knex) {
  return conn("runs")
    .join("models", "models.id", "runs.model_id")
    .leftJoin("users", "users.id", "runs.created_by")
    .leftJoin("model_versions", "model_versions.id", "runs.version_id")
    .select(runColumns);
}

type JoinedRunRow = RunRow & { model_slug: string; creator_email: string | null; version_number: number | null };

function toItem(row: JoinedRunRow): RunItem {
  return {
    id: Number(row.id),
    kind: row.kind,
    model: row.model_slug,
    state: row.state,
    progress: runProgress(row.progress_done, row.progress_total, row.state, row.started_at, row.finished_at),
    version: row.version_number,
    result: row.result === null ? null : fromJson<Record<string, unknown>>(row.result),
    error: row.error,
    worker: row.worker,
    createdBy: row.creator_email,
    createdAt: toIso(row.created_at)!,
    startedAt: toIso(row.started_at),
    finishedAt: toIso(row.finished_at),
  };
}

async function joinedRun(id: number, conn: Knex): Promise<JoinedRunRow | undefined> {
  return runQuery(conn).where("runs.id", id).first();
}

export async function getRun(actor: Actor, id: number, conn: Knex = db()): Promise<RunDetail> {
  assertCan(actor, "read");
  const row = await joinedRun(id, conn);
  if (!row) throw new NotFoundError(`There is no run ${id}.`);
  assertCan(actor, "read", row.model_slug);
  const log: { at: Date; level: RunLogLine["level"]; message: string; worker: string | null }[] = await conn("run_log").where({ run_id: id }).orderBy("id");
  return { ...toItem(row), log: log.map((l) => ({ at: toIso(l.at)!, level: l.level, message: l.message, worker: l.worker })) };
}

export async function listRuns(actor: Actor, filter: { model?: string }, page: PageRequest, conn: Knex = db()): Promise<Page<RunItem>> {
  assertCan(actor, "read", filter.model);
  const query = runQuery(conn);
  if (filter.model) query.where("models.slug", filter.model);
  if (actor.via === "token" && actor.models !== null) query.whereIn("models.slug", [...actor.models]);
  const { rows, nextCursor } = await pageOf<JoinedRunRow & Record<string, unknown>>(query, "runs.id", page, (r) => Number(r.id));
  return { items: rows.map(toItem), nextCursor };
}

export interface NewRun {
  kind: RunKind;
  modelId: number;
  sourceVersionId?: number | null;
  spec: Record<string, unknown>;
  total: number;
  createdBy: number;
}

/** Insert a queued run (the caller has checked permissions and the spec). */
export async function insertRun(input: NewRun, conn: Knex = db()): Promise<number> {
  const [id] = await conn("runs").insert({
    kind: input.kind,
    model_id: input.modelId,
    source_version_id: input.sourceVersionId ?? null,
    state: "queued",
    spec: JSON.stringify(input.spec),
    progress_total: input.total,
    created_by: input.createdBy,
  });
  return Number(id);
}

export async function runItem(id: number, conn: Knex = db()): Promise<RunItem> {
  const row = await joinedRun(id, conn);
  if (!row) throw new NotFoundError(`There is no run ${id}.`);
  return toItem(row);
}

/** Cancel a queued or running run: its creator or an admin. No version is written afterwards. */
export async function cancelRun(actor: Actor, id: number, conn: Knex = db()): Promise<RunItem> {
  assertCan(actor, "read");
  const row = await joinedRun(id, conn);
  if (!row) throw new NotFoundError(`There is no run ${id}.`);
  assertCan(actor, "read", row.model_slug);
  const allowed = (row.created_by === actor.userId && can(actor, "train", row.model_slug)) || can(actor, "admin");
  if (!allowed) throw new ForbiddenError("Only the modeller who queued this run (with the train scope) or an admin may cancel it.");
  await conn.transaction(async (trx) => {
    const locked: RunRow | undefined = await trx("runs").where({ id }).forUpdate().first();
    if (!locked || !ACTIVE.includes(locked.state)) {
      throw new ConflictError(`Run ${id} is ${locked?.state ?? "gone"}; only a queued or running run can be cancelled.`);
    }
    await trx("runs").where({ id }).update({ state: "cancelled", finished_at: trx.fn.now(3) });
    await trx("run_log").insert({ run_id: id, level: "warning", message: `cancelled by ${actor.email}` });
    await trx("run_chunks").where({ run_id: id }).delete();
    await recordAuditEvent({ ...auditedBy(actor), action: "run.cancel", subjectType: "run", subjectId: id }, trx);
  });
  return runItem(id, conn);
}

// ---- for the workers (no permission checks: the run was checked when it was queued) ----

export async function loadRun(id: number, conn: Knex = db()): Promise<RunRecord | null> {
  const row: (RunRow & { model_slug: string }) | undefined = await conn("runs")
    .join("models", "models.id", "runs.model_id")
    .select("runs.*", "models.slug as model_slug")
    .where("runs.id", id)
    .first();
  if (!row) return null;
  return {
    id: Number(row.id),
    kind: row.kind,
    modelId: row.model_id,
    modelSlug: row.model_slug,
    sourceVersionId: row.source_version_id,
    state: row.state,
    spec: fromJson<Record<string, unknown>>(row.spec),
    createdBy: row.created_by,
    startedAt: toIso(row.started_at),
  };
}

/** The spec of the run that made a version (its training or pruning run), or null for a version made otherwise. */
export async function specOfVersionRun(versionId: number, conn: Knex = db()): Promise<Record<string, unknown> | null> {
  const row: { spec: RunRow["spec"] } | undefined = await conn("model_versions").join("runs", "runs.id", "model_versions.run_id").select("runs.spec").where("model_versions.id", versionId).first();
  return row ? fromJson<Record<string, unknown>>(row.spec) : null;
}

export async function appendRunLog(runId: number, message: string, level: RunLogLine["level"] = "info", worker: string | null = null, conn: Knex = db()): Promise<void> {
  await conn("run_log").insert({ run_id: runId, level, message: message.slice(0, 4000), worker });
}

/** queued -> running, once; returns whether this call started it. */
export async function markRunStarted(runId: number, worker: string, conn: Knex = db()): Promise<boolean> {
  const changed = await conn("runs").where({ id: runId, state: "queued" }).update({ state: "running", started_at: conn.fn.now(3), worker });
  return changed > 0;
}

/**
 * Store one chunk of exact maps (idempotent: a retried chunk writes the same bytes, the first copy is kept) and
 * update the run's progress from what is stored. Nothing is stored for a run that is no longer running.
 */
export async function storeRunChunk(
  runId: number,
  chunk: { sampleSet: ChunkSet; index: number; first: number; count: number; maps: Uint8Array },
  worker: string,
  conn: Knex = db(),
): Promise<{ stored: boolean; done: number; total: number }> {
  return conn.transaction(async (trx) => {
    const run: RunRow | undefined = await trx("runs").where({ id: runId }).forUpdate().first();
    if (!run || run.state !== "running") return { stored: false, done: run?.progress_done ?? 0, total: run?.progress_total ?? 0 };
    await trx.raw(
      "INSERT IGNORE INTO run_chunks (run_id, sample_set, chunk_index, first_sample, sample_count, maps, worker) VALUES (?, ?, ?, ?, ?, ?, ?)",
      [runId, chunk.sampleSet, chunk.index, chunk.first, chunk.count, Buffer.from(chunk.maps.buffer, chunk.maps.byteOffset, chunk.maps.byteLength), worker],
    );
    const sum = (await trx("run_chunks").where({ run_id: runId }).sum({ n: "sample_count" }).first()) as { n: number | string | null } | undefined;
    const done = Number(sum?.n ?? 0);
    await trx("runs").where({ id: runId }).update({ progress_done: done, worker });
    return { stored: true, done, total: run.progress_total };
  });
}

export async function loadRunChunks(
  runId: number,
  conn: Knex = db(),
): Promise<{ sampleSet: ChunkSet; index: number; first: number; count: number; maps: Uint8Array }[]> {
  const rows: { sample_set: ChunkSet; chunk_index: number; first_sample: number; sample_count: number; maps: Buffer }[] = await conn("run_chunks")
    .where({ run_id: runId })
    .orderBy(["sample_set", "chunk_index"]);
  return rows.map((r) => ({
    sampleSet: r.sample_set,
    index: r.chunk_index,
    first: r.first_sample,
    count: r.sample_count,
    maps: new Uint8Array(r.maps.buffer, r.maps.byteOffset, r.maps.byteLength),
  }));
}

/** Mark a run failed with its reason, unless it already ended; its chunks are dropped. */
export async function failRun(runId: number, reason: string, worker: string | null, conn: Knex = db()): Promise<boolean> {
  return conn.transaction(async (trx) => {
    const changed = await trx("runs")
      .where({ id: runId })
      .whereIn("state", ACTIVE)
      .update({ state: "failed", error: reason.slice(0, 4000), finished_at: trx.fn.now(3), worker: worker ?? trx.raw("worker") });
    if (changed > 0) {
      await trx("run_log").insert({ run_id: runId, level: "error", message: `failed: ${reason}`.slice(0, 4000), worker });
      await trx("run_chunks").where({ run_id: runId }).delete();
    }
    return changed > 0;
  });
}

/**
 * Finish a run inside a transaction that also writes what it produced: `produce` runs only while the run is still
 * running (the row is locked, so a cancellation either happens before and nothing is written, or after and is
 * refused). Returns false when the run had already ended.
 */
export async function completeRun(
  runId: number,
  worker: string,
  produce: (trx: Knex.Transaction) => Promise<{ versionId: number | null; result: Record<string, unknown> | null; message: string }>,
  conn: Knex = db(),
): Promise<boolean> {
  return conn.transaction(async (trx) => {
    const run: RunRow | undefined = await trx("runs").where({ id: runId }).forUpdate().first();
    if (!run || run.state !== "running") return false;
    const outcome = await produce(trx);
    await trx("runs")
      .where({ id: runId })
      .update({
        state: "succeeded",
        version_id: outcome.versionId,
        result: outcome.result === null ? null : JSON.stringify(outcome.result),
        finished_at: trx.fn.now(3),
        progress_done: run.progress_total,
        worker,
      });
    await trx("run_log").insert({ run_id: runId, level: "info", message: outcome.message, worker });
    await trx("run_chunks").where({ run_id: runId }).delete();
    return true;
  });
}

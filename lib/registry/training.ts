import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { auditedBy, recordAuditEvent } from "../db/audit.ts";
import { generatingSetSamples } from "../db/generatingSets.ts";
import { db } from "../db/knex.ts";
import { requireModel } from "../db/models.ts";
import { appendRunLog, failRun, insertRun, runItem, type RunItem } from "../db/runs.ts";
import { UnprocessableError } from "../errors.ts";
import { enqueueTrainingRun } from "../queue/enqueue.ts";
import { CHUNK_SAMPLES, generatingSampleCount, isUploaded, type TrainingRunSpec } from "../queue/plan.ts";
import { fullTermCount } from "../surrogate/terms.ts";
import type { VersionTrainingInput } from "../validation/training.ts";

/**
 * Queue a training run for a model (API.md `POST /models/{slug}/versions`): the request is checked against the
 * model first (uploaded sets belong to it, enough samples for the terms), then the run is stored and its work
 * queued. When the queue cannot take it, the run is marked failed with that reason and 503 follows.
 */
export async function createTrainingRun(actor: Actor, slug: string, input: VersionTrainingInput, conn: Knex = db()): Promise<RunItem> {
  assertCan(actor, "train", slug);
  const model = await requireModel(actor, slug, conn);
  const J = model.nollIndices.length;
  const terms = fullTermCount(J, input.order);
  const validationSet = input.validationSet ?? null;

  let generatingCount: number;
  if (isUploaded(input.generatingSet)) generatingCount = await generatingSetSamples(model, input.generatingSet.generatingSetId, conn);
  else generatingCount = generatingSampleCount(input.generatingSet, J);
  if (generatingCount < terms) {
    throw new UnprocessableError(
      `The generating set has ${generatingCount} samples but a ${input.order === 1 ? "first" : "second"}-order model of ${J} terms has ${terms} coefficients per node; at least ${terms} samples are needed.`,
    );
  }
  if (isUploaded(validationSet)) await generatingSetSamples(model, validationSet.generatingSetId, conn);

  const spec: TrainingRunSpec = {
    order: input.order,
    generatingSet: input.generatingSet,
    validationSet,
    chunkSamples: CHUNK_SAMPLES,
    generatingSamples: isUploaded(input.generatingSet) ? 0 : generatingCount,
    validationSamples: validationSet === null || isUploaded(validationSet) ? 0 : validationSet.size,
  };
  const runId = await insertRun(
    { kind: "training", modelId: model.id, spec: spec as unknown as Record<string, unknown>, total: spec.generatingSamples + spec.validationSamples, createdBy: actor.userId },
    conn,
  );
  await appendRunLog(
    runId,
    `queued by ${actor.email}: order ${input.order}, ${terms} terms, ${generatingCount} generating samples (${input.generatingSet.design})` +
      `, ${validationSet === null ? "no validation set" : isUploaded(validationSet) ? "uploaded validation set" : `${validationSet.size} validation samples`}` +
      `; ${spec.generatingSamples + spec.validationSamples} exact maps in chunks of ${CHUNK_SAMPLES}`,
    "info",
    null,
    conn,
  );
  await recordAuditEvent({ ...auditedBy(actor), action: "run.create", subjectType: "run", subjectId: runId, detail: { model: slug, kind: "training" } }, conn);
  try {
    await enqueueTrainingRun(runId, spec);
  } catch (error) {
    await failRun(runId, (error as Error).message, null, conn);
    throw error;
  }
  return runItem(runId, conn);
}

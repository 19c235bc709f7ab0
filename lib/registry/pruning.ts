import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { recordAuditEvent } from "../db/audit.ts";
import { db } from "../db/knex.ts";
import { requireModel } from "../db/models.ts";
import { appendRunLog, failRun, insertRun, runItem, specOfVersionRun, type RunItem } from "../db/runs.ts";
import { evaluationTarget } from "../db/versions.ts";
import { NotFoundError } from "../errors.ts";
import { enqueueTrainingRun } from "../queue/enqueue.ts";
import { CHUNK_SAMPLES, isUploaded, type PruningRunSpec, type StoredValidationSet } from "../queue/plan.ts";
import type { SampleSet } from "../surrogate/designs.ts";
import type { SurrogateModel } from "../surrogate/model.ts";
import { pruneModel, type PruneOptions } from "../surrogate/significance.ts";
import type { PruneBody } from "../validation/analysis.ts";
import { surrogateFor } from "./evaluate.ts";

/**
 * The derived model of a pruning, as every path makes it (the queue's pruning runs and the demo seed): the parent's
 * kept coefficients, the per-node bound of what the dropped terms can add, and, with the parent's validation set
 * propagated exactly, the largest change seen and the pruned model's own residual statistics.
 * @throws {RangeError} from {@link pruneModel}
 */
export function prunedVersionModel(parent: SurrogateModel, options: PruneOptions, validation?: SampleSet): SurrogateModel {
  return pruneModel(parent, options, validation).model;
}

/**
 * Queue the pruning of a version (API.md `POST .../versions/{v}/prune`): a run of kind "pruning" whose chunks propagate
 * the parent's validation set exactly (regenerated from its seed) and whose last step stores the derived draft with its
 * parent recorded. A parent validated on an uploaded set (stored in generating_sets, its exact maps with it) gives the
 * draft statistics from that set, with nothing to propagate; a parent with no validation set is pruned without them.
 * @throws {ForbiddenError} without the train permission; {NotFoundError} for an unknown version; 503 when the queue is down
 */
export async function createPruningRun(actor: Actor, slug: string, version: number, body: PruneBody, conn: Knex = db()): Promise<RunItem> {
  assertCan(actor, "train", slug);
  const model = await requireModel(actor, slug, conn);
  const target = await evaluationTarget(slug, version, conn);
  if (!target) throw new NotFoundError(`Model "${slug}" has no version ${version}.`);
  const parent = await surrogateFor(target);
  const builtIn = parent.provenance.validationSet;
  const validationSet: StoredValidationSet = builtIn
    ? { size: builtIn.size, maxRmsNm: builtIn.maxRmsNm, seed: builtIn.seed }
    : await uploadedValidationSetOf(target.versionId, conn);
  const spec: PruningRunSpec = {
    parentVersionId: target.versionId,
    parentVersion: target.version,
    prune: { budgetRmsNm: body.budgetRmsNm, jitterNrad: body.jitterNrad, thresholdPm: body.thresholdPm },
    validationSet,
    chunkSamples: CHUNK_SAMPLES,
    generatingSamples: 0,
    validationSamples: validationSet && !isUploaded(validationSet) ? validationSet.size : 0,
  };
  const runId = await insertRun(
    { kind: "pruning", modelId: model.id, sourceVersionId: target.versionId, spec: spec as unknown as Record<string, unknown>, total: spec.validationSamples, createdBy: actor.userId },
    conn,
  );
  await appendRunLog(
    runId,
    `queued by ${actor.email}: prune version ${version} (${parent.terms.length} terms) for ${body.budgetRmsNm} nm RMS, ${body.jitterNrad} nrad jitter, threshold ${body.thresholdPm} pm; ` +
      (validationSet === null
        ? "the parent has no validation set: no statistics, no seen error"
        : isUploaded(validationSet)
          ? `the parent's uploaded validation set (generating set ${validationSet.generatingSetId}) gives the statistics`
          : `${validationSet.size} validation samples propagated exactly for the statistics`),
    "info",
    null,
    conn,
  );
  await recordAuditEvent({ actorUserId: actor.userId, action: "run.create", subjectType: "run", subjectId: runId, detail: { model: slug, kind: "pruning", parentVersion: version } }, conn);
  try {
    await enqueueTrainingRun(runId, spec);
  } catch (error) {
    await failRun(runId, (error as Error).message, null, conn);
    throw error;
  }
  return runItem(runId, conn);
}

/**
 * The uploaded validation set a version was validated on, as its run recorded it (a training run's spec, or a pruning
 * run's, which passes its parent's on), or null when it had none.
 */
async function uploadedValidationSetOf(versionId: number, conn: Knex): Promise<StoredValidationSet> {
  const spec = await specOfVersionRun(versionId, conn);
  const set = (spec?.validationSet ?? null) as StoredValidationSet;
  return set !== null && isUploaded(set) ? { design: "uploaded", generatingSetId: set.generatingSetId } : null;
}

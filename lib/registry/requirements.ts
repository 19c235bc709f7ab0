import type { Knex } from "knex";
import type { Actor } from "../access/actor.ts";
import { recordAuditEvent } from "../db/audit.ts";
import { db } from "../db/knex.ts";
import { requireModel } from "../db/models.ts";
import { appendRunLog, failRun, insertRun, runItem, type RunItem } from "../db/runs.ts";
import { UnprocessableError } from "../errors.ts";
import type { ComputePool } from "../parallel/computePool.ts";
import { enqueueMonteCarloRun } from "../queue/enqueue.ts";
import { MONTE_CARLO_JOB_SAMPLES, type MonteCarloRunSpec } from "../queue/plan.ts";
import type { RequirementsBody } from "../validation/analysis.ts";
import { analysisTarget } from "./analysis.ts";

/**
 * Requirements for a TTL budget (API.md "Analysis", `POST .../versions/{v}/requirements`): the limits are derived
 * here from the version's maps (on the compute pool, `requirementLimits`), then a run of kind "monte-carlo" verifies
 * them on the queue with seeded random wavefronts inside the limits; its result holds the limits and what the Monte
 * Carlo found, the worst samples propagated exactly. An analysis route: read permission, the version states of
 * evaluation.
 * @throws {UnprocessableError} when no limits can meet the budget; 503 when the queue is down
 */
export async function createRequirementsRun(actor: Actor, slug: string, version: number, body: RequirementsBody, options: { pool: () => ComputePool }, conn: Knex = db()): Promise<RunItem> {
  const { target, model } = await analysisTarget(actor, slug, version);
  const record = await requireModel(actor, slug, conn);
  let requirements;
  try {
    requirements = await options.pool().analyse(model, { kind: "requirements", ttlBudgetPmPerNrad: body.ttlBudgetPmPerNrad, budgetRmsNm: body.budgetRmsNm });
  } catch (error) {
    if (error instanceof RangeError || (error as Error)?.name === "RangeError") throw new UnprocessableError(`No requirements can be derived: ${(error as Error).message}.`);
    throw error;
  }
  const spec: MonteCarloRunSpec = {
    versionId: target.versionId,
    version: target.version,
    ttlBudgetPmPerNrad: body.ttlBudgetPmPerNrad,
    budgetRmsNm: body.budgetRmsNm,
    samples: body.samples,
    seed: body.seed,
    limits: body.limits,
    uniformLinearNm: Array.from(requirements.uniform.linearNm),
    perTermLinearNm: Array.from(requirements.perTerm.linearNm),
    uniformBoundPmPerNrad: requirements.uniform.boundPmPerNrad,
    perTermBoundPmPerNrad: requirements.perTerm.boundPmPerNrad,
    perTermCouplingPmPerNradPerNm: Array.from(requirements.perTerm.couplingPmPerNradPerNm),
    perTermSharePmPerNrad: Array.from(requirements.perTerm.sharePmPerNrad),
    zeroWfePeakPmPerNrad: requirements.zeroWfePeakPmPerNrad,
    jobSamples: MONTE_CARLO_JOB_SAMPLES,
  };
  const runId = await insertRun(
    { kind: "monte-carlo", modelId: record.id, sourceVersionId: target.versionId, spec: spec as unknown as Record<string, unknown>, total: body.samples, createdBy: actor.userId },
    conn,
  );
  await appendRunLog(
    runId,
    `queued by ${actor.email}: requirements of version ${target.version} for ${body.ttlBudgetPmPerNrad} pm/nrad within ${body.budgetRmsNm} nm RMS; ` +
      `${body.limits} limits verified by ${body.samples} samples (seed ${body.seed}) in shares of ${MONTE_CARLO_JOB_SAMPLES}`,
    "info",
    null,
    conn,
  );
  await recordAuditEvent({ actorUserId: actor.userId, action: "run.create", subjectType: "run", subjectId: runId, detail: { model: slug, kind: "monte-carlo", version } }, conn);
  try {
    await enqueueMonteCarloRun(runId, spec);
  } catch (error) {
    await failRun(runId, (error as Error).message, null, conn);
    throw error;
  }
  return runItem(runId, conn);
}

import type { Knex } from "knex";
import { sessionActor, type Actor } from "../access/actor.ts";
import { VELORA_JITTER_NRAD, VELORA_SETUP, VELORA_WFE_BUDGET_NM, VELORA_ZERNIKE } from "../demo/velora.ts";
import { loadModel, createModel } from "../db/models.ts";
import { reviewVersion } from "../db/reviews.ts";
import { createSetup } from "../db/setups.ts";
import { getUser } from "../db/users.ts";
import { insertVersion, retireVersion, submitVersion } from "../db/versions.ts";
import { propagateMany } from "../parallel/index.ts";
import { encodeModel } from "../surrogate/modelFile.ts";
import type { SurrogateModel } from "../surrogate/model.ts";
import { trainSurrogate, type TrainingRequest, type TrainingResult } from "../surrogate/train.ts";
import { SOFTWARE_VERSION } from "../version.ts";
import { prunedVersionModel } from "./pruning.ts";

export const DEMO_MODEL_SLUG = "velora-transmit";
const DAY_MS = 24 * 3600 * 1000;

async function actorFor(email: string, conn: Knex): Promise<Actor> {
  const row: { id: number } | undefined = await conn("users").where({ email }).first();
  if (!row) throw new Error(`demo account ${email} is missing; seed the accounts first`);
  return sessionActor((await getUser(row.id, conn))!);
}

async function train(request: Omit<TrainingRequest, "setup" | "zernike" | "softwareVersion" | "createdAt">, log: (line: string) => void): Promise<TrainingResult> {
  const began = performance.now();
  const result = await trainSurrogate(
    { ...request, setup: VELORA_SETUP, zernike: VELORA_ZERNIKE, softwareVersion: SOFTWARE_VERSION, createdAt: new Date().toISOString() },
    async (noll, coefficientsNm, onProgress) => propagateMany(VELORA_SETUP, noll, coefficientsNm, { onProgress }),
  );
  log(`trained order ${request.order}, ${result.model.terms.length} terms, ${result.model.fit.samples} samples in ${((performance.now() - began) / 1000).toFixed(1)} s`);
  return result;
}

/**
 * The demo scenario of DESIGN.md, made by the real pipeline (exact propagation, fit, validation, pruning) and
 * taken through the real review states: the Velora setup and the model `velora-transmit` with version 1 retired,
 * 2 released, 3 (pruned from 2) in review and 4 (first order) a draft. Leaves a database that has the model alone.
 * @returns whether anything was created
 */
export async function seedDemoModels(conn: Knex, log: (line: string) => void = console.log, now = new Date()): Promise<boolean> {
  if (await loadModel(DEMO_MODEL_SLUG, conn)) return false;
  const modeller = await actorFor("modeller@velora.test", conn);
  const reviewer = await actorFor("reviewer@velora.test", conn);
  const admin = await actorFor("admin@velora.test", conn);

  const setup = await createSetup(modeller, { name: "Velora transmit telescope", setup: VELORA_SETUP }, conn);
  await createModel(
    modeller,
    {
      slug: DEMO_MODEL_SLUG,
      name: "Velora transmit telescope",
      description: "TTL of the 0.26 m Velora transmit telescope over Noll 4-36, DC pointing offsets up to 60 nrad.",
      setupId: setup.id,
      zernike: VELORA_ZERNIKE,
    },
    conn,
  );
  const model = (await loadModel(DEMO_MODEL_SLUG, conn))!;
  const store = async (surrogate: SurrogateModel, parentVersionId: number | null = null) =>
    conn.transaction((trx) => insertVersion(trx, { model, surrogate, file: encodeModel(surrogate), createdBy: modeller.userId, parentVersionId }));

  const v1 = await train(
    { order: 2, generatingSet: { design: "random", size: 700, maxRmsNm: 25, seed: 1 }, validationSet: { size: 100, maxRmsNm: 25, seed: 2 } },
    log,
  );
  await store(v1.model);
  const v2 = await train(
    { order: 2, generatingSet: { design: "random", size: 1300, maxRmsNm: 35, seed: 7 }, validationSet: { size: 200, maxRmsNm: 35, seed: 8 } },
    log,
  );
  const stored2 = await store(v2.model);
  // The same derivation as a pruning run on the queue (its chunks propagate this very validation set, from its seed).
  const pruned = prunedVersionModel(v2.model, { budgetRmsNm: VELORA_WFE_BUDGET_NM, jitterNrad: VELORA_JITTER_NRAD, thresholdPm: 0.1 }, v2.validationSet!);
  log(
    `pruned version 2 to ${pruned.terms.length} terms: dropped terms bounded by ${pruned.pruning!.droppedTtlBoundPmPerNrad.toPrecision(3)} pm/nrad, ` +
      `seen ${pruned.pruning!.droppedTtlSeenPmPerNrad!.toPrecision(3)} pm/nrad`,
  );
  await store(pruned, stored2.id);
  const v4 = await train(
    { order: 1, generatingSet: { design: "random", size: 200, maxRmsNm: 10, seed: 11 }, validationSet: { size: 100, maxRmsNm: 10, seed: 12 } },
    log,
  );
  await store(v4.model);

  for (const version of [1, 2]) {
    await submitVersion(modeller, DEMO_MODEL_SLUG, version, conn);
    await reviewVersion(reviewer, DEMO_MODEL_SLUG, version, { decision: "approve", comment: "Residuals and validity range checked." }, conn);
  }
  await submitVersion(modeller, DEMO_MODEL_SLUG, 3, conn);
  await retireVersion(
    admin,
    DEMO_MODEL_SLUG,
    1,
    { reason: "generating set too small", sunsetAt: new Date(now.getTime() + 180 * DAY_MS).toISOString(), successorVersion: 2 },
    now,
    conn,
  );
  log(`created ${DEMO_MODEL_SLUG}: version 1 retired, 2 released, 3 in review, 4 draft`);
  return true;
}

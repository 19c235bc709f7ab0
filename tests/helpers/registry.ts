import { sessionActor, type Actor } from "@/lib/access/actor";
import { db } from "@/lib/db/knex";
import { createModel, loadModel } from "@/lib/db/models";
import { getRun, type RunDetail } from "@/lib/db/runs";
import { createSetup } from "@/lib/db/setups";
import { getUser } from "@/lib/db/users";
import { insertVersion } from "@/lib/db/versions";
import type { SurrogateModel } from "@/lib/surrogate/model";
import { encodeModel } from "@/lib/surrogate/modelFile";
import type { ResidualStatistics } from "@/lib/surrogate/statistics";
import { fullTerms } from "@/lib/surrogate/terms";
import type { OpticalSetup, ZernikeSet } from "@/lib/optics/types";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { startWorker, type WorkerHandle } from "@/lib/queue/worker";

/** A setup small enough to train in a fraction of a second (9 x 9 nodes, 32^2 pupil samples). */
export const SMALL_SETUP: OpticalSetup = {
  wavelengthNm: 1064,
  apertureDiameterM: 0.26,
  beamRadiusM: 0.115,
  distanceM: 2.2e9,
  farField: { halfAngleNrad: 60, pointsPerAxis: 9 },
  pupilSamples: 32,
};
export const SMALL_ZERNIKE: ZernikeSet = { ordering: "noll", indices: [4, 5, 6, 7, 8] };

export async function actorFor(email: string): Promise<Actor> {
  const row: { id: number } | undefined = await db()("users").where({ email }).first();
  if (!row) throw new Error(`no account ${email}`);
  return sessionActor((await getUser(row.id))!);
}

let counter = 0;
/** A fresh setup and model, named uniquely, for a test that needs its own. */
export async function createTestModel(actor: Actor, setup: OpticalSetup = SMALL_SETUP, zernike: ZernikeSet = SMALL_ZERNIKE): Promise<string> {
  const tag = `${process.pid}-${Date.now().toString(36)}-${counter++}`;
  const created = await createSetup(actor, { name: `test setup ${tag}`, setup });
  const model = await createModel(actor, { slug: `test-${tag}`, name: `Test model ${tag}`, setupId: created.id, zernike });
  return model.slug;
}

/** A worker in this process that propagates on the calling thread (the same runTtlTask as the thread pool). */
export function inProcessWorker(name = `test-${process.pid}`): WorkerHandle {
  return startWorker({
    name,
    concurrency: 1,
    log: () => {},
    propagate: async (setup, nollIndices, coefficientsNm) => runTtlTask({ setup, nollIndices: [...nollIndices], coefficientsNm, count: coefficientsNm.length / nollIndices.length }),
  });
}

/** Poll a run until it ends; returns every state seen on the way and the final run. */
export async function waitForRun(actor: Actor, id: number, timeoutMs = 60_000): Promise<{ seen: string[]; run: RunDetail }> {
  const seen: string[] = [];
  const until = Date.now() + timeoutMs;
  for (;;) {
    const run = await getRun(actor, id);
    if (seen[seen.length - 1] !== run.state) seen.push(run.state);
    if (!["queued", "running"].includes(run.state)) return { seen, run };
    if (Date.now() > until) throw new Error(`run ${id} still ${run.state} after ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
}

/**
 * A first-order model of SMALL_SETUP with made-up coefficients and, when given, made-up statistics: for tests where
 * what is stored, not what it predicts, matters.
 */
export function syntheticModel(scale: number, statistics: ResidualStatistics | null = null): SurrogateModel {
  const nollIndices = [4, 5, 6, 7, 8];
  const terms = fullTerms(nollIndices, 1);
  const P = 2 * 9 * 9;
  return {
    setup: SMALL_SETUP,
    zernike: SMALL_ZERNIKE,
    nollIndices,
    order: 1,
    terms,
    pointsPerAxis: 9,
    coefficients: Float64Array.from({ length: terms.length * P }, (_, i) => Math.fround(scale * Math.sin(i))),
    validity: { maxTotalRmsNm: 10, termBoundsNm: nollIndices.map((noll) => ({ noll, minNm: -10, maxNm: 10 })) },
    provenance: {
      design: "random", size: 10, maxRmsNm: 10, stepNm: null, seed: 1, uploadedSha256: null, validationSet: null,
      softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    },
    fit: { samples: 10, conditionNumber: 1, trainingResidualRmsPmPerNrad: 0 },
    statistics,
    pruning: null,
  };
}

/** Store a synthetic draft version of a model, made by `createdBy`. */
export async function storeSyntheticVersion(
  slug: string,
  createdBy: number,
  options: { scale?: number; statistics?: ResidualStatistics | null } = {},
): Promise<{ id: number; version: number }> {
  const model = (await loadModel(slug))!;
  const surrogate = syntheticModel(options.scale ?? 1, options.statistics ?? null);
  return db().transaction((trx) => insertVersion(trx, { model, surrogate, file: encodeModel(surrogate), createdBy }));
}

/**
 * Residual statistics with made-up figures (the review queue and pages show them; nothing computes them): the given
 * worst error and its ratio to the peak overall, no RMS bins, a small ramp per node.
 */
export function syntheticStatistics(maxAbsErrorPmPerNrad: number, maxErrorRelativeToPeak: number): ResidualStatistics {
  const ramp = Array.from({ length: 81 }, (_, i) => (maxAbsErrorPmPerNrad * i) / 80);
  return {
    overall: {
      samples: 10,
      peakAbsTtlPmPerNrad: maxAbsErrorPmPerNrad / maxErrorRelativeToPeak,
      maxAbsErrorPmPerNrad,
      rmsErrorPmPerNrad: maxAbsErrorPmPerNrad / 3,
      maxErrorRelativeToPeak,
      worstSampleRelativeError: maxErrorRelativeToPeak,
    },
    perRmsBin: [],
    perNode: { maxAbsErrorXPmPerNrad: ramp, maxAbsErrorYPmPerNrad: ramp, rmsErrorXPmPerNrad: ramp, rmsErrorYPmPerNrad: ramp },
  };
}

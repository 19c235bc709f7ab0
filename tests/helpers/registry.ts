import { sessionActor, type Actor } from "@/lib/access/actor";
import { db } from "@/lib/db/knex";
import { createModel } from "@/lib/db/models";
import { getRun, type RunDetail } from "@/lib/db/runs";
import { createSetup } from "@/lib/db/setups";
import { getUser } from "@/lib/db/users";
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

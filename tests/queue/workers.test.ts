import { spawn, type ChildProcess } from "node:child_process";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { getRun } from "@/lib/db/runs";
import { loadSurrogate } from "@/lib/db/versions";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { createTrainingRun } from "@/lib/registry/training";
import { trainSurrogate } from "@/lib/surrogate/train";
import { SOFTWARE_VERSION } from "@/lib/version";
import type { OpticalSetup, ZernikeSet } from "@/lib/optics/types";
import { actorFor, createTestModel, waitForRun } from "../helpers/registry";
import { REPO_ROOT, testDatabaseName } from "../helpers/test-database";

testDatabaseName();

const children: ChildProcess[] = [];
afterAll(async () => {
  for (const child of children) if (child.exitCode === null) child.kill("SIGKILL");
  await closeQueueClients();
  await closeDb();
});

/** `npx stillpoint worker` as a separate process, as on another machine: it finds the services from the environment. */
function spawnWorker(): { child: ChildProcess; output: () => string } {
  const child = spawn(process.execPath, [join(REPO_ROOT, "bin/stillpoint.mjs"), "worker", "--threads", "1"], {
    env: process.env,
    stdio: ["ignore", "ignore", "pipe"],
  });
  let text = "";
  child.stderr!.on("data", (chunk: Buffer) => (text += chunk.toString()));
  children.push(child);
  return { child, output: () => text };
}

async function waitFor(condition: () => Promise<boolean>, what: string, timeoutMs = 60_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (!(await condition())) {
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

// Large enough pupil that each chunk of 32 maps takes a few tenths of a second.
const SETUP: OpticalSetup = {
  wavelengthNm: 1064, apertureDiameterM: 0.26, beamRadiusM: 0.115, distanceM: 2.2e9,
  farField: { halfAngleNrad: 60, pointsPerAxis: 15 }, pupilSamples: 256,
};
const ZERNIKE: ZernikeSet = { ordering: "noll", indices: [4, 5, 6, 7, 8, 9, 10, 11] };
const REQUEST = {
  order: 2 as const,
  generatingSet: { design: "random" as const, size: 320, maxRmsNm: 30, seed: 21 },
  validationSet: { size: 64, maxRmsNm: 30, seed: 22 },
};

describe("two workers on one run", () => {
  it("share the chunks, survive one being killed mid-run, and give the coefficients of an uninterrupted run", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const slug = await createTestModel(modeller, SETUP, ZERNIKE);
    const first = spawnWorker();
    const second = spawnWorker();
    await waitFor(async () => first.output().includes("taking work") && second.output().includes("taking work"), "both workers to start");

    const queued = await createTrainingRun(modeller, slug, REQUEST);
    // Kill the first worker once both have stored work and the run is far from done.
    await waitFor(async () => {
      const workers: { worker: string }[] = await db()("run_chunks").distinct("worker").where({ run_id: queued.id });
      return workers.length >= 2;
    }, "chunks from both workers");
    const progress = (await getRun(modeller, queued.id)).progress;
    expect(progress.done).toBeLessThan(progress.total);
    first.child.kill("SIGKILL");

    const { run } = await waitForRun(modeller, queued.id, 90_000);
    expect(run.state).toBe("succeeded");
    const names = new Set(run.log.map((line) => line.worker).filter(Boolean));
    expect(names.size).toBeGreaterThanOrEqual(2);

    const { surrogate } = await loadSurrogate(modeller, slug, run.version!);
    const direct = await trainSurrogate(
      { setup: SETUP, zernike: ZERNIKE, ...REQUEST, softwareVersion: SOFTWARE_VERSION, createdAt: surrogate.provenance.createdAt },
      async (noll, coefficientsNm) => ({ ...runTtlTask({ setup: SETUP, nollIndices: noll, coefficientsNm, count: coefficientsNm.length / noll.length }), undefinedNodes: [] }),
    );
    expect(Array.from(surrogate.coefficients)).toEqual(Array.from(direct.model.coefficients));
    expect(surrogate.statistics).toEqual(direct.model.statistics);
    second.child.kill("SIGTERM");
  });
});

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { createTrainingRun } from "@/lib/registry/training";
import { verifyStoredVersions } from "@/lib/ops/integrity";
import { actorFor, createTestModel, inProcessWorker, waitForRun } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

// The blob write failing (a full disk, a lost connection mid-insert) at the end of a run: the version row, its blob,
// its history and the run's success are one transaction, so nothing of the version remains and the run fails with
// the reason. The failure is made real by a trigger that refuses blob inserts for this test's model only.

testDatabaseName();
const TRIGGER = `blob_write_fails_${process.pid}`;
let worker: WorkerHandle;
let slug = "";
let modelId = 0;

beforeAll(async () => {
  worker = inProcessWorker(`blob-failure-${process.pid}`);
  slug = await createTestModel(await actorFor("modeller@velora.test"));
  modelId = (await db()("models").where({ slug }).first()).id;
  await db().raw(`
    CREATE TRIGGER \`${TRIGGER}\` BEFORE INSERT ON version_blobs FOR EACH ROW
    BEGIN
      IF (SELECT model_id FROM model_versions WHERE id = NEW.version_id) = ${Number(modelId)} THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'no space left on device (simulated for this test)';
      END IF;
    END`);
});

afterAll(async () => {
  await db().raw(`DROP TRIGGER IF EXISTS \`${TRIGGER}\``);
  await worker?.close(true);
  await closeQueueClients();
  await closeDb();
});

describe("the coefficient blob cannot be written", () => {
  it("leaves no version row without its blob, nothing half written, and fails the run with the reason", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const run = await createTrainingRun(modeller, slug, { order: 1, generatingSet: { design: "random", size: 40, maxRmsNm: 10, seed: 4 }, validationSet: null });
    const { run: ended } = await waitForRun(modeller, run.id, 90_000);
    expect(ended.state).toBe("failed");
    expect(ended.error).toContain("no space left on device");
    expect(ended.version).toBeNull();
    const versions = await db()("model_versions").where({ model_id: modelId });
    expect(versions).toEqual([]);
    const orphans = await db()("version_blobs").leftJoin("model_versions", "model_versions.id", "version_blobs.version_id").whereNull("model_versions.id").count({ n: "*" });
    expect(Number(orphans[0]!.n)).toBe(0);
    const history = await db()("version_state_events").join("model_versions", "model_versions.id", "version_state_events.version_id").where("model_versions.model_id", modelId);
    expect(history).toEqual([]);
    expect((await verifyStoredVersions(db())).failures).toEqual([]);

    // With the blob writable again the same spec succeeds: the trigger was the only cause.
    await db().raw(`DROP TRIGGER \`${TRIGGER}\``);
    const again = await createTrainingRun(modeller, slug, { order: 1, generatingSet: { design: "random", size: 40, maxRmsNm: 10, seed: 4 }, validationSet: null });
    const { run: done } = await waitForRun(modeller, again.id, 90_000);
    expect(done.state).toBe("succeeded");
    expect(await db()("version_blobs").join("model_versions", "model_versions.id", "version_blobs.version_id").where("model_versions.model_id", modelId)).toHaveLength(1);
  }, 200_000);
});

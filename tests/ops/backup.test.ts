import { copyFileSync, mkdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { createHash } from "node:crypto";
import path from "node:path";
import { gunzipSync, gzipSync } from "node:zlib";
import knexFactory from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { getConfig } from "@/lib/config";
import { knexConfig } from "@/lib/db/knex-config";
import { closeDb, db } from "@/lib/db/knex";
import { manifestPathFor, RestoreError, runBackup, runRestore, type BackupResult } from "@/lib/ops/backup";
import { storedChecksums, verifyStoredVersions } from "@/lib/ops/integrity";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { createTrainingRun } from "@/lib/registry/training";
import { REPO_ROOT, testDatabaseName } from "../helpers/test-database";
import { actorFor, createTestModel, inProcessWorker, SMALL_SETUP, waitForRun } from "../helpers/registry";
import type { WorkerHandle } from "@/lib/queue/worker";

// A backup taken while a training run is writing its maps restores into an empty database with every version's blob
// verified against its checksums, and a damaged or tampered backup fails loudly.

const source = testDatabaseName();
const outDir = path.join(REPO_ROOT, ".data", `backups-test-${process.pid}`);
const restored: string[] = [];
let worker: WorkerHandle;
let backup: BackupResult;
let runId = 0;

async function dropDatabase(name: string) {
  await db().raw(`DROP DATABASE IF EXISTS \`${name}\``);
}

beforeAll(async () => {
  worker = inProcessWorker(`backup-test-${process.pid}`);
  const modeller = await actorFor("modeller@velora.test");
  // Long enough (63 chunks of 32 maps on a finer pupil) that the dump's snapshot falls while chunks are being written.
  const slug = await createTestModel(modeller, { ...SMALL_SETUP, pupilSamples: 160, farField: { halfAngleNrad: 60, pointsPerAxis: 15 } });
  const run = await createTrainingRun(modeller, slug, { order: 2, generatingSet: { design: "random", size: 2000, maxRmsNm: 10, seed: 11 }, validationSet: null });
  runId = run.id;
  for (let i = 0; i < 600; i++) {
    const row: { state: string; progress_done: number } = await db()("runs").select("state", "progress_done").where({ id: runId }).first();
    if (row.state === "running" && row.progress_done > 0) break;
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  backup = await runBackup({ config: getConfig(), outDir });
}, 120_000);

afterAll(async () => {
  await worker?.close();
  for (const name of restored) await dropDatabase(name);
  await closeQueueClients();
  await closeDb();
  rmSync(outDir, { recursive: true, force: true });
});

describe("backup and restore", () => {
  it("was taken while the run was writing", async () => {
    const during: { state: string; progress_done: number; progress_total: number } = await db()("runs").where({ id: runId }).first();
    // Still running when the backup finished, or finished since: either way the dump saw it part-way.
    expect(backup.manifest.rowCounts.run_chunks).toBeGreaterThan(0);
    expect(during.progress_total).toBeGreaterThan(0);
    expect(backup.manifest.versions.filter((v) => v.state === "released").length).toBeGreaterThan(0);
    expect(readFileSync(manifestPathFor(backup.dumpFile), "utf8")).toContain(backup.manifest.dumpSha256);
    const bytes = readFileSync(backup.dumpFile);
    expect(createHash("sha256").update(bytes).digest("hex")).toBe(backup.manifest.dumpSha256);
  });

  it("restores into an empty database with every blob verified and every released version intact", async () => {
    const target = `${source}_restore_a`;
    restored.push(target);
    await dropDatabase(target);
    const result = await runRestore({ config: getConfig(), dumpFile: backup.dumpFile, databaseName: target });
    expect(result.problems).toEqual([]);
    expect(result.integrity.failures).toEqual([]);
    expect(result.integrity.checked).toBeGreaterThanOrEqual(backup.manifest.versions.length - result.draftsGone);

    // Independently of the restore's own report: every frozen version of the live database is in the copy, with the
    // same blob bytes (hashed here with node:crypto) and the same coefficient checksum.
    const copy = knexFactory(knexConfig({ databaseName: target }));
    try {
      const live = (await storedChecksums(db())).filter((v) => ["released", "retired", "in-review"].includes(v.state) && backup.manifest.versions.some((m) => m.model === v.model && m.version === v.version));
      const copied = new Map((await storedChecksums(copy)).map((v) => [`${v.model}@${v.version}`, v]));
      expect(live.length).toBeGreaterThan(0);
      for (const v of live) expect(copied.get(`${v.model}@${v.version}`), `${v.model} v${v.version}`).toEqual(v);
      const blobs: { sha256: string; bytes: Buffer }[] = await copy("version_blobs").select("sha256", "bytes");
      for (const blob of blobs) expect(createHash("sha256").update(blob.bytes).digest("hex")).toBe(blob.sha256);
      // The run caught mid-way has no version in the copy: a version row always comes with its blob.
      const run: { state: string; version_id: number | null; progress_done: number; progress_total: number } = await copy("runs").where({ id: runId }).first();
      expect(run.state).toBe("running");
      expect(run.progress_done).toBeGreaterThan(0);
      expect(run.progress_done).toBeLessThan(run.progress_total);
      expect(run.version_id).toBeNull();
      expect((await verifyStoredVersions(copy)).failures).toEqual([]);
      // The triggers that freeze released coefficients came along.
      const triggers: { TRIGGER_NAME: string }[] = await copy("information_schema.TRIGGERS").select("TRIGGER_NAME").where({ TRIGGER_SCHEMA: target });
      expect(triggers.map((t) => t.TRIGGER_NAME).sort()).toEqual(["model_versions_frozen_delete", "model_versions_frozen_update", "version_blobs_frozen_delete", "version_blobs_frozen_update"]);
    } finally {
      await copy.destroy();
    }
  }, 120_000);

  it("the run finishes in the live database with a verified version", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const { run } = await waitForRun(modeller, runId, 240_000);
    expect(run.state).toBe("succeeded");
    expect((await verifyStoredVersions(db())).failures).toEqual([]);
  }, 250_000);

  it("refuses a database that is not empty", async () => {
    await expect(runRestore({ config: getConfig(), dumpFile: backup.dumpFile, databaseName: source })).rejects.toThrow(/is not empty/);
  });

  it("refuses a damaged dump file before writing anything", async () => {
    mkdirSync(path.join(outDir, "damaged"), { recursive: true });
    const damaged = path.join(outDir, "damaged", path.basename(backup.dumpFile));
    const bytes = readFileSync(backup.dumpFile);
    bytes[Math.floor(bytes.length / 2)] ^= 0xff;
    writeFileSync(damaged, bytes);
    copyFileSync(manifestPathFor(backup.dumpFile), manifestPathFor(damaged));
    const target = `${source}_restore_b`;
    restored.push(target);
    await expect(runRestore({ config: getConfig(), dumpFile: damaged, databaseName: target })).rejects.toThrow(/the file is damaged/);
    const [row] = await db()("information_schema.SCHEMATA").where({ SCHEMA_NAME: target }).count<{ n: number }[]>({ n: "*" });
    expect(Number(row!.n)).toBe(0);
  });

  it("fails loudly, naming the version, when a blob in the dump no longer matches its checksum", async () => {
    // A dump whose file checksum is right but one coefficient byte of one blob is changed (as a tampered or
    // mis-written backup would be): the manifest's file hash is recomputed so only the blob check can catch it.
    const sql = gunzipSync(readFileSync(backup.dumpFile)).toString("latin1");
    const at = sql.indexOf("INSERT INTO `version_blobs` VALUES");
    expect(at).toBeGreaterThan(0);
    const hexStart = sql.indexOf(",0x", at) + 3;
    const pos = hexStart + 400;
    const flipped = sql[pos] === "0" ? "1" : "0";
    const tampered = sql.slice(0, pos) + flipped + sql.slice(pos + 1);
    mkdirSync(path.join(outDir, "tampered"), { recursive: true });
    const file = path.join(outDir, "tampered", path.basename(backup.dumpFile));
    const gz = gzipSync(Buffer.from(tampered, "latin1"));
    writeFileSync(file, gz);
    const manifest = JSON.parse(readFileSync(manifestPathFor(backup.dumpFile), "utf8"));
    manifest.dumpSha256 = createHash("sha256").update(gz).digest("hex");
    writeFileSync(manifestPathFor(file), JSON.stringify(manifest));
    const target = `${source}_restore_c`;
    restored.push(target);
    let caught: unknown;
    try {
      await runRestore({ config: getConfig(), dumpFile: file, databaseName: target });
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(RestoreError);
    const message = (caught as Error).message;
    expect(message).toMatch(/failed verification/);
    expect(message).toMatch(/ v\d+ \([a-z-]+\): (blob SHA-256|the file does not decode)/);
  }, 120_000);
});

import { afterAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { reviewVersion } from "@/lib/db/reviews";
import { submitVersion } from "@/lib/db/versions";
import { closeMailQueue } from "@/lib/mail/queue";
import { freePort } from "../helpers/mail";
import { actorFor, createTestModel, storeSyntheticVersion } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

// The job queue is unreachable in this file: Redis is looked for where nothing listens. Set before anything reads
// the configuration.
process.env.REDIS_URL = `redis://127.0.0.1:${await freePort()}`;

testDatabaseName();

afterAll(async () => {
  await closeMailQueue();
  await closeDb();
});

describe("mail while the job queue is down", () => {
  it("a submission and a decision still go through; their mails stay queued with the reason, for a worker to queue later", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const reviewer = await actorFor("reviewer@velora.test");
    const slug = await createTestModel(modeller);
    const { id } = await storeSyntheticVersion(slug, modeller.userId);
    expect((await submitVersion(modeller, slug, 1)).state).toBe("in-review");
    expect((await reviewVersion(reviewer, slug, 1, { decision: "approve", comment: "Fine." })).state).toBe("released");

    const rows: { kind: string; recipient: string; state: string; attempts: number; last_error: string }[] = await db()("notifications").where({ version_id: id }).orderBy("id");
    expect(rows.map((r) => r.kind)).toContain("version-submitted");
    expect(rows.at(-1)).toMatchObject({ kind: "version-decided", recipient: "modeller@velora.test", state: "queued", attempts: 0 });
    for (const row of rows) expect(row.last_error).toMatch(/^not queued yet \(the job queue did not answer/);
  });
});

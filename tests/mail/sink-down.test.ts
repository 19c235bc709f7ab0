import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb, db } from "@/lib/db/knex";
import { reviewVersion } from "@/lib/db/reviews";
import { getVersion, submitVersion } from "@/lib/db/versions";
import { enqueueMail, recordMail } from "@/lib/mail";
import { closeMailQueue } from "@/lib/mail/queue";
import { versionPageUrl } from "@/lib/mail/review";
import { startMailSink, type MailSinkHandle } from "@/lib/mail/sink";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { freePort, inProcessMailWorker, waitForMail } from "../helpers/mail";
import { actorFor, createTestModel, storeSyntheticVersion } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

// This file sends to an SMTP port of its own, where at first nothing listens, on a queue of its own (the run's other
// mail workers never see its jobs), with short retry delays: 100 ms doubled per try, six tries (100 + 200 + 400 +
// 800 + 1600 ms between them). Set before anything reads the configuration.
const port = await freePort();
process.env.SMTP_PORT = String(port);
process.env.QUEUE_PREFIX = `${process.env.QUEUE_PREFIX}:sink-down`;
process.env.MAIL_RETRY_DELAY_MS = "100";
process.env.MAIL_ATTEMPTS = "6";

testDatabaseName();
let dir = "";
let sink: MailSinkHandle | null = null;
let worker: MailWorkerHandle;
let modeller: Actor;
let reviewer: Actor;

beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), "stillpoint-sink-down-"));
  modeller = await actorFor("modeller@velora.test");
  reviewer = await actorFor("reviewer@velora.test");
  worker = inProcessMailWorker({ sweepEveryMs: 200, sweepAfterMs: 2000 });
});

afterAll(async () => {
  await worker?.close();
  await sink?.close();
  await closeMailQueue();
  await closeDb();
  await rm(dir, { recursive: true, force: true });
});

interface Row {
  id: number;
  kind: string;
  recipient: string;
  state: string;
  attempts: number;
  last_error: string | null;
}

async function waitForRow(where: Record<string, unknown>, done: (row: Row) => boolean, timeoutMs = 30_000): Promise<Row> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const row: Row | undefined = await db()("notifications").where(where).orderBy("id", "desc").first();
    if (row && done(row)) return row;
    if (Date.now() > until) throw new Error(`no notification ${JSON.stringify(where)} reached the expected state: ${JSON.stringify(row)}`);
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
}

describe("mail while the SMTP server is down", () => {
  it("a decision made while the sink is down stands; its mail is retried with the error on its row and arrives once the sink is up", async () => {
    const slug = await createTestModel(modeller);
    const { id: versionId } = await storeSyntheticVersion(slug, modeller.userId);
    await submitVersion(modeller, slug, 1);
    const comment = `Bin 3 is above the limit (${slug})`;
    const decided = await reviewVersion(reviewer, slug, 1, { decision: "return", comment });
    expect(decided.state).toBe("draft");

    const failing = await waitForRow({ version_id: versionId, kind: "version-decided" }, (r) => r.attempts >= 2);
    expect(failing.state).toBe("queued");
    expect(failing.recipient).toBe("modeller@velora.test");
    expect(failing.last_error).toMatch(/ECONNREFUSED/);
    // The decision is in the version's history whatever became of the mail.
    const meanwhile = await getVersion(modeller, slug, 1);
    expect(meanwhile.state).toBe("draft");
    expect(meanwhile.history.at(-1)).toMatchObject({ state: "draft", by: "reviewer@velora.test", comment });

    sink = await startMailSink({ port, dir });
    const [mail] = await waitForMail((m) => m.subject === `Returned to draft: ${slug} version 1`, { dir });
    expect(mail.envelope.to).toEqual(["modeller@velora.test"]);
    expect(mail.text).toContain(comment);
    expect(mail.text).toContain(versionPageUrl(slug, 1));
    const sent = await waitForRow({ id: failing.id }, (r) => r.state === "sent");
    expect(sent.attempts).toBeGreaterThanOrEqual(failing.attempts + 1);
    expect(sent.last_error).toBeNull();
  });

  it("a row written while the queue could not take it is put back on the queue by a mail worker and sent", async () => {
    const subject = `Swept ${process.pid}-${Date.now()}`;
    // recordMail without dispatchMail: what is left when Redis did not answer at the time.
    const [id] = await db().transaction((trx) => recordMail(trx, [{ kind: "version-decided", to: [{ email: "modeller@velora.test", userId: modeller.userId }], subject, text: "late" }]));
    await waitForMail((m) => m.subject === subject, { dir });
    expect(await waitForRow({ id }, (r) => r.state === "sent")).toMatchObject({ attempts: 1 });
  });

  it("a permanent refusal (an unknown mailbox) is not retried: the row fails after one try, with the server's answer", async () => {
    const [id] = await enqueueMail({ kind: "version-decided", to: [{ email: "nobody@stillpoint.invalid", userId: null }], subject: "Refused", text: "x" });
    const failed = await waitForRow({ id }, (r) => r.state === "failed");
    expect(failed.attempts).toBe(1);
    expect(failed.last_error).toMatch(/550/);
  });
});

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { enqueueMail } from "@/lib/mail";
import { closeMailQueue } from "@/lib/mail/queue";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { actorFor } from "../helpers/registry";
import { inProcessMailWorker, waitForMail } from "../helpers/mail";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();
const tag = `${process.pid}-${Date.now().toString(36)}`;
let worker: MailWorkerHandle;

beforeAll(() => {
  worker = inProcessMailWorker();
});

afterAll(async () => {
  await worker?.close();
  await closeMailQueue();
  await closeDb();
});

async function rowsOf(ids: number[]) {
  return db()("notifications").whereIn("id", ids).orderBy("id");
}

async function waitForRows(ids: number[], state: string, timeoutMs = 30_000) {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const rows = await rowsOf(ids);
    if (rows.every((r: { state: string }) => r.state === state)) return rows;
    if (Date.now() > until) throw new Error(`notifications ${ids.join(", ")} not ${state} after ${timeoutMs} ms: ${JSON.stringify(rows.map((r: { state: string }) => r.state))}`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

describe("mail through the queue", () => {
  it("records one queued row per recipient, sends each copy through the local sink and marks it sent after one try", async () => {
    const reviewer = await actorFor("reviewer@velora.test");
    const subject = `Queue check ${tag}`;
    const ids = await enqueueMail({
      kind: "version-submitted",
      to: [
        { email: "reviewer@velora.test", userId: reviewer.userId },
        { email: "outside-reviewer@stillpoint.test", userId: null },
      ],
      subject,
      text: `Body of ${tag}`,
    });
    expect(ids).toHaveLength(2);

    const rows = await waitForRows(ids, "sent");
    expect(rows.map((r: { recipient: string; attempts: number; recipient_user_id: number | null }) => [r.recipient, r.attempts, r.recipient_user_id])).toEqual([
      ["reviewer@velora.test", 1, reviewer.userId],
      ["outside-reviewer@stillpoint.test", 1, null],
    ]);
    for (const row of rows) {
      expect(row.sent_at).toBeInstanceOf(Date);
      expect(row.last_error).toBeNull();
    }

    const mails = await waitForMail((m) => m.subject === subject, { count: 2 });
    expect(mails.map((m) => m.envelope.to).sort()).toEqual([["outside-reviewer@stillpoint.test"], ["reviewer@velora.test"]]);
    for (const mail of mails) {
      expect(mail.text.trim()).toBe(`Body of ${tag}`);
      expect(mail.kind).toBe("version-submitted");
      // The row keeps the Message-ID the sink saw.
      expect(rows.map((r: { message_id: string }) => r.message_id)).toContain(mail.messageId);
    }
  });

  it("sends nothing twice when the same row is put on the queue again", async () => {
    const subject = `Once only ${tag}`;
    const [id] = await enqueueMail({ kind: "version-decided", to: [{ email: "modeller@velora.test", userId: null }], subject, text: "once" });
    await waitForRows([id], "sent");
    const { dispatchMail } = await import("@/lib/mail");
    await dispatchMail([id]);
    await new Promise((resolve) => setTimeout(resolve, 1000));
    expect(await waitForMail((m) => m.subject === subject)).toHaveLength(1);
    expect((await rowsOf([id]))[0].attempts).toBe(1);
  });
});

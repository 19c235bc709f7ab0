import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { enqueueMail } from "@/lib/mail";
import { closeMailQueue } from "@/lib/mail/queue";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { inProcessMailWorker, waitForMail } from "../helpers/mail";

// A development start (npm start sets MAILBOX_PAGE=1): set before anything reads the configuration.
process.env.MAILBOX_PAGE = "1";

let server: AppServer;
let worker: MailWorkerHandle;
const tag = `${process.pid}-${Date.now().toString(36)}`;

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessMailWorker();
});

afterAll(async () => {
  await worker?.close();
  await server?.close();
  await closeMailQueue();
  await closeDb();
});

describe("the mailbox page in a development start", () => {
  it("lists what the local sink received, newest first, with the body readable, and every mail's state and tries", async () => {
    await enqueueMail({ kind: "version-decided", to: [{ email: "modeller@velora.test", userId: null }], subject: `Older ${tag}`, text: `First body ${tag}\nline two` });
    await waitForMail((m) => m.subject === `Older ${tag}`);
    await enqueueMail({ kind: "version-submitted", to: [{ email: "reviewer@velora.test", userId: null }], subject: `Newer ${tag}`, text: `Second body ${tag}` });
    await waitForMail((m) => m.subject === `Newer ${tag}`);

    const admin = server.agent();
    await signIn(admin, "admin@velora.test", DEMO_PASSWORD);
    const home = await admin.get("/").expect(200);
    expect(home.text).toMatch(/<a[^>]*href="\/mailbox"[^>]*>Mailbox<\/a>/);
    const page = await admin.get("/mailbox").expect(200);
    const html = page.text.replace(/<!-- -->/g, "");
    const received = html.slice(html.indexOf('data-testid="mailbox"'), html.indexOf('data-testid="notifications"'));
    expect(received.indexOf(`Newer ${tag}`)).toBeGreaterThan(0);
    expect(received.indexOf(`Older ${tag}`)).toBeGreaterThan(received.indexOf(`Newer ${tag}`));
    expect(received).toContain(`First body ${tag}\nline two`);
    expect(received).toContain("to reviewer@velora.test");

    const sent = html.slice(html.indexOf('data-testid="notifications"'));
    const row = sent.split("<tr").find((r) => r.includes(`Newer ${tag}`))!;
    const cells = row
      .slice(row.indexOf(">") + 1)
      .split("</td>")
      .map((cell) => cell.replace(/<!-- -->/g, "").replace(/<[^>]+>/g, "").trim());
    // Written, kind, to, subject, state, tries, last error.
    expect(cells.slice(1, 7)).toEqual(["version-submitted", "reviewer@velora.test", `Newer ${tag}`, "sent", "1", ""]);
  });

  it("is still for admins only", async () => {
    const reviewer = server.agent();
    await signIn(reviewer, "reviewer@velora.test", DEMO_PASSWORD);
    await reviewer.get("/mailbox").expect(403);
    expect((await reviewer.get("/").expect(200)).text).not.toMatch(/href="\/mailbox"/);
  });
});

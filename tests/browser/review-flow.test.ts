import { mkdirSync } from "node:fs";
import path from "node:path";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb } from "@/lib/db/knex";
import { submitVersion } from "@/lib/db/versions";
import { closeMailQueue } from "@/lib/mail/queue";
import { versionPageUrl } from "@/lib/mail/review";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, step } from "../helpers/browser";
import { inProcessMailWorker, waitForMail } from "../helpers/mail";
import { actorFor, createTestModel, storeSyntheticVersion, syntheticStatistics } from "../helpers/registry";
import { REPO_ROOT } from "../helpers/test-database";

// The review in a real browser (Debian's chromium) against the production build, with a mail worker in this process:
// a reviewer returns a version from its page, its modeller resubmits it, the reviewer approves it, the catalogue
// shows it released and the modeller's mail is in the local sink. Each person has a browser context of their own.

const SHOTS_DIR = path.join(REPO_ROOT, ".data", "browser-shots");
let server: AppServer;
let worker: MailWorkerHandle;
let browser: Browser;
let modeller: Actor;
let slug = "";
const people: Record<"reviewer" | "modeller", { context: BrowserContext; page: Page } | null> = { reviewer: null, modeller: null };

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessMailWorker();
  browser = await launchBrowser();
  modeller = await actorFor("modeller@velora.test");
  slug = await createTestModel(modeller);
  await storeSyntheticVersion(slug, modeller.userId, { statistics: syntheticStatistics(0.0123, 0.00456) });
  await submitVersion(modeller, slug, 1);
  mkdirSync(SHOTS_DIR, { recursive: true });
});

afterAll(async () => {
  for (const person of Object.values(people)) await person?.context.close();
  await browser?.close();
  await worker?.close();
  await server?.close();
  await closeMailQueue();
  await closeDb();
});

let failedStep: string | null = null;

/** A page signed in as one of the demo people (one context each, kept across steps). */
async function pageOf(who: "reviewer" | "modeller"): Promise<Page> {
  let person = people[who];
  if (!person) {
    const context = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1360, height: 900 } });
    context.setDefaultTimeout(20_000);
    const page = await context.newPage();
    await page.goto("/sign-in");
    await page.getByLabel("E-mail").fill(`${who}@velora.test`);
    await page.getByLabel("Password").fill(DEMO_PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL((url) => url.pathname === "/");
    person = { context, page };
    people[who] = person;
  }
  return person.page;
}

async function flow(name: string, who: "reviewer" | "modeller", action: (page: Page) => Promise<void>): Promise<void> {
  if (failedStep !== null) throw new Error(`not run: the earlier step "${failedStep}" failed`);
  const page = await pageOf(who);
  try {
    await step(page, name, () => action(page));
  } catch (error) {
    failedStep = name;
    throw error;
  }
}

const historyStates = (page: Page) => page.getByTestId("history-table").locator("tbody [data-state]").allTextContents();

describe("a review in the browser", () => {
  const comment = "The residual map peaks at the field edge; validate up to 30 nm RMS.";

  it("the reviewer opens the queue, reads the version's page and returns it with a comment", async () => {
    await flow("return", "reviewer", async (page) => {
      await page.getByRole("link", { name: "Reviews" }).click();
      await page.waitForURL((url) => url.pathname === "/reviews");
      const row = page.getByTestId("queue-row").filter({ hasText: slug });
      await expect(row.textContent()).resolves.toContain("0.0123");
      await page.screenshot({ path: path.join(SHOTS_DIR, "review-queue.png"), fullPage: true });
      await row.getByRole("link").click();
      await page.waitForURL((url) => url.pathname === `/models/${slug}/versions/1`);
      await expect(page.getByTestId("version-state").textContent()).resolves.toBe("in-review");
      // What the reviewer reads before deciding: the residual maps and the statistics, the validity range.
      await expect(page.getByTestId("statistics-table").isVisible()).resolves.toBe(true);
      await expect(page.getByTestId("validity-table").isVisible()).resolves.toBe(true);
      await page.screenshot({ path: path.join(SHOTS_DIR, "review-version-page.png"), fullPage: true });

      // A return without a comment is refused beside the comment field, before anything is sent.
      await page.getByTestId("decision-return").check();
      await page.getByRole("button", { name: "Return to draft" }).click();
      await expect(page.locator('[data-field-error="review-comment"]').textContent()).resolves.toBe("Returning a version needs a comment that says what to change.");
      await page.getByLabel("Comment", { exact: true }).fill(comment);
      await page.getByRole("button", { name: "Return to draft" }).click();
      await expect.poll(() => page.getByTestId("version-state").textContent(), { timeout: 15_000 }).toBe("draft");
      await expect(page.getByTestId("review-panel").count()).resolves.toBe(0);
      await expect(page.getByTestId("returned-comment").textContent()).resolves.toContain(comment);
      await expect(historyStates(page)).resolves.toEqual(["draft", "in-review", "draft"]);
      await expect(page.getByTestId("history-table").textContent()).resolves.toContain(comment);
    });
  });

  it("the modeller reads the comment on the page and resubmits", async () => {
    await flow("resubmit", "modeller", async (page) => {
      await page.goto(`/models/${slug}/versions/1`);
      await expect(page.getByTestId("returned-comment").textContent()).resolves.toContain(comment);
      await expect(page.getByTestId("review-panel").count()).resolves.toBe(0);
      await page.getByRole("button", { name: "Submit for review" }).click();
      await expect.poll(() => page.getByTestId("version-state").textContent(), { timeout: 15_000 }).toBe("in-review");
      await expect(historyStates(page)).resolves.toEqual(["draft", "in-review", "draft", "in-review"]);
    });
  });

  it("the reviewer approves it from the queue, and the catalogue shows it released", async () => {
    await flow("approve", "reviewer", async (page) => {
      await page.goto("/reviews");
      await page.getByTestId("queue-row").filter({ hasText: slug }).getByRole("link").click();
      await page.waitForURL((url) => url.pathname === `/models/${slug}/versions/1`);
      await page.getByTestId("decision-approve").check();
      await page.getByLabel("Comment", { exact: true }).fill("Validated to 30 nm now; released.");
      await page.getByRole("button", { name: "Approve and release" }).click();
      await expect.poll(() => page.getByTestId("version-state").textContent(), { timeout: 15_000 }).toBe("released");
      await expect(historyStates(page)).resolves.toEqual(["draft", "in-review", "draft", "in-review", "released"]);
      await page.goto("/reviews");
      await expect(page.getByTestId("queue-row").filter({ hasText: slug }).count()).resolves.toBe(0);
      await page.goto(`/?q=${encodeURIComponent(slug)}`);
      await expect(page.locator(`[data-model="${slug}"] [data-state]`).allTextContents()).resolves.toEqual(["released"]);
    });
  });

  it("the modeller's decision mails are in the local sink, with the comment and the version's link", async () => {
    const link = versionPageUrl(slug, 1);
    const [returned] = await waitForMail((m) => m.subject === `Returned to draft: ${slug} version 1`);
    expect(returned.envelope.to).toEqual(["modeller@velora.test"]);
    expect(returned.text).toContain(comment);
    expect(returned.text).toContain(link);
    const [released] = await waitForMail((m) => m.subject === `Released: ${slug} version 1`);
    expect(released.envelope.to).toEqual(["modeller@velora.test"]);
    expect(released.text).toContain("Validated to 30 nm now; released.");
  });
});

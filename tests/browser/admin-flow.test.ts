import { mkdirSync } from "node:fs";
import path from "node:path";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { closeMailQueue } from "@/lib/mail/queue";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, step } from "../helpers/browser";
import { inProcessMailWorker, waitForMail } from "../helpers/mail";
import { modelWithReleasedVersions } from "../helpers/released";
import { REPO_ROOT } from "../helpers/test-database";

// An admin in a real browser (Debian's chromium) against the production build, with the local mail sink: invites a
// person, who opens the link from the e-mail, chooses a password and signs in; retires a version, and the version page
// shows the retirement to the admin and to the new person alike.

const tag = `${process.pid}-${Date.now().toString(36)}`;
const SHOTS = path.join(REPO_ROOT, ".data", "screenshots");
let server: AppServer;
let browser: Browser;
let adminContext: BrowserContext;
let admin: Page;
let mailWorker: MailWorkerHandle;
let slug: string;

async function shot(page: Page, name: string) {
  mkdirSync(SHOTS, { recursive: true });
  await page.screenshot({ path: path.join(SHOTS, `admin-${name}.png`), fullPage: true });
}

async function signInPage(page: Page, email: string, password: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => url.pathname === "/");
}

beforeAll(async () => {
  server = await startAppServer();
  mailWorker = inProcessMailWorker();
  slug = await modelWithReleasedVersions(2);
  browser = await launchBrowser();
  adminContext = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1400, height: 1000 } });
  adminContext.setDefaultTimeout(20_000);
  admin = await adminContext.newPage();
  await signInPage(admin, "admin@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await adminContext?.close();
  await browser?.close();
  await mailWorker?.close();
  await closeMailQueue();
  await server?.close();
  await closeDb();
});

describe("an admin in the browser", () => {
  const invitee = `new-colleague-${tag}@velora.test`;
  const password = "pupil-plane-wavefront-35";
  let inviteeContext: BrowserContext;
  let person: Page;

  afterAll(async () => {
    await inviteeContext?.close();
  });

  it("invites a person, who accepts from the e-mailed link and signs in", async () => {
    await step(admin, "invite", async () => {
      await admin.goto("/people");
      const form = admin.getByRole("form", { name: "Invite a person" });
      await form.getByLabel("E-mail").fill(invitee);
      await form.getByRole("checkbox", { name: /^modeller/ }).check();
      await form.getByRole("button", { name: "Send invitation" }).click();
      await expect(admin.getByTestId("invitation-sent").textContent()).resolves.toContain(`Invitation sent to ${invitee}`);
      await expect(admin.locator(`[data-invitation="${invitee}"] [data-testid="invitation-state"]`).textContent()).resolves.toMatch(/^pending until /);
      await shot(admin, "people");
    });

    const [mail] = await waitForMail((m) => m.to.includes(invitee) && m.kind === "invitation");
    expect(mail.subject).toBe("You are invited to the Stillpoint model registry");
    const link = /(https?:\/\/\S+\/invite\/[A-Za-z0-9_-]{43})/.exec(mail.text)?.[1];
    expect(link).toBeDefined();

    inviteeContext = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1200, height: 900 } });
    inviteeContext.setDefaultTimeout(20_000);
    person = await inviteeContext.newPage();
    await step(person, "accept", async () => {
      // The link names the configured public address; this test's server listens elsewhere, so only its path is used.
      await person.goto(new URL(link!).pathname);
      await expect(person.getByText(invitee).count()).resolves.toBeGreaterThan(0);
      await person.getByLabel("Your name").fill("New colleague");
      await person.getByLabel("Password", { exact: true }).fill(password);
      await person.getByLabel("Password again").fill(password);
      await shot(person, "accept");
      await person.getByRole("button", { name: "Create my account" }).click();
      await expect(person.getByTestId("invitation-accepted").textContent()).resolves.toContain(`Your account ${invitee} is ready.`);
      // What the used link offered (roles, expiry) is gone with it.
      await expect(person.getByText("The link works once").count()).resolves.toBe(0);
      await person.getByRole("link", { name: "Sign in" }).click();
      await person.waitForURL((url) => url.pathname === "/sign-in");
      await person.getByLabel("E-mail").fill(invitee);
      await person.getByLabel("Password").fill(password);
      await person.getByRole("button", { name: "Sign in" }).click();
      await person.waitForURL((url) => url.pathname === "/");
      await expect(person.getByTestId("signed-in-as").textContent()).resolves.toBe(invitee);
    });

    await step(person, "link-used-once", async () => {
      await person.goto(new URL(link!).pathname);
      await expect(person.getByTestId("invitation-refused").textContent()).resolves.toContain("This invitation has been used already.");
    });
    const roles: { role: string }[] = await db()("user_roles").join("users", "users.id", "user_roles.user_id").where("users.email", invitee).select("role");
    expect(roles.map((r) => r.role).sort()).toEqual(["modeller", "viewer"]);
  });

  it("retires a version; its page shows the retirement to the admin and to the new person", async () => {
    await step(admin, "retire", async () => {
      await admin.goto("/versions");
      const row = admin.locator(`[data-version-row="${slug}/1"]`);
      await row.getByRole("button", { name: /^Retire/ }).click();
      await row.getByLabel("Reason").fill("superseded by a larger generating set");
      await row.getByLabel("Sunset").fill("2037-03-01");
      await row.getByLabel("Successor").selectOption("2");
      await shot(admin, "retire-form");
      await row.getByRole("button", { name: "Retire version 1" }).click();
      // The version moves to the retired list, where the confirmation stays beside it.
      await admin.waitForURL((url) => url.searchParams.get("view") === "retired");
      await expect(row.getByRole("status").textContent()).resolves.toMatch(/^Retired; \d+ notices? queued\.$/);
      await expect(row.getByTestId("retirement-summary").textContent()).resolves.toContain("superseded by a larger generating set");
      await shot(admin, "retired");
    });
    for (const [page, name] of [[admin, "version-admin"], [person, "version-person"]] as const) {
      await step(page, name, async () => {
        await page.goto(`/models/${slug}/versions/1`);
        await expect(page.getByTestId("version-state").textContent()).resolves.toBe("retired");
        const notice = (await page.getByTestId("retirement").textContent()) ?? "";
        expect(notice).toContain("superseded by a larger generating set");
        expect(notice).toContain("2037-03-01 00:00 UTC");
        expect(notice).toContain("version 2");
        await shot(page, name);
      });
    }
  });
});

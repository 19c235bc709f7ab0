import { readdirSync, statSync } from "node:fs";
import path from "node:path";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, step } from "../helpers/browser";
import { REPO_ROOT } from "../helpers/test-database";
import { actorFor, createTestModel } from "../helpers/registry";
import { createTrainingRun } from "@/lib/registry/training";
import { closeQueueClients } from "@/lib/queue/enqueue";

// Every page of the app, found on disk, opened in a real browser (Debian's chromium) under the Content-Security-Policy
// proxy.ts sends: no violation may be reported and no script error may occur, for a modeller and an admin. A script
// injected without the nonce must be refused, which shows the policy is in force (so this test can fail).

let server: AppServer;
let browser: Browser;
let runId = 0;

/** Every page.tsx under app/, as a path with its dynamic segments filled with the demo's own values. */
function allPages(): string[] {
  // [secret]: an invitation link's secret; a well-formed unknown one renders the accept page with its refusal.
  const values: Record<string, () => string> = { "[slug]": () => "velora-transmit", "[version]": () => "2", "[id]": () => String(runId), "[secret]": () => "A".repeat(43) };
  const found: string[] = [];
  const walk = (dir: string, segments: string[]) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) {
        if (entry === "api") continue;
        if (entry.startsWith("[") && !values[entry]) throw new Error(`no demo value for the segment ${entry} (add one here)`);
        walk(full, entry.startsWith("(") ? segments : [...segments, entry.startsWith("[") ? values[entry]!() : entry]);
      } else if (entry === "page.tsx") {
        found.push("/" + segments.join("/"));
      }
    }
  };
  walk(path.join(REPO_ROOT, "app"), []);
  // And the not-found page, which answers any address that has no page.
  return [...found, "/no-such-page-here"].sort();
}

interface Watch {
  problems: string[];
}

/** Collects CSP violations (the DOM event and the console line) and uncaught script errors of a page. */
async function watched(context: BrowserContext): Promise<{ page: Page; watch: Watch }> {
  const watch: Watch = { problems: [] };
  const page = await context.newPage();
  await page.addInitScript(() => {
    document.addEventListener("securitypolicyviolation", (event) => {
      console.error(`CSP violation: ${event.violatedDirective} blocked ${event.blockedURI || "inline"} (${event.sourceFile}:${event.lineNumber})`);
    });
  });
  page.on("console", (message) => {
    const text = message.text();
    if (/Content Security Policy|CSP violation|Refused to (load|execute|apply|connect|frame)/i.test(text)) watch.problems.push(`console: ${text}`);
  });
  page.on("pageerror", (error) => watch.problems.push(`page error: ${error.message}`));
  return { page, watch };
}

async function signedInContext(email: string): Promise<BrowserContext> {
  const context = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1400, height: 1000 } });
  context.setDefaultTimeout(20_000);
  const { page, watch } = await watched(context);
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => url.pathname === "/");
  expect(watch.problems).toEqual([]);
  await page.close();
  return context;
}

beforeAll(async () => {
  server = await startAppServer();
  browser = await launchBrowser();
  // A run to show: any run in the database, or one queued here (its page renders whether or not a worker takes it).
  const run: { id: number } | undefined = await db()("runs").select("id").orderBy("id").first();
  runId = run?.id ?? (await createTrainingRun(await actorFor("modeller@velora.test"), await createTestModel(await actorFor("modeller@velora.test")), { order: 1, generatingSet: { design: "random", size: 20, maxRmsNm: 10, seed: 3 }, validationSet: null })).id;
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

describe("the Content-Security-Policy in a real browser", () => {
  const pages = allPages();

  it("finds the pages on disk", () => {
    expect(pages).toEqual(expect.arrayContaining(["/", "/sign-in", "/account", "/tokens", "/models/velora-transmit/versions/2/playground"]));
  });

  it("the sign-in page runs under the policy and signs in (its form is client code, so blocked scripts would stop it)", async () => {
    const context = await browser.newContext({ baseURL: server.baseUrl });
    const { page, watch } = await watched(context);
    const response = await page.goto("/sign-in");
    const policy = response!.headers()["content-security-policy"] ?? "";
    expect(policy).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]{20,}' 'strict-dynamic'/);
    expect(policy).toContain("frame-ancestors 'none'");
    await page.getByLabel("E-mail").fill("viewer@velora.test");
    await page.getByLabel("Password").fill(DEMO_PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL((url) => url.pathname === "/");
    expect(watch.problems).toEqual([]);
    await context.close();
  });

  for (const email of ["modeller@velora.test", "admin@velora.test"]) {
    it(`every page opens for ${email} with no violation and no script error`, async () => {
      const context = await signedInContext(email);
      const seen: string[] = [];
      for (const pathname of pages) {
        const { page, watch } = await watched(context);
        await step(page, `csp-${email}-${pathname}`, async () => {
          const response = await page.goto(pathname, { waitUntil: "networkidle" });
          expect(response!.status()).toBeLessThan(pathname === "/no-such-page-here" ? 405 : 500);
          // The policy came with a nonce (the served HTML's script tags carrying it is checked in tests/app/security.test.ts;
          // chunks the runtime adds later carry none and run under 'strict-dynamic').
          expect(response!.headers()["content-security-policy"] ?? "").toMatch(/'nonce-[^']+'/);
          // Give the client code a moment to hydrate and fetch.
          await page.waitForTimeout(300);
          expect(watch.problems, pathname).toEqual([]);
          seen.push(pathname);
        });
        await page.close();
      }
      expect(seen).toEqual(pages);
      await context.close();
    });
  }

  it("the playground's live evaluation (fetch from the page) passes connect-src", async () => {
    const context = await signedInContext("viewer@velora.test");
    const { page, watch } = await watched(context);
    await page.goto("/models/velora-transmit/versions/2/playground", { waitUntil: "networkidle" });
    const evaluated = page.waitForResponse((r) => r.url().includes("/evaluate") && r.request().method() === "POST");
    const slider = page.getByRole("slider").first();
    await slider.focus();
    await page.keyboard.press("ArrowRight");
    expect((await evaluated).status()).toBe(200);
    await page.waitForTimeout(300);
    expect(watch.problems).toEqual([]);
    await context.close();
  });

  it("refuses a script in the page that lacks the nonce, and says so", async () => {
    const context = await signedInContext("viewer@velora.test");
    const { page, watch } = await watched(context);
    // The page as served, with one inline script added that carries no nonce (as injected markup would).
    await page.route("**/account", async (route) => {
      const response = await route.fetch();
      const html = (await response.text()).replace("</body>", "<script>window.__injected = true</script></body>");
      await route.fulfill({ response, body: html });
    });
    await page.goto("/account", { waitUntil: "networkidle" });
    expect(await page.evaluate(() => (window as unknown as { __injected?: boolean }).__injected === true)).toBe(false);
    expect(watch.problems.some((p) => /script-src/.test(p))).toBe(true);
    // The page's own scripts ran all the same: its form is there and interactive.
    await expect(page.getByRole("button", { name: "Save name" }).isEnabled()).resolves.toBe(true);
    await context.close();
  });

  it("cannot be framed: frame-ancestors 'none' on pages, X-Frame-Options DENY everywhere", async () => {
    const context = await signedInContext("viewer@velora.test");
    const { page } = await watched(context);
    await page.goto("/api/v1/openapi.json");
    await page.setContent(`<iframe id="f" src="${server.baseUrl}/account"></iframe>`);
    await page.waitForTimeout(1000);
    const frame = page.frames().find((f) => f.url().includes("/account"));
    const framedText = frame ? await frame.evaluate(() => document.body?.innerText ?? "").catch(() => "") : "";
    expect(framedText).not.toContain("Account");
    await context.close();
  });
});

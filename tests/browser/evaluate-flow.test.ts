import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, signedInPage, step } from "../helpers/browser";

// A viewer in a real browser (Debian's chromium) against the production build: a token made on the tokens page works
// from a plain fetch outside the browser until it is revoked there; the playground's maps follow a slider.

const tag = `${process.pid}-${Date.now().toString(36)}`;
let server: AppServer;
let browser: Browser;
let context: BrowserContext;
let page: Page;

beforeAll(async () => {
  server = await startAppServer();
  browser = await launchBrowser();
  context = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1400, height: 1000 } });
  context.setDefaultTimeout(20_000);
  page = await signedInPage(context, "viewer@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await context?.close();
  await browser?.close();
  await server?.close();
  await closeDb();
});

/** Evaluate one wavefront on the demo's released version with nothing but a token, as a downstream script would. */
function evaluateWithToken(secret: string) {
  return fetch(`${server.baseUrl}/api/v1/models/velora-transmit/versions/2/evaluate`, {
    method: "POST",
    headers: { authorization: `Bearer ${secret}`, "content-type": "application/json" },
    body: JSON.stringify({ wavefronts: [{ ordering: "noll", coefficientsNm: { "4": 3.2, "11": -1.5 } }], output: "summary" }),
  });
}

describe("a viewer in the browser", () => {
  it("creates an evaluate token, reads its secret once, evaluates with it from a plain fetch, and revokes it", async () => {
    await step(page, "evaluate-token", async () => {
      await page.goto("/tokens");
      // The train scope is offered to modellers only.
      await expect(page.getByRole("checkbox", { name: /train/ }).count()).resolves.toBe(0);
      const name = `budget-script-${tag}`;
      await page.getByLabel("Name").fill(name);
      await page.getByRole("checkbox", { name: /^read/ }).uncheck();
      await page.getByRole("button", { name: "Create token" }).click();
      await expect(page.getByTestId("token-secret").textContent()).resolves.toContain("you will not see it again");
      const secret = (await page.getByTestId("token-value").textContent())!;
      expect(secret).toMatch(/^stp_[A-Za-z0-9_-]{43}$/);

      const answer = await evaluateWithToken(secret);
      expect(answer.status).toBe(200);
      const body = (await answer.json()) as { model: string; version: number; state: string; results: { peakAbsTtlPmPerNrad: number }[]; notice: string };
      expect([body.model, body.version, body.state]).toEqual(["velora-transmit", 2, "released"]);
      expect(body.results).toHaveLength(1);
      expect(body.results[0].peakAbsTtlPmPerNrad).toBeGreaterThan(0);
      expect(body.notice).toBe(SURROGATE_NOTICE);
      // The evaluate scope alone does not read.
      const read = await fetch(`${server.baseUrl}/api/v1/models/velora-transmit`, { headers: { authorization: `Bearer ${secret}` } });
      expect(read.status).toBe(403);

      await page.reload();
      await expect(page.getByTestId("token-value").count()).resolves.toBe(0);
      const row = page.locator(`[data-token="${name}"]`);
      await expect(row.locator("td").nth(2).textContent()).resolves.toBe("evaluate");
      await row.getByRole("button", { name: "Revoke…" }).click();
      await row.getByRole("button", { name: "Keep it" }).click();
      expect((await evaluateWithToken(secret)).status).toBe(200);
      await row.getByRole("button", { name: "Revoke…" }).click();
      await row.getByRole("button", { name: "Revoke now" }).click();
      await expect.poll(() => row.getByTestId("token-status").textContent()).toMatch(/^revoked /);
      const refused = await evaluateWithToken(secret);
      expect(refused.status).toBe(401);
      expect(((await refused.json()) as { detail: string }).detail).toBe("The token has been revoked.");
    });
  });

  it("moves a playground slider and sees the maps follow it", async () => {
    await step(page, "playground", async () => {
      await page.goto("/playground");
      await page.waitForURL("**/models/velora-transmit/versions/2/playground");
      const maps = page.getByTestId("ttl-maps");
      const corner = page.locator('[data-testid="map-x"] rect[data-node="0,24"]');
      await corner.waitFor();
      const before = { evaluated: await maps.getAttribute("data-evaluated"), fill: await corner.getAttribute("fill") };
      await expect(page.locator('[data-testid="map-x"] rect[data-node]').count()).resolves.toBe(25 * 25);
      await expect(page.getByRole("img", { name: /^Colour scale from -.* to .* pm\/nrad$/ }).count()).resolves.toBe(1);

      // sqrt(6^2 + 12^2 + 4^2 + 2.5^2 + 3^2) = sqrt(211.25) = 14.534 nm: the example wavefront plus 12 nm of Z5.
      await page.getByLabel("Z5 (nm RMS)").fill("12");
      await expect.poll(() => maps.getAttribute("data-evaluated")).toContain('"5":12');
      expect(await maps.getAttribute("data-evaluated")).not.toBe(before.evaluated);
      await expect.poll(() => corner.getAttribute("fill")).not.toBe(before.fill);
      await expect(page.getByTestId("total-rms").textContent()).resolves.toMatch(/^Total 14\.53 nm RMS/);
      await expect(page.getByTestId("validity").getAttribute("data-in-range")).resolves.toBe("true");

      await corner.hover();
      await expect(page.getByTestId("hover-readout").textContent()).resolves.toMatch(/^Node \(0, 24\) at θ = \(-60, 60\) nrad: c_x -?\d/);
      await expect(page.getByText(SURROGATE_NOTICE).count()).resolves.toBeGreaterThan(0);

      await page.getByTestId("run-exact").click();
      await page.getByTestId("difference-maps").waitFor({ timeout: 60_000 });
      await expect(page.getByTestId("exact-summary").textContent()).resolves.toMatch(/^Largest \|surrogate − exact\| \d/);
    });
  });
});

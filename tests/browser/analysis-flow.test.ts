import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, signedInPage, step } from "../helpers/browser";
import { inProcessWorker } from "../helpers/registry";

// A viewer on the analysis page of the demo's released version, in a real browser against the production build: the
// worst case with its maps, the maximising wavefront propagated exactly, the modes and the noise budget.

let server: AppServer;
let browser: Browser;
let context: BrowserContext;
let page: Page;
let worker: WorkerHandle;

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessWorker(`analysis-browser-${process.pid}`);
  browser = await launchBrowser();
  context = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1400, height: 1000 } });
  context.setDefaultTimeout(30_000);
  page = await signedInPage(context, "viewer@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await worker?.close(true);
  await closeQueueClients();
  await context?.close();
  await browser?.close();
  await server?.close();
  await closeDb();
});

describe("the analysis page", () => {
  it("shows the worst case with the worst node marked, and propagates the maximising wavefront exactly", async () => {
    await step(page, "analysis-worst-case", async () => {
      await page.goto("/models/velora-transmit/versions/2");
      await page.getByTestId("analysis-link").click();
      await page.waitForURL((url) => url.pathname === "/models/velora-transmit/versions/2/analysis");
      await expect(page.getByText(SURROGATE_NOTICE).count()).resolves.toBeGreaterThan(0);
      await page.getByTestId("worst-run").click();
      const summary = page.getByTestId("worst-summary");
      await summary.waitFor();
      // The demo model's worst case for 30 nm RMS (PHYSICS.md section 6; seeded demo v2).
      await expect(summary.textContent()).resolves.toMatch(/Worst \|TTL\| [0-9.]+ pm\/nrad at θ = \(/);
      await expect(page.getByTestId("worst-exact-maps").locator("svg[data-plot=heatmap] circle").count()).resolves.toBe(1);
      // The maximising wavefront as a picture over the pupil (its raster drawn, the aperture outlined) beside its bars.
      const pupil = page.getByTestId("worst-pupil");
      await pupil.locator("svg[data-plot=pupil-map] image[data-raster]").waitFor();
      await expect(pupil.locator("[data-aperture]").count()).resolves.toBe(1);
      await expect(pupil.getByTestId("worst-pupil-0").getAttribute("aria-label")).resolves.toMatch(/RMS over the cells [0-9.]+ nm/);
      await page.getByTestId("worst-exact").click();
      await expect(page.getByTestId("worst-exact-result").textContent()).resolves.toMatch(/exact c[xy] -?[0-9.]+ pm\/nrad, model -?[0-9.]+ pm\/nrad/);
    });
  });

  it("computes the modes and the noise budget of the shown wavefront", async () => {
    await step(page, "analysis-modes-noise", async () => {
      await page.getByTestId("modes-run").click();
      await page.getByTestId("modes-sigma").waitFor();
      await expect(page.getByTestId("modes-split").count()).resolves.toBe(1);
      // The leading and the trailing mode as pupil pictures, with their singular values.
      await page.getByTestId("modes-pupil").locator("svg[data-plot=pupil-map] image[data-raster]").nth(1).waitFor();
      await expect(page.getByTestId("modes-pupil").textContent()).resolves.toMatch(/mode 1 \(σ [0-9.]+\)/);
      await page.getByTestId("noise-run").click();
      await expect(page.getByTestId("noise-summary").textContent()).resolves.toMatch(/√\(cx² \+ cy²\) = [0-9.]+ pm\/nrad/);
      await expect(page.getByTestId("noise-margins").locator("tbody tr").count()).resolves.toBe(5);
    });
  });

  it("fits an uploaded height map and shows the map, the fit and the residual as pictures", async () => {
    await step(page, "analysis-fit", async () => {
      // 4 nm of defocus on a 32 x 32 grid spanning the aperture (Noll 1976, Table I: sqrt(3)(2 rho^2 - 1)).
      const diameter = Number(await page.getByLabel("Aperture diameter (m)").inputValue());
      const n = 32;
      const rows = Array.from({ length: n }, (_, iy) =>
        Array.from({ length: n }, (_, ix) => {
          const rho2 = ((ix - (n - 1) / 2) ** 2 + (iy - (n - 1) / 2) ** 2) / ((n - 1) / 2) ** 2;
          return String(4 * Math.sqrt(3) * (2 * rho2 - 1));
        }).join(","),
      );
      await page.getByTestId("fit-file").setInputFiles({ name: "defocus.csv", mimeType: "text/csv", buffer: Buffer.from(rows.join("\n")) });
      await page.getByTestId("fit-pixel").fill(String(diameter / (n - 1)));
      await page.getByTestId("fit-run").click();
      await page.getByTestId("fit-summary").waitFor();
      await page.getByTestId("fit-pupil").locator("svg[data-plot=pupil-map] image[data-raster]").nth(1).waitFor();
      await page.getByTestId("fit-residual").locator("svg[data-plot=pupil-map] image[data-raster]").waitFor();
      await expect(page.getByTestId("fit-summary").textContent()).resolves.toMatch(/residual RMS [0-9.e-]+ nm/);
    });
  });

  it("queues a Monte Carlo of the requirements whose run page follows its progress to the end", async () => {
    await step(page, "analysis-monte-carlo-run-page", async () => {
      await page.getByLabel("Monte Carlo samples").fill("65536");
      await page.getByTestId("requirements-run").click();
      const link = page.getByTestId("requirements-progress").getByRole("link");
      await link.waitFor();
      await link.click();
      await page.waitForURL(/\/runs\/\d+$/);
      // The page polls while the run is queued or running, even when its first answer equals what the server drew.
      await page.locator('[data-testid="run-status"][data-state="succeeded"]').waitFor({ timeout: 180_000 });
      await expect(page.getByTestId("run-samples").textContent()).resolves.toBe("65536 / 65536 samples");
      await expect(page.getByRole("progressbar", { name: "Monte Carlo progress" }).getAttribute("aria-valuenow")).resolves.toBe("100");
    });
  }, 240_000);
});

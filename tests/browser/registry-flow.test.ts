import { readFileSync } from "node:fs";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { writeNpy } from "@/lib/formats/npy";
import { writeNpz } from "@/lib/formats/npz";
import { thetaGridNrad } from "@/lib/optics/setup";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { randomDesign } from "@/lib/surrogate/designs";
import { decodeModel } from "@/lib/surrogate/modelFile";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, step } from "../helpers/browser";
import { inProcessWorker, SMALL_SETUP } from "../helpers/registry";

// The modeller's way from a setup to a version in review, in a real browser (Debian's chromium) against the production
// build, with a training worker in this process. The steps share one page and run in order.

const tag = `${process.pid}-${Date.now().toString(36)}`;
const setupName = `Browser bench ${tag}`;
const slug = `browser-${tag}`;

let server: AppServer;
let worker: WorkerHandle;
let browser: Browser;
let context: BrowserContext;
let page: Page;

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessWorker(`browser-${process.pid}`);
  browser = await launchBrowser();
  context = await browser.newContext({ baseURL: server.baseUrl, acceptDownloads: true, viewport: { width: 1360, height: 900 } });
  context.setDefaultTimeout(20_000);
  page = await context.newPage();
});

afterAll(async () => {
  await context?.close();
  await browser?.close();
  await worker?.close(true);
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

let failedStep: string | null = null;

/** One step of the flow: after a failing step the later ones fail at once instead of waiting for their timeouts. */
async function flow(name: string, action: () => Promise<void>): Promise<void> {
  if (failedStep !== null) throw new Error(`not run: the earlier step "${failedStep}" failed`);
  try {
    await step(page, name, action);
  } catch (error) {
    failedStep = name;
    throw error;
  }
}

/** The text of a derived quantity in the setup editor's panel. */
const derived = (key: string) => page.locator(`[data-derived="${key}"] dd`);

describe("a modeller in the browser", () => {
  it("signs in through the form and sees the demo model with its four versions", async () => {
    await flow("sign-in", async () => {
      await page.goto("/");
      await page.waitForURL(/\/sign-in\?callbackUrl=%2F$/);
      await page.getByLabel("E-mail").fill("modeller@velora.test");
      await page.getByLabel("Password").fill(DEMO_PASSWORD);
      await page.getByRole("button", { name: "Sign in" }).click();
      await page.waitForURL((url) => url.pathname === "/");
      const row = page.locator('[data-model="velora-transmit"]');
      await expect(row.getByRole("link").first().textContent()).resolves.toBe("Velora transmit telescope");
      const versions = row.getByRole("list", { name: /Versions of/ }).getByRole("listitem");
      await expect(versions.count()).resolves.toBe(4);
      await expect(row.locator("[data-state]").allTextContents()).resolves.toEqual(["retired", "released", "in-review", "draft"]);
    });
  });

  it("defines a setup: derived quantities follow the fields, field messages show beside the fields", async () => {
    await flow("define-setup", async () => {
      await page.goto("/setups/new");
      await page.getByLabel("Name").fill(setupName);
      // Closed forms (PHYSICS.md check 9 and section 4 definitions) for the Velora optics the form starts from:
      // lambda / D = 1064e-9 m / 0.26 m = 4092.3 nrad; N_F = R^2 / (lambda L) = 0.13^2 / (1064e-9 * 2.2e9) = 7.220e-6;
      // g(alpha) = 2 (1 - exp(-alpha^2))^2 / alpha^2 at alpha = R / w = 0.13 / 0.115 (Klein and Degnan 1974).
      await expect(derived("diffraction-angle").textContent()).resolves.toBe("4092 nrad");
      await expect(derived("fresnel").textContent()).resolves.toBe("7.22e-6");
      const alpha = 0.13 / 0.115;
      const gain = (2 * (1 - Math.exp(-alpha * alpha)) ** 2) / (alpha * alpha);
      await expect(derived("gain").textContent()).resolves.toBe(gain.toPrecision(4));
      // A smaller aperture moves the panel at once: lambda / D = 1064e-9 / 0.2 = 5320 nrad.
      await page.getByLabel("Aperture diameter").fill("0.2");
      await expect.poll(() => derived("diffraction-angle").textContent(), { timeout: 15_000 }).toBe("5320 nrad");
      await page.getByLabel("Aperture diameter").fill("0.26");

      // An even node count is refused beside its field by the shared schema (lib/optics/setup.ts wording).
      await page.getByLabel("Nodes per axis").fill("8");
      await page.getByLabel("Pupil samples per axis").focus();
      await expect(page.locator('[data-field-error="setup-pointsPerAxis"]').textContent()).resolves.toBe(
        "farField.pointsPerAxis must be an odd integer >= 3",
      );
      // A small grid so the run takes well under a second: 9 x 9 nodes, 32^2 pupil samples.
      await page.getByLabel("Nodes per axis").fill("9");
      await page.getByLabel("Pupil samples per axis").fill("32");
      await expect.poll(() => derived("node-spacing").textContent(), { timeout: 15_000 }).toBe("15 nrad");
      await page.getByRole("button", { name: "Save setup" }).click();
      await page.waitForURL(/\/models\/new\?setupId=\d+$/);

      // The same name again: the server's conflict lands beside the name field.
      await page.goto("/setups/new");
      await page.getByLabel("Name").fill(setupName);
      await page.getByRole("button", { name: "Save setup" }).click();
      await expect(page.locator('[data-field-error="setup-name"]').textContent()).resolves.toBe(`A setup named "${setupName}" exists already.`);
      await page.goto("/setups");
      await expect(page.locator(`[data-setup="${setupName}"]`).count()).resolves.toBe(1);
    });
  });

  it("registers a model on the new setup", async () => {
    await flow("register-model", async () => {
      await page.locator(`[data-setup="${setupName}"]`).getByRole("link", { name: "New model on it" }).click();
      await page.waitForURL(/\/models\/new\?setupId=\d+$/);
      await expect(page.getByLabel("Optical setup").locator("option:checked").textContent()).resolves.toBe(setupName);
      await page.getByLabel("Slug").fill(slug);
      await page.getByLabel("Name", { exact: true }).fill(`Browser model ${tag}`);
      await page.getByLabel("Indices").fill("4-8");
      // Second order over J = 5 terms: 1 + 5 + 5 * 6 / 2 = 21 coefficients per node.
      await expect(page.locator("#model-indices-hint").textContent()).resolves.toBe(
        "5 terms: 6 coefficients per node at first order, 21 at second order.",
      );
      await page.getByRole("button", { name: "Save model" }).click();
      await page.waitForURL(`**/models/${slug}/versions/new`);
    });
  });

  it("queues a second-order training run and watches its progress reach the end", async () => {
    await flow("train", async () => {
      await expect(page.getByLabel("Order").locator("option:checked").textContent()).resolves.toContain("second order");
      await page.getByLabel("Samples").first().fill("60");
      await page.getByLabel("Up to").first().fill("20");
      await page.getByLabel("Seed").first().fill("3");
      await page.locator("#validation-size").fill("30");
      await page.locator("#validation-max-rms").fill("20");
      await page.locator("#validation-seed").fill("4");
      await expect(page.getByTestId("training-cost").textContent()).resolves.toContain("90 exact far-field maps");
      await page.getByRole("button", { name: "Queue training run" }).click();
      await page.waitForURL(/\/runs\/\d+$/);
      await page.locator('[data-testid="run-status"][data-state="succeeded"]').waitFor({ timeout: 60_000 });
      const bar = page.getByRole("progressbar");
      await expect(bar.getAttribute("aria-valuenow")).resolves.toBe("100");
      await expect(page.getByTestId("run-samples").textContent()).resolves.toBe("90 / 90 exact maps");
      await expect(page.getByTestId("run-log").textContent()).resolves.toContain("queued by modeller@velora.test");
    });
  });

  it("opens the new version's page with its residual heatmap", async () => {
    await flow("version-page", async () => {
      await page.getByRole("link", { name: "Open version 1" }).click();
      await page.waitForURL(`**/models/${slug}/versions/1`);
      await expect(page.getByTestId("version-state").textContent()).resolves.toBe("draft");
      const heatmap = page.getByTestId("residual-heatmap");
      // Two maps (c_x, c_y) of 9 x 9 nodes, one cell per node, and the colour bar in pm/nrad.
      await expect(heatmap.locator("svg rect title").count()).resolves.toBe(2 * 81);
      await expect(heatmap.getByRole("img", { name: /^Colour scale from 0 to .* pm\/nrad$/ }).count()).resolves.toBe(1);
      await expect(page.getByTestId("statistics-table").locator("tbody tr").first().textContent()).resolves.toMatch(/^all30/);
      await expect(page.getByText("Surrogate results are engineering estimates").count()).resolves.toBeGreaterThan(0);
    });
  });

  it("downloads the version's .stpm and .npz files", async () => {
    await flow("downloads", async () => {
      const [stpm] = await Promise.all([page.waitForEvent("download"), page.getByTestId("download-stpm").click()]);
      expect(stpm.suggestedFilename()).toBe(`${slug}-v1.stpm`);
      const model = decodeModel(new Uint8Array(readFileSync((await stpm.path())!)));
      expect(model.pointsPerAxis).toBe(9);
      expect(model.terms).toHaveLength(21);
      expect(model.nollIndices).toEqual([4, 5, 6, 7, 8]);

      const [npz] = await Promise.all([page.waitForEvent("download"), page.getByTestId("download-npz").click()]);
      expect(npz.suggestedFilename()).toBe(`${slug}-v1.npz`);
      const bytes = readFileSync((await npz.path())!);
      // A zip archive starts with a local file header, signature "PK\x03\x04" (PKWARE APPNOTE.TXT, section 4.3.7).
      expect([...bytes.subarray(0, 4)]).toEqual([0x50, 0x4b, 0x03, 0x04]);
      expect(bytes.includes(Buffer.from("coefficients_x.npy"))).toBe(true);
    });
  });

  it("submits the version for review", async () => {
    await flow("submit", async () => {
      await page.getByRole("button", { name: "Submit for review" }).click();
      await expect.poll(() => page.getByTestId("version-state").textContent(), { timeout: 15_000 }).toBe("in-review");
      await expect(page.getByTestId("history-table").locator("tbody [data-state]").allTextContents()).resolves.toEqual(["draft", "in-review"]);
      await expect(page.getByRole("button", { name: "Submit for review" }).count()).resolves.toBe(0);
    });
  });

  it("uploads a generating set on the training page and trains a first-order version from it", async () => {
    await flow("upload-and-train", async () => {
      // The form's setup is SMALL_SETUP's (Velora optics, 9 x 9 nodes, 32^2 pupil); the exact maps come from the
      // propagator itself, as a modeller's own tools would have made them.
      const M = SMALL_SETUP.farField.pointsPerAxis;
      const noll = [4, 5, 6, 7, 8];
      const count = 40;
      const coefficientsNm = randomDesign(5, { size: count, maxRmsNm: 15, seed: 11 });
      const maps = runTtlTask({ setup: SMALL_SETUP, nollIndices: noll, coefficientsNm, count });
      const file = writeNpz({
        noll_indices: writeNpy("<i4", [5], noll),
        theta_nrad: writeNpy("<f8", [M], thetaGridNrad(SMALL_SETUP.farField)),
        coefficients_nm: writeNpy("<f8", [count, 5], coefficientsNm),
        ttl_x_pm_per_nrad: writeNpy("<f8", [count, M, M], maps.x),
        ttl_y_pm_per_nrad: writeNpy("<f8", [count, M, M], maps.y),
      });
      await page.goto(`/models/${slug}/versions/new`);
      await page.getByLabel("File").setInputFiles({ name: "bench-set.npz", mimeType: "application/zip", buffer: Buffer.from(file) });
      await page.getByRole("button", { name: "Upload", exact: true }).click();
      await expect(page.getByTestId("upload-done").textContent({ timeout: 20_000 })).resolves.toMatch(/^Stored as set #\d+: 40 samples/);
      await page.getByLabel("Order").selectOption("1");
      await page.getByLabel("Design").selectOption("uploaded");
      await expect(page.getByLabel("Uploaded set").locator("option:checked").textContent()).resolves.toContain("40 samples · bench-set.npz");
      await page.getByLabel("Residuals are measured on").selectOption("none");
      await expect(page.getByTestId("training-cost").textContent()).resolves.toBe("No exact propagation: the fit uses the uploaded maps.");
      await page.getByRole("button", { name: "Queue training run" }).click();
      await page.waitForURL(/\/runs\/\d+$/);
      await page.locator('[data-testid="run-status"][data-state="succeeded"]').waitFor({ timeout: 60_000 });
      await page.getByRole("link", { name: "Open version 2" }).click();
      await page.waitForURL(`**/models/${slug}/versions/2`);
      await page.getByTestId("no-statistics").waitFor();
      await expect(page.getByTestId("version-state").textContent()).resolves.toBe("draft");
    });
  });

  it("creates a token, sees its secret once, and a script reads the model with it", async () => {
    await flow("token", async () => {
      await page.goto("/tokens");
      await page.getByLabel("Name").fill(`browser-script-${tag}`);
      await page.getByRole("button", { name: "Create token" }).click();
      const secret = (await page.getByTestId("token-value").textContent())!;
      expect(secret).toMatch(/^stp_[A-Za-z0-9_-]{43}$/);
      const answer = await fetch(`${server.baseUrl}/api/v1/models/${slug}`, { headers: { authorization: `Bearer ${secret}` } });
      expect(answer.status).toBe(200);
      expect((await answer.json()).versions).toEqual([
        { version: 1, order: 2, state: "in-review", termCount: 21 },
        { version: 2, order: 1, state: "draft", termCount: 6 },
      ]);
      await page.reload();
      await expect(page.getByTestId("token-value").count()).resolves.toBe(0);
      await expect(page.getByTestId("tokens-table").textContent()).resolves.toContain(`browser-script-${tag}`);
    });
  });
});

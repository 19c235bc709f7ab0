import type { Browser, BrowserContext, Download, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { getVersion } from "@/lib/db/versions";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { launchBrowser, signedInPage, step } from "../helpers/browser";
import { actorFor } from "../helpers/registry";

// The reviewer's pictures in a real browser (Debian's chromium) against the production build: the version page's
// residual plots and their exports, the coefficient maps with the term picker and ranking, and the comparison.

let server: AppServer;
let browser: Browser;
let context: BrowserContext;
let page: Page;

beforeAll(async () => {
  server = await startAppServer();
  browser = await launchBrowser();
  context = await browser.newContext({ baseURL: server.baseUrl, viewport: { width: 1400, height: 1000 }, acceptDownloads: true });
  context.setDefaultTimeout(20_000);
  page = await signedInPage(context, "reviewer@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await context?.close();
  await browser?.close();
  await server?.close();
  await closeDb();
});

async function read(download: Download): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of await download.createReadStream()) chunks.push(chunk as Buffer);
  return Buffer.concat(chunks);
}

describe("a reviewer looks at a version", () => {
  it("reads a residual map node by node and downloads its numbers and its picture", async () => {
    await step(page, "residual-exports", async () => {
      await page.goto("/models/velora-transmit/versions/3");
      const figure = page.getByTestId("residual-heatmap");
      // Hover until the page has hydrated and the figure answers (the first paint is server-rendered markup).
      const cell = figure.locator('rect[data-node="12,12"]').first();
      await expect
        .poll(async () => (await cell.hover(), figure.locator("[data-plot-readout]").textContent()), { timeout: 20_000 })
        .toMatch(/^Node \(12, 12\) at θ = \(0, 0\) nrad: c_x [\d.e-]+, c_y [\d.e-]+ pm\/nrad$/);

      const [csv] = await Promise.all([page.waitForEvent("download"), figure.locator('[data-export="csv"]').click()]);
      expect(csv.suggestedFilename()).toBe("largest-error-per-node-over-the-validation-set.csv");
      const lines = (await read(csv)).toString("utf8").split("\r\n").filter(Boolean);
      expect(lines.filter((l) => l.startsWith("# ")).pop()).toBe(`# ${SURROGATE_NOTICE}`);
      const stored = (await getVersion(await actorFor("reviewer@velora.test"), "velora-transmit", 3)).statistics!.perNode;
      const rows = lines.filter((l) => !l.startsWith("# ")).slice(1).map((l) => l.split(",").map(Number));
      expect(rows).toHaveLength(625);
      for (const [ix, iy, , , x, y] of rows) {
        expect(x).toBe(stored.maxAbsErrorXPmPerNrad[iy * 25 + ix]);
        expect(y).toBe(stored.maxAbsErrorYPmPerNrad[iy * 25 + ix]);
      }

      const [png] = await Promise.all([page.waitForEvent("download"), figure.locator('[data-export="png"]').click()]);
      // PNG signature (ISO/IEC 15948, section 5.2).
      expect([...(await read(png)).subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);

      const scatter = page.getByTestId("error-vs-wfe");
      await expect(scatter.locator("svg[data-plot]").getAttribute("data-points")).resolves.toBe("200");
      await expect(scatter.locator('[data-overlay="limit"]').count()).resolves.toBe(1);
      const histogram = page.getByTestId("node-error-histogram");
      // The bars lie under the histogram's pointer layer: move the mouse over the first bar rather than hovering it.
      const bar = histogram.locator("[data-bin]").first();
      await bar.scrollIntoViewIfNeeded();
      const barBox = (await bar.boundingBox())!;
      await expect
        .poll(async () => (await page.mouse.move(barBox.x + barBox.width / 2, barBox.y + barBox.height / 2 + Math.random()), histogram.locator("[data-plot-readout]").textContent()), { timeout: 20_000 })
        .toMatch(/^[\d.e-]+ – [\d.e-]+ pm\/nrad: \d+ nodes \(/);
    });
  });

  it("picks a product term and a ranked bar and sees their coefficient maps", async () => {
    await step(page, "term-maps", async () => {
      await page.goto("/models/velora-transmit/versions/3");
      await page.getByTestId("terms-link").click();
      await page.waitForURL("**/models/velora-transmit/versions/3/terms");
      const maps = page.getByTestId("term-maps");
      await expect(maps.getAttribute("data-term")).resolves.toBe("1");
      const product = await page.getByTestId("term-picker").locator("optgroup[label^=product] option").first().getAttribute("value");
      await page.getByTestId("term-picker").selectOption(product!);
      await expect.poll(() => maps.getAttribute("data-term")).toBe(product);
      await expect(page.getByText(/^Coefficient maps of B_\d+,\d+$/).count()).resolves.toBe(1);

      const first = await page.getByTestId("ranking-table").locator("tbody tr").first().getAttribute("data-term");
      const chart = page.getByTestId("term-ranking").locator("svg[data-plot] > g > rect").last();
      await chart.scrollIntoViewIfNeeded();
      const box = (await chart.boundingBox())!;
      // 3 px in: inside the first bar (about 4.9 px wide for 139 bars), clear of the value axis line at x = 0.
      await expect
        .poll(async () => (await page.mouse.move(box.x + 3, box.y + box.height / 2 + Math.random()), page.getByTestId("term-ranking").locator("[data-plot-readout]").textContent()), { timeout: 20_000 })
        .toMatch(/^#1 /);
      await page.mouse.down();
      await page.mouse.up();
      await expect.poll(() => maps.getAttribute("data-term")).toBe(first);

      await page.getByLabel("WFE budget (nm RMS)").fill("10");
      await page.getByRole("button", { name: "Rank" }).click();
      await page.waitForURL(/budget=10/);
      await expect(page.getByText(/^Largest possible length noise per term, 10 nm RMS/).count()).resolves.toBe(1);
    });
  });

  it("compares a pruned version with its parent for the demo example and a validation wavefront", async () => {
    await step(page, "compare", async () => {
      await page.goto("/models/velora-transmit/versions/3");
      await page.getByTestId("compare-link").click();
      await page.waitForURL("**/models/velora-transmit/compare?a=3");
      const maps = page.getByTestId("compare-maps");
      await maps.waitFor({ timeout: 30_000 });
      // The demo's example wavefront: Noll 4: 6, 7: -4, 8: 2.5, 11: 3 nm.
      await expect(maps.getAttribute("data-wavefront")).resolves.toBe("4: 6, 7: -4, 8: 2.5, 11: 3");
      await expect(page.getByTestId("difference-summary").textContent()).resolves.toMatch(/^Largest \|A − B\| [\d.e-]+ pm\/nrad/);
      await page.getByTestId("wavefront-source").selectOption({ index: 3 });
      await expect.poll(() => maps.getAttribute("data-wavefront")).not.toBe("4: 6, 7: -4, 8: 2.5, 11: 3");
      await page.getByTestId("wavefront-text").fill("4: x");
      await page.getByTestId("compare-run").click();
      await expect(page.getByTestId("compare-error").textContent()).resolves.toBe("“4: x” is not “Noll index: nm”, e.g. “4: 6”.");
      await page.getByTestId("wavefront-text").fill("3: 5");
      await page.getByTestId("compare-run").click();
      await expect.poll(() => page.getByTestId("compare-error").textContent()).toMatch(/^The maps could not be evaluated: version 3: /);
    });
  });
});

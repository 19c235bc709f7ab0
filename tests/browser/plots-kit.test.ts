import { build } from "esbuild";
import path from "node:path";
import type { Browser, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { launchBrowser, step } from "../helpers/browser";
import { REPO_ROOT } from "../helpers/test-database";

// The plotting kit in a real browser on the sizes the issue names: a 101 x 101 map and a 10,000-point scatter stay
// a handful of elements (canvas images), hover reads out the node or point, and PNG export makes a PNG file.

let browser: Browser;
let page: Page;

beforeAll(async () => {
  const bundle = await build({
    entryPoints: [path.join(REPO_ROOT, "tests/browser/plots-kit.harness.tsx")],
    bundle: true,
    write: false,
    format: "iife",
    jsx: "automatic",
    define: { "process.env.NODE_ENV": '"production"' },
    alias: { "@": REPO_ROOT },
    logLevel: "silent",
  });
  browser = await launchBrowser();
  const context = await browser.newContext({ viewport: { width: 1400, height: 1800 }, acceptDownloads: true });
  page = await context.newPage();
  await page.setContent(`<!doctype html><html><body><div id="root"></div><script>${bundle.outputFiles[0].text.replaceAll("</script", "<\\/script")}</script></body></html>`);
  await page.waitForFunction(() => (window as unknown as { renderedMs?: number }).renderedMs !== undefined);
  await page.locator('[data-testid="many-points"] image[data-raster]').waitFor();
  console.log(`[plots-kit] first render of a 2 x 101 x 101 map figure, a 10,000-point scatter, lines and 600 bars: ${Math.round(await page.evaluate(() => (window as unknown as { renderedMs: number }).renderedMs))} ms`);
});

afterAll(async () => {
  await browser?.close();
});

describe("the plotting kit at full size", () => {
  it("draws a 101 x 101 map as one image per map and reads out the node under the pointer", async () => {
    await step(page, "kit-big-map", async () => {
      const map = page.getByTestId("big-map");
      await expect(map.locator("rect[data-node]").count()).resolves.toBe(0);
      await expect(map.locator("image[data-raster]").count()).resolves.toBe(2);
      // Everything the figure draws: two images plus frames, axes, ticks and the colour bar, far below 10,201 per map.
      expect(await map.locator("svg *").count()).toBeLessThan(300);
      // The bar of a signed map is symmetric: the largest |c| of the two maps on each side.
      const [lo, hi] = (await map.locator("[data-colour-bar]").getAttribute("data-colour-bar"))!.split(",").map(Number);
      expect(lo).toBe(-hi);
      // Top-left corner of the first map: node ix 0, iy 100 (θy up), θ = (-60, 60) nrad.
      const box = (await map.locator("image[data-raster]").first().boundingBox())!;
      await page.mouse.move(box.x + 1, box.y + 1);
      await expect.poll(() => map.locator("[data-plot-readout]").textContent()).toMatch(/^Node \(0, 100\) at θ = \(-60, 60\) nrad: c_x -?\d/);
    });
  });

  it("draws 10,000 points as one image, picks the nearest on hover, and exports the figure as a PNG", async () => {
    await step(page, "kit-scatter", async () => {
      const plot = page.getByTestId("many-points");
      await expect(plot.locator("svg[data-plot]").getAttribute("data-points")).resolves.toBe("10000");
      await expect(plot.locator("image[data-raster]").count()).resolves.toBe(1);
      expect(await plot.locator("svg circle").count()).toBeLessThan(5);
      // Near the bottom-left corner lie the first points (x = 35 i / 10000 nm, y about 1e-4 x^2): hover there.
      const area = (await plot.locator("image[data-raster]").boundingBox())!;
      await page.mouse.move(area.x + 2, area.y + area.height - 2);
      await expect.poll(() => plot.locator("[data-plot-readout]").textContent()).toMatch(/^point \d+: total WFE \(nm RMS\) [\d.]+, error [\d.e-]+$/);
      const index = Number(/^point (\d+)/.exec((await plot.locator("[data-plot-readout]").textContent())!)![1]);
      // 2 px of a 488 px axis over 36.4 nm is about 0.15 nm, the 43rd point; allow the pick radius of 10 px.
      expect(index).toBeLessThan(500);
      const [download] = await Promise.all([page.waitForEvent("download"), plot.locator('[data-export="png"]').click()]);
      expect(download.suggestedFilename()).toBe("many-points.png");
      const stream = await download.createReadStream();
      const chunks: Buffer[] = [];
      for await (const chunk of stream) chunks.push(chunk as Buffer);
      // A PNG file starts with its 8-byte signature (ISO/IEC 15948, section 5.2: 137 80 78 71 13 10 26 10).
      expect([...Buffer.concat(chunks).subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
    });
  });

  it("exports the numbers behind a chart as CSV, notice last among the comments", async () => {
    await step(page, "kit-csv", async () => {
      const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("spectra").locator('[data-export="csv"]').click()]);
      const stream = await download.createReadStream();
      let text = "";
      for await (const chunk of stream) text += chunk.toString();
      const lines = text.split("\r\n");
      expect(lines[0]).toBe("# Spectra");
      expect(lines.filter((l) => l.startsWith("# ")).pop()).toContain("Surrogate results are engineering estimates");
      expect(lines).toContain("series,x,y");
      expect(lines).toContain("a,0.0001,1");
      await expect(page.getByTestId("ranked").locator("svg[data-plot]").getAttribute("data-bars")).resolves.toBe("600");
      // 600 bars in two groups are two paths; the 200 marked ones get a triangle each.
      await expect(page.getByTestId("ranked").locator("path[data-group]").count()).resolves.toBe(2);
      await expect(page.getByTestId("ranked").locator("path[data-mark]").count()).resolves.toBe(200);
    });
  });
});

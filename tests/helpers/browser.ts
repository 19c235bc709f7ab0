import { mkdirSync } from "node:fs";
import path from "node:path";
import { chromium, type Browser, type BrowserContext, type Page } from "playwright-core";
import { REPO_ROOT } from "./test-database";

/** Debian's chromium (scripts/test.sh installs the package when it is missing); playwright-core brings no browser. */
export const CHROMIUM_PATH = "/usr/bin/chromium";

export const CHROMIUM_ARGS = [
  "--no-sandbox",
  "--headless",
  "--disable-gpu",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
  "--no-first-run",
];

/** Screenshots of failing steps go here (kept after the run; .data/ is not committed). */
export const FAILURE_SHOTS_DIR = path.join(REPO_ROOT, ".data", "browser-failures");

export function launchBrowser(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
}

/**
 * Runs one step of a browser test; when it throws, a full-page screenshot of the page as it was is written to
 * .data/browser-failures/<file>-<step>.png and the error is rethrown with the screenshot's path.
 */
export async function step<T>(page: Page, name: string, action: () => Promise<T>): Promise<T> {
  try {
    return await action();
  } catch (error) {
    mkdirSync(FAILURE_SHOTS_DIR, { recursive: true });
    const file = path.join(FAILURE_SHOTS_DIR, `${name.replace(/[^a-z0-9]+/gi, "-").toLowerCase()}-${process.pid}.png`);
    const saved = await page
      .screenshot({ path: file, fullPage: true })
      .then(() => true)
      .catch(() => false);
    if (error instanceof Error && saved) error.message += `\n(screenshot of the failing step: ${file})`;
    throw error;
  }
}

/** A new page of `context` signed in through the sign-in form, on the catalogue. */
export async function signedInPage(context: BrowserContext, email: string, password: string): Promise<Page> {
  const page = await context.newPage();
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => url.pathname === "/");
  return page;
}

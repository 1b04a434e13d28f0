import { mkdirSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { chromium, type Browser, type Page } from "playwright-core";
import { CHROMIUM_LAUNCH } from "./chromium.ts";

export { baseUrl } from "./chromium.ts";

/** The system Chromium for scripts outside `playwright test` (the drive-page benchmark). */
export function launchBrowser(): Promise<Browser> {
  return chromium.launch(CHROMIUM_LAUNCH);
}

/** tests/artifacts/ (git-ignored): named screenshots of the states the browser tests walk through. */
export const ARTIFACTS_DIR = join(dirname(fileURLToPath(import.meta.url)), "..", "artifacts");

/**
 * Whether the named screenshots are written: only with JOGWRIGHT_SCREENSHOTS=1 (e.g.
 * `JOGWRIGHT_SCREENSHOTS=1 npm test`), to look at the screens. A full-page screenshot costs the software-
 * rendering Chromium about 0.6 s: 42 of them took 25.3 s of the driving tests (from their traces, 4 Dec
 * 2026), and nothing in a test run reads them. A failed test's own screenshot and trace are kept either way (playwright.config.ts).
 */
export const SCREENSHOTS_WANTED = process.env.JOGWRIGHT_SCREENSHOTS === "1";

/**
 * Writes tests/artifacts/<name>.png (the full page, or with `fullPage: false` the window as it is) and
 * returns its path; null when screenshots are not wanted.
 */
export async function saveScreenshot(page: Page, name: string, { fullPage = true } = {}): Promise<string | null> {
  if (!SCREENSHOTS_WANTED) return null;
  mkdirSync(ARTIFACTS_DIR, { recursive: true });
  const path = join(ARTIFACTS_DIR, `${name}.png`);
  await page.screenshot({ path, fullPage });
  return path;
}

/** saveScreenshot, also attached to the test's report (a test's TestInfo) under `label`. */
export async function keepScreenshot(
  page: Page,
  testInfo: { attach(name: string, options: { path: string; contentType: string }): Promise<void> },
  name: string,
  label: string,
  options: { fullPage?: boolean } = {},
): Promise<void> {
  const path = await saveScreenshot(page, name, options);
  if (path) await testInfo.attach(label, { path, contentType: "image/png" });
}

/** The demo accounts' password (README; printed by `npm start`). */
export const DEMO_PASSWORD = "demo-pass-2026";

/** Fills and sends the sign-in form already on screen; the caller checks the outcome. */
export async function fillSignInForm(page: Page, username: string, password: string): Promise<void> {
  await page.getByLabel("User name").fill(username);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
}

/**
 * Opens `next` signed out, signs in on the sign-in page it leads to (a demo account unless `password` is
 * given), and waits to be let in. `url` is the server's address ("" for the test's baseURL).
 */
export async function signIn(page: Page, url: string, username: string, next = "/", password = DEMO_PASSWORD): Promise<void> {
  await page.goto(`${url}${next}`);
  await page.waitForURL(/\/sign-in/);
  await fillSignInForm(page, username, password);
  await page.waitForURL((u) => !u.pathname.startsWith("/sign-in"));
}

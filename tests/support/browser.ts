import { mkdirSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { chromium, type Browser, type Page } from "playwright-core";

/**
 * Real Chromium for the browser tests (playwright-core downloads no browser of its own). CHROMIUM_PATH
 * overrides the system binary.
 */
export function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    args: [
      "--headless",
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
}

/** The running Jogwright server the browser tests talk to, e.g. http://127.0.0.1:3000 (no trailing slash). */
export function baseUrl(): string {
  const url = process.env.JOGWRIGHT_URL;
  if (!url) {
    throw new Error(
      "JOGWRIGHT_URL is not set. Start the server (it serves the built console) and run the browser tests with JOGWRIGHT_URL=http://127.0.0.1:3000.",
    );
  }
  return url.replace(/\/+$/, "");
}

/** tests/artifacts/ (git-ignored): screenshots taken by the browser tests. */
export const ARTIFACTS_DIR = join(dirname(fileURLToPath(import.meta.url)), "..", "artifacts");

export async function saveScreenshot(page: Page, name: string): Promise<string> {
  mkdirSync(ARTIFACTS_DIR, { recursive: true });
  const path = join(ARTIFACTS_DIR, `${name}.png`);
  await page.screenshot({ path, fullPage: true });
  return path;
}

/** The demo accounts' password (README; printed by `npm start`). */
export const DEMO_PASSWORD = "demo-pass-2026";

/** Fills and sends the sign-in form already on screen; the caller checks the outcome. */
export async function fillSignInForm(page: Page, username: string, password: string): Promise<void> {
  await page.getByLabel("User name").fill(username);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
}

/** Opens `next` signed out, signs in as a demo account on the sign-in page it leads to, and waits to be let in. */
export async function signIn(page: Page, url: string, username: string, next = "/"): Promise<void> {
  await page.goto(`${url}${next}`);
  await page.waitForURL(/\/sign-in/);
  await fillSignInForm(page, username, DEMO_PASSWORD);
  await page.waitForURL((u) => !u.pathname.startsWith("/sign-in"));
}

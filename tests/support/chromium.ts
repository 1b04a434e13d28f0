import type { LaunchOptions } from "playwright-core";

/**
 * Real Chromium for the browser tests and the drive-page benchmark: the system's (Debian's `chromium`,
 * installed by `npm test`); Playwright downloads no browser of its own here. CHROMIUM_PATH overrides it.
 */
export const CHROMIUM_LAUNCH: LaunchOptions = {
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
};

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

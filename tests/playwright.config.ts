import path from "node:path";
import { fileURLToPath } from "node:url";
import { defineConfig } from "@playwright/test";
import { baseUrl, CHROMIUM_LAUNCH } from "./support/chromium.ts";

// Browser tests in real Chromium against the real server at JOGWRIGHT_URL (`npm test` builds the console,
// starts the server on the test database and runs `playwright test` here). Every test has a browser
// context of its own and creates the people and profiles it needs through the API, so tests run alone
// (`--grep`), in any order, and at the same time. On a failure the test's trace (trace.zip, open it with
// `npx playwright show-trace`) and a screenshot stay in .data/test-reports/browser/ (git-ignored); passing
// tests leave nothing there. The JSON report (.data/test-reports/browser.json) is what `npm test` counts.
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const reports = path.join(process.env.JOGWRIGHT_DATA_DIR ? path.resolve(process.env.JOGWRIGHT_DATA_DIR) : path.join(root, ".data"), "test-reports");

export default defineConfig({
  testDir: "e2e",
  testMatch: "**/*.spec.ts",
  outputDir: path.join(reports, "browser"),
  fullyParallel: true,
  // One worker: on the 2-core machine two gained nothing (18 tests in 91 s against 94 s, both under other
  // load) and starved the drive page's 16 ms input loop past its 200 ms watchdog. The tests are
  // independent, so BROWSER_TEST_WORKERS=2 runs them two at a time on a bigger machine.
  workers: Number(process.env.BROWSER_TEST_WORKERS ?? 1),
  retries: 0,
  forbidOnly: Boolean(process.env.CI),
  timeout: 120_000,
  expect: { timeout: 15_000 },
  reporter: [["list"], ["json", { outputFile: process.env.BROWSER_TEST_REPORT ?? path.join(reports, "browser.json") }]],
  use: {
    baseURL: baseUrl(),
    browserName: "chromium",
    launchOptions: CHROMIUM_LAUNCH,
    viewport: { width: 1400, height: 1000 },
    actionTimeout: 15_000,
    navigationTimeout: 15_000,
    trace: "retain-on-failure",
    screenshot: "only-on-failure",
  },
});

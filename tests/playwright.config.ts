import path from "node:path";
import { fileURLToPath } from "node:url";
import { defineConfig } from "@playwright/test";
import { baseUrl, CHROMIUM_LAUNCH } from "./support/chromium.ts";

// Browser tests in real Chromium against the real server at JOGWRIGHT_URL (`npm test` builds the console,
// starts the server on the test database and runs `playwright test` here). Every test has a browser
// context of its own and creates the people and profiles it needs through the API, so tests run alone
// (`--grep`), in any order, and at the same time. On a failure the test's trace (trace.zip, open it with
// `npx playwright show-trace`) and a screenshot stay in .data/test-reports/browser/ (git-ignored); passing
// tests leave nothing there. The JSON reports (.data/test-reports/browser-<project>.json) are what `npm test`
// counts.
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const reports = path.join(process.env.JOGWRIGHT_DATA_DIR ? path.resolve(process.env.JOGWRIGHT_DATA_DIR) : path.join(root, ".data"), "test-reports");

/**
 * Two projects, run one after the other by `npm test` (`--project pages`, at nice 19 beside the server's
 * timed files, then `--project driving`, alone):
 * - "driving": the specs that jog the arm. The drive page's input loop runs every 16 ms and the server's
 *   watchdog stops the arm after 200 ms without input; a second browser beside it on the 2-core machine
 *   starved that loop past the watchdog (measured), so these run one at a time;
 * - "pages": every other spec (forms, tables, reviews, the bench). One at a time by default too:
 *   BROWSER_TEST_WORKERS=2 runs it two at a time, but its review-count test reads a site-wide number that
 *   another test's submissions change, and on 2 cores two gained little (DEVELOPERS.md).
 */
const DRIVING = ["arm-library.spec.ts", "drive-layout.spec.ts", "drive-session.spec.ts", "drive.spec.ts", "profiles-approval.spec.ts", "server-restart.spec.ts"];
const pageWorkers = Number(process.env.BROWSER_TEST_WORKERS ?? 1);

export default defineConfig({
  testDir: "e2e",
  testMatch: "**/*.spec.ts",
  fullyParallel: true,
  workers: Math.max(1, pageWorkers),
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
    // On a failure: the trace (every step with its timing, the network, the console, the sources) and a
    // screenshot of the page as it failed. The trace's own screencast is off: it cost ~15 % of the browser
    // tests' CPU time (measured on 16 tests: 47 s with it, 39 s without, 36 s with no trace at all). Its DOM
    // snapshots of every step are off too unless JOGWRIGHT_TRACE_SNAPSHOTS=1 (to re-run a failing test with
    // them): the pages project took 117.7 s with them and 107.9 s without (sums of test times, 4 Dec 2026).
    trace: { mode: "retain-on-failure", screenshots: false, snapshots: process.env.JOGWRIGHT_TRACE_SNAPSHOTS === "1", sources: true },
    screenshot: "only-on-failure",
  },
  projects: [
    // An output folder each: a run of one project empties only its own, so the first run's failures stay.
    { name: "pages", testIgnore: DRIVING.map((f) => `**/${f}`), workers: Math.max(1, pageWorkers), outputDir: path.join(reports, "browser", "pages") },
    { name: "driving", testMatch: DRIVING.map((f) => `**/${f}`), workers: 1, outputDir: path.join(reports, "browser", "driving") },
  ],
});
